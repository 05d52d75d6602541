"""Long-term correction of a short site record against a long reference (measure-correlate-predict).

The short (target) record is averaged onto the reference's time steps; the concurrent pairs are
grouped by reference direction sector; per sector a straight line y = m x + b relates target
speed y to reference speed x, and a mean veer (target minus reference direction) is taken.
Applied to the whole reference record, the lines give a long-term series at the target, from
which :func:`engine.climate.fit.climate_from_series` makes the long-term climate.

Two ways to get the line:

* ``linear``: least squares, m = r σy/σx, b = ȳ − m x̄ (it shrinks the predicted variance by r²);
* ``variance_ratio``: m = σy/σx, b = ȳ − m x̄, which keeps both the mean and the variance of
  the target over the concurrent period (Rogers, Rogers & Manwell 2005);
* ``speed_ratio``: the sector speed-ratio (matrix) method, m = ȳ/x̄, b = 0 per reference
  sector: the concurrent mean speed ratio of the sector, scaling the reference's series.

References
----------
Rogers, A. L., Rogers, J. W. and Manwell, J. F. (2005), "Comparison of the performance of four
measure-correlate-predict algorithms", J. Wind Eng. Ind. Aerodyn. 93:243-264.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from engine.climate.fit import ClimateSummary, climate_from_series
from engine.climate.sectors import sector_index
from engine.core.errors import InputError, Problems

MCP_METHODS = ("linear", "variance_ratio", "speed_ratio")
#: Each method in words, for labels a client reads.
METHOD_NAMES = {"linear": "linear regression", "variance_ratio": "variance ratio",
                "speed_ratio": "sector speed ratio"}
#: Overlap below which seasonal differences are not sampled [days] (common practice: a year).
WARN_OVERLAP_DAYS = 365.0
#: Correlation below which the long-term correction is weak [-] (common practice).
WARN_CORRELATION = 0.7
#: Fewest concurrent pairs for a sector's own line; thinner sectors use the all-sector line.
MIN_SECTOR_PAIRS = 30
#: Fewest concurrent pairs for any correction at all.
MIN_PAIRS = 50


@dataclass(frozen=True)
class MCPResult:
    """Outcome of :func:`mcp_long_term`.

    Attributes
    ----------
    method : "linear" or "variance_ratio"
    sectors : per reference sector: sector_deg, pairs, slope, offset_ms, correlation, veer_deg,
        line ("own" or "all-sector")
    n_pairs : concurrent pairs used
    overlap_days : length of the concurrent period [days]
    correlation : all-sector correlation coefficient of concurrent speeds [-]
    target_mean_ms, reference_mean_ms : concurrent-period means [m/s]
    predicted_concurrent_mean_ms : the lines applied to the concurrent reference [m/s]
    long_term_mean_ms : mean of the predicted long-term series [m/s]
    time_ns, speed_ms, direction_deg : the predicted long-term series at the target
    warnings : readable warnings (short overlap, weak correlation, thin sectors)
    pair_reference_ms, pair_target_ms : (n_pairs,) the concurrent pairs the lines were fitted
        on: reference speed and the target's mean over the same interval [m/s]
    pair_sector : (n_pairs,) reference sector index of each pair
    """

    method: str
    sectors: pd.DataFrame
    n_pairs: int
    overlap_days: float
    correlation: float
    target_mean_ms: float
    reference_mean_ms: float
    predicted_concurrent_mean_ms: float
    long_term_mean_ms: float
    time_ns: np.ndarray
    speed_ms: np.ndarray
    direction_deg: np.ndarray
    warnings: tuple = ()
    pair_reference_ms: np.ndarray = field(default_factory=lambda: np.empty(0))
    pair_target_ms: np.ndarray = field(default_factory=lambda: np.empty(0))
    pair_sector: np.ndarray = field(default_factory=lambda: np.empty(0, np.intp))

    @property
    def adjustment(self) -> float:
        """Long-term adjustment of the mean speed: long-term mean / concurrent target mean − 1
        [-] (NaN when the concurrent mean is 0)."""
        if not self.target_mean_ms > 0:
            return float("nan")
        return float(self.long_term_mean_ms / self.target_mean_ms - 1.0)

    def concurrent_stats(self) -> dict:
        """JSON-ready concurrent-period statistics."""
        return {"method": self.method, "pairs": self.n_pairs,
                "overlap_days": self.overlap_days, "correlation": self.correlation,
                "target_mean_ms": self.target_mean_ms,
                "reference_mean_ms": self.reference_mean_ms,
                "predicted_concurrent_mean_ms": self.predicted_concurrent_mean_ms,
                "long_term_mean_ms": self.long_term_mean_ms, "warnings": list(self.warnings)}


def average_onto(time_ns, speed_ms, direction_deg, grid_time_ns, step_s: float,
                 min_coverage: float = 0.5):
    """Average a finer series onto the intervals [t, t + step) starting at ``grid_time_ns``.

    Returns
    -------
    speed_ms, direction_deg, ok : (G,) interval mean speed [m/s], vector-mean direction [deg],
        and whether at least ``min_coverage`` of the interval's steps had data

    Notes
    -----
    Direction mean: atan2(Σ sin θ, Σ cos θ) (unit-vector mean, common practice).
    """
    t = np.asarray(time_ns, np.int64)
    g = np.asarray(grid_time_ns, np.int64)
    step_ns = np.int64(round(step_s * 1e9))
    idx = np.searchsorted(g, t, side="right") - 1
    inside = (idx >= 0) & (t < g[np.clip(idx, 0, None)] + step_ns)
    idx, v, d = idx[inside], np.asarray(speed_ms, float)[inside], np.asarray(direction_deg,
                                                                              float)[inside]
    n_g = g.size
    cnt = np.bincount(idx, minlength=n_g).astype(float)
    sv = np.bincount(idx, v, minlength=n_g)
    rad = np.deg2rad(d)
    ss = np.bincount(idx, np.sin(rad), minlength=n_g)
    sc = np.bincount(idx, np.cos(rad), minlength=n_g)
    if t.size >= 2:
        fine_step = float(np.median(np.diff(t))) / 1e9
    else:
        fine_step = step_s
    expected = max(step_s / fine_step, 1.0)
    ok = cnt >= np.ceil(min_coverage * expected)
    ok &= cnt > 0
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_v = np.where(ok, sv / np.where(cnt > 0, cnt, 1.0), np.nan)
    mean_d = np.mod(np.rad2deg(np.arctan2(ss, sc)), 360.0)
    return mean_v, np.where(ok, mean_d, np.nan), ok


def _line(n, sx, sy, sxx, syy, sxy, method):
    with np.errstate(invalid="ignore", divide="ignore"):
        mx, my = sx / n, sy / n
        vx = sxx / n - mx ** 2
        vy = syy / n - my ** 2
        cov = sxy / n - mx * my
        r = cov / np.sqrt(vx * vy)
        if method == "linear":
            m = cov / vx
        elif method == "speed_ratio":
            m = my / mx
        else:
            m = np.sqrt(vy / vx)
        b = my - m * mx if method != "speed_ratio" else np.zeros_like(m)
    return m, b, r


def _check_mcp_inputs(method, n_sectors, rt, tt):
    """Every problem with the method, the sector count and the two records' lengths at once."""
    p = Problems()
    if method not in MCP_METHODS:
        p.add("method", f"must be one of {', '.join(MCP_METHODS)}, got {method!r}")
    if not isinstance(n_sectors, (int, np.integer)) or not 1 <= n_sectors <= 72:
        p.add("n_sectors", f"must be a whole number 1..72, got {n_sectors!r}")
    if rt.size < 2:
        p.add("reference", "needs at least two valid rows")
    if tt.size < 2:
        p.add("target", "needs at least two valid rows")
    p.raise_if_any()


