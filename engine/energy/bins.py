"""Method of bins for the energy yield: Weibull terms, bin weights and the blocked sums.

Per position, rotor-axis type and sector the Weibull scale is held as a logarithm, the
corrected curves (:mod:`engine.energy.curves`) as bin weights over a table of turbulence
intensities, and the IEC 61400-12-1 sum over bins is taken in cache-sized blocks of positions
(:func:`blocked_bins_sums`). :func:`prepare_bins` builds the :class:`BinsSetup` every yield,
sensitivity and Monte Carlo sample re-uses.

References
----------
IEC 61400-12-1:2017, Wind energy generation systems - Part 12-1: Power performance measurements
of electricity producing wind turbines (method of bins). Wording and clause numbers from memory.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from engine.climate.weibull import weibull_cdf
from engine.energy.curves import (DEFAULT_EDGES_MS, HOURS_PER_YEAR, TI_MAX, TI_TABLE_STEP,
                                  skew_speed_factor, ti_grid_for, turbulent_curve_table_w)

def weibull_x(edges_ms, k, c_ms):
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


def ti_nodes(ti_grid, turbulence_intensity):
    """Lower table row and fraction of each turbulence intensity in ``ti_grid``: (lo, frac)."""
    ti_grid = np.asarray(ti_grid, float)
    step = ti_grid[1] - ti_grid[0] if len(ti_grid) > 1 else 1.0
    x = (np.clip(np.asarray(turbulence_intensity, float), ti_grid[0], ti_grid[-1])
         - ti_grid[0]) / step
    lo = np.clip(np.floor(x).astype(int), 0, max(len(ti_grid) - 2, 0))
    return lo, x - lo


#: Positions per block of :func:`blocked_bins_sums`: the block's (m, A, S, J) work arrays
#: (about 0.5 MB for two axis types, 12 sectors and 81 edges) stay in the processor's cache.
BINS_BLOCK_ROWS = 32
#: Positions whose per-table-row sums are kept before they are interpolated and added up in
#: one step (a few MB of sums), so that no Python work is done per block for each turbine.
BINS_GATHER_ROWS = 2048
#: Largest |k ln V| and |k ln c| for which (V/c)^k is taken as V^k · c^-k (no overflow).
_PRODUCT_FORM_LIMIT = 600.0


def _exponent_plan(weibull_k, axis_log_c, log_edges, block):
    """How the block loop forms x_j = (V_j / c)^k: the product form's tables, or the matrices
    of the logarithmic form (see :func:`blocked_bins_sums`, Notes)."""
    A, S = axis_log_c.shape[1:]
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
        return {"product": True, "neg_v_pow": neg_v_pow, "c_negk": c_negk}
    return {"product": False, "rhs": np.stack([log_v, np.ones(log_v.size)]),
            "coef": np.empty((A, block, S, 2))}


def _axis_groups(turbine_axis, table_weights_w, n_axes):
    """Per rotor-axis type: (axis, its turbines, their (J, n I) weight tables side by side)."""
    groups = []
    for ax in range(n_axes):
        ts = np.flatnonzero(np.asarray(turbine_axis) == ax)
        if ts.size:
            w_cat = np.ascontiguousarray(np.concatenate([table_weights_w[t].T for t in ts],
                                                        axis=1))
            groups.append((ax, ts, w_cat))
    return groups


def _block_terms(plan, weibull_k, axis_log_c, a, m, x_buf, g_buf, with_slope):
    """exp(-x_j) (and x_j exp(-x_j) with the slope) of rows a..a+m in place, (A, m, S, J)."""
    x = x_buf[:, :m]
    g = g_buf[:, :m] if with_slope else x
    if plan["product"]:
        np.multiply(plan["c_negk"][:, a:a + m, :, None], plan["neg_v_pow"], out=g)  # -x_j
        if with_slope:
            np.negative(g, out=x)  # x_j = (V_j / c)^k
    else:
        k_b = weibull_k[a:a + m]
        c2 = plan["coef"][:, :m]
        c2[..., 0] = k_b[None]
        np.multiply(k_b[None], np.moveaxis(axis_log_c[a:a + m], 1, 0), out=c2[..., 1])
        np.negative(c2[..., 1], out=c2[..., 1])
        np.matmul(c2, plan["rhs"], out=x)
        np.exp(x, out=x)  # x_j = (V_j / c)^k
        np.negative(x, out=g)
    np.exp(g, out=g)  # exp(-x_j)
    if not with_slope:
        return [g]
    np.multiply(g, x, out=x)  # x_j exp(-x_j)
    return [g, x]


def _interpolate_span(sums, groups, weights, ti_lo, ti_frac, n_rows, hours, outs, a0, a1):
    """TI interpolation and frequency weighting of a span's per-table-row sums into ``outs``.

    The sums of row (m, s), turbine g of a group and table row i sit at
    ((m S + s) n_a + g) I + i; the two neighbouring table rows are read side by side (one
    gather reads both from the same cache line), one row only when the table has one.
    """
    n, S = a1 - a0, ti_lo.shape[1]
    lo = ti_lo[a0:a1].reshape(-1, 1, 1)
    pair = np.array([0, 1 if n_rows > 1 else 0])[None, None, :]
    frac = ti_frac[a0:a1][:, :, None]
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
            outs[p][a0:a1, ts] = hours * np.einsum("ms,msg->mg", fw[a0:a1], per)


def blocked_bins_sums(frequency, weibull_k, axis_log_c, turbine_axis, table_weights_w,
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
    plan = _exponent_plan(weibull_k, axis_log_c, log_edges, block)
    x_buf = np.empty((A, block, S, J))
    g_buf = np.empty((A, block, S, J)) if with_slope else None
    groups = _axis_groups(turbine_axis, table_weights_w, A)
    n_pass = 2 if with_slope else 1
    # Per pass and axis group: the (span, S, n_a, I) sums of a span of rows per table row.
    sums = [[np.empty((span, S, ts.size, n_rows)) for _, ts, _ in groups] for _ in range(n_pass)]
    weights = (frequency, frequency * weibull_k) if with_slope else (frequency,)
    for a0 in range(0, M, span):
        a1 = min(a0 + span, M)
        for a in range(a0, a1, block):
            m = min(block, a1 - a)
            terms = _block_terms(plan, weibull_k, axis_log_c, a, m, x_buf, g_buf, with_slope)
            for p, tm in enumerate(terms):
                for gi, (ax, ts, w_cat) in enumerate(groups):
                    dst = sums[p][gi][a - a0:a - a0 + m].reshape(m * S, -1)
                    np.matmul(tm[ax].reshape(m * S, J), w_cat, out=dst)
        _interpolate_span(sums, groups, weights, ti_lo, ti_frac, n_rows, hours,
                          (energy, slope), a0, a1)
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
    (:func:`blocked_bins_sums`). :attr:`weibull_x` and :attr:`weights_w` give the
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
    def axisweibull_x(self) -> np.ndarray:
        """(V_j / c_eff)^k per position, rotor-axis type, sector and edge, (P, A, S, J)."""
        return weibull_x(self.edges_ms, self.weibull_k[:, :1, :], np.exp(self.axis_log_c))

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
            return blocked_bins_sums(f, k, log_c, self.turbine_axis, self.table_weights_w,
                                      self.ti_lo, self.ti_frac, self._log_edges, hours,
                                      with_slope)
        n, (P, A, S) = ls.size, self.axis_log_c.shape
        log_c = (self.axis_log_c[None] + ls.reshape(-1, 1, 1, 1)).reshape(n * P, A, S)
        tile = lambda a: np.broadcast_to(a[None], (n,) + a.shape).reshape(n * P, S)  # noqa: E731
        out = blocked_bins_sums(tile(f), tile(k), log_c, self.turbine_axis,
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
    interpolated (:func:`blocked_bins_sums`). Sectors without credit index a second half of
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
    lo, frac = ti_nodes(grid, ti)
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
    # no wind: the log is guarded as in weibull_x.
    with np.errstate(divide="ignore"):
        log_c = np.maximum(np.log(np.maximum(c, 1e-9))[:, None, :] + np.log(factors),
                           math.log(1e-9))  # (P, A, S)
    return BinsSetup(frequency=freq[:, None, :], weibull_k=k_b,
                     axis_log_c=np.ascontiguousarray(log_c),
                     turbine_axis=turbine_axis, table_weights_w=weights,
                     ti_lo=lo, ti_frac=frac, skew_factor=skew_f, edges_ms=edges,
                     curve_recipe=(tuple(turbines), float(air_density_kgm3),
                                   tuple(float(g) for g in grid), model, bool(capped.any())))
