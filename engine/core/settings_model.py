"""Site-file dataclasses of the assessor's choices: losses, money, uncertainty, ranking,
climate transfer and the turbulence allowances of the energy model.

Each class validates itself on construction and raises one
:class:`~engine.core.errors.InputError` listing every problem as ``(field, message)``.
Re-exported by :mod:`engine.core.model`.
"""
from __future__ import annotations

from dataclasses import dataclass

from engine.core.errors import Problems, check_choice, check_range

OBJECTIVES = ("net_aep", "p90_aep", "lcoe", "payback", "npv")
LOAD_PROFILES = ("household", "office", "workshop", "none", "custom")
TRANSFER_METHODS = ("log_law", "power_law")
MORPHOMETRY_LAYOUTS = ("staggered", "square")


@dataclass(frozen=True)
class Losses:
    """Energy losses applied to gross AEP, each a fraction 0..1 (multiplied, not added)."""

    availability: float = 0.05
    electrical: float = 0.04
    icing: float = 0.0
    cut_out_hysteresis: float = 0.01
    other: float = 0.0

    def __post_init__(self):
        p = Problems()
        for name in ("availability", "electrical", "icing", "cut_out_hysteresis", "other"):
            check_range(p, name, getattr(self, name), 0, 0.9)
        p.raise_if_any()


@dataclass(frozen=True)
class Economics:
    """Money as the client pays and is paid, in one currency; prices per kWh, rates per year.

    Installed cost = turbine's ``installed_cost`` + mast (per metre) + structure + connection.
    Keys, units and defaults: ``docs/site-file.md``; the model: :mod:`engine.energy.economics`.
    """

    currency: str = "EUR"
    om_cost_per_year: float = 150.0
    #: Import price [currency/kWh]: what each self-consumed kWh saves.
    tariff_per_kwh: float = 0.25
    discount_rate: float = 0.05
    lifetime_years: float = 20.0
    emission_factor_kg_per_kwh: float = 0.25
    #: Export price [currency/kWh] paid for energy sent to the grid.
    export_price_per_kwh: float = 0.06
    #: Yearly change of import and export prices [1/year] (0: constant in today's money).
    tariff_escalation_per_year: float = 0.0
    #: Yearly loss of energy yield as the turbine ages [1/year].
    degradation_per_year: float = 0.005
    #: Standby and inverter consumption bought from the grid [kWh/year].
    standby_kwh_per_year: float = 50.0
    #: Mast or bracket on a roof, per metre of mast [currency/m].
    roof_mast_cost_per_m: float = 150.0
    #: Free-standing mast (gap and mast positions), per metre of mast [currency/m].
    ground_mast_cost_per_m: float = 300.0
    #: Roof fixings, survey and strengthening allowance per roof position [currency].
    roof_structure_cost: float = 1500.0
    #: Foundation of a free-standing mast [currency].
    ground_structure_cost: float = 1000.0
    #: Inverter, wiring and grid connection [currency].
    connection_cost: float = 1200.0
    #: One-off grant towards the installed cost [currency] (support).
    capital_grant: float = 0.0
    #: Payment per kWh generated [currency/kWh] for ``support_years`` (support).
    support_per_kwh: float = 0.0
    support_years: float = 20.0
    #: Whose electricity use the turbine serves: one of LOAD_PROFILES. The typical profiles
    #: are invented shapes scaled to ``annual_load_kwh``; ``custom`` uses ``load_hourly_kwh``;
    #: ``none`` exports every kWh.
    load_profile: str = "household"
    annual_load_kwh: float = 3500.0
    #: Custom load [kWh in each hour]: 24 values (every day alike) or 8760 (a year from 1 Jan).
    load_hourly_kwh: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        check_range(p, "om_cost_per_year", self.om_cost_per_year, 0, 1e6)
        check_range(p, "tariff_per_kwh", self.tariff_per_kwh, 0, 10, "per kWh")
        check_range(p, "discount_rate", self.discount_rate, 0, 0.5)
        check_range(p, "lifetime_years", self.lifetime_years, 1, 50, "years")
        check_range(p, "emission_factor_kg_per_kwh", self.emission_factor_kg_per_kwh, 0, 2, "kg/kWh")
        check_range(p, "export_price_per_kwh", self.export_price_per_kwh, 0, 10, "per kWh")
        check_range(p, "tariff_escalation_per_year", self.tariff_escalation_per_year, -0.2, 0.3,
                    "per year")
        check_range(p, "degradation_per_year", self.degradation_per_year, 0, 0.2, "per year")
        check_range(p, "standby_kwh_per_year", self.standby_kwh_per_year, 0, 10000, "kWh/year")
        for name, hi, unit in (("roof_mast_cost_per_m", 1e5, "per m"),
                               ("ground_mast_cost_per_m", 1e5, "per m"),
                               ("roof_structure_cost", 1e7, ""), ("ground_structure_cost", 1e7, ""),
                               ("connection_cost", 1e7, ""), ("capital_grant", 1e7, "")):
            check_range(p, name, getattr(self, name), 0, hi, unit)
        check_range(p, "support_per_kwh", self.support_per_kwh, 0, 10, "per kWh")
        check_range(p, "support_years", self.support_years, 0, 50, "years")
        check_choice(p, "load_profile", self.load_profile, LOAD_PROFILES)
        check_range(p, "annual_load_kwh", self.annual_load_kwh, 0, 1e7, "kWh/year")
        n = len(self.load_hourly_kwh)
        if self.load_profile == "custom" and n not in (24, 8760):
            p.add("load_hourly_kwh", f"must hold 24 or 8760 hourly values for load_profile "
                                     f"custom, got {n}")
        elif n not in (0, 24, 8760):
            p.add("load_hourly_kwh", f"must be empty, 24 or 8760 hourly values, got {n}")
        bad = [i for i, v in enumerate(self.load_hourly_kwh)
               if not isinstance(v, (int, float)) or not (0 <= v <= 1e4)]
        if bad:
            p.add(f"load_hourly_kwh[{bad[0]}]", f"must be >= 0 and <= 10000 kWh, got "
                                                f"{self.load_hourly_kwh[bad[0]]!r}")
        p.raise_if_any()