def _sector_veer_deg(xd, yd, sec, n_sectors, own):
    """Mean turning of the target's direction from the reference's per sector [deg] (circular
    mean), the all-sector mean where a sector has too few pairs."""
    veer = np.deg2rad(np.mod(yd - xd + 180.0, 360.0) - 180.0)
    vs = np.bincount(sec, np.sin(veer), n_sectors)
    vc = np.bincount(sec, np.cos(veer), n_sectors)
    veer_all = float(np.rad2deg(np.arctan2(np.sin(veer).sum(), np.cos(veer).sum())))
    return np.where(own, np.rad2deg(np.arctan2(vs, vc)), veer_all)


def _mcp_warnings(overlap_days, r_a, own, n_sectors, warn_overlap_days, warn_correlation,
                  min_sector_pairs):
    """Plain-language warnings on a short overlap, a weak correlation and thin sectors."""
    warnings = []
    if overlap_days < warn_overlap_days:
        warnings.append(f"concurrent period is {overlap_days:.0f} days, shorter than "
                        f"{warn_overlap_days:.0f}: seasonal differences between the sites are "
                        "not all sampled, so the long-term estimate is less certain")
    if not np.isfinite(r_a) or r_a < warn_correlation:
        warnings.append(f"correlation of concurrent speeds r = {r_a:.2f} is below "
                        f"{warn_correlation:.2f}: the reference explains little of the site's "
                        "variation; treat the long-term correction with caution")
    thin = np.flatnonzero(~own)
    if thin.size:
        warnings.append(f"{thin.size} sector(s) with fewer than {min_sector_pairs} concurrent "
                        "pairs use the all-sector line: "
                        + ", ".join(f"{i * 360 / n_sectors:g} deg" for i in thin))
    return warnings


