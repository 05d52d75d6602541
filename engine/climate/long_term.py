"""Long-term correction as the assessor runs it: a record, a reference (CSV or NetCDF), a method.

:func:`long_term_correction` reads the reference (a CSV of any layout the record reader knows,
or a gridded reanalysis NetCDF at the cell nearest a latitude/longitude), quality-controls both,
optionally restricts the concurrent period, corrects with :func:`engine.climate.mcp.mcp_long_term`
(``linear``, ``variance_ratio`` or ``speed_ratio``) and fits the long-term climate, with the
correction's uncertainty in ``WindClimate.long_term_uncertainty``. The command line
(``engine climate RECORD --long-term REFERENCE``) and the dashboard call this one function, so
both give the same corrected climate.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from engine.climate import mcp
from engine.climate import qc
from engine.climate.fit import climate_from_series
from engine.core.errors import InputError, Problems, check_range

#: Year-to-year variability of annual mean speed used when the reference holds fewer than
#: three whole years [fraction of the mean] (common practice, from memory: about 6 %).
DEFAULT_INTERANNUAL_VARIABILITY = 0.06
NS_PER_DAY = 86400 * 10**9
#: Season-to-season scatter of the site-to-reference mean-speed relation [fraction of the mean]:
#: how far one season's ratio of the two sites' mean speeds strays from the annual ratio. From
#: memory (a few per cent between well-correlated sites); 5 % is taken as a cautious round value.
DEFAULT_SEASONAL_SCATTER = 0.05
#: Seasons in a year: the concurrent period samples this many, each 365/4 days long.
SEASONS_PER_YEAR = 4


@dataclass(frozen=True)
class LongTermResult:
    """A long-term correction with everything shown beside it.

    Attributes
    ----------
    summary : :class:`engine.climate.fit.ClimateSummary` of the long-term series
    mcp : :class:`engine.climate.mcp.MCPResult` (per-sector lines and correlations)
    uncertainty : dict of the correction's one-sigma parts [fraction of mean speed]
    reference : dict describing the reference (file, height, roughness, NetCDF cell)
    target_qc, reference_qc : the quality-control reports
    """

    summary: object
    mcp: object
    uncertainty: dict
    reference: dict
    target_qc: object
    reference_qc: object

    @property
    def climate(self):
        return self.summary.climate


def seasonal_part(overlap_days, seasonal_scatter: float = DEFAULT_SEASONAL_SCATTER):
    """Uncertainty of the long-term mean from a concurrent period shorter than a year [fraction].

    Parameters
    ----------
    overlap_days : length of the concurrent period [days], scalar or array
    seasonal_scatter : σ_s, season-to-season standard deviation of the site-to-reference
        mean-speed ratio over the four seasons [fraction of the mean]

    Returns
    -------
    u_s : like ``overlap_days`` [fraction of the mean]; 0 for a year or more

    Notes
    -----
    The line fitted over the concurrent period holds for the seasons it saw; the other seasons'
    relation between the two sites may differ. The concurrent period is taken as a sample of
    n = 4 D / 365 d of the N = 4 seasons, drawn without replacement, so the error of the
    annual ratio estimated from it has the finite-population variance

        u_s² = σ_s² (N − n) / ((N − 1) n),   n = min(4 D / 365 d, N)

    (Cochran 1977, the variance of a sample mean with the finite population correction, σ_s²
    the population variance with divisor N). One season gives u_s = σ_s; a whole year, 0; a
    shorter period, more. Consecutive seasons are not a random sample, so this is a stated
    model, not a fit to field data; σ_s cannot be estimated from a record of one season.

    References
    ----------
    Cochran, W. G. (1977). Sampling Techniques, 3rd ed. Wiley (chapter 2, simple random
    sampling: V(ȳ) = (S²/n)(N − n)/N).
    """
    d = np.maximum(np.asarray(overlap_days, float), 1.0)
    n = np.minimum(d * SEASONS_PER_YEAR / 365.0, SEASONS_PER_YEAR)
    N = SEASONS_PER_YEAR
    u = float(seasonal_scatter) * np.sqrt(np.maximum(N - n, 0.0) / ((N - 1) * n))
    return u if u.ndim else float(u)


def correction_uncertainty(res, ref_time_ns, ref_speed_ms,
                           default_iav: float = DEFAULT_INTERANNUAL_VARIABILITY,
                           seasonal_scatter: float = DEFAULT_SEASONAL_SCATTER) -> dict:
    """One-sigma uncertainty of the long-term mean speed from a correction [fraction].

    Notes
    -----
    u² = u_c² + u_p² + u_s². Season part u_s from the concurrent period's length
    (:func:`seasonal_part`: 0 for a year or more, σ_s for one season). Correlation part u_c = √(1 − r²) σ_y / (ȳ √n_d), the standard error of the
    predicted mean from the scatter the line does not explain, with n_d the concurrent days
    (daily means taken as independent; common practice). Period part u_p = s_a / √N, the
    year-to-year variability s_a of the reference's annual mean speeds (from the reference when
    it holds three whole years or more, else :data:`DEFAULT_INTERANNUAL_VARIABILITY`) over the
    N years of the long-term series (common practice).
    """
    r = float(res.correlation) if np.isfinite(res.correlation) else 0.0
    sy = float(np.std(res.speed_ms)) / max(float(np.mean(res.speed_ms)), 1e-9)
    n_days = max(res.overlap_days, 1.0)
    u_c = np.sqrt(max(1.0 - r * r, 0.0)) * sy / np.sqrt(n_days)
    t = np.asarray(ref_time_ns, np.int64)
    years = (t[-1] - t[0]) / (365.25 * NS_PER_DAY) if t.size > 1 else 1.0
    whole = int(np.floor(years))
    iav, iav_from = default_iav, "common practice (6 %)"
    if whole >= 3:
        year = ((t - t[0]) // int(365.25 * NS_PER_DAY)).astype(np.intp)
        keep = year < whole
        means = np.bincount(year[keep], np.asarray(ref_speed_ms, float)[keep]) / np.bincount(
            year[keep])
        iav, iav_from = float(np.std(means, ddof=1) / np.mean(means)), f"reference, {whole} years"
    u_p = iav / np.sqrt(max(years, 1.0))
    u_s = seasonal_part(res.overlap_days, seasonal_scatter)
    return {"correlation_part": float(u_c), "period_part": float(u_p),
            "season_part": float(u_s), "seasonal_scatter": float(seasonal_scatter),
            "concurrent_days": float(res.overlap_days),
            "interannual_variability": float(iav), "interannual_from": iav_from,
            "long_term_years": float(years),
            "total": float(np.sqrt(u_c * u_c + u_p * u_p + u_s * u_s))}


def _read_reference(data, name, *, lat_deg, lon_deg, speed_unit, utc_offset_h):
    """A reference Record and its description, from CSV bytes or NetCDF bytes."""
    if bytes(data[:3]) == b"CDF":  # NetCDF3 magic number (classic and 64-bit offset)
        from engine.io import netcdf
        if lat_deg is None or lon_deg is None:
            raise InputError([("lat_deg", f"{name} is a gridded NetCDF file: give the site's "
                                          "latitude and longitude to pick its grid cell")])
        rec, info = netcdf.read_reanalysis(bytes(data), lat_deg, lon_deg, file_name=name)
        return rec, {"kind": "netcdf", **info}
    if bytes(data[:4]) == b"\x89HDF":
        raise InputError([(name, "is NetCDF4/HDF5; only NetCDF3 is read (convert it with "
                                 "'nccopy -k classic')")])
    from engine.io import records
    rec = records.read_record(data, name, speed_unit=speed_unit, utc_offset_h=utc_offset_h)
    return rec, {"kind": "csv"}


def _day(time_ns) -> str:
    return str(np.datetime64(int(time_ns), "ns").astype("datetime64[D]"))


def _series_not_fitted(error: InputError, method: str, res) -> InputError:
    """The fit's refusal of a predicted series that barely varies, put as what causes it: a
    least-squares line through poorly correlated pairs shrinks the spread by r."""
    if method != "linear" or not any("barely vary" in m for _, m in error.problems):
        return error
    r = float(res.concurrent_stats()["correlation"])
    return InputError([("method", f"must keep the site's spread: the long-term series "
                                  f"predicted by the linear (least-squares) line barely varies, "
                                  f"because the concurrent speeds correlate at only r = "
                                  f"{r:.2f} and the line shrinks the spread by r; choose the "
                                  "variance ratio method, or a reference that follows the site")])


def _period_rows(record, report, start_ns, end_ns):
    """The valid rows, restricted to [start, end) when given."""
    ok = report.valid.copy()
    if start_ns is not None:
        ok &= record.time_ns >= start_ns
    if end_ns is not None:
        ok &= record.time_ns < end_ns
    return ok


def long_term_correction(target_record, reference_data, reference_name: str, *, height_m: float,
                         roughness_m: float = 0.05, method: str = "variance_ratio",
                         n_sectors: int = 12, fit_method: str = "mle", lat_deg=None,
                         lon_deg=None, reference_height_m: float = 10.0,
                         reference_roughness_m: float = 0.05, ref_speed_unit=None,
                         utc_offset_h: float = 0.0, period_start_ns=None, period_end_ns=None,
                         qc_settings=None) -> LongTermResult:
    """Long-term climate at the target from a parsed target record and a reference file.

    Parameters
    ----------
    target_record : :class:`engine.io.records.Record` of the site (needs directions)
    reference_data, reference_name : the reference file's bytes and name (CSV or NetCDF3)
    height_m, roughness_m : where the target was measured [m]
    method : "linear", "variance_ratio" or "speed_ratio" (see :mod:`engine.climate.mcp`)
    lat_deg, lon_deg : site position for a gridded reference [deg]
    reference_height_m, reference_roughness_m : as stated by the user, kept with the result [m]
    period_start_ns, period_end_ns : concurrent period to use (target rows inside it) [UTC ns]

    Returns
    -------
    LongTermResult
    """
    p = Problems()
    check_range(p, "reference_height_m", reference_height_m, 0, 300, "m", lo_open=True)
    check_range(p, "reference_roughness_m", reference_roughness_m, 1e-4, 5.0, "m")
    if not target_record.has("direction"):
        p.add("target.columns.direction", "the record needs a direction column")
    if (period_start_ns is not None and period_end_ns is not None
            and int(period_end_ns) <= int(period_start_ns)):
        p.add("period", f"must end after it starts, got {_day(period_start_ns)} to "
                        f"{_day(period_end_ns)}; give a later end, or leave both blank to use "
                        "every concurrent time step")
    p.raise_if_any()
    ref, info = _read_reference(reference_data, reference_name, lat_deg=lat_deg,
                                lon_deg=lon_deg, speed_unit=ref_speed_unit,
                                utc_offset_h=utc_offset_h)
    if not ref.has("direction"):
        raise InputError([("reference.columns.direction", "the reference needs a direction "
                                                          "column")])
    tq, rq = qc.run_qc(target_record, qc_settings), qc.run_qc(ref, qc_settings)
    tv = _period_rows(target_record, tq, period_start_ns, period_end_ns)
    if tv.sum() < mcp.MIN_PAIRS:
        raise InputError([("period", f"only {int(tv.sum())} valid target rows in the chosen "
                                     "concurrent period; widen the period")])
    rv = rq.valid
    res = mcp.mcp_long_term(target_record.time_ns[tv], target_record.si("speed")[tv],
                            target_record.si("direction")[tv], ref.time_ns[rv],
                            ref.si("speed")[rv], ref.si("direction")[rv], method=method,
                            n_sectors=n_sectors)
    unc = correction_uncertainty(res, ref.time_ns[rv], ref.si("speed")[rv])
    try:
        summary = climate_from_series(
            res.speed_ms, res.direction_deg, res.time_ns, height_m=height_m,
            roughness_m=roughness_m, n_sectors=n_sectors, method=fit_method,
            source="long_term",
            label=f"long-term at the target by {mcp.METHOD_NAMES[method]} against "
                  f"{reference_name}",
            record_file=target_record.file_name, record_sha256=target_record.sha256)
    except InputError as e:
        raise _series_not_fitted(e, method, res) from None
    summary = replace(summary, climate=replace(summary.climate,
                                               long_term_uncertainty=min(unc["total"], 1.0)))
    info.update({"file": reference_name, "height_m": float(reference_height_m),
                 "roughness_m": float(reference_roughness_m), "sha256": ref.sha256})
    return LongTermResult(summary=summary, mcp=res, uncertainty=unc, reference=info,
                          target_qc=tq, reference_qc=rq)
