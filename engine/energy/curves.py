"""Power curves as the rotor meets them: air density, turbulence and skewed inflow.

The published curve (at 1.225 kg/m³) is carried to the site's air density
(:func:`density_corrected_power_w`, stall and pitch variants), then from the turbulence it was
measured at to the site's (:func:`site_turbulence_curve_w`: only the difference is normalised,
with conservative allowances for small rotors in strong turbulence and no credit in
recirculation), the Gaussian averages exact for the piecewise-linear curve
(:func:`gaussian_average_segments`; :func:`gaussian_average` for any function), tabulated once
per turbine over the turbulence intensities that occur (:func:`turbulent_curve_table_w`).
Skewed inflow lowers the speed the rotor sees, by axis type (:func:`skew_speed_factor`).

References
----------
IEC 61400-12-1:2017, air-density normalisation and the annex on turbulence normalisation
(wording and clause numbers from memory).
"""
from __future__ import annotations

import math

import numpy as np
from scipy.special import ndtr

from engine.core.model import RHO_STANDARD

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
