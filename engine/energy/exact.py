"""Exact annual energy of a piecewise-linear power curve against sector Weibull distributions.

The method of bins (:mod:`engine.energy.bins`) credits each 0.5 m/s bin with the mean of its end
powers; at low mean speeds, where the probability falls steeply across a bin while the power
rises, that overstates the energy by a few per cent. Here the same density- and
turbulence-adjusted curve, taken as linear pieces between knots (the bin edges and every knot
of the published curve, jumps at cut-in and cut-out included), is integrated against each
sector's Weibull in closed form:

    ∫_a^b (α + β V) f(V) dV = α [F(b) − F(a)] + β [M(b) − M(a)],
    F(x) = 1 − exp(−u), M(x) = c Γ(1 + 1/k) P(1 + 1/k, u), u = (x/c)^k,

P the regularised lower incomplete gamma function (``scipy.special.gammainc``). Summed by
parts over the pieces this is E = Σ_j exp(−u_j) a_j + c Γ(1 + 1/k) Σ_j P(1 + 1/k, u_j) b_j,
with a_j = α_j − α_(j−1) and b_j = β_(j−1) − β_j: one exponential and one incomplete gamma
per knot, and the weights (a, b) are linear in the curve, so the turbulence table's rows
are interpolated in TI exactly as in :func:`engine.energy.bins.blocked_bins_sums`.

References
----------
Johnson, N. L., Kotz, S. and Balakrishnan, N. (1994), Continuous Univariate Distributions,
Vol. 1, 2nd ed., Wiley, ch. 21 (Weibull moments and partial moments by the incomplete gamma
function).
IEC 61400-12-1:2017, annual energy production by the method of bins (from memory), kept as
the cross-check.
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy.special import gamma, gammainc

from engine.energy import curves

#: Positions worked at once (their (positions, axis types, sectors, knots) arrays are small).
EXACT_BLOCK_ROWS = 512
#: Highest knot [m/s]: curves end at 50 m/s at most (engine.core.model.Turbine).
KNOT_TOP_MS = 50.0


def curve_knots_ms(turbines, air_density_kgm3, edges_ms=curves.DEFAULT_EDGES_MS):
    """Knots of the piecewise-linear adjusted curves: the bin edges and every curve knot [m/s]."""
    parts = [np.asarray(edges_ms, float)]
    parts += [curves.curve_segments(t, air_density_kgm3)[0] for t in turbines]
    x = np.unique(np.concatenate(parts))
    return x[(x >= 0.0) & (x <= KNOT_TOP_MS)]


def piece_weights(knots_ms, start_w, end_w):
    """Summation-by-parts weights (a, b) of linear pieces, each (..., K) [W], [W s/m].

    Parameters
    ----------
    knots_ms : (K,) knots [m/s]
    start_w, end_w : (..., K-1) power at the start (just above the knot) and end (just below
        the next knot) of each piece [W]

    Notes
    -----
    Piece j: P = α_j + β_j V, β_j = (end − start)/(x_j+1 − x_j), α_j = start − β_j x_j;
    a_j = α_j − α_(j−1), b_j = β_(j−1) − β_j, with α and β zero outside the knots.
    """
    x = np.asarray(knots_ms, float)
    beta = (np.asarray(end_w, float) - start_w) / np.diff(x)
    alpha = start_w - beta * x[:-1]
    pad = [(0, 0)] * (alpha.ndim - 1) + [(1, 1)]
    a_p, b_p = np.pad(alpha, pad), np.pad(beta, pad)
    return np.diff(a_p, axis=-1), -np.diff(b_p, axis=-1)


@functools.lru_cache(maxsize=16)
def exact_table(recipe):
    """Knots (K,) and weights a, b (T, I, K) of the table behind a :class:`BinsSetup`.

    ``recipe`` is the setup's ``curve_recipe``: (turbines, density, TI grid, curve model,
    with a capped half). Rows follow the setup's TI table, the capped half after the first.
    """
    turbines, rho, grid, model, capped = recipe
    knots = curve_knots_ms(turbines, rho)
    ti = np.asarray(grid, float)
    halves = (False, True) if capped else (False,)
    a_all, b_all = [], []
    for t in turbines:
        a_t, b_t = [], []
        start = curves.site_turbulence_curve_w(t, rho, knots[:-1], ti, *model, side="right")
        end = curves.site_turbulence_curve_w(t, rho, knots[1:], ti, *model, side="left")
        for nc in halves:
            if nc:  # capped at the published curve, as curves.site_turbulence_curve_w does
                pieces = curves.curve_segments(t, rho)
                start = np.minimum(start, curves.published_power_w(*pieces, knots[:-1], "right"))
                end = np.minimum(end, curves.published_power_w(*pieces, knots[1:], "left"))
            a, b = piece_weights(knots, start, end)
            a_t.append(a)
            b_t.append(b)
        a_all.append(np.concatenate(a_t, axis=0))
        b_all.append(np.concatenate(b_t, axis=0))
    out = (knots, np.stack(a_all), np.stack(b_all))
    for arr in out:
        arr.flags.writeable = False
    return out


def exact_energy_wh(setup, scale=1.0, hours=curves.HOURS_PER_YEAR, also=()):
    """Energy [Wh] of a :class:`engine.energy.bins.BinsSetup`'s curves, integrated exactly, (P, T).

    Parameters
    ----------
    setup : :class:`engine.energy.bins.BinsSetup` (its Weibull terms, TI rows and curve recipe)
    scale : factor on every sector's speed scale [-]
    hours : hours in the period [h]
    also : further setups with the same Weibull terms (the same climate and turbines with
        other curves, e.g. the published curve): their energies are returned too, from the
        same exponentials and incomplete gamma functions

    Returns
    -------
    (P, T) energy [Wh]; with ``also``, a list of one such array per setup

    Notes
    -----
    See the module docstring. Per block of positions: u = (x_j / c)^k for every rotor-axis
    type, sector and knot, then exp(−u) and P(1 + 1/k, u) against the weights of that axis
    type's turbines side by side (one matrix product each), the mean-speed factor
    c Γ(1 + 1/k) on the second, TI interpolation and frequency weighting as in the bins.
    """
    setups = [setup, *also]
    tables = [exact_table(s.curve_recipe) for s in setups]
    knots = tables[0][0]
    if any(not np.array_equal(t[0], knots) for t in tables[1:]):
        raise ValueError("setups passed together must share their knots (same turbines)")
    T = tables[0][1].shape[0]
    f = setup.frequency[:, 0, :]
    k = setup.weibull_k[:, 0, :]
    log_c = setup.axis_log_c + math.log(float(scale))
    P, A, S = log_c.shape
    K = len(knots)
    with np.errstate(divide="ignore"):
        log_x = np.log(knots)  # -inf at 0 gives u = 0
    outs = [np.zeros((P, T)) for _ in setups]
    for ax in range(A):
        ts = np.flatnonzero(setup.turbine_axis == ax)
        if not ts.size:
            continue
        cats = [(np.concatenate([wa[t].T for t in ts], axis=1),
                 np.concatenate([wb[t].T for t in ts], axis=1), wa.shape[1])
                for _, wa, wb in tables]  # (K, n_a I) each
        for a0 in range(0, P, EXACT_BLOCK_ROWS):
            a1 = min(a0 + EXACT_BLOCK_ROWS, P)
            n = a1 - a0
            kb = k[a0:a1, :, None]
            lc = log_c[a0:a1, ax, :, None]
            u = np.exp(np.clip(kb * (log_x - lc), -700.0, 700.0))
            u[..., ~np.isfinite(log_x)] = 0.0
            g = np.exp(-u).reshape(n * S, K)
            q = gammainc(1.0 + 1.0 / kb, u).reshape(n * S, K)
            mean_factor = np.exp(lc[..., 0]) * gamma(1.0 + 1.0 / kb[..., 0])  # (n, S)
            for s_i, (wa_cat, wb_cat, n_rows) in enumerate(cats):
                st = setups[s_i]
                rows = (g @ wa_cat).reshape(n, S, ts.size, n_rows)
                rows += mean_factor[:, :, None, None] * (q @ wb_cat).reshape(
                    n, S, ts.size, n_rows)
                lo = np.repeat(st.ti_lo[a0:a1][:, :, None, None], ts.size, axis=2)
                hi = np.minimum(lo + 1, n_rows - 1)
                r_lo = np.take_along_axis(rows, lo, axis=3)[..., 0]
                r_hi = np.take_along_axis(rows, hi, axis=3)[..., 0]
                per = r_lo + (r_hi - r_lo) * st.ti_frac[a0:a1][:, :, None]  # (n, S, n_a)
                outs[s_i][a0:a1, ts] = hours * np.einsum("ms,msg->mg", f[a0:a1], per)
    outs = [np.maximum(o, 0.0) for o in outs]
    return outs if also else outs[0]
