"""Domain model: small frozen dataclasses that travel together through the chain.

Every class validates itself on construction and raises one :class:`~engine.core.errors.InputError`
listing every problem, each as ``(field, message)``. The site-file loader prefixes the field with
where the object sits (``turbines[1].rated_power_w``). SI units throughout: m, m/s, W, Pa, °C for
temperatures entered by people; units are in the field names.

Conventions
-----------
* Plan coordinates are local metres: ``x_m`` east, ``y_m`` north.
* Directions are degrees clockwise from north, the direction the wind comes *from*.
* Sector ``i`` of ``n`` is centred on ``i * 360 / n`` degrees (sector 0 centred on north).
* A position's ``mast_height_m`` is the hub height above its base: the roof surface for a
  roof position, the ground for gap and mast positions.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Optional

from engine.core.errors import InputError, Problems, check_range
from engine.core.consent import (ConsentSettings, FlickerSettings, NoiseSettings,  # noqa: F401
                                 SitingRule, receptor_problems,
                                 turbine_problems)
from engine.core.measured_checks import check_measured_position, check_sector_values

FORMAT_VERSION = 1

#: Betz limit on the power coefficient (actuator-disc theory, 16/27).
BETZ_CP = 16.0 / 27.0
#: Reference air density of power curves [kg/m³] (ISO 2533 sea level, 15 °C).
RHO_STANDARD = 1.225

POSITION_KINDS = ("roof", "gap", "mast")
ROOF_TYPES = ("flat", "pitched")
AXIS_TYPES = ("horizontal", "vertical")
REGULATION_TYPES = ("stall", "pitch")
IEC_SMALL_CLASSES = ("I", "II", "III", "IV", "S")
CLIMATE_SOURCES = ("table", "measured", "long_term", "mean_speed")
OBJECTIVES = ("net_aep", "p90_aep", "lcoe", "payback", "npv")
LOAD_PROFILES = ("household", "office", "workshop", "none", "custom")
TRANSFER_METHODS = ("log_law", "power_law")
MORPHOMETRY_LAYOUTS = ("staggered", "square")


def _raise(p: Problems) -> None:
    p.raise_if_any()


def _choice(p: Problems, where: str, value, options) -> None:
    if value not in options:
        p.add(where, f"must be one of {', '.join(options)}, got {value!r}")


def _id(p: Problems, where: str, value) -> None:
    if not isinstance(value, str) or not value.strip():
        p.add(where, f"must be a non-empty text, got {value!r}")


@dataclass(frozen=True)
class Site:
    """The site as a whole: where it is and what surrounds it."""

    name: str
    altitude_m: float = 0.0
    air_temperature_c: float = 10.0
    #: Roughness length of the surroundings [m] (EN 1991-1-4 Table 4.1 gives typical values).
    terrain_roughness_m: float = 0.5
    #: Zero-plane displacement of the surroundings [m]; 0 in open terrain.
    displacement_m: float = 0.0
    #: Optional morphometry of the surroundings (Macdonald et al. 1998); when all three are
    #: given the climate transfer may derive roughness and displacement from them.
    plan_area_fraction: Optional[float] = None
    frontal_area_fraction: Optional[float] = None
    mean_building_height_m: Optional[float] = None
    #: Mean station pressure [Pa] when measured; otherwise ISA from altitude.
    air_pressure_pa: Optional[float] = None
    assessor: str = ""
    notes: str = ""
    #: Where the local plan's origin (x 0, y 0) is on Earth [deg]: set when the site came from
    #: GIS data (the plan is a transverse Mercator about it, engine.io.footprints) and needed
    #: for the sun's path (shadow flicker, engine.energy.flicker).
    origin_lat_deg: Optional[float] = None
    origin_lon_deg: Optional[float] = None
    #: The coordinate reference system the buildings were given in ("EPSG:27700"), for exports.
    crs: str = ""

    def __post_init__(self):
        p = Problems()
        if not isinstance(self.name, str) or not self.name.strip():
            p.add("name", "must be a non-empty text (the site's name)")
        check_range(p, "altitude_m", self.altitude_m, -450, 5000, "m")
        check_range(p, "air_temperature_c", self.air_temperature_c, -50, 50, "°C")
        check_range(p, "terrain_roughness_m", self.terrain_roughness_m, 1e-4, 5.0, "m")
        check_range(p, "displacement_m", self.displacement_m, 0, 100, "m")
        if self.plan_area_fraction is not None:
            check_range(p, "plan_area_fraction", self.plan_area_fraction, 0, 1, "", True, True)
        if self.frontal_area_fraction is not None:
            check_range(p, "frontal_area_fraction", self.frontal_area_fraction, 0, 1, "", True, True)
        if self.mean_building_height_m is not None:
            check_range(p, "mean_building_height_m", self.mean_building_height_m, 0, 300, "m", True)
        if self.air_pressure_pa is not None:
            check_range(p, "air_pressure_pa", self.air_pressure_pa, 50000, 110000, "Pa")
        if (self.origin_lat_deg is None) != (self.origin_lon_deg is None):
            p.add("origin_lat_deg", "and origin_lon_deg must be given together, or neither")
        if self.origin_lat_deg is not None:
            check_range(p, "origin_lat_deg", self.origin_lat_deg, -85, 85, "deg")
        if self.origin_lon_deg is not None:
            check_range(p, "origin_lon_deg", self.origin_lon_deg, -180, 180, "deg")
        if not isinstance(self.crs, str) or len(self.crs) > 2000:
            p.add("crs", "must be a text of at most 2000 characters (e.g. 'EPSG:27700')")
        _raise(p)


@dataclass(frozen=True)
class WindClimate:
    """A per-sector Weibull climate at a stated height, roughness and displacement.

    ``frequency`` sums to 1; sector ``i`` is centred on ``i * 360 / n`` degrees.
    """

    height_m: float
    roughness_m: float
    frequency: tuple[float, ...]
    weibull_k: tuple[float, ...]
    weibull_c_ms: tuple[float, ...]
    displacement_m: float = 0.0
    source: str = "table"
    label: str = ""
    #: Optional monthly mean speeds at ``height_m`` [m/s], January first, for monthly energy.
    monthly_mean_ms: tuple[float, ...] = ()
    #: The measured record behind this climate, if any: file name and SHA-256 of its bytes.
    record_file: str = ""
    record_sha256: str = ""
    #: Where measured, measured TI and shear, long-term uncertainty, averaging: see
    #: :mod:`engine.core.measured_checks` (the fields, their units and their checks).
    measured_at: str = "reference"
    position_id: str = ""
    turbulence_intensity: tuple[float, ...] = ()
    shear_exponent: tuple[float, ...] = ()
    long_term_uncertainty: float = 0.0
    averaging_s: float = 0.0

    def __post_init__(self):
        p = Problems()
        check_range(p, "height_m", self.height_m, 0, 300, "m", lo_open=True)
        check_range(p, "roughness_m", self.roughness_m, 1e-4, 5.0, "m")
        check_range(p, "displacement_m", self.displacement_m, 0, 100, "m")
        check_sector_values(p, self, CLIMATE_SOURCES)
        _raise(p)

    @property
    def n_sectors(self) -> int:
        return len(self.frequency)

    @property
    def sector_deg(self) -> tuple[float, ...]:
        n = self.n_sectors
        return tuple(i * 360.0 / n for i in range(n))


@dataclass(frozen=True)
class Building:
    """A rectangular block on the plan.

    ``orientation_deg`` is the bearing of the ``length_m`` side, clockwise from north; the
    block is centred on (``x_m``, ``y_m``).
    """

    id: str
    x_m: float
    y_m: float
    length_m: float
    width_m: float
    height_m: float
    orientation_deg: float = 0.0
    roof_type: str = "flat"
    roof_pitch_deg: float = 0.0
    parapet_height_m: float = 0.0
    #: The true footprint on the plan when it came from GIS data, as x0, y0, x1, y1, ... [m]
    #: (the block above is its oriented minimum rectangle); empty for a drawn block.
    outline_xy_m: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        _id(p, "id", self.id)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "length_m", self.length_m, 1, 1000, "m")
        check_range(p, "width_m", self.width_m, 1, 1000, "m")
        check_range(p, "height_m", self.height_m, 2, 300, "m")
        check_range(p, "orientation_deg", self.orientation_deg, 0, 360, "deg", hi_open=True)
        _choice(p, "roof_type", self.roof_type, ROOF_TYPES)
        check_range(p, "roof_pitch_deg", self.roof_pitch_deg, 0, 60, "deg")
        check_range(p, "parapet_height_m", self.parapet_height_m, 0, 5, "m")
        _check_outline(p, self.outline_xy_m)
        _raise(p)


#: Most vertices kept for one footprint outline.
MAX_OUTLINE_VERTICES = 2000


def _check_outline(p: Problems, xy) -> None:
    n = len(xy)
    if n == 0:
        return
    if n % 2 or n < 6:
        p.add("outline_xy_m", f"must be x, y pairs of at least 3 vertices, got {n} numbers")
    elif n > 2 * MAX_OUTLINE_VERTICES:
        p.add("outline_xy_m", f"must have at most {MAX_OUTLINE_VERTICES} vertices, got {n // 2}"
                              "; simplify the outline in the GIS")
    elif not all(math.isfinite(v) and abs(v) <= 1e5 for v in xy):
        p.add("outline_xy_m", "must hold finite coordinates within ±100 km of the origin [m]")


@dataclass(frozen=True)
class Position:
    """A candidate mounting position.

    ``kind`` is ``roof`` (on ``building_id``), ``gap`` (in the passage between the two
    ``gap_buildings``) or ``mast`` (free-standing on the ground).
    """

    id: str
    kind: str
    x_m: float
    y_m: float
    mast_height_m: float
    building_id: str = ""
    gap_buildings: tuple[str, ...] = ()
    note: str = ""

    def __post_init__(self):
        p = Problems()
        _id(p, "id", self.id)
        _choice(p, "kind", self.kind, POSITION_KINDS)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "mast_height_m", self.mast_height_m, 0.5, 60, "m")
        if self.kind == "roof" and not self.building_id:
            p.add("building_id", "a roof position must name the building it stands on")
        if self.kind == "gap" and len(self.gap_buildings) != 2:
            p.add("gap_buildings", f"a gap position must name exactly two buildings, "
                                   f"got {len(self.gap_buildings)}")
        _raise(p)


@dataclass(frozen=True)
class Turbine:
    """A small wind turbine with its power curve (at 1.225 kg/m³, as curves are published).

    The curve is a table of hub-height speeds [m/s] and electrical power [W], interpolated
    linearly; zero outside ``cut_in_ms``..``cut_out_ms``.
    """

    id: str
    name: str
    axis: str
    rated_power_w: float
    curve_speed_ms: tuple[float, ...]
    curve_power_w: tuple[float, ...]
    cut_in_ms: float
    rated_speed_ms: float
    cut_out_ms: float
    rotor_diameter_m: float = 0.0
    #: Swept area [m²]; when 0 it is π D²/4 for a horizontal axis rotor.
    swept_area_m2: float = 0.0
    #: Rotor height [m] of a vertical-axis rotor (swept area = diameter × height).
    rotor_height_m: float = 0.0
    regulation: str = "stall"
    #: Thrust coefficient near rated speed; 8/9 is the actuator-disc value at the Betz optimum.
    thrust_coefficient: float = 0.8
    sound_power_db: float = 90.0
    mass_kg: float = 50.0
    installed_cost: float = 5000.0
    iec_class: str = "II"
    #: Reference wind speed [m/s] for class S only.
    v_ref_ms: float = 0.0
    #: Turbulence intensity the published curve was measured at [-]. Curves tested to
    #: IEC 61400-12-1 are typically measured at 10-15 % (from memory); 0.12 when not stated.
    power_curve_ti: float = 0.12
    #: Projected (planform) area of all blades, parked [m²]; 0 estimates it from the swept
    #: area and a typical solidity (engine.energy.loads.PARKED_SOLIDITY).
    blade_projected_area_m2: float = 0.0
    #: The maker's declared parked-rotor load at the class's extreme wind [N]; 0 = not declared.
    parked_thrust_n: float = 0.0
    #: Certification (checked in engine.core.consent.turbine_problems): test standard and body,
    #: reference annual energy at 5 m/s mean [kWh], declared apparent sound power [dB(A)],
    #: and sound power per hub wind speed as declared in the manner of IEC 61400-11.
    certified: bool = False
    test_standard: str = ""
    test_body: str = ""
    reference_aep_5ms_kwh: float = 0.0
    declared_sound_power_db: float = 0.0
    sound_power_speed_ms: tuple[float, ...] = ()
    sound_power_by_speed_db: tuple[float, ...] = ()
    #: Rotor speed range [rpm] as (lowest, highest) in operation, where known (vibration).
    rotor_speed_rpm: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        _id(p, "id", self.id)
        _choice(p, "axis", self.axis, AXIS_TYPES)
        _choice(p, "regulation", self.regulation, REGULATION_TYPES)
        _choice(p, "iec_class", self.iec_class, IEC_SMALL_CLASSES)
        check_range(p, "rated_power_w", self.rated_power_w, 0, 100000, "W", lo_open=True)
        check_range(p, "rotor_diameter_m", self.rotor_diameter_m, 0, 20, "m")
        check_range(p, "swept_area_m2", self.swept_area_m2, 0, 200, "m²")
        check_range(p, "rotor_height_m", self.rotor_height_m, 0, 20, "m")
        check_range(p, "thrust_coefficient", self.thrust_coefficient, 0, 2, "")
        check_range(p, "sound_power_db", self.sound_power_db, 30, 130, "dB(A)")
        check_range(p, "mass_kg", self.mass_kg, 0, 20000, "kg")
        check_range(p, "installed_cost", self.installed_cost, 0, 1e7, "")
        check_range(p, "power_curve_ti", self.power_curve_ti, 0, 0.5, "")
        check_range(p, "blade_projected_area_m2", self.blade_projected_area_m2, 0, 200, "m²")
        check_range(p, "parked_thrust_n", self.parked_thrust_n, 0, 1e6, "N")
        speeds, power = self.curve_speed_ms, self.curve_power_w
        if len(speeds) < 2:
            p.add("curve_speed_ms", f"the power curve needs at least 2 points, got {len(speeds)}")
        if len(speeds) != len(power):
            p.add("curve_power_w", f"must have one value per speed ({len(speeds)}), got {len(power)}")
        try:
            bad = [i for i in range(1, len(speeds)) if not float(speeds[i]) > float(speeds[i - 1])]
            if bad:
                p.add("curve_speed_ms", f"speeds must increase strictly; check row {bad[0] + 1} "
                                        f"({speeds[bad[0]]} m/s after {speeds[bad[0] - 1]} m/s)")
            if speeds and (float(speeds[0]) < 0 or float(speeds[-1]) > 50):
                p.add("curve_speed_ms", "speeds must lie within 0..50 m/s")
            neg = [i for i, v in enumerate(power) if float(v) < 0]
            if neg:
                p.add("curve_power_w", f"power must not be negative; row {neg[0] + 1} has {power[neg[0]]} W")
            # Rated power is the curve's peak, so AEP <= rated power x 8760 h holds.
            over = [i for i, v in enumerate(power) if float(v) > float(self.rated_power_w) * (1 + 1e-9)]
            if over:
                p.add("curve_power_w", f"row {over[0] + 1} has {power[over[0]]} W, more than the "
                                       f"rated power {self.rated_power_w} W; set rated_power_w to "
                                       "the curve's peak, or check kW/W units")
        except (TypeError, ValueError):
            p.add("curve_speed_ms", "power-curve speeds and powers must be numbers")
        # Upper bounds (common practice): small turbines cut in below 10 m/s; no curve runs
        # beyond a 50 m/s speed limit, and rated power is reached below cut-out (an idealised
        # cubic curve may reach it close to the limit); the IEC 61400-2 reference speeds are
        # 37.5-50 m/s for classes I-IV, and class S stays below 70 m/s.
        check_range(p, "cut_in_ms", self.cut_in_ms, 0, 15, "m/s")
        check_range(p, "rated_speed_ms", self.rated_speed_ms, 0, 50, "m/s", lo_open=True)
        check_range(p, "cut_out_ms", self.cut_out_ms, 0, 50, "m/s", lo_open=True)
        check_range(p, "v_ref_ms", self.v_ref_ms, 0, 70, "m/s")
        if not (float(self.cut_in_ms) < float(self.rated_speed_ms) < float(self.cut_out_ms)):
            p.add("cut_in_ms", f"need cut-in < rated < cut-out speed, got {self.cut_in_ms} < "
                               f"{self.rated_speed_ms} < {self.cut_out_ms} m/s")
        if self.axis == "vertical" and self.swept_area_m2 <= 0 and not (
                self.rotor_diameter_m > 0 and self.rotor_height_m > 0):
            p.add("swept_area_m2", "a vertical-axis rotor needs swept_area_m2, or rotor_diameter_m "
                                   "and rotor_height_m")
        if self.axis == "horizontal" and self.swept_area_m2 <= 0 and self.rotor_diameter_m <= 0:
            p.add("rotor_diameter_m", "a horizontal-axis rotor needs rotor_diameter_m > 0 "
                                      "(or swept_area_m2)")
        if self.iec_class == "S" and self.v_ref_ms <= 0:
            p.add("v_ref_ms", "class S needs its reference wind speed v_ref_ms > 0 m/s")
        p.extend(turbine_problems(self))
        if not p and self.area_m2 > 0:
            # Betz: no curve point may hold more power than 16/27 of the wind's at 1.225 kg/m³.
            for i, (v, pw) in enumerate(zip(speeds, power)):
                if v > 0 and pw > 0:
                    cp = pw / (0.5 * RHO_STANDARD * self.area_m2 * v ** 3)
                    if cp > BETZ_CP + 1e-9:
                        p.add("curve_power_w", f"row {i + 1}: {pw:g} W at {v:g} m/s means Cp = "
                                               f"{cp:.2f} > Betz limit 16/27 = 0.593 for "
                                               f"{self.area_m2:.2f} m² swept area; check the "
                                               "rotor size or the units")
                        break
        _raise(p)

    @property
    def area_m2(self) -> float:
        """Swept area [m²]."""
        if self.swept_area_m2 > 0:
            return float(self.swept_area_m2)
        if self.axis == "vertical":
            return float(self.rotor_diameter_m * self.rotor_height_m)
        return math.pi * float(self.rotor_diameter_m) ** 2 / 4.0

    @property
    def rotor_radius_m(self) -> float:
        """Half the rotor's vertical extent [m] (for clearance checks)."""
        if self.axis == "vertical" and self.rotor_height_m > 0:
            return self.rotor_height_m / 2.0
        if self.rotor_diameter_m > 0:
            return self.rotor_diameter_m / 2.0
        return math.sqrt(self.area_m2 / math.pi)


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
        _raise(p)


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
        _choice(p, "load_profile", self.load_profile, LOAD_PROFILES)
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
        _raise(p)


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
        _raise(p)


