"""Energy yield: IEC 61400-12-1 method of bins against per-sector Weibull climates.

The chain for one site, all arrays broadcast over (position P, turbine T, sector S, bin edge J):

1. the published curve (at 1.225 kg/m³) is carried to the site's air density
   (:func:`engine.energy.curves.density_corrected_power_w`, stall and pitch variants);
2. it is carried from the turbulence it was measured at to the site's
   (:func:`site_turbulence_curve_w`: only the difference is normalised, with conservative
   allowances for small rotors in strong turbulence and no credit in recirculation), the
   Gaussian averages exact for the piecewise-linear curve (:func:`gaussian_average_segments`;
   :func:`gaussian_average` for any function), tabulated once per turbine over the
   turbulence intensities that occur (:func:`turbulent_curve_table_w`) and looked up per
   position and sector;
3. skewed inflow lowers the speed the rotor sees, by axis type (:func:`skew_speed_factor`);
4. the curve is integrated against each sector's Weibull exactly (:mod:`engine.energy.exact`)
   and by the method of bins beside it (:class:`BinsSetup`, :func:`aep_method_of_bins_wh` for
   a plain curve);
5. the losses chain turns gross into net energy (:func:`losses_chain`).

Steps 1-3 are in :mod:`engine.energy.curves` and the method of bins in
:mod:`engine.energy.bins`; their public names are also read from this module.

:func:`yield_arrays` runs steps 1-5 and the speed sensitivity d ln E / d ln V used by
:mod:`engine.energy.uncertainty`; :func:`monthly_energy_wh` splits the year when the climate has
monthly mean speeds.

References
----------
IEC 61400-12-1:2017, Wind energy generation systems - Part 12-1: Power performance measurements
of electricity producing wind turbines (method of bins; air-density normalisation; annex on
turbulence normalisation). Wording and clause numbers from memory.
"""
from __future__ import annotations

import calendar
import math
from dataclasses import dataclass

import numpy as np

from engine.climate.weibull import mixture_mean_ms
from engine.energy import exact as energy_exact
# The curve and bins steps live in their own modules; their names are read from here too, so
# that the chain's one energy module keeps one place to look for each step.
from engine.energy.bins import (BINS_BLOCK_ROWS, BINS_GATHER_ROWS, BinsSetup,  # noqa: F401
                                aep_method_of_bins_wh, bin_weights_w, blocked_bins_sums,
                                curve_model_args, prepare_bins, table_weights_w, ti_nodes,
                                weibull_x)
from engine.energy.curves import (DEFAULT_EDGES_MS, GAUSS_NODES, HOURS_PER_YEAR,  # noqa: F401
                                  SKEW_POWER_EXPONENT, TI_MAX, TI_TABLE_STEP, curve_on_edges_w,
                                  curve_segments, density_corrected_power_w, gaussian_average,
                                  gaussian_average_segments, lookup_turbulent_curve_w,
                                  power_at_speed_w, power_limit_w, published_power_w,
                                  site_turbulence_curve_w, skew_speed_factor, ti_grid_for,
                                  turbulent_curve_table_w)

#: Relative step of the speed scale for the numerical sensitivity d ln E / d ln V [-].
SENSITIVITY_STEP = 0.01
#: Loss names in the order the chain applies them (engine.core.model.Losses fields).
LOSS_ORDER = ("availability", "electrical", "icing", "cut_out_hysteresis", "other")


def losses_chain(losses) -> list:
    """The losses as an ordered, visible chain: ``(name, fraction, kept_after)`` per step.

    Notes
    -----
    Net = Gross Π (1 - L_i): losses multiply, they are not added (common practice).
    ``kept_after`` is the fraction of gross energy left after that step.
    """
    kept, out = 1.0, []
    for name in LOSS_ORDER:
        frac = float(getattr(losses, name))
        kept *= 1.0 - frac
        out.append((name, frac, kept))
    return out


def net_fraction(losses) -> float:
    """Fraction of gross energy left after every loss, Π (1 - L_i) [-]."""
    return losses_chain(losses)[-1][2]