@dataclass(frozen=True)
class Uncertainty:
    """One-sigma uncertainties, as fractions of mean wind speed (energy for the curve)."""

    speed_data: float = 0.03
    speed_long_term: float = 0.04
    speed_transfer: float = 0.06
    speed_building_model: float = 0.12
    energy_power_curve: float = 0.08
    #: Year-to-year variability: one-sigma of the annual mean speed as a fraction of the
    #: long-term mean (about 6 % in temperate climates; common practice, from memory).
    interannual_speed: float = 0.06

    def __post_init__(self):
        p = Problems()
        for name in ("speed_data", "speed_long_term", "speed_transfer",
                     "speed_building_model", "energy_power_curve", "interannual_speed"):
            check_range(p, name, getattr(self, name), 0, 1)
        p.raise_if_any()


@dataclass(frozen=True)
class RankingSettings:
    """What the ranking optimises and which positions it excludes."""

    objective: str = "net_aep"
    require_clear_of_turbulence_zone: bool = True
    apply_noise_limits: bool = True
    max_mast_height_m: float = 15.0
    max_thrust_n: float = 0.0  # 0 means no thrust limit
    #: Rank the options that pay back first (then those that need support, then the rest).
    viability_first: bool = False

    def __post_init__(self):
        p = Problems()
        check_choice(p, "objective", self.objective, OBJECTIVES)
        if not isinstance(self.viability_first, bool):
            p.add("viability_first", f"must be true or false, got {self.viability_first!r}")
        check_range(p, "max_mast_height_m", self.max_mast_height_m, 0.5, 60, "m")
        check_range(p, "max_thrust_n", self.max_thrust_n, 0, 1e6, "N")
        p.raise_if_any()