@dataclass(frozen=True)
class Receptor:
    """A place where noise matters (a window, a garden), with its limit.

    ``facing_deg`` is the bearing a window looks out to (None: not a window, no flicker);
    ``background_db`` per ``background_speed_ms`` is the measured background (else a default).
    """

    id: str
    x_m: float
    y_m: float
    height_m: float = 4.0
    limit_db: float = 40.0
    facing_deg: Optional[float] = None
    window_height_m: float = 1.2
    dwelling: bool = True
    background_speed_ms: tuple[float, ...] = ()
    background_db: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        _id(p, "id", self.id)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "height_m", self.height_m, 0, 300, "m")
        check_range(p, "limit_db", self.limit_db, 10, 100, "dB(A)")
        p.extend(receptor_problems(self))
        _raise(p)


@dataclass(frozen=True)
class SpotReading:
    """Short paired readings: a handheld sensor at a position and a reference at the same time."""

    position_id: str
    direction_deg: float
    position_speed_ms: tuple[float, ...]
    reference_speed_ms: tuple[float, ...]
    reference_height_m: float = 10.0
    note: str = ""
    #: Replace the model's speed-up of this position and sector by the measured one.
    use_for_calibration: bool = False

    def __post_init__(self):
        p = Problems()
        _id(p, "position_id", self.position_id)
        check_range(p, "direction_deg", self.direction_deg, 0, 360, "deg", hi_open=True)
        if len(self.position_speed_ms) != len(self.reference_speed_ms):
            p.add("reference_speed_ms", "needs one reference reading per position reading")
        if len(self.position_speed_ms) < 3:
            p.add("position_speed_ms", "needs at least 3 paired readings")
        for name in ("position_speed_ms", "reference_speed_ms"):
            for i, v in enumerate(getattr(self, name)):
                check_range(p, f"{name}[{i}]", v, 0, 60, "m/s")
        if self.reference_speed_ms and not any(
                isinstance(v, (int, float)) and v > 0 for v in self.reference_speed_ms):
            # The speed-up is a ratio to the reference: no reference wind, nothing to set.
            p.add("reference_speed_ms",
                  "all reference readings are 0 m/s; record readings while the wind blows")
        _raise(p)


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
        _choice(p, "objective", self.objective, OBJECTIVES)
        if not isinstance(self.viability_first, bool):
            p.add("viability_first", f"must be true or false, got {self.viability_first!r}")
        check_range(p, "max_mast_height_m", self.max_mast_height_m, 0.5, 60, "m")
        check_range(p, "max_thrust_n", self.max_thrust_n, 0, 1e6, "N")
        _raise(p)


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
        _choice(p, "method", self.method, TRANSFER_METHODS)
        check_range(p, "power_law_exponent", self.power_law_exponent, 0, 0.6, "")
        _choice(p, "morphometry_layout", self.morphometry_layout, MORPHOMETRY_LAYOUTS)
        check_range(p, "sector_fetch_m", self.sector_fetch_m, 50, 5000, "m")
        for name in ("use_morphometry", "adjust_shape_with_height", "sector_morphometry"):
            if not isinstance(getattr(self, name), bool):
                p.add(name, f"must be true or false, got {getattr(self, name)!r}")
        _raise(p)


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
        _raise(p)