def mcp_long_term(target_time_ns, target_speed_ms, target_direction_deg, ref_time_ns,
                  ref_speed_ms, ref_direction_deg, *, method: str = "variance_ratio",
                  n_sectors: int = 12, ref_step_s=None, min_sector_pairs: int = MIN_SECTOR_PAIRS,
                  warn_overlap_days: float = WARN_OVERLAP_DAYS,
                  warn_correlation: float = WARN_CORRELATION) -> MCPResult:
    """Long-term series at the target from per-sector lines fitted on the concurrent period.

    Parameters
    ----------
    target_* : the short record's valid rows (UTC ns, m/s, deg), times increasing
    ref_* : the long reference's valid rows (UTC ns, m/s, deg), times increasing
    method : "linear" (least squares) or "variance_ratio" (Rogers et al. 2005)
    n_sectors : reference direction sectors for the lines
    ref_step_s : the reference's averaging step [s]; median step when None. Times are taken
        as the start of each averaging interval in both records.
    min_sector_pairs : sectors with fewer concurrent pairs use the all-sector line

    Returns
    -------
    MCPResult

    Notes
    -----
    Per sector s: y = m_s x + b_s, predictions clipped at 0 m/s; direction θ_ref + veer_s.
    """
    rt = np.asarray(ref_time_ns, np.int64)
    tt = np.asarray(target_time_ns, np.int64)
    _check_mcp_inputs(method, n_sectors, rt, tt)
    rv = np.asarray(ref_speed_ms, float)
    rd = np.asarray(ref_direction_deg, float)
    step_s = float(np.median(np.diff(rt))) / 1e9 if ref_step_s is None else float(ref_step_s)
    ty, td, ok = average_onto(tt, target_speed_ms, target_direction_deg, rt, step_s)
    n_pairs = int(ok.sum())
    if n_pairs < MIN_PAIRS:
        raise InputError([("target", f"only {n_pairs} time steps overlap with the reference "
                                     f"(at least {MIN_PAIRS} needed); check both records cover "
                                     "a common period and their time zones")])
    x, y, xd, yd = rv[ok], ty[ok], rd[ok], td[ok]
    sec = sector_index(xd, n_sectors)

    def sums(g, G):
        return (np.bincount(g, minlength=G).astype(float), np.bincount(g, x, G),
                np.bincount(g, y, G), np.bincount(g, x * x, G), np.bincount(g, y * y, G),
                np.bincount(g, x * y, G))

    m_s, b_s, r_s = _line(*sums(sec, n_sectors), method)
    n_s = np.bincount(sec, minlength=n_sectors)
    m_a, b_a, r_a = (float(v[0]) for v in _line(*sums(np.zeros(x.size, np.intp), 1), method))
    own = (n_s >= min_sector_pairs) & np.isfinite(m_s) & np.isfinite(b_s)
    m_s, b_s = np.where(own, m_s, m_a), np.where(own, b_s, b_a)
    veer_s = _sector_veer_deg(xd, yd, sec, n_sectors, own)

    sec_all = sector_index(rd, n_sectors)
    pred = np.maximum(m_s[sec_all] * rv + b_s[sec_all], 0.0)
    pred_d = np.mod(rd + veer_s[sec_all], 360.0)
    pred_conc = np.maximum(m_s[sec] * x + b_s[sec], 0.0)
    overlap_days = float(rt[ok][-1] - rt[ok][0]) / 86400e9 + step_s / 86400.0

    warnings = _mcp_warnings(overlap_days, r_a, own, n_sectors, warn_overlap_days,
                             warn_correlation, min_sector_pairs)
    table = pd.DataFrame({"sector_deg": np.arange(n_sectors) * 360.0 / n_sectors,
                          "pairs": n_s, "slope": m_s, "offset_ms": b_s, "correlation": r_s,
                          "veer_deg": veer_s, "line": np.where(own, "own", "all-sector")})
    return MCPResult(method=method, sectors=table, n_pairs=n_pairs, overlap_days=overlap_days,
                     correlation=r_a, target_mean_ms=float(y.mean()),
                     reference_mean_ms=float(x.mean()),
                     predicted_concurrent_mean_ms=float(pred_conc.mean()),
                     long_term_mean_ms=float(pred.mean()), time_ns=rt, speed_ms=pred,
                     direction_deg=pred_d, warnings=tuple(warnings), pair_reference_ms=x,
                     pair_target_ms=y, pair_sector=sec)


