"""A site logger's file to a climate in one call: heights, QC, long-term, TI, shear, averaging.

:func:`logger_climate` is what the dashboard's climate step and the command line call for a
logger record: it reads every logged height (:mod:`engine.io.record_columns`), quality-controls
the chosen height, long-term corrects it when a reference is given
(:func:`engine.climate.long_term.long_term_correction`), measures TI per sector from the SD
column (:mod:`engine.climate.measured`), fits the shear when two or more heights are logged
(:mod:`engine.climate.shear`), corrects hourly or longer means (:mod:`engine.climate.averaging`)
and says where the climate was measured (``measured_at``, ``position_id``).
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from engine.climate import averaging, measured, qc, shear
from engine.climate.fit import check_kept_share, climate_from_record
from engine.climate.long_term import long_term_correction
from engine.climate.sectors import sector_index
from engine.core.errors import Problems, check_range
from engine.io import record_columns


@dataclass(frozen=True)
class LoggerClimate:
    """A logger's climate and everything shown beside it.

    Attributes
    ----------
    climate : the :class:`~engine.core.model.WindClimate` (measured TI, shear, averaging set)
    summary : :class:`engine.climate.fit.ClimateSummary` before the averaging correction
    qc : quality-control report of the chosen height
    heights_m : logged heights above the logger's base [m]
    ti_table : sector x speed-bin measured TI (empty without SD)
    shear_table : per-sector α and z0 (None with one height)
    averaging_factor : (S,) factor on mean V³ applied for the averaging [-]
    long_term : :class:`engine.climate.long_term.LongTermResult` or None
    series : (time_ns, speed_ms, direction_deg) the (long-term) series at the climate's height
    notes : warnings and what was assumed
    """

    climate: object
    summary: object
    qc: object
    heights_m: np.ndarray
    ti_table: object
    shear_table: object
    averaging_factor: np.ndarray
    long_term: object
    series: tuple
    notes: tuple = ()


def logger_climate(data: bytes, file_name: str, *, base_height_m: float = 0.0,
                   position_id: str = "", height_index: int = -1, roughness_m: float = 0.05,
                   n_sectors: int = 12, fit_method: str = "mle", speed_unit=None,
                   utc_offset_h: float = 0.0, reference=None,
                   distance_constant_m: float = measured.DEFAULT_DISTANCE_CONSTANT_M,
                   qc_settings=None, altitude_m: float = 0.0,
                   heights=None, max_excluded_share: float | None = None) -> LoggerClimate:
    """Climate of a (multi-height) logger record.

    Parameters
    ----------
    data, file_name : the logger file's bytes and name (headers such as ws_10m, ws_10m_sd,
        wd_10m; see :func:`engine.io.record_columns.height_columns`)
    base_height_m : height of the logger's base above ground (the roof surface for a roof
        logger) [m]; the climate's height is base + the chosen logged height
    position_id : the candidate position the logger stands at ("" = a reference mast)
    height_index : which logged height makes the climate (default the top one)
    reference : None, or a dict of :func:`engine.climate.long_term.long_term_correction`
        keyword arguments with ``reference_data`` and ``reference_name``
    distance_constant_m : the cup anemometer's distance constant [m] (0 for a sonic)
    altitude_m : site altitude for ISA pressure when the record has no pressure [m]
    heights : an already read :class:`engine.io.record_columns.HeightRecord` (None: read
        ``data``), e.g. a single-height record (:func:`engine.climate.site_record.record_climate`)
    max_excluded_share : refuse, before any fit, a record whose quality control excludes a
        larger share of its rows, naming why (None: no such check here)
    """
    p = Problems()
    check_range(p, "base_height_m", base_height_m, 0, 300, "m")
    check_range(p, "distance_constant_m", distance_constant_m, 0, 20, "m")
    p.raise_if_any()
    hr = heights if heights is not None else record_columns.read_heights(
        data, file_name, speed_unit=speed_unit, utc_offset_h=utc_offset_h)
    i = int(height_index) % len(hr.heights_m)
    rec, z = hr.records[i], float(base_height_m + hr.heights_m[i])
    report = qc.run_qc(rec, qc_settings)
    if max_excluded_share is not None:  # before a fit, whose own refusal says less
        check_kept_share(report, max_excluded_share)
    notes, lt = [], None
    if reference:
        lt = long_term_correction(rec, height_m=z, roughness_m=roughness_m,
                                  n_sectors=n_sectors, fit_method=fit_method,
                                  utc_offset_h=utc_offset_h, qc_settings=qc_settings,
                                  **reference)
        summary, series = lt.summary, (lt.mcp.time_ns, lt.mcp.speed_ms, lt.mcp.direction_deg)
        notes += list(lt.mcp.warnings)
    else:
        summary = climate_from_record(rec, report, height_m=z, roughness_m=roughness_m,
                                      n_sectors=n_sectors, method=fit_method,
                                      altitude_m=altitude_m, qc_settings=qc_settings)
        ok = report.valid
        series = (rec.time_ns[ok], rec.si("speed")[ok], rec.si("direction")[ok])
    ok = report.valid
    v, d = rec.si("speed")[ok], rec.si("direction")[ok]
    sd = hr.sd_ms[i][ok]
    step = averaging.averaging_interval_s(rec.time_ns[ok])
    ti_s, ti_table = measured.measured_ti(v, ten_minute_sd(sd, v, z, step), d, z, n_sectors,
                                          distance_constant_m)
    shear_t = None
    if len(hr.heights_m) >= 2:
        valid = np.all([qc.run_qc(r, qc_settings).valid for r in hr.records], axis=0)
        shear_t = shear.fit_shear(hr.heights_m, np.vstack([r.si("speed")[valid]
                                                           for r in hr.records]),
                                  rec.si("direction")[valid], n_sectors)
    factor, interval_s = _averaging_factor(rec.time_ns[ok], v, d, sd, step, z, roughness_m,
                                           n_sectors, lt, notes)
    c = summary.climate
    clim = replace(c, weibull_c_ms=tuple(float(x) for x in np.asarray(c.weibull_c_ms)
                                         * factor ** (1.0 / 3.0)),
                   measured_at="position" if position_id else "reference",
                   position_id=position_id, averaging_s=interval_s,
                   turbulence_intensity=tuple(float(x) for x in ti_s)
                   if np.all(np.isfinite(ti_s)) else (),
                   shear_exponent=_exponents(shear_t, notes))
    return LoggerClimate(climate=clim, summary=summary, qc=report, heights_m=hr.heights_m,
                         ti_table=ti_table, shear_table=shear_t, averaging_factor=factor,
                         long_term=lt, series=series, notes=tuple(notes))


def _averaging_factor(time_ns, v, d, sd, step, z, roughness_m, n_sectors, lt, notes):
    """(factor on mean V³ per sector, the climate's interval [s]); a note appended if any.

    The record's own interval is corrected from its SD (:func:`engine.climate.averaging.
    averaging_correction`); a long-term series at a longer interval than the record's is
    corrected, on top, by the factor measured on the record itself over the concurrent period
    (:func:`engine.climate.averaging.finer_means_cube_factor`).
    """
    factor, note = averaging.averaging_correction(
        v, sector_index(d, n_sectors), n_sectors, step, z, roughness_m,
        sd_ms=sd if np.isfinite(sd).any() else None)
    if note:
        notes.append(note)
    lt_step = averaging.averaging_interval_s(lt.mcp.time_ns) if lt is not None else 0.0
    if lt_step <= step or lt_step < averaging.LONG_AVERAGING_S:
        return factor, step
    f_lt = averaging.finer_means_cube_factor(time_ns, v, d, lt.mcp.time_ns, lt_step, n_sectors)
    notes.append(f"the long-term series averages over {lt_step / 60:.0f} minutes (the "
                 f"reference's interval): mean V³ raised by {100 * (f_lt.min() - 1):.1f}-"
                 f"{100 * (f_lt.max() - 1):.1f} % per sector, measured from the logger's own "
                 f"{step / 60:.0f}-minute means within those intervals")
    return factor * f_lt, lt_step


def ten_minute_sd(sd_ms, speed_ms, height_m, interval_s):
    """The within-10-minute part of a logged standard deviation [m/s], (N,).

    Parameters
    ----------
    sd_ms, speed_ms : (N,) logged standard deviation over the interval and mean speed [m/s]
    height_m : measurement height [m]
    interval_s : the record's averaging interval T [s]

    Notes
    -----
    σ_10 = σ_T √(1 − β), β the share of the T-second variance lying between 10-minute means
    (:func:`engine.climate.averaging.between_share`). For hourly or longer records that share
    is already credited to the energy by the averaging correction (the cube factor on c), so
    the turbulence intensity the curve normalisation uses must not hold it again; power
    curves and their TI are 10-minute quantities (IEC 61400-12-1). Records of 10 minutes or
    less are returned unchanged.
    """
    sd = np.asarray(sd_ms, float)
    if interval_s < averaging.LONG_AVERAGING_S or not np.isfinite(sd).any():
        return sd
    beta = averaging.between_share(np.asarray(speed_ms, float), height_m, interval_s)
    return sd * np.sqrt(np.clip(1.0 - beta, 0.0, 1.0))


def _exponents(shear_t, notes) -> tuple:
    """Per-sector exponents for the climate, or () with a note when they are not usable."""
    if shear_t is None:
        return ()
    a = np.asarray(shear.sector_exponents(shear_t))
    if np.all(np.isfinite(a)) and np.all((a >= -0.5) & (a <= 1.5)):
        return tuple(float(x) for x in a)
    notes.append("fitted shear exponents outside -0.5..1.5 (flow near the roof is not a "
                 "boundary-layer profile): not kept with the climate; see the shear table")
    return ()