@dataclass(frozen=True)
class Assessment:
    """Everything a result depends on: what a site file holds."""

    site: Site
    climate: WindClimate
    buildings: tuple[Building, ...]
    positions: tuple[Position, ...]
    turbines: tuple[Turbine, ...]
    losses: Losses = field(default_factory=Losses)
    economics: Economics = field(default_factory=Economics)
    uncertainty: Uncertainty = field(default_factory=Uncertainty)
    ranking: RankingSettings = field(default_factory=RankingSettings)
    receptors: tuple[Receptor, ...] = ()
    spot_readings: tuple[SpotReading, ...] = ()
    transfer: TransferSettings = field(default_factory=TransferSettings)
    energy: EnergySettings = field(default_factory=EnergySettings)
    consent: ConsentSettings = field(default_factory=ConsentSettings)
    format_version: int = FORMAT_VERSION

    def __post_init__(self):
        p = Problems()
        if self.format_version != FORMAT_VERSION:
            p.add("format_version", f"must be {FORMAT_VERSION}, got {self.format_version!r}")
        for group in ("buildings", "positions", "turbines", "receptors"):
            seen = set()
            for i, obj in enumerate(getattr(self, group)):
                if obj.id in seen:
                    p.add(f"{group}[{i}].id", f"duplicate id {obj.id!r}; ids must be unique")
                seen.add(obj.id)
        if not self.positions:
            p.add("positions", "list at least one candidate position")
        if not self.turbines:
            p.add("turbines", "list at least one turbine")
        b_ids = {b.id for b in self.buildings}
        for i, pos in enumerate(self.positions):
            if pos.kind == "roof" and pos.building_id not in b_ids:
                p.add(f"positions[{i}].building_id",
                      f"names building {pos.building_id!r}, which is not in buildings")
            if pos.kind == "gap":
                for b in pos.gap_buildings:
                    if b not in b_ids:
                        p.add(f"positions[{i}].gap_buildings",
                              f"names building {b!r}, which is not in buildings")
                if len(set(pos.gap_buildings)) != len(pos.gap_buildings):
                    p.add(f"positions[{i}].gap_buildings", "must name two different buildings")
        if self.transfer.use_morphometry:
            for name in ("plan_area_fraction", "frontal_area_fraction", "mean_building_height_m"):
                if getattr(self.site, name) is None:
                    p.add(f"site.{name}", "is needed when transfer.use_morphometry is true; "
                                          "enter it or set use_morphometry to false")
        pos_ids = {q.id for q in self.positions}
        check_measured_position(p, self)
        for i, s in enumerate(self.spot_readings):
            if s.position_id not in pos_ids:
                p.add(f"spot_readings[{i}].position_id",
                      f"names position {s.position_id!r}, which is not in positions")
        _raise(p)

    def building(self, building_id: str) -> Building:
        for b in self.buildings:
            if b.id == building_id:
                return b
        raise InputError([("building_id", f"no building {building_id!r}")])

    def base_height_m(self, pos: Position) -> float:
        """Height of a position's base above ground [m] (roof surface for roof positions)."""
        if pos.kind == "roof":
            b = self.building(pos.building_id)
            return float(b.height_m)
        return 0.0

    def hub_height_m(self, pos: Position) -> float:
        """Hub height above ground [m]."""
        return self.base_height_m(pos) + float(pos.mast_height_m)