@dataclass(frozen=True)
class YieldArrays:
    """Yield of every position x turbine; arrays (P, T).

    Attributes
    ----------
    gross_wh : gross energy per year (density, turbulence and skew corrected) [Wh], by the
        exact integral of the curve (:mod:`engine.energy.exact`) or by the method of bins
    net_wh : after the losses chain [Wh]
    bins_gross_wh : the same gross energy by the method of bins (the cross-check) [Wh]
    published_gross_wh : gross energy on the published curve at the site's density, skew
        included, without any turbulence adjustment [Wh]; the turbulence effect is
        ``gross_wh / published_gross_wh − 1``
    speed_sensitivity : d ln E / d ln V, the relative change of energy per relative change of
        every sector's speed scale [-]
    skew_factor_mean : frequency-weighted speed factor from skewed inflow [-]
    rated_power_w : (T,) rated power [W]
    setup : the :class:`BinsSetup` behind the numbers
    """

    gross_wh: np.ndarray
    net_wh: np.ndarray
    speed_sensitivity: np.ndarray
    skew_factor_mean: np.ndarray
    rated_power_w: np.ndarray
    setup: BinsSetup
    bins_gross_wh: np.ndarray = None
    published_gross_wh: np.ndarray = None

    @property
    def turbulence_effect(self) -> np.ndarray:
        """Relative change of gross energy the turbulence adjustment made [-] (0 with none)."""
        ref = self.published_gross_wh
        return np.divide(self.gross_wh, ref, out=np.ones_like(self.gross_wh),
                         where=ref > 0) - 1.0

    @property
    def capacity_factor(self) -> np.ndarray:
        """Net energy over rated power x 8760 h [-]."""
        return self.net_wh / (self.rated_power_w[None, :] * HOURS_PER_YEAR)

    @property
    def full_load_hours(self) -> np.ndarray:
        """Net energy over rated power [h/year]."""
        return self.net_wh / self.rated_power_w[None, :]


def speed_sensitivity(setup: BinsSetup, step=SENSITIVITY_STEP) -> np.ndarray:
    """d ln E / d ln V for every position x turbine, by central difference [-], (P, T).

    Notes
    -----
    s = [ln E(c e^h) - ln E(c e^-h)] / (2h), every sector's scale moved together, the
    turbulence σ = TI · V moving with the speeds; 0 where the energy is 0.
    """
    h = float(step)
    up, down = setup.energy_wh(math.exp(h)), setup.energy_wh(math.exp(-h))
    ok = (up > 0) & (down > 0)
    sens = (np.log(np.where(ok, up, 1.0)) - np.log(np.where(ok, down, 1.0))) / (2.0 * h)
    return np.where(ok, sens, 0.0)


def energy_and_sensitivity(setup: BinsSetup, hours=HOURS_PER_YEAR):
    """Energy (P, T) [Wh] and d ln E / d ln V (P, T) [-] from the derivative of the bins sum.

    Notes
    -----
    E(λ) = N_h Σ_s f_s Σ_j exp(-x_j λ^-k) w_j, so dE/d ln λ = N_h Σ_s f_s k_s Σ_j x_j
    exp(-x_j) w_j at λ = 1, the exact slope of the binned sum from the same exponentials;
    s = (dE/d ln λ) / E, the same quantity as the central difference of
    :func:`speed_sensitivity` (to O(h²)) at the cost of one pass.
    """
    e, slope = setup.energy_and_slope_wh(hours)
    sens = np.divide(slope, e, out=np.zeros_like(e), where=e > 0)
    return e, sens


