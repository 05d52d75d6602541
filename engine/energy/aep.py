"""Energy yield: IEC 61400-12-1 method of bins against per-sector Weibull climates.

The chain for one site, all arrays broadcast over (position P, turbine T, sector S, bin edge J):

1. the published curve (at 1.225 kg/m³) is carried to the site's air density
   (:func:`density_corrected_power_w`, stall and pitch variants);
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
import functools
import math
from dataclasses import dataclass

import numpy as np
from scipy.special import ndtr

from engine.core.model import RHO_STANDARD
from engine.climate.weibull import mixture_mean_ms, weibull_cdf

HOURS_PER_YEAR = 8760.0
#: Default bin edges [m/s]: 0.5 m/s bins up to 40 m/s.
DEFAULT_EDGES_MS = np.arange(0.0, 40.0 + 1e-9, 0.5)
#: Gauss-Hermite nodes for the turbulence average (exact for polynomials up to degree 47).
GAUSS_NODES = 24
#: Step of the turbulence-intensity table [-]; linear interpolation between rows.
TI_TABLE_STEP = 0.02
#: Turbulence intensities above this are held at it [-] (beyond any measured rooftop value).
TI_MAX = 0.8
#: Exponent n of the skewed-inflow power factor cos^n(γ) by rotor axis (see skew_speed_factor).
SKEW_POWER_EXPONENT = {"horizontal": 3.0, "vertical": 0.0}
#: Relative step of the speed scale for the numerical sensitivity d ln E / d ln V [-].
SENSITIVITY_STEP = 0.01
#: Loss names in the order the chain applies them (engine.core.model.Losses fields).
LOSS_ORDER = ("availability", "electrical", "icing", "cut_out_hysteresis", "other")


def power_at_speed_w(speed_ms, curve_speed_ms, curve_power_w, cut_in_ms, cut_out_ms):
    """Power from a curve table by linear interpolation; 0 below cut-in and above cut-out [W].

    Broadcasts ``speed_ms`` against one curve.
    """
    v = np.asarray(speed_ms, dtype=float)
    p = np.interp(v, np.asarray(curve_speed_ms, float), np.asarray(curve_power_w, float),
                  left=0.0, right=0.0)
    return np.where((v < cut_in_ms) | (v > cut_out_ms), 0.0, p)


def curve_on_edges_w(turbines, edges_ms=DEFAULT_EDGES_MS):
    """Power of each turbine at each bin edge [W], shape (T, J) (published curve, no corrections)."""
    return np.stack([power_at_speed_w(edges_ms, t.curve_speed_ms, t.curve_power_w,
                                      t.cut_in_ms, t.cut_out_ms) for t in turbines])


def power_limit_w(turbine) -> float:
    """Largest power the turbine is credited with [W]: the published curve's peak.

    Denser air never lifts a curve above the most it was shown to deliver (cautious; usually
    the peak is the rated power, the generator or inverter limit).
    """
    return float(max(turbine.curve_power_w))


def density_corrected_power_w(speed_ms, turbine, air_density_kgm3, rho0_kgm3=RHO_STANDARD):
    """The published curve carried to the site's air density [W].

    Parameters
    ----------
    speed_ms : array of hub-height speeds at the site [m/s]
    turbine : :class:`engine.core.model.Turbine`; ``regulation`` picks the variant
    air_density_kgm3 : site air density ρ [kg/m³]
    rho0_kgm3 : density the curve is published at, ρ0 [kg/m³]

    Notes
    -----
    Stall regulation: P(V) = P0(V) ρ/ρ0, capped at :func:`power_limit_w` (the curve's peak,
    normally the generator or inverter limit; common practice). Pitch (active) regulation: the rotor at speed V in air
    of density ρ behaves as the published rotor at V_n = V (ρ/ρ0)^(1/3), so
    P(V) = P0(V (ρ/ρ0)^(1/3)). Cut-in and cut-out act on the actual speed V. Both variants
    keep the power coefficient of each curve point, so a curve within the Betz limit stays
    within it.

    References
    ----------
    IEC 61400-12-1:2017, air-density normalisation of the power curve (from memory).
    """
    v = np.asarray(speed_ms, dtype=float)
    ratio = float(air_density_kgm3) / float(rho0_kgm3)
    sp = np.asarray(turbine.curve_speed_ms, float)
    pw = np.asarray(turbine.curve_power_w, float)
    if turbine.regulation == "pitch":
        p = np.interp(v * ratio ** (1.0 / 3.0), sp, pw, left=0.0, right=0.0)
    else:
        p = np.minimum(np.interp(v, sp, pw, left=0.0, right=0.0) * ratio, power_limit_w(turbine))
    return np.where((v < turbine.cut_in_ms) | (v > turbine.cut_out_ms), 0.0, p)


def gaussian_average(power_fn, speed_ms, sigma_ms, n_nodes=GAUSS_NODES):
    """E[P(V + X)] with X ~ N(0, σ²), by Gauss-Hermite quadrature [unit of ``power_fn``].

    Parameters
    ----------
    power_fn : vectorised callable speed [m/s] -> power; must accept negative speeds
    speed_ms : array of mean speeds V [m/s]
    sigma_ms : array broadcasting with ``speed_ms``, standard deviation σ [m/s]
    n_nodes : number of quadrature nodes

    Notes
    -----
    E[P(V + X)] = Σ_m w_m P(V + σ z_m) with the probabilists' Hermite nodes z_m and weights
    w_m / √(2π). The weights are positive and sum to 1, so the average never exceeds the
    curve's maximum nor goes below 0; σ = 0 returns P(V) exactly; a cubic P gives
    V³ (1 + 3 σ²/V²) exactly.
    """
    z, w = np.polynomial.hermite_e.hermegauss(int(n_nodes))
    w = w / math.sqrt(2.0 * math.pi)
    v = np.asarray(speed_ms, dtype=float)[..., None]
    s = np.asarray(sigma_ms, dtype=float)[..., None]
    return np.sum(np.asarray(power_fn(v + s * z)) * w, axis=-1)


def curve_segments(turbine, air_density_kgm3, rho0_kgm3=RHO_STANDARD):
    """The density-corrected curve as exact linear pieces: knots x (K+1,), α (K,), β (K,).

    On [x_k, x_k+1) the power is α_k + β_k V [W]; 0 below the first and above the last knot.

    Notes
    -----
    Knots are the curve speeds (divided by (ρ/ρ0)^(1/3) for pitch regulation), cut-in,
    cut-out and, for stall regulation, where P0 ρ/ρ0 crosses the power limit, so the pieces
    reproduce :func:`density_corrected_power_w` exactly, jumps at cut-in and cut-out included.
    """
    ratio = float(air_density_kgm3) / float(rho0_kgm3)
    sp = np.asarray(turbine.curve_speed_ms, float)
    pw = np.asarray(turbine.curve_power_w, float)
    if turbine.regulation == "pitch":
        sp = sp / ratio ** (1.0 / 3.0)
    else:
        pw = pw * ratio
        limit = power_limit_w(turbine)
        d = pw - limit
        cross = np.flatnonzero(d[:-1] * d[1:] < 0)
        x_cross = sp[cross] + (limit - pw[cross]) * (sp[cross + 1] - sp[cross]) / (
            pw[cross + 1] - pw[cross])
        sp = np.concatenate([sp, x_cross])
        pw = np.concatenate([pw, np.full(len(x_cross), limit)])
        order = np.argsort(sp, kind="stable")
        sp, pw = sp[order], np.minimum(pw[order], limit)
    x = np.unique(np.concatenate([sp, [turbine.cut_in_ms, turbine.cut_out_ms]]))
    y = np.interp(x, sp, pw, left=0.0, right=0.0)
    # Each piece's line through its end points; a piece outside cut-in..cut-out, or outside
    # the table, carries no power.
    x0, x1, y0, y1 = x[:-1], x[1:], y[:-1], y[1:]
    mid = 0.5 * (x0 + x1)
    on = (mid >= turbine.cut_in_ms) & (mid <= turbine.cut_out_ms) & (mid >= sp[0]) & (mid <= sp[-1])
    beta = np.where(on, (y1 - y0) / (x1 - x0), 0.0)
    alpha = np.where(on, y0 - beta * x0, 0.0)
    # Merge neighbouring pieces on the same line (the flat rated part, the zero below
    # cut-in): exact, and it shortens the work of the turbulence average.
    new_piece = np.ones(len(alpha), bool)
    new_piece[1:] = (np.abs(np.diff(alpha)) > 1e-9 * (1.0 + np.abs(alpha[1:]))) | (
        np.abs(np.diff(beta)) > 1e-12 * (1.0 + np.abs(beta[1:])))
    starts = np.flatnonzero(new_piece)
    return np.append(x[starts], x[-1]), alpha[starts], beta[starts]


def gaussian_average_segments(knots, alpha, beta, mean_ms, sigma_ms):
    """Exact E[P(V + X)], X ~ N(0, σ²), for a piecewise-linear P (:func:`curve_segments`) [W].

    Parameters
    ----------
    knots, alpha, beta : the pieces, (K+1,), (K,), (K,)
    mean_ms, sigma_ms : arrays broadcasting together, V and σ [m/s]; σ = 0 returns P(V)

    Notes
    -----
    With z_k = (x_k - V)/σ, Φ and φ the standard normal CDF and density:
    E = Σ_k α_k [Φ(z_k+1) - Φ(z_k)] + β_k {V [Φ(z_k+1) - Φ(z_k)] - σ [φ(z_k+1) - φ(z_k)]},
    since ∫ x φ((x - V)/σ)/σ dx = V Φ(z) - σ φ(z). No quadrature error, so jumps at cut-in
    and cut-out are averaged exactly.
    """
    v = np.asarray(mean_ms, float)[..., None]
    s = np.asarray(sigma_ms, float)[..., None]
    pos = s > 1e-12  # below 1e-12 m/s there is nothing to average
    s_safe = np.where(pos, s, 1.0)
    z = (np.asarray(knots, float) - v) / s_safe
    cdf = ndtr(z)
    with np.errstate(over="ignore"):  # a knot far out in a very narrow average: density 0
        pdf = np.exp(-0.5 * z * z) * (1.0 / math.sqrt(2.0 * math.pi))
    d_cdf = np.diff(cdf, axis=-1)
    d_pdf = np.diff(pdf, axis=-1)
    avg = np.sum(alpha * d_cdf + beta * (v * d_cdf - s_safe * d_pdf), axis=-1)
    # σ = 0: the curve itself from the same pieces. At a knot take the larger of the two
    # one-sided values, so the turbine runs at exactly cut-in and at exactly cut-out, as in
    # density_corrected_power_w.
    v0 = v[..., 0]
    inside = (v0 >= knots[0]) & (v0 <= knots[-1])
    at_v = np.zeros_like(v0)
    for side in ("left", "right"):
        k = np.clip(np.searchsorted(knots, v0, side=side) - 1, 0, len(alpha) - 1)
        at_v = np.maximum(at_v, np.where(inside, alpha[k] + beta[k] * v0, 0.0))
    return np.where(pos[..., 0], avg, at_v)


def ti_grid_for(turbulence_intensity, step=TI_TABLE_STEP, ti_max=TI_MAX):
    """Grid of turbulence intensities covering the given values, on multiples of ``step`` [-]."""
    ti = np.clip(np.asarray(turbulence_intensity, float), 0.0, ti_max)
    top = math.floor(ti_max / step + 1e-9)  # the grid never runs past the table's top row,
    lo = min(math.floor(float(ti.min()) / step + 1e-9), top - 1)  # so it is the same rows of
    hi = min(math.ceil(float(ti.max()) / step - 1e-9), top)  # one table whatever the batch
    return np.arange(lo, max(hi, lo + 1) + 1) * step


def published_power_w(knots, alpha, beta, speed_ms, side="max"):
    """The pieces of :func:`curve_segments` evaluated at speeds [W], one-sided at jumps.

    ``side`` "right" takes the value just above a knot, "left" just below, "max" the larger
    of the two (the turbine runs at exactly cut-in and at exactly cut-out); 0 outside.
    """
    v = np.asarray(speed_ms, float)
    if side == "max":
        return np.maximum(published_power_w(knots, alpha, beta, v, "left"),
                          published_power_w(knots, alpha, beta, v, "right"))
    k = np.searchsorted(knots, v, side="right" if side == "right" else "left") - 1
    inside = ((v >= knots[0]) & (v < knots[-1])) if side == "right" else (
        (v > knots[0]) & (v <= knots[-1]))
    k = np.clip(k, 0, len(alpha) - 1)
    return np.where(inside, alpha[k] + beta[k] * v, 0.0)


def site_turbulence_curve_w(turbine, air_density_kgm3, speed_ms, ti, reference_ti=0.0,
                            excess_ti_power_loss=0.0, tracked_ti_fraction=1.0,
                            max_credited_ti=math.inf, no_credit=False, side="max"):
    """The published curve carried to the site's turbulence intensity [W], shape (I, J).

    Parameters
    ----------
    turbine : :class:`engine.core.model.Turbine`
    air_density_kgm3 : site air density [kg/m³] (:func:`curve_segments`)
    speed_ms : (J,) speeds [m/s]
    ti : (I,) site turbulence intensities [-]
    reference_ti : turbulence intensity the curve was measured at, I_c [-]; None takes the
        turbine's ``power_curve_ti``; 0 treats the curve as a zero-turbulence curve
    excess_ti_power_loss : b, fraction of power lost per unit of TI above I_c [-]
    tracked_ti_fraction : f, share of the turbulence's standard deviation the rotor follows [-]
    max_credited_ti : I_max, highest turbulence intensity whose averaging is credited [-]
    no_credit : never above the published curve (a rotor in a recirculation zone)
    side : value at a jump of the published curve, as in :func:`published_power_w`

    Notes
    -----
    Only the difference between the site's and the curve's turbulence is normalised, in the
    manner of the turbulence normalisation of IEC 61400-12-1 (P = P_meas − P_sim(I_c) +
    P_sim(I)), with the published curve standing for the zero-turbulence curve in the
    simulated terms (the first step of the standard's iteration; from memory):

        P_I(V) = [P_c(V) + G(V, f I' V) − G(V, f I_c V)] · max(1 − b max(I − I_c, 0), 0),
        I' = min(I, max(I_max, I_c)),

    G(V, σ) = E[P_c(V + X)], X ~ N(0, σ²), exact for the linear pieces
    (:func:`gaussian_average_segments`), held within 0 and the power limit. At I = I_c the
    published curve is returned unchanged, below I_c the foot of the curve loses what the
    test site's turbulence had added. b, f and I_max are settings
    (:class:`engine.core.model.EnergySettings`): a derived, conservative allowance for small rotors
    in turbulent flow, which deliver less than the maker's curve and increasingly so as
    turbulence rises (Pagnini, Burlando & Repetto 2015), follow gusts only with a lag of 1-2 s
    (Lubitz 2011), and lose energy near furling in gusty wind (Lubitz 2011). No averaging gain
    is credited beyond I_max: the normalisation is meant for turbulence of the order met on
    test sites, and a rotor idling below cut-in does not start in every short gust.

    References
    ----------
    IEC 61400-12-1:2017, annex on turbulence normalisation of power curves (from memory).
    Lubitz, W. D. (2011), "Impact of ambient turbulence on performance of a small wind
    turbine", World Renewable Energy Congress, Linköping Electronic Conf. Proc. 57:4121-4127.
    Pagnini, L. C., Burlando, M. and Repetto, M. P. (2015), "Experimental power curve of small-
    size wind turbines in turbulent urban environment", Applied Energy 154:112-121.
    """
    knots, alpha, beta = curve_segments(turbine, air_density_kgm3)
    v = np.asarray(speed_ms, float)[None, :]
    ti = np.asarray(ti, float)[:, None]
    ref = float(turbine.power_curve_ti if reference_ti is None else reference_ti)
    f = float(tracked_ti_fraction)
    p_c = published_power_w(knots, alpha, beta, v, side)

    def g(sigma):
        sigma = np.broadcast_to(sigma, np.broadcast_shapes(sigma.shape, v.shape))
        avg = gaussian_average_segments(knots, alpha, beta, np.broadcast_to(v, sigma.shape),
                                        sigma)
        return np.where(sigma > 0, avg, p_c)  # σ = 0: the curve itself, same side

    credited = np.minimum(ti, max(float(max_credited_ti), ref))
    # Rows above the credit ceiling share one average: work out each distinct row once.
    levels, row = np.unique(credited[:, 0], return_inverse=True)
    p = p_c + g(f * levels[:, None] * v)[row.ravel()] - g(np.array(f * ref) * v)
    p = p * np.clip(1.0 - float(excess_ti_power_loss) * np.maximum(ti - ref, 0.0), 0.0, 1.0)
    p = np.clip(p, 0.0, power_limit_w(turbine))
    return np.minimum(p, p_c) if no_credit else p


def turbulent_curve_table_w(turbines, air_density_kgm3, ti_grid, edges_ms=DEFAULT_EDGES_MS,
                            reference_ti=0.0, excess_ti_power_loss=0.0, tracked_ti_fraction=1.0,
                            max_credited_ti=math.inf, no_credit=False):
    """Density-corrected, turbulence-adjusted power of each turbine [W], shape (T, I, J).

    Row ``i`` holds the curve at turbulence intensity ``ti_grid[i]`` on the bin edges
    (:func:`site_turbulence_curve_w`; the arguments are its own).

    Parameters
    ----------
    turbines : sequence of :class:`engine.core.model.Turbine`
    air_density_kgm3 : site air density [kg/m³]
    ti_grid : (I,) turbulence intensities [-]
    edges_ms : (J,) bin edges [m/s]
    reference_ti : turbulence intensity contained in the published curves [-]; None each
        turbine's ``power_curve_ti``; 0 (with the other defaults) the plain Gaussian average
        of a zero-turbulence curve, P_I(V) = E[P0(V + X)], X ~ N(0, (I V)²)

    Notes
    -----
    The average of a curve bounded by 0 and its power limit stays within both.
    """
    edges = np.asarray(edges_ms, float)
    ti = np.asarray(ti_grid, float)
    return np.stack([site_turbulence_curve_w(t, air_density_kgm3, edges, ti, reference_ti,
                                             excess_ti_power_loss, tracked_ti_fraction,
                                             max_credited_ti, no_credit) for t in turbines])


@functools.lru_cache(maxsize=64)
def _table_weights_cached(turbines, air_density_kgm3, ti_grid, edges_ms, *model):
    w = bin_weights_w(turbulent_curve_table_w(list(turbines), air_density_kgm3,
                                              np.array(ti_grid), np.array(edges_ms), *model))
    w.flags.writeable = False
    return w


def table_weights_w(turbines, air_density_kgm3, ti_grid, edges_ms=DEFAULT_EDGES_MS,
                    reference_ti=0.0, excess_ti_power_loss=0.0, tracked_ti_fraction=1.0,
                    max_credited_ti=math.inf, no_credit=False):
    """:func:`bin_weights_w` of :func:`turbulent_curve_table_w`, (T, I, J) [W], read-only.

    Kept for the last few argument sets: a screening asks for the same turbines, density and
    table rows chunk after chunk. Each row is computed from its own turbulence intensity
    alone, so a grid on the table's steps (:func:`ti_grid_for`) is taken as rows of one
    whole table from 0 to :data:`TI_MAX`, kept once for all the grids a run meets: the same
    numbers as a table of those rows alone.
    """
    model = (None if reference_ti is None else float(reference_ti),
             float(excess_ti_power_loss), float(tracked_ti_fraction), float(max_credited_ti),
             bool(no_credit))
    try:
        key = (tuple(turbines), float(air_density_kgm3),
               tuple(float(v) for v in np.asarray(edges_ms, float)))
        hash(key)
    except TypeError:  # a turbine that cannot be hashed: compute afresh
        return bin_weights_w(turbulent_curve_table_w(turbines, air_density_kgm3, ti_grid,
                                                     edges_ms, *model))
    grid = np.asarray(ti_grid, float)
    steps = np.rint(grid / TI_TABLE_STEP).astype(np.int64)
    whole_rows = int(round(TI_MAX / TI_TABLE_STEP)) + 1
    if (grid.size and np.array_equal(grid, steps * TI_TABLE_STEP) and steps.min() >= 0
            and steps.max() < whole_rows):
        whole = _table_weights_cached(key[0], key[1], tuple(
            float(v) for v in np.arange(whole_rows) * TI_TABLE_STEP), key[2], *model)
        rows = whole[:, steps]
        rows.flags.writeable = False
        return rows
    return _table_weights_cached(key[0], key[1], tuple(float(v) for v in grid), key[2], *model)


def lookup_turbulent_curve_w(table_w, ti_grid, turbulence_intensity):
    """Curves at each turbulence intensity by linear interpolation in the table [W].

    ``table_w`` (T, I, J), ``turbulence_intensity`` (P, S) -> (P, T, S, J).
    """
    ti_grid = np.asarray(ti_grid, float)
    step = ti_grid[1] - ti_grid[0] if len(ti_grid) > 1 else 1.0
    x = (np.clip(np.asarray(turbulence_intensity, float), ti_grid[0], ti_grid[-1])
         - ti_grid[0]) / step
    lo = np.clip(np.floor(x).astype(int), 0, max(len(ti_grid) - 2, 0))
    hi = np.minimum(lo + 1, len(ti_grid) - 1)
    frac = (x - lo)[:, None, :, None]  # (P, 1, S, 1)
    t_idx = np.arange(table_w.shape[0])[None, :, None]
    a = table_w[t_idx, lo[:, None, :]]  # (P, T, S, J), contiguous
    b = table_w[t_idx, hi[:, None, :]]
    return a + (b - a) * frac


def skew_speed_factor(inflow_skew_deg, axis):
    """Factor on the speed the rotor uses in skewed (inclined) inflow [-].

    Parameters
    ----------
    inflow_skew_deg : array, angle of the mean flow to the horizontal at the rotor [deg]
    axis : ``"horizontal"`` or ``"vertical"`` rotor axis

    Notes
    -----
    Power taken as proportional to cos^n(γ): the speed factor is cos(γ)^(n/3), applied to the
    Weibull scale. A horizontal-axis rotor sees the component along its axis, V cos γ, so
    n = 3 in the cubic part of the curve (cosine-cubed rule, common practice; measured yaw
    losses often fit n ≈ 2, so n = 3 is the cautious choice). A vertical-axis rotor accepts
    flow from any direction in the horizontal and has been reported to lose little, even
    gain, in moderately skewed flow (Mertens, van Kuik & van Bussel 2003, from memory); we
    take n = 0 (no gain claimed). Skew beyond 90° is held at 90°.

    References
    ----------
    Mertens, S., van Kuik, G. and van Bussel, G. (2003), "Performance of an H-Darrieus in the
    skewed flow on a roof", J. Sol. Energy Eng. 125:433 (from memory).
    """
    n = SKEW_POWER_EXPONENT[axis]
    if n == 0.0:  # cos^0: a rotor indifferent to the inflow angle
        return np.ones(np.shape(inflow_skew_deg))
    g = np.radians(np.clip(np.abs(np.asarray(inflow_skew_deg, float)), 0.0, 90.0))
    cos_g = np.cos(g)
    return cos_g if n == 3.0 else cos_g ** (n / 3.0)


def _weibull_x(edges_ms, k, c_ms):
    """(V_j / c)^k on the edges, shape (..., J); k and c broadcast as (...)."""
    edges = np.asarray(edges_ms, float)
    k = np.asarray(k, float)[..., None]
    with np.errstate(divide="ignore"):
        log_v = np.log(edges)  # -inf at V = 0 gives x = 0 below
    # A scale of 0 (full shelter, or flow at 90° to a rotor axis) means no wind: guard the log.
    c = np.maximum(np.asarray(c_ms, float), 1e-9)
    return np.exp(k * (log_v - np.log(c)[..., None]))


def bin_weights_w(power_edges_w):
    """Weights w_j with Σ_i [F(V_i) - F(V_i-1)] (P_i-1 + P_i)/2 = Σ_j exp(-x_j) w_j [W].

    Notes
    -----
    With F = 1 - exp(-x) and bin means m_i = (P_i + P_i+1)/2, summation by parts gives
    w_0 = m_0, w_j = m_j - m_j-1 (0 < j < J-1), w_J-1 = -m_J-2: one exponential per edge
    and one dot product per sector instead of a difference of CDFs.
    """
    pw = np.asarray(power_edges_w, float)
    m = 0.5 * (pw[..., 1:] + pw[..., :-1])
    w = np.empty_like(pw)
    w[..., 0] = m[..., 0]
    w[..., 1:-1] = np.diff(m, axis=-1)
    w[..., -1] = -m[..., -1]
    return w


def aep_method_of_bins_wh(frequency, weibull_k, weibull_c_ms, power_edges_w,
                          edges_ms=DEFAULT_EDGES_MS, hours=HOURS_PER_YEAR):
    """Annual energy [Wh] by the method of bins, summed over sectors.

    Parameters
    ----------
    frequency, weibull_k, weibull_c_ms : arrays (..., S) per sector [-], [-], [m/s]
    power_edges_w : array (..., S, J) or (T, J) power at the bin edges [W]; a leading turbine
        axis is allowed when its shape broadcasts against ``(..., S, J)``
    edges_ms : bin edges V_0 < V_1 < ... [m/s]
    hours : hours in the period [h]

    Notes
    -----
    AEP = N_h Σ_s f_s Σ_i [F_s(V_i) - F_s(V_{i-1})] (P_{i-1} + P_i)/2 with the Weibull CDF F_s,
    the formula of IEC 61400-12-1 with the measured distribution replaced by the sector Weibull.

    References
    ----------
    IEC 61400-12-1:2017, annual energy production (from memory).
    """
    F = weibull_cdf(edges_ms, np.asarray(weibull_k)[..., None], np.asarray(weibull_c_ms)[..., None])
    dF = np.diff(F, axis=-1)  # (..., S, J-1)
    pw = np.asarray(power_edges_w, dtype=float)
    p_mid = 0.5 * (pw[..., 1:] + pw[..., :-1])
    per_sector = np.sum(dF * p_mid, axis=-1)  # broadcast to (..., S)
    return hours * np.sum(np.asarray(frequency) * per_sector, axis=-1)


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


def _ti_nodes(ti_grid, turbulence_intensity):
    """Lower table row and fraction of each turbulence intensity in ``ti_grid``: (lo, frac)."""
    ti_grid = np.asarray(ti_grid, float)
    step = ti_grid[1] - ti_grid[0] if len(ti_grid) > 1 else 1.0
    x = (np.clip(np.asarray(turbulence_intensity, float), ti_grid[0], ti_grid[-1])
         - ti_grid[0]) / step
    lo = np.clip(np.floor(x).astype(int), 0, max(len(ti_grid) - 2, 0))
    return lo, x - lo


#: Positions per block of :func:`_blocked_bins_sums`: the block's (m, A, S, J) work arrays
#: (about 0.5 MB for two axis types, 12 sectors and 81 edges) stay in the processor's cache.
BINS_BLOCK_ROWS = 32
#: Positions whose per-table-row sums are kept before they are interpolated and added up in
#: one step (a few MB of sums), so that no Python work is done per block for each turbine.
BINS_GATHER_ROWS = 2048
#: Largest |k ln V| and |k ln c| for which (V/c)^k is taken as V^k · c^-k (no overflow).
_PRODUCT_FORM_LIMIT = 600.0


def _blocked_bins_sums(frequency, weibull_k, axis_log_c, turbine_axis, table_weights_w,
                       ti_lo, ti_frac, log_edges, hours, with_slope=False):
    """Σ_s f_s Σ_j exp(-x_j) w_j(TI) per row and turbine, in cache-sized blocks of rows.

    Parameters
    ----------
    frequency, weibull_k : (M, S) sector frequency [-] and Weibull shape [-]
    axis_log_c : (M, A, S) ln of each rotor-axis type's effective Weibull scale [ln(m/s)]
    turbine_axis : (T,) index into A of each turbine
    table_weights_w : (T, I, J) bin weights of the TI table's curves [W]
    ti_lo, ti_frac : (M, S) lower TI-table row and fraction towards the next
    log_edges : (J,) ln of the bin edges (-inf at 0 m/s)
    hours : hours in the period [h]
    with_slope : also return N_h Σ_s f_s k_s Σ_j x_j exp(-x_j) w_j (dE / d ln λ at λ = 1)

    Returns
    -------
    (M, T) energy [Wh], clipped at 0; and the (M, T) slope [Wh] with ``with_slope``

    Notes
    -----
    x_j = (V_j / c)^k. When every row has the same shape k_s in a sector (one climate's
    shapes, which do not change with height unless the settings ask for it), x_j = V_j^k_s ·
    c^-k_s: an (S, J) table of powers made once and one exponential per row and sector, so
    each edge costs one product and one exponential, exp(-x_j). Otherwise ln x_j = k ln V_j −
    k ln c, for every row of a block at once a product of the (rows, 2) matrix [k, −k ln c]
    with the (2, J) matrix [ln V; 1], and x_j = exp(ln x_j).

    The sums over edges are taken per TI-table row, as one matrix product per rotor-axis type
    against the table weights of its turbines side by side, and interpolated linearly in TI:
    Σ_j g_j w_j(TI) = G_lo + (G_hi − G_lo) φ with G_i = Σ_j g_j w_ij (w is linear in the
    table's rows). Each block's work arrays are reused in place, so every step reads data still
    in cache rather than fresh whole-array temporaries; the per-row sums of
    :data:`BINS_GATHER_ROWS` rows are interpolated and weighted by frequency together.
    """
    M, A, S = axis_log_c.shape
    T, n_rows, J = table_weights_w.shape
    energy = np.empty((M, T))
    slope = np.empty((M, T)) if with_slope else None
    if M == 0:
        return (energy, slope) if with_slope else energy
    block = max(1, min(BINS_BLOCK_ROWS, M))
    span = max(block, min(BINS_GATHER_ROWS // block * block, M))
    # ln V = -inf at V = 0 gives x = 0; a large finite stand-in keeps the products finite.
    log_v = np.where(np.isfinite(log_edges), log_edges, -1e300)
    k0 = weibull_k[0]
    product_form = (bool(np.all(weibull_k == k0[None, :]))
                    and float(np.max(np.abs(k0[:, None] * log_edges[np.isfinite(log_edges)]),
                                     initial=0.0)) < _PRODUCT_FORM_LIMIT
                    and float(np.max(np.abs(k0 * axis_log_c))) < _PRODUCT_FORM_LIMIT)
    if product_form:
        neg_v_pow = -np.exp(k0[:, None] * log_v[None, :])  # (S, J) -V_j^k_s, 0 at V = 0
        # (A, M, S) c^-k per axis type, row and sector
        c_negk = np.exp(-k0[None, None, :] * np.moveaxis(axis_log_c, 1, 0))
    else:
        rhs = np.stack([log_v, np.ones(J)])
        coef = np.empty((A, block, S, 2))
    x_buf = np.empty((A, block, S, J))
    g_buf = np.empty((A, block, S, J)) if with_slope else None
    # Per axis type: its turbines' (J, I) weight tables side by side, and where each one sits.
    groups = []
    for ax in range(A):
        ts = np.flatnonzero(np.asarray(turbine_axis) == ax)
        if ts.size:
            w_cat = np.ascontiguousarray(np.concatenate([table_weights_w[t].T for t in ts],
                                                        axis=1))
            groups.append((ax, ts, w_cat))
    n_pass = 2 if with_slope else 1
    # Per pass and axis group: the (span, S, n_a, I) sums of a span of rows per table row.
    sums = [[np.empty((span, S, ts.size, n_rows)) for _, ts, _ in groups] for _ in range(n_pass)]
    outs = (energy, slope)
    for a0 in range(0, M, span):
        a1 = min(a0 + span, M)
        for a in range(a0, a1, block):
            m = min(block, a1 - a)
            x = x_buf[:, :m]
            g = g_buf[:, :m] if with_slope else x
            if product_form:
                np.multiply(c_negk[:, a:a + m, :, None], neg_v_pow, out=g)  # -x_j
                if with_slope:
                    np.negative(g, out=x)  # x_j = (V_j / c)^k
            else:
                k_b = weibull_k[a:a + m]
                c2 = coef[:, :m]
                c2[..., 0] = k_b[None]
                np.multiply(k_b[None], np.moveaxis(axis_log_c[a:a + m], 1, 0), out=c2[..., 1])
                np.negative(c2[..., 1], out=c2[..., 1])
                np.matmul(c2, rhs, out=x)
                np.exp(x, out=x)  # x_j = (V_j / c)^k
                np.negative(x, out=g)
            np.exp(g, out=g)  # exp(-x_j)
            terms = [g]
            if with_slope:
                np.multiply(g, x, out=x)  # x_j exp(-x_j)
                terms.append(x)
            for p, tm in enumerate(terms):
                for gi, (ax, ts, w_cat) in enumerate(groups):
                    dst = sums[p][gi][a - a0:a - a0 + m].reshape(m * S, -1)
                    np.matmul(tm[ax].reshape(m * S, J), w_cat, out=dst)
        # Interpolate in TI and weight by frequency, for the whole span at once: the sums of
        # row (m, s), turbine g of a group, table row i sit at ((m S + s) n_a + g) I + i.
        n = a1 - a0
        lo = ti_lo[a0:a1].reshape(-1, 1, 1)
        # The two neighbouring table rows side by side (one gather reads both from the same
        # cache line); one row only when the table has one.
        pair = np.array([0, 1 if n_rows > 1 else 0])[None, None, :]
        frac = ti_frac[a0:a1][:, :, None]
        f = frequency[a0:a1]
        weights = (f, f * weibull_k[a0:a1]) if with_slope else (f,)
        for gi, (ax, ts, w_cat) in enumerate(groups):
            width = ts.size * n_rows
            at = (np.arange(n * S)[:, None, None] * width
                  + np.arange(ts.size)[None, :, None] * n_rows + lo + pair)  # (n S, n_a, 2)
            for p, fw in enumerate(weights):
                both = sums[p][gi].reshape(-1).take(at).reshape(n, S, ts.size, 2)
                g_lo = both[..., 0]
                per = both[..., 1] - g_lo
                per *= frac
                per += g_lo  # (n, S, n_a)
                outs[p][a0:a1, ts] = hours * np.einsum("ms,msg->mg", fw, per)
    # Non-negative terms; clip the rounding of summation by parts (see bin_weights_w).
    np.maximum(energy, 0.0, out=energy)
    return (energy, slope) if with_slope else energy


@dataclass(frozen=True)
class BinsSetup:
    """Everything the method of bins needs for (P, T, S, J), computed once.

    ``energy_wh(scale)`` sums the bins with every sector's speed scale multiplied by
    ``scale`` (a number, or an (N,) array for N samples at once), keeping the curves, which
    is how the sensitivity and the Monte Carlo check re-use one setup.

    The Weibull scales are held once per rotor-axis type A (the skew factor depends only on
    the axis), as logarithms, and the curves as a table over turbulence intensity with each
    sector's row and fraction; the sums are taken in cache-sized blocks of positions
    (:func:`_blocked_bins_sums`). :attr:`weibull_x` and :attr:`weights_w` give the
    (P, T, S, J) arrays.
    """

    frequency: np.ndarray  # (P, 1, S)
    weibull_k: np.ndarray  # (P, T, S)
    axis_log_c: np.ndarray  # (P, A, S): ln of the effective scale c·f per rotor-axis type
    turbine_axis: np.ndarray  # (T,) index into A
    table_weights_w: np.ndarray  # (T, I, J): bin_weights_w of the TI table's curves
    ti_lo: np.ndarray  # (P, S) lower TI-table row
    ti_frac: np.ndarray  # (P, S) fraction towards the next row
    skew_factor: np.ndarray  # (P, T, S)
    edges_ms: np.ndarray  # (J,) bin edges [m/s]
    #: (turbines, density, TI grid, curve_model_args, with capped half) behind the table, for
    #: the exact integration of the same curves (engine.energy.exact).
    curve_recipe: tuple = ()

    @functools.cached_property
    def _log_edges(self) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return np.log(self.edges_ms)  # -inf at V = 0 gives x = 0

    @property
    def axis_weibull_x(self) -> np.ndarray:
        """(V_j / c_eff)^k per position, rotor-axis type, sector and edge, (P, A, S, J)."""
        return _weibull_x(self.edges_ms, self.weibull_k[:, :1, :], np.exp(self.axis_log_c))

    @property
    def weibull_x(self) -> np.ndarray:
        """(V_j / c_eff)^k per position, turbine, sector and edge, (P, T, S, J)."""
        return self.axis_weibull_x[:, self.turbine_axis]

    @property
    def weights_w(self) -> np.ndarray:
        """Bin weights of every position's, turbine's and sector's curve [W], (P, T, S, J)."""
        lo = self.ti_lo
        hi = np.minimum(lo + 1, self.table_weights_w.shape[1] - 1)
        t_idx = np.arange(self.table_weights_w.shape[0])[None, :, None]
        a = self.table_weights_w[t_idx, lo[:, None, :]]
        b = self.table_weights_w[t_idx, hi[:, None, :]]
        return a + (b - a) * self.ti_frac[:, None, :, None]

    def _sums(self, log_scale, hours, with_slope=False):
        """Blocked sums with every scale × e^log_scale; log_scale a number or (N,): rows N·P."""
        f = self.frequency[:, 0, :]
        k = self.weibull_k[:, 0, :]
        ls = np.asarray(log_scale, float)
        if ls.ndim == 0:
            log_c = self.axis_log_c if ls == 0.0 else self.axis_log_c + float(ls)
            return _blocked_bins_sums(f, k, log_c, self.turbine_axis, self.table_weights_w,
                                      self.ti_lo, self.ti_frac, self._log_edges, hours,
                                      with_slope)
        n, (P, A, S) = ls.size, self.axis_log_c.shape
        log_c = (self.axis_log_c[None] + ls.reshape(-1, 1, 1, 1)).reshape(n * P, A, S)
        tile = lambda a: np.broadcast_to(a[None], (n,) + a.shape).reshape(n * P, S)  # noqa: E731
        out = _blocked_bins_sums(tile(f), tile(k), log_c, self.turbine_axis,
                                 self.table_weights_w, tile(self.ti_lo), tile(self.ti_frac),
                                 self._log_edges, hours)
        return out.reshape(n, P, -1)

    def energy_wh(self, scale=1.0, hours=HOURS_PER_YEAR) -> np.ndarray:
        """Energy [Wh] with speed scales × ``scale``: (P, T), or (N, P, T) for an (N,) scale.

        Notes
        -----
        (V/(λc))^k = exp(k (ln V − ln c − ln λ)): a scale moves only the logarithm of c.
        """
        lam = np.asarray(scale, float)
        if lam.ndim == 0:
            return self._sums(0.0 if lam == 1.0 else math.log(float(lam)), hours)
        flat = lam.ravel()
        # Samples in chunks of about 4 million (sample, position, sector) rows' worth of edges.
        per_sample = max(self.axis_log_c.size * len(self.edges_ms), 1)
        chunk = max(1, int(4e6 // per_sample))
        parts = [self._sums(np.log(flat[i:i + chunk]), hours)
                 for i in range(0, flat.size, chunk)]
        out = np.concatenate(parts, axis=0)
        return out.reshape(lam.shape + out.shape[1:])

    def energy_and_slope_wh(self, hours=HOURS_PER_YEAR):
        """Energy (P, T) [Wh] and dE / d ln λ (P, T) [Wh] at λ = 1, from the same exponentials."""
        return self._sums(0.0, hours, with_slope=True)


def curve_model_args(turbulence=True, reference_ti=None, energy_settings=None) -> tuple:
    """(reference_ti, excess_ti_power_loss, tracked_ti_fraction, max_credited_ti) of the curve.

    ``turbulence=False`` gives the published curve itself at every TI (0, 0, 1 with TI 0);
    otherwise the turbine's own curve TI (``reference_ti`` None) and the
    :class:`engine.core.model.EnergySettings` (defaults when None).
    """
    if not turbulence:
        return (0.0, 0.0, 1.0, math.inf)
    from engine.core.model import EnergySettings
    es = energy_settings if energy_settings is not None else EnergySettings()
    return (None if reference_ti is None else float(reference_ti),
            float(es.excess_ti_power_loss), float(es.tracked_ti_fraction),
            float(es.max_credited_ti))


def prepare_bins(frequency, weibull_k, weibull_c_ms, turbulence_intensity, inflow_skew_deg,
                 turbines, air_density_kgm3, edges_ms=DEFAULT_EDGES_MS, turbulence=True,
                 reference_ti=None, energy_settings=None, no_credit=None) -> BinsSetup:
    """Corrected curves and Weibull terms for every position, turbine, sector and bin edge.

    Parameters
    ----------
    frequency, weibull_k, weibull_c_ms : (P, S) sector frequency [-], shape [-] and scale
        at the rotor [m/s] (an :class:`engine.flow.effective.EffectiveClimate`'s arrays)
    turbulence_intensity : (P, S) turbulence intensity at the rotor [-]
    inflow_skew_deg : (P, S) inflow angle to the horizontal [deg]
    turbines : sequence of :class:`engine.core.model.Turbine`
    air_density_kgm3 : site air density [kg/m³]
    turbulence : adjust the curve to the site's turbulence (False uses the published curve)
    reference_ti : turbulence contained in the published curves [-]; None each turbine's
        ``power_curve_ti``
    energy_settings : :class:`engine.core.model.EnergySettings` (defaults when None)
    no_credit : (P, S) bool, sectors where the rotor sits in a recirculation zone: the curve
        is never above the published one there

    Notes
    -----
    Per turbine t the scale is c_pts = c_ps · cos(γ_ps)^(n_t/3) (:func:`skew_speed_factor`),
    kept as ln c_pts once per rotor-axis type; the curve is P_t at TI_ps
    (:func:`turbulent_curve_table_w`, density corrected), linear between the table's rows. Bin
    weights are linear in the curve, so the sums over edges are taken per table row and
    interpolated (:func:`_blocked_bins_sums`). Sectors without credit index a second half of
    the table holding the same rows capped at the published curve.
    """
    freq = np.asarray(frequency, float)
    k = np.asarray(weibull_k, float)
    c = np.asarray(weibull_c_ms, float)
    ti = np.asarray(turbulence_intensity, float) if turbulence else np.zeros_like(c)
    skew = np.asarray(inflow_skew_deg, float)
    edges = np.asarray(edges_ms, float)
    axes = [t.axis for t in turbines]
    kinds = sorted(set(axes))
    factors = np.stack([skew_speed_factor(skew, a) for a in kinds], axis=1)  # (P, A, S)
    turbine_axis = np.array([kinds.index(a) for a in axes], dtype=np.int64)
    skew_f = factors[:, turbine_axis]  # (P, T, S)
    grid = ti_grid_for(ti)
    lo, frac = _ti_nodes(grid, ti)
    model = curve_model_args(turbulence, reference_ti, energy_settings)
    weights = table_weights_w(turbines, air_density_kgm3, grid, edges, *model)
    capped = (np.zeros(c.shape, bool) if no_credit is None or not turbulence
              else np.broadcast_to(np.asarray(no_credit, bool), c.shape))
    if capped.any():
        weights = np.concatenate([weights, table_weights_w(turbines, air_density_kgm3, grid,
                                                           edges, *model, True)], axis=1)
        lo = np.where(capped, lo + len(grid), lo)
    k_b = np.ascontiguousarray(np.broadcast_to(k[:, None, :], skew_f.shape))
    # ln(c f) per axis type; a scale of 0 (full shelter, or flow at 90° to a rotor axis) means
    # no wind: the log is guarded as in _weibull_x.
    with np.errstate(divide="ignore"):
        log_c = np.maximum(np.log(np.maximum(c, 1e-9))[:, None, :] + np.log(factors),
                           math.log(1e-9))  # (P, A, S)
    return BinsSetup(frequency=freq[:, None, :], weibull_k=k_b,
                     axis_log_c=np.ascontiguousarray(log_c),
                     turbine_axis=turbine_axis, table_weights_w=weights,
                     ti_lo=lo, ti_frac=frac, skew_factor=skew_f, edges_ms=edges,
                     curve_recipe=(tuple(turbines), float(air_density_kgm3),
                                   tuple(float(g) for g in grid), model, bool(capped.any())))


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
    from engine.energy import exact as energy_exact
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