def long_term_climate(target_record, target_report, ref_record, ref_report, *,
                      height_m: float, roughness_m: float = 0.05, displacement_m: float = 0.0,
                      method: str = "variance_ratio", n_sectors: int = 12,
                      fit_method: str = "mle", air_density_kgm3: float = 1.225):
    """Long-term climate at the target from two quality-controlled records.

    Returns
    -------
    (ClimateSummary, MCPResult)
        The climate has ``source="long_term"``; its record file and hash are the target's.
    """
    problems = Problems()
    for name, rec in (("target", target_record), ("reference", ref_record)):
        if not rec.has("direction"):
            problems.add(f"{name}.columns.direction", "the record needs a direction column")
    problems.raise_if_any()
    tv, rvd = target_report.valid, ref_report.valid
    res = mcp_long_term(target_record.time_ns[tv], target_record.si("speed")[tv],
                        target_record.si("direction")[tv], ref_record.time_ns[rvd],
                        ref_record.si("speed")[rvd], ref_record.si("direction")[rvd],
                        method=method, n_sectors=n_sectors)
    summary: ClimateSummary = climate_from_series(
        res.speed_ms, res.direction_deg, res.time_ns, height_m=height_m,
        roughness_m=roughness_m, displacement_m=displacement_m, n_sectors=n_sectors,
        method=fit_method, air_density_kgm3=air_density_kgm3, source="long_term",
        label=f"long-term at the target by {METHOD_NAMES[method]} against "
              f"{ref_record.file_name}",
        record_file=target_record.file_name, record_sha256=target_record.sha256)
    return summary, res


def long_term_from_csv_bytes(target_data: bytes, target_name: str, ref_data: bytes,
                             ref_name: str, *, height_m: float, roughness_m: float = 0.05,
                             displacement_m: float = 0.0, method: str = "variance_ratio",
                             n_sectors: int = 12, fit_method: str = "mle",
                             target_speed_unit=None, ref_speed_unit=None,
                             utc_offset_h: float = 0.0, qc_settings=None):
    """Two uploads to a long-term climate in one call (import, QC of both, MCP, climate).

    Returns
    -------
    (WindClimate, MCPResult, dict)
        The long-term climate at the target, the correction with its concurrent-period
        statistics and warnings, and diagnostics ``summary``, ``target_qc``, ``reference_qc``.
    """
    from engine.climate import qc
    from engine.io import records as timeseries
    tgt = timeseries.read_record(target_data, target_name, speed_unit=target_speed_unit,
                                 utc_offset_h=utc_offset_h)
    ref = timeseries.read_record(ref_data, ref_name, speed_unit=ref_speed_unit,
                                 utc_offset_h=utc_offset_h)
    tq, rq = qc.run_qc(tgt, qc_settings), qc.run_qc(ref, qc_settings)
    summary, res = long_term_climate(tgt, tq, ref, rq, height_m=height_m,
                                     roughness_m=roughness_m, displacement_m=displacement_m,
                                     method=method, n_sectors=n_sectors, fit_method=fit_method)
    return summary.climate, res, {"summary": summary, "target_qc": tq, "reference_qc": rq}