def yield_arrays(frequency, weibull_k, weibull_c_ms, turbulence_intensity, inflow_skew_deg,
                 turbines, air_density_kgm3, losses, edges_ms=DEFAULT_EDGES_MS,
                 turbulence=True, reference_ti=None, sensitivity_step=0.0,
                 energy_settings=None, no_credit=None, integration="exact",
                 with_sensitivity=True):
    """Gross and net yield with every correction, and the speed sensitivity, arrays (P, T).

    Parameters are those of :func:`prepare_bins`, plus ``losses``
    (:class:`engine.core.model.Losses`), ``sensitivity_step`` (0 takes the slope of the bins
    sum, :func:`energy_and_sensitivity`; a step h > 0 the central difference,
    :func:`speed_sensitivity`) and ``integration``: "exact" (the closed-form integral of the
    piecewise-linear curve, :func:`engine.energy.exact.exact_energy_wh`) or "bins" (the
    method of bins, IEC 61400-12-1). ``with_sensitivity=False`` leaves the sensitivity out
    (NaN), which halves the cost of the bins sums (the portfolio screening's choice).

    Notes
    -----
    Gross = the chosen integral of the corrected curves; Net = Gross Π (1 - L_i)
    (:func:`losses_chain`). The method of bins is always computed beside it
    (``bins_gross_wh``), and the published curve without turbulence adjustment
    (``published_gross_wh``) by the same integral, for the turbulence effect. The speed
    sensitivity is the bins sum's (a ratio, which the bins' bias hardly moves).
    """
    if integration not in ("exact", "bins"):
        raise ValueError(f"integration must be 'exact' or 'bins', got {integration!r}")
    setup = prepare_bins(frequency, weibull_k, weibull_c_ms, turbulence_intensity,
                         inflow_skew_deg, turbines, air_density_kgm3, edges_ms, turbulence,
                         reference_ti, energy_settings, no_credit)
    plain = prepare_bins(frequency, weibull_k, weibull_c_ms, turbulence_intensity,
                         inflow_skew_deg, turbines, air_density_kgm3, edges_ms, False)
    if not with_sensitivity:
        bins = setup.energy_wh(1.0)
        sens = np.full_like(bins, np.nan)
    elif sensitivity_step:
        bins, sens = setup.energy_wh(1.0), speed_sensitivity(setup, sensitivity_step)
    else:
        bins, sens = energy_and_sensitivity(setup)
    if integration == "exact":
        gross, published = energy_exact.exact_energy_wh(setup, also=(plain,))
    else:
        gross, published = bins, plain.energy_wh(1.0)
    rated = np.array([t.rated_power_w for t in turbines], float)
    return YieldArrays(gross_wh=gross, net_wh=gross * net_fraction(losses),
                       speed_sensitivity=sens,
                       skew_factor_mean=np.sum(setup.frequency * setup.skew_factor, axis=-1),
                       rated_power_w=rated, setup=setup, bins_gross_wh=bins,
                       published_gross_wh=published)


def month_hours(year: int = 2025) -> np.ndarray:
    """Hours in each month of a non-leap year, January first [h] (sums to 8760)."""
    return np.array([calendar.monthrange(year, m)[1] * 24.0 for m in range(1, 13)])


def monthly_energy_wh(annual_wh, monthly_mean_ms, climate, setup: BinsSetup):
    """Split the annual energy into months, shape (P, T, 12) [Wh].

    Parameters
    ----------
    annual_wh : (P, T) annual energy to split [Wh]
    monthly_mean_ms : (12,) monthly mean speeds at the climate's height [m/s]
    climate : :class:`engine.core.model.WindClimate` the months belong to
    setup : the :class:`BinsSetup` of the year (corrected curves, skew, effective climate)

    Notes
    -----
    Month m scales every sector's Weibull scale by r_m = V̄_m / V̄ (V̄ the annual mean of the
    climate at its height; k kept, common practice) and weighs the energy rate by its hours;
    the shares then divide ``annual_wh``, so the months add up to the year exactly. A month
    with zero mean speed has no energy.
    """
    mm = np.asarray(monthly_mean_ms, float)
    annual_mean = float(mixture_mean_ms(np.asarray(climate.frequency, float),
                                        np.asarray(climate.weibull_k, float),
                                        np.asarray(climate.weibull_c_ms, float)))
    ratio = mm / annual_mean  # (12,)
    rate = setup.energy_wh(np.where(ratio > 0, ratio, 1.0), hours=1.0)  # (12, P, T)
    e = np.where(ratio[:, None, None] > 0, rate, 0.0) * month_hours()[:, None, None]
    total = e.sum(axis=0)
    share = np.divide(e, total[None], out=np.full_like(e, 1.0 / 12.0), where=total[None] > 0)
    return np.moveaxis(share, 0, -1) * np.asarray(annual_wh, float)[..., None]