@dataclass(frozen=True)
class TransferSettings:
    """How the reference climate is carried to the site's terrain and hub heights.

    See :mod:`engine.flow.transfer`. ``log_law``: EN 1991-1-4 terrain factor and log law;
    ``power_law``: U2 = U1 (z2/z1)^α with ``power_law_exponent`` α, or with α = 0 the exponent
    and boundary-layer depth of each terrain from the ASHRAE Handbook table.
    """

    method: str = "log_law"
    power_law_exponent: float = 0.0
    #: Derive the site's roughness and displacement from its plan/frontal area fractions and
    #: mean building height (Macdonald et al. 1998) instead of terrain_roughness_m.
    use_morphometry: bool = False
    morphometry_layout: str = "staggered"
    #: Adjust the Weibull shape k with height (Justus & Mikhail 1976); else k is kept.
    adjust_shape_with_height: bool = False
    #: Roughness and displacement per direction sector from the buildings upwind of each
    #: position (Macdonald et al. 1998 over a wedge of radius ``sector_fetch_m``,
    #: engine.flow.sector_roughness); sectors with no building keep the site's own. Off by
    #: default: the buildings of a site file are seldom all the buildings within the fetch,
    #: and a sparse wedge reads as smooth ground (faster wind). Turn it on when the buildings
    #: cover the fetch (e.g. a GIS footprint file).
    sector_morphometry: bool = False
    #: Radius of the upwind wedge for ``sector_morphometry`` [m].
    sector_fetch_m: float = 300.0

    def __post_init__(self):
        p = Problems()
        check_choice(p, "method", self.method, TRANSFER_METHODS)
        check_range(p, "power_law_exponent", self.power_law_exponent, 0, 0.6, "")
        check_choice(p, "morphometry_layout", self.morphometry_layout, MORPHOMETRY_LAYOUTS)
        check_range(p, "sector_fetch_m", self.sector_fetch_m, 50, 5000, "m")
        for name in ("use_morphometry", "adjust_shape_with_height", "sector_morphometry"):
            if not isinstance(getattr(self, name), bool):
                p.add(name, f"must be true or false, got {getattr(self, name)!r}")
        p.raise_if_any()


@dataclass(frozen=True)
class EnergySettings:
    """How turbulence at the rotor changes the energy (see :mod:`engine.energy.aep`).

    ``excess_ti_power_loss`` b: the curve's power is multiplied by 1 - b max(I - I_curve, 0)
    at a turbulence intensity I above the one the curve was measured at, I_curve. A derived,
    conservative assumption standing for what field studies of small turbines in turbulent
    urban flow report (lower return than the maker's curve, worse at high turbulence;
    Pagnini, Burlando & Repetto 2015; a furling rotor losing energy near furling, Lubitz
    2011) and for the rotor not following gusts shorter than its response time.
    ``tracked_ti_fraction``: the share of the turbulence's standard deviation the rotor
    follows in the power-curve average (Lubitz 2011: power lags the wind by 1-2 s; 0.85 of σ
    is about the share of a Kaimal spectrum's variance at periods above 1-2 s at 10-30 m,
    derived). ``max_credited_ti``: turbulence above this intensity earns no averaging gain
    (derived, conservative: test sites seldom exceed it, and field trials of turbulent
    urban sites found losses, not gains).
    """

    excess_ti_power_loss: float = 0.5
    tracked_ti_fraction: float = 0.85
    max_credited_ti: float = 0.2

    def __post_init__(self):
        p = Problems()
        check_range(p, "excess_ti_power_loss", self.excess_ti_power_loss, 0, 2, "")
        check_range(p, "tracked_ti_fraction", self.tracked_ti_fraction, 0, 1, "")
        check_range(p, "max_credited_ti", self.max_credited_ti, 0, 1, "")
        p.raise_if_any()

