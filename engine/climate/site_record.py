"""A measured record to the climate an assessment uses: the one call of the dashboard and the CLI.

:func:`record_climate` takes a record file's bytes as uploaded (a logger file with heights in
its headers, ``ws_5m``/``ws_5m_sd``..., or a plain single-height record), where it was measured
(a reference, or a candidate position with the logger's base height) and, optionally, a
long-term reference (:class:`ReferenceFile`), and returns the
:class:`engine.climate.logger.LoggerClimate` of :func:`engine.climate.logger.logger_climate`:
measured TI where SD columns exist, shear where two heights exist, the averaging correction,
the long-term correction. The dashboard's climate step and ``engine climate RECORD --long-term
REFERENCE`` both call it with the same arguments, so they cannot give different climates.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.climate import measured
from engine.climate.fit import MAX_EXCLUDED_SHARE, RECORD_ROUGHNESS_M
from engine.climate.logger import LoggerClimate, logger_climate
from engine.core.errors import Problems, check_range
from engine.io import record_columns, records


@dataclass(frozen=True)
class ReferenceFile:
    """A long-term reference as the assessor gives it.

    Attributes
    ----------
    data, name : the file's bytes and name (CSV/TSV, or NetCDF3 reanalysis)
    method : "linear", "variance_ratio" or "speed_ratio" (:mod:`engine.climate.mcp`)
    lat_deg, lon_deg : site position for a gridded reference [deg] (None for a CSV)
    height_m, roughness_m : the reference's stated height and roughness length [m]
    speed_unit : the reference's speed unit when its header does not say (None: the header)
    period_start_ns, period_end_ns : concurrent period to use [UTC ns] (None: all of it)
    """

    data: bytes
    name: str
    method: str = "variance_ratio"
    lat_deg: float | None = None
    lon_deg: float | None = None
    height_m: float = 10.0
    roughness_m: float = 0.05
    speed_unit: str | None = None
    period_start_ns: int | None = None
    period_end_ns: int | None = None

    def arguments(self) -> dict:
        """Keyword arguments of :func:`engine.climate.long_term.long_term_correction`."""
        return {"reference_data": self.data, "reference_name": self.name,
                "method": self.method, "lat_deg": self.lat_deg, "lon_deg": self.lon_deg,
                "reference_height_m": self.height_m,
                "reference_roughness_m": self.roughness_m, "ref_speed_unit": self.speed_unit,
                "period_start_ns": self.period_start_ns, "period_end_ns": self.period_end_ns}


def single_height(data: bytes, file_name: str, height_above_base_m: float, *, speed_unit=None,
                  utc_offset_h: float = 0.0):
    """A plain record (no height in its headers) as a one-height logger record."""
    rec = records.read_record(data, file_name, speed_unit=speed_unit, utc_offset_h=utc_offset_h)
    return record_columns.HeightRecord(
        heights_m=np.array([float(height_above_base_m)]), records=(rec,),
        sd_ms=np.full((1, rec.n_rows), np.nan), columns=({"speed": "", "sd": None,
                                                           "direction": None},))


def logged_heights_m(data: bytes) -> tuple:
    """Heights above the logger's base named in a file's headers [m] (empty for a plain record)."""
    return tuple(float(z) for z in record_columns.height_columns(
        record_columns.header_line(bytes(data))))


def record_climate(data: bytes, file_name: str, *, height_m: float = 10.0,
                   base_height_m: float = 0.0, position_id: str = "",
                   roughness_m: float = RECORD_ROUGHNESS_M, n_sectors: int = 12,
                   fit_method: str = "mle", speed_unit=None, utc_offset_h: float = 0.0,
                   altitude_m: float = 0.0, reference: ReferenceFile | None = None,
                   distance_constant_m: float = measured.DEFAULT_DISTANCE_CONSTANT_M,
                   max_excluded_share: float = MAX_EXCLUDED_SHARE) -> LoggerClimate:
    """The climate of a measured record, where it was measured, optionally long-term corrected.

    Parameters
    ----------
    data, file_name : the record's bytes and name
    height_m : sensor height above its base for a record without heights in its headers [m];
        a logger file's own header heights are used instead (the top one)
    base_height_m : height of the sensor's base above ground (the roof for a roof logger,
        0 for a mast on the ground) [m]; the climate's height is base + sensor height
    position_id : the candidate position it was measured at ("" = a reference)
    roughness_m : roughness length around the sensor [m]
    reference : a long-term reference, or None
    max_excluded_share : refuse a record whose quality control excludes more [-]

    Returns
    -------
    LoggerClimate
    """
    p = Problems()
    heights = logged_heights_m(data)
    if not heights:
        check_range(p, "height_m", height_m, 0, 300, "m", lo_open=True)
    check_range(p, "roughness_m", roughness_m, 1e-4, 5.0, "m")
    check_range(p, "altitude_m", altitude_m, -450, 5000, "m")
    check_range(p, "max_excluded_share", max_excluded_share, 0, 1)
    p.raise_if_any()
    hr = None if heights else single_height(data, file_name, height_m, speed_unit=speed_unit,
                                            utc_offset_h=utc_offset_h)
    lc = logger_climate(data, file_name, base_height_m=base_height_m, position_id=position_id,
                        roughness_m=roughness_m, n_sectors=n_sectors, fit_method=fit_method,
                        speed_unit=speed_unit, utc_offset_h=utc_offset_h,
                        reference=reference.arguments() if reference else None,
                        distance_constant_m=distance_constant_m, altitude_m=altitude_m,
                        heights=hr, max_excluded_share=max_excluded_share)
    return lc


#: Largest relative difference of a rebuilt climate's frequencies, k and c from the stored
#: one for its series to count as the climate's own [-] (text rounding of a site file).
REBUILD_RTOL = 1e-6


def climate_series(data: bytes, file_name: str, climate, *, base_height_m: float = 0.0,
                   reference: ReferenceFile | None = None, speed_unit=None,
                   utc_offset_h: float = 0.0, fit_method: str = "mle") -> tuple:
    """The series behind a stored climate, rebuilt from its record and checked against it.

    The record (and reference) is put through :func:`record_climate` with the climate's own
    height, roughness, sectors and place; the rebuilt climate's frequencies, k and c must
    equal the stored ones (within :data:`REBUILD_RTOL`), so the series returned is the very
    one the climate was fitted on, corrections included: the long-term predicted series for a
    long-term corrected climate, the valid rows at the climate's height otherwise.

    Parameters
    ----------
    data, file_name : the record's bytes and name
    climate : the stored :class:`engine.core.model.WindClimate`
    base_height_m : height of the logger's base above ground [m] (a position's roof)
    reference : the long-term reference it was corrected with (None: not corrected)

    Returns
    -------
    (time_ns, speed_ms, direction_deg)

    Raises
    ------
    InputError
        ``record`` when the rebuilt climate differs (other options, another reference).
    """
    from engine.core.errors import InputError
    if climate.source == "long_term" and reference is None:
        raise InputError([("reference", "the climate is long-term corrected: give the "
                                        "reference it was corrected with")])
    lc = record_climate(data, file_name, height_m=float(climate.height_m) - base_height_m,
                        base_height_m=base_height_m, position_id=climate.position_id,
                        roughness_m=climate.roughness_m, n_sectors=climate.n_sectors,
                        fit_method=fit_method, speed_unit=speed_unit,
                        utc_offset_h=utc_offset_h,
                        reference=reference if climate.source == "long_term" else None)
    got, want = lc.climate, climate
    worst = 0.0
    for name in ("frequency", "weibull_k", "weibull_c_ms"):
        a, b = np.asarray(getattr(got, name), float), np.asarray(getattr(want, name), float)
        if a.shape != b.shape:
            worst = np.inf
            break
        worst = max(worst, float(np.max(np.abs(a - b) / np.maximum(np.abs(b), 1e-9),
                                        initial=0.0)))
    if abs(got.height_m - want.height_m) > 1e-6 or worst > REBUILD_RTOL:
        raise InputError([("record", f"rebuilt from this record the climate differs from the "
                                     f"site file's (largest relative difference of frequency, "
                                     f"k or c {worst:.2g}, height {got.height_m:g} m against "
                                     f"{want.height_m:g} m): give the options it was built "
                                     "with (reference, method, concurrent period)")])
    return lc.series
