"""Wind climate from a measured record, from a table, or from a mean speed alone.

The result is an :class:`engine.core.model.WindClimate`: per-sector frequency and Weibull k, c at a
stated height, roughness and displacement. From data, :func:`climate_from_series` also gives
the all-sector Weibull, measured mean speed and power density, wind-rose counts and the
monthly and diurnal means in a :class:`ClimateSummary`.

Weibull fits use the non-zero speeds (the log-likelihood has ln V); the calm fraction is
reported beside the fit.

References
----------
Justus, C. G., Hargraves, W. R., Mikhail, A. and Graber, D. (1978), "Methods for estimating
wind speed frequency distributions", J. Appl. Meteorol. 17:350-353.
Johnson, N. L., Kotz, S. and Balakrishnan, N. (1994), Continuous Univariate Distributions,
vol. 1, 2nd ed., ch. 21 (Weibull maximum-likelihood equations).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.special import gamma

from engine.climate import air
from engine.climate import qc
from engine.io import records as timeseries
from engine.core.errors import InputError, Problems, check_range
from engine.core.model import WindClimate
from engine.climate.sectors import sector_index, sector_sums
from engine.climate.weibull import weibull_mean_ms, weibull_power_density_wm2, weibull_scale_from_mean

FIT_METHODS = ("mle", "moments")
#: Speed-bin edges of the wind-rose table [m/s].
ROSE_EDGES_MS = (0.0, 2.0, 4.0, 6.0, 8.0, 10.0, 12.0, 15.0, np.inf)
#: Roughness length assumed round a measuring mast when none is given [m]: open terrain,
#: EN 1991-1-4:2005 Table 4.1 terrain category II (z0 = 0.05 m). The command line and the
#: dashboard's record form both default to it.
RECORD_ROUGHNESS_M = 0.05
#: Fewest records a sector needs for its own Weibull fit; fewer borrow the all-sector shape.
MIN_SECTOR_RECORDS = 30
LOWER_CONFIDENCE_LABEL = ("screening estimate: mean speed only, Rayleigh (k = 2) assumed in "
                          "every sector; lower confidence than a measured climate")


def weibull_fit_moments(speed_ms, groups=None, n_groups: int = 1):
    """Weibull k, c from the mean and standard deviation (Justus et al. 1978) per group.

    Parameters
    ----------
    speed_ms : (N,) speeds [m/s]
    groups : (N,) int group of each speed (e.g. its sector); all one group when None
    n_groups : number of groups

    Returns
    -------
    k, c_ms, n : (G,) arrays; NaN where a group has fewer than 2 speeds or no spread

    Notes
    -----
    k = (σ / V̄)^-1.086, c = V̄ / Γ(1 + 1/k).
    """
    v = np.asarray(speed_ms, float)
    g = np.zeros(v.shape, np.intp) if groups is None else np.asarray(groups, np.intp)
    n = np.bincount(g, minlength=n_groups).astype(float)
    s1 = np.bincount(g, v, minlength=n_groups)
    s2 = np.bincount(g, v * v, minlength=n_groups)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = s1 / n
        var = (s2 - n * mean ** 2) / (n - 1)
        sd = np.sqrt(np.maximum(var, 0.0))
        ok = (n >= 2) & (sd > 0) & (mean > 0)
        k = np.where(ok, (sd / np.where(ok, mean, 1.0)) ** -1.086, np.nan)
        c = np.where(ok, mean / gamma(1.0 + 1.0 / np.where(ok, k, 1.0)), np.nan)
    return k, c, n.astype(int)


#: Finest logged speed resolution recognised for weighting repeated values [1/(m/s)].
_RESOLUTION_PER_MS = 1000.0


def _resolution_codes(v):
    """Integer codes of speeds logged at 0.001 m/s resolution or coarser; None otherwise."""
    if v.size == 0 or v.max() > 1000.0:
        return None
    scaled = v * _RESOLUTION_PER_MS
    q = np.rint(scaled)
    if np.max(np.abs(q - scaled)) > 1e-6:
        return None
    return q.astype(np.intp)


def weibull_fit_mle(speed_ms, groups=None, n_groups: int = 1, tol: float = 1e-10,
                    max_iter: int = 60):
    """Maximum-likelihood Weibull k, c per group, all groups solved together.

    Parameters
    ----------
    speed_ms : (N,) speeds > 0 [m/s] (zeros and negatives are left out)
    groups : (N,) int group of each speed; all one group when None
    n_groups : number of groups

    Returns
    -------
    k, c_ms, n : (G,) arrays; NaN where a group has fewer than 2 positive speeds or no spread

    Notes
    -----
    The likelihood equation for the shape (Johnson, Kotz & Balakrishnan 1994, eq. 21.88)

        Σ V^k ln V / Σ V^k − 1/k − mean(ln V) = 0

    is solved by Newton's method from the moment estimate, vectorised over groups with
    ``bincount``; then c = (mean V^k)^(1/k). Speeds are divided by their group mean first, which
    leaves k unchanged and keeps V^k finite. Repeated values are fitted once with their count
    as weight (the same likelihood).
    """
    v = np.asarray(speed_ms, float)
    g = np.zeros(v.shape, np.intp) if groups is None else np.asarray(groups, np.intp)
    keep = v > 0
    v, g = v[keep], g[keep]
    # Logged speeds repeat (a resolution of 0.01-0.1 m/s): the likelihood of N speeds equals
    # that of the distinct (group, speed) pairs weighted by their counts, which is far shorter.
    q = _resolution_codes(v)
    if q is not None and q.max() < 4 * v.size // max(n_groups, 1):
        size = int(q.max()) + 1
        cnt = np.bincount(g * size + q, minlength=n_groups * size)
        nz = np.flatnonzero(cnt)
        v, g, wt = (nz % size) / _RESOLUTION_PER_MS, nz // size, cnt[nz].astype(float)
    else:
        wt = np.ones(v.shape)
    n = np.bincount(g, wt, minlength=n_groups)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.bincount(g, wt * v, minlength=n_groups) / n
        var = (np.bincount(g, wt * v * v, minlength=n_groups) - n * mean ** 2) / (n - 1)
        ok = (n >= 2) & (var > 1e-12 * np.where(np.isfinite(mean), mean, 1.0) ** 2) & (mean > 0)
        k0 = np.where(ok, (np.sqrt(np.where(ok, var, 1.0)) / np.where(ok, mean, 1.0)) ** -1.086,
                      1.0)
    safe_scale = np.where(ok, mean, 1.0)
    lx = np.log(v / safe_scale[g])
    mean_lx = np.bincount(g, wt * lx, minlength=n_groups) / np.where(n > 0, n, 1.0)
    k = np.where(ok, np.clip(k0, 0.2, 50.0), 1.0)
    wlx = wt * lx
    wlx2 = wlx * lx
    for _ in range(max_iter):
        e = np.exp(k[g] * lx)
        s0 = np.bincount(g, wt * e, minlength=n_groups)
        s1 = np.bincount(g, wlx * e, minlength=n_groups)
        s2 = np.bincount(g, wlx2 * e, minlength=n_groups)
        s0 = np.where(s0 > 0, s0, 1.0)
        f = s1 / s0 - 1.0 / k - mean_lx
        df = s2 / s0 - (s1 / s0) ** 2 + 1.0 / k ** 2
        step = np.where(ok, f / df, 0.0)
        k_new = np.clip(k - step, k / 2.0, 2.0 * k)
        done = np.all(np.abs(k_new - k) <= tol * k)
        k = k_new
        if done:
            break
    s0 = np.bincount(g, wt * np.exp(k[g] * lx), minlength=n_groups)
    with np.errstate(invalid="ignore", divide="ignore"):
        c = safe_scale * (s0 / np.where(n > 0, n, 1.0)) ** (1.0 / k)
    return np.where(ok, k, np.nan), np.where(ok, c, np.nan), np.rint(n).astype(int)


@dataclass(frozen=True)
class ClimateSummary:
    """A measured climate with everything shown beside it.

    Attributes
    ----------
    climate : the per-sector :class:`~engine.core.model.WindClimate`
    sectors : one row per sector: sector_deg, records, frequency, weibull_k, weibull_c_ms,
        mean_speed_ms (measured), power_density_wm2 (measured), fit ("own" or "all-sector shape")
    all_k, all_c_ms : all-sector Weibull fit [-], [m/s]
    mean_speed_ms : measured mean of all valid records [m/s]
    power_density_wm2 : measured mean power density ½ ρ mean(V³) [W/m²]
    weibull_power_density_wm2 : of the all-sector Weibull, ½ ρ c³ Γ(1 + 3/k) [W/m²]
    calm_fraction : share of records with V = 0 (left out of the fits) [-]
    air_density_kgm3 : density used for power density [kg/m³]
    rose : sector x speed-bin frequency table (sums to 1) with edges :data:`ROSE_EDGES_MS`
    monthly_mean_ms : (12,) calendar-month mean speeds, NaN for months without data [m/s]
    diurnal_mean_ms : (24,) mean speed per UTC hour, NaN where none [m/s]
    n_records : records used
    fit_method : "mle" or "moments"
    """

    climate: WindClimate
    sectors: pd.DataFrame
    all_k: float
    all_c_ms: float
    mean_speed_ms: float
    power_density_wm2: float
    weibull_power_density_wm2: float
    calm_fraction: float
    air_density_kgm3: float
    rose: pd.DataFrame
    monthly_mean_ms: np.ndarray
    diurnal_mean_ms: np.ndarray
    n_records: int
    fit_method: str
    notes: tuple = ()

    def all_sectors(self) -> dict:
        """All-sector figures as a JSON-ready dict."""
        return {"weibull_k": self.all_k, "weibull_c_ms": self.all_c_ms,
                "mean_speed_ms": self.mean_speed_ms,
                "weibull_mean_speed_ms": float(weibull_mean_ms(self.all_k, self.all_c_ms)),
                "power_density_wm2": self.power_density_wm2,
                "weibull_power_density_wm2": self.weibull_power_density_wm2,
                "calm_fraction": self.calm_fraction, "air_density_kgm3": self.air_density_kgm3,
                "records": self.n_records, "fit_method": self.fit_method,
                "monthly_mean_ms": [None if not np.isfinite(v) else float(v)
                                    for v in self.monthly_mean_ms],
                "diurnal_mean_ms": [None if not np.isfinite(v) else float(v)
                                    for v in self.diurnal_mean_ms]}


def _check_common(p: Problems, height_m, roughness_m, n_sectors, method):
    check_range(p, "height_m", height_m, 0, 300, "m", lo_open=True)
    check_range(p, "roughness_m", roughness_m, 1e-4, 5.0, "m")
    if not isinstance(n_sectors, (int, np.integer)) or not 1 <= n_sectors <= 72:
        p.add("n_sectors", f"must be a whole number 1..72, got {n_sectors!r}")
    if method not in FIT_METHODS:
        p.add("method", f"must be one of {', '.join(FIT_METHODS)}, got {method!r}")


#: Largest Weibull shape a climate may hold (as :class:`engine.core.model.WindClimate` checks).
MAX_WEIBULL_K = 10.0


def _check_shape_fits(k_out, speeds, record_file: str) -> None:
    """Refuse, in words, a record whose speeds barely vary (a fitted shape k above the limit)."""
    k_out = np.asarray(k_out, float)
    steep = ~np.isfinite(k_out) | (k_out > MAX_WEIBULL_K)
    if not steep.any():
        return
    spread = float(np.std(speeds) / np.mean(speeds)) if np.mean(speeds) > 0 else 0.0
    finite = k_out[np.isfinite(k_out)]
    k_max = float(finite.max()) if finite.size else float("inf")
    raise InputError([(record_file or "record",
                       f"the wind speeds barely vary (spread {100 * spread:.2g} % of the mean; "
                       f"fitted Weibull shape up to {k_max:.3g} in {int(steep.sum())} "
                       f"sector(s), at most {MAX_WEIBULL_K:g} accepted): a steady or stuck "
                       "record cannot describe a wind climate. Check the speed column (a "
                       "constant, a logger default) or enter the climate as a table")])


def climate_from_series(speed_ms, direction_deg, time_ns=None, *, height_m: float,
                        roughness_m: float = RECORD_ROUGHNESS_M, displacement_m: float = 0.0,
                        n_sectors: int = 12, method: str = "mle",
                        air_density_kgm3: float = 1.225, source: str = "measured",
                        label: str = "", record_file: str = "", record_sha256: str = "",
                        min_sector_records: int = MIN_SECTOR_RECORDS) -> ClimateSummary:
    """Per-sector climate from clean speed and direction arrays.

    Parameters
    ----------
    speed_ms : (N,) valid mean speeds [m/s]
    direction_deg : (N,) directions the wind comes from [deg]
    time_ns : (N,) UTC times [ns]; needed for the monthly and diurnal means
    height_m, roughness_m, displacement_m : where the record stands [m]
    n_sectors : number of direction sectors
    method : "mle" (maximum likelihood) or "moments" (Justus et al. 1978)
    air_density_kgm3 : for the power densities [kg/m³]
    min_sector_records : sectors with fewer records use the all-sector shape k and their own
        mean speed

    Returns
    -------
    ClimateSummary
    """
    v, d = _checked_series(speed_ms, direction_deg, height_m, roughness_m, n_sectors, method)
    fit = weibull_fit_mle if method == "mle" else weibull_fit_moments
    sec = np.empty(v.size, np.intp)
    counts, sum_v, sum_v3 = sector_sums(v, d, n_sectors, index_out=sec)
    freq = counts / counts.sum()
    pos = v > 0
    k_s, c_s, n_fit = fit(v[pos], sec[pos], n_sectors)
    k_all, c_all, _ = fit(v[pos])
    k_all, c_all = float(k_all[0]), float(c_all[0])
    if not (np.isfinite(k_all) and np.isfinite(c_all)):
        raise InputError([("record", "speeds have no spread (all equal); a Weibull fit needs "
                                     "varying speeds")])
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_s = sum_v / counts
        pd_s = 0.5 * air_density_kgm3 * sum_v3 / counts
    own = (n_fit >= min_sector_records) & np.isfinite(k_s)
    k_out, c_out = _thin_sectors_all_shape(own, k_s, c_s, mean_s, k_all, c_all)
    notes = []
    thin = np.flatnonzero(~own)
    if thin.size:
        notes.append(f"{thin.size} sector(s) with fewer than {min_sector_records} records use "
                     f"the all-sector shape k = {k_all:.2f}: "
                     + ", ".join(f"{i * 360 / n_sectors:g} deg" for i in thin))
    calm = float(np.mean(v == 0))
    if calm > 0:
        notes.append(f"{100 * calm:.1f} % calms (0 m/s) are counted in the frequencies but left "
                     "out of the Weibull fits")
    monthly, diurnal = _monthly_diurnal_means(v, time_ns)
    monthly_ok = bool(np.all(np.isfinite(monthly)))
    if time_ns is not None and not monthly_ok:
        notes.append(f"{int(np.sum(~np.isfinite(monthly)))} calendar month(s) without data: "
                     "no monthly means kept with the climate")
    rose = _rose_table(v, sec, n_sectors)
    _check_shape_fits(k_out, v, record_file)
    clim = WindClimate(height_m=float(height_m), roughness_m=float(roughness_m),
                       frequency=tuple(float(f) for f in freq),
                       weibull_k=tuple(float(k) for k in k_out),
                       weibull_c_ms=tuple(float(c) for c in c_out),
                       displacement_m=float(displacement_m), source=source,
                       label=label or f"{source} record, {v.size} records, {method} fit",
                       monthly_mean_ms=tuple(float(m) for m in monthly) if monthly_ok else (),
                       record_file=record_file, record_sha256=record_sha256)
    table = _sector_table(counts, freq, k_out, c_out, mean_s, pd_s, own)
    return ClimateSummary(
        climate=clim, sectors=table, all_k=k_all, all_c_ms=c_all,
        mean_speed_ms=float(v.mean()),
        power_density_wm2=float(0.5 * air_density_kgm3 * sum_v3.sum() / v.size),
        weibull_power_density_wm2=float(weibull_power_density_wm2(k_all, c_all,
                                                                   air_density_kgm3)),
        calm_fraction=calm, air_density_kgm3=float(air_density_kgm3), rose=rose,
        monthly_mean_ms=monthly, diurnal_mean_ms=diurnal, n_records=int(v.size),
        fit_method=method, notes=tuple(notes))


def _checked_series(speed_ms, direction_deg, height_m, roughness_m, n_sectors, method):
    """Speed and direction as float arrays, after every check of the arguments at once."""
    p = Problems()
    _check_common(p, height_m, roughness_m, n_sectors, method)
    v = np.asarray(speed_ms, float)
    d = np.asarray(direction_deg, float)
    if v.shape != d.shape:
        p.add("direction_deg", f"must have one value per speed ({v.size}), got {d.size}")
    p.raise_if_any()
    if v.size < 10 or np.count_nonzero(v > 0) < 10:
        n_pos = np.count_nonzero(v > 0)
        raise InputError([("record", f"has {n_pos} non-zero speeds of {v.size} valid ones "
                                     f"({v.size - n_pos} zero); at least 10 non-zero are needed "
                                     "for a Weibull fit: check the speed column (a sensor "
                                     "logging zeros) or use a longer record")])
    return v, d


def _sector_table(counts, freq, k_out, c_out, mean_s, pd_s, own):
    """The per-sector table of a fitted climate, one row per sector."""
    n_sectors = len(counts)
    return pd.DataFrame({
        "sector_deg": np.arange(n_sectors) * 360.0 / n_sectors,
        "records": counts, "frequency": freq, "weibull_k": k_out, "weibull_c_ms": c_out,
        "mean_speed_ms": mean_s, "weibull_mean_speed_ms": weibull_mean_ms(k_out, c_out),
        "power_density_wm2": pd_s,
        "fit": np.where(own, "own", "all-sector shape")})


def _thin_sectors_all_shape(own, k_s, c_s, mean_s, k_all, c_all):
    """Per-sector k and c: a sector's own fit where ``own``, else the all-sector shape with the
    sector's own mean speed (or the all-sector scale when it has no speed at all)."""
    k_out = np.where(own, k_s, k_all)
    c_thin = np.where(np.isfinite(mean_s) & (mean_s > 0),
                      weibull_scale_from_mean(np.where(np.isfinite(mean_s), mean_s, 1.0), k_all),
                      c_all)
    return k_out, np.where(own, c_s, c_thin)


def _monthly_diurnal_means(v, time_ns):
    """Mean speed per calendar month (12,) and per UTC hour (24,) [m/s]; NaN where empty."""
    monthly = np.full(12, np.nan)
    diurnal = np.full(24, np.nan)
    if time_ns is not None:
        t = np.asarray(time_ns, np.int64)
        month = t.astype("datetime64[ns]").astype("datetime64[M]").astype(np.int64) % 12
        hour = (t // 3_600_000_000_000) % 24
        with np.errstate(invalid="ignore", divide="ignore"):
            monthly = np.bincount(month, v, 12) / np.bincount(month, minlength=12)
            diurnal = np.bincount(hour, v, 24) / np.bincount(hour, minlength=24)
    return monthly, diurnal


def _rose_table(v, sec, n_sectors):
    """Share of records per sector and speed class of :data:`ROSE_EDGES_MS` (a wind rose)."""
    edges = np.asarray(ROSE_EDGES_MS)
    b = np.clip(np.searchsorted(edges, v, side="right") - 1, 0, len(edges) - 2)
    rose_counts = np.bincount(sec * (len(edges) - 1) + b,
                              minlength=n_sectors * (len(edges) - 1)).reshape(n_sectors, -1)
    bin_names = [f"{edges[i]:g}-{edges[i + 1]:g}" if np.isfinite(edges[i + 1])
                 else f">{edges[i]:g}" for i in range(len(edges) - 1)]
    rose = pd.DataFrame(rose_counts / v.size, columns=bin_names)
    rose.insert(0, "sector_deg", np.arange(n_sectors) * 360.0 / n_sectors)
    return rose


def record_air_density_kgm3(record, report, altitude_m: float = 0.0,
                            settings=None):
    """Mean air density over the valid rows from measured temperature and pressure [kg/m³].

    Uses measured pressure when the record has it, else ISA pressure at ``altitude_m``;
    returns None when the record has no temperature.
    """
    if not record.has("temperature"):
        return None
    temp = qc.clean_values(record, report, "temperature", settings)
    press = (qc.clean_values(record, report, "pressure", settings) if record.has("pressure")
             else None)
    rho = air.air_density_kgm3(altitude_m, temp, press)
    rho = rho[np.isfinite(rho)]
    return float(rho.mean()) if rho.size else None


def climate_from_record(record, report=None, *, height_m: float,
                        roughness_m: float = RECORD_ROUGHNESS_M, displacement_m: float = 0.0,
                        n_sectors: int = 12, method: str = "mle",
                        altitude_m: float = 0.0, qc_settings=None,
                        air_density_kgm3=None) -> ClimateSummary:
    """Climate of a :class:`~engine.io.records.Record` over the rows quality control kept.

    Air density for the power densities: ``air_density_kgm3`` if given, else from the record's
    temperature and pressure (:func:`record_air_density_kgm3`), else 1.225 kg/m³.
    """
    if not record.has("direction"):
        raise InputError([("columns.direction", "the record has no direction column; a sector "
                                                "climate needs directions (map the column)")])
    report = report or qc.run_qc(record, qc_settings)
    ok = report.valid
    rho = air_density_kgm3
    if rho is None:
        rho = record_air_density_kgm3(record, report, altitude_m, qc_settings) or 1.225
    return climate_from_series(
        record.si("speed")[ok], record.si("direction")[ok], record.time_ns[ok],
        height_m=height_m, roughness_m=roughness_m, displacement_m=displacement_m,
        n_sectors=n_sectors, method=method, air_density_kgm3=rho,
        record_file=record.file_name, record_sha256=record.sha256)


#: Largest share of a record's rows quality control may exclude before the record is refused.
MAX_EXCLUDED_SHARE = 0.5


def check_kept_share(report, max_excluded_share: float) -> None:
    """Refuse a record that lost more than ``max_excluded_share`` of its rows, naming why."""
    if report.n_rows == 0 or report.n_excluded <= max_excluded_share * report.n_rows:
        return
    top = sorted((r for r in report.rules if r.count), key=lambda r: -r.count)[:3]
    why = "; ".join(f"{r.label}: {r.count} (rows {', '.join(map(str, r.first_rows))}"
                    f"{', ...' if r.count > len(r.first_rows) else ''})" for r in top)
    raise InputError([(report.file_name or "record",
                       f"quality control excluded {report.n_excluded} of {report.n_rows} rows "
                       f"({100 * report.n_excluded / report.n_rows:.0f} %), more than the "
                       f"{100 * max_excluded_share:g} % accepted; {why}. Fix the record, or "
                       "accept a larger share explicitly")])


def climate_from_csv_bytes(data: bytes, file_name: str = "record.csv", *, height_m: float,
                           roughness_m: float = RECORD_ROUGHNESS_M, displacement_m: float = 0.0,
                           n_sectors: int = 12, method: str = "mle", columns=None,
                           speed_unit=None, utc_offset_h: float = 0.0, altitude_m: float = 0.0,
                           qc_settings=None, direction_unit=None, day_first=None,
                           max_excluded_share: float = MAX_EXCLUDED_SHARE,
                           max_bytes: int = timeseries.MAX_RECORD_BYTES):
    """Upload to climate in one call: import, quality control, climate.

    Returns
    -------
    (WindClimate, QCReport, dict)
        The climate, the quality-control report, and diagnostics: ``summary`` (the
        :class:`ClimateSummary`), ``record`` (the :class:`~engine.io.records.Record`),
        ``import_notes``.

    Raises
    ------
    InputError
        For any file or parameter problem (size above ``max_bytes``, unreadable table, no
        speed or direction column, too few valid rows, more than ``max_excluded_share`` of
        the rows excluded by quality control).
    """
    p = Problems()
    _check_common(p, height_m, roughness_m, n_sectors, method)
    check_range(p, "utc_offset_h", utc_offset_h, -14, 14, "h")
    check_range(p, "altitude_m", altitude_m, -450, 5000, "m")
    check_range(p, "max_excluded_share", max_excluded_share, 0, 1)
    p.raise_if_any()
    record = timeseries.read_record(data, file_name, columns=columns, speed_unit=speed_unit,
                                    utc_offset_h=utc_offset_h, max_bytes=max_bytes,
                                    direction_unit=direction_unit, day_first=day_first)
    report = qc.run_qc(record, qc_settings)
    check_kept_share(report, max_excluded_share)
    summary = climate_from_record(record, report, height_m=height_m, roughness_m=roughness_m,
                                  displacement_m=displacement_m, n_sectors=n_sectors,
                                  method=method, altitude_m=altitude_m, qc_settings=qc_settings)
    return summary.climate, report, {"summary": summary, "record": record,
                                     "import_notes": record.notes}


def climate_from_table(frequency, weibull_k, weibull_c_ms, *, height_m: float,
                       roughness_m: float = RECORD_ROUGHNESS_M, displacement_m: float = 0.0,
                       label: str = "") -> WindClimate:
    """A climate from a user-entered per-sector table (``source="table"``).

    Frequencies may be given in percent (summing to 100); they are then divided by 100.
    """
    p = Problems()
    try:
        f = np.asarray(frequency, float)
        if f.size and abs(f.sum() - 100.0) < 0.1:
            f = f / 100.0
        freq = tuple(float(x) for x in f)
    except (TypeError, ValueError):
        p.add("frequency", "must be numbers (one per sector)")
        freq = ()
    p.raise_if_any()
    return WindClimate(height_m=height_m, roughness_m=roughness_m, frequency=freq,
                       weibull_k=tuple(weibull_k), weibull_c_ms=tuple(weibull_c_ms),
                       displacement_m=displacement_m, source="table",
                       label=label or "per-sector Weibull table entered by the assessor")


def climate_from_mean_speed(mean_speed_ms: float, *, height_m: float,
                            roughness_m: float = RECORD_ROUGHNESS_M, displacement_m: float = 0.0,
                            n_sectors: int = 12) -> WindClimate:
    """Screening climate from a mean speed alone: Rayleigh (k = 2), equal sector frequencies.

    Labelled lower confidence (``source="mean_speed"``).

    Notes
    -----
    c = V̄ / Γ(1 + 1/2) = 2 V̄ / √π.
    """
    p = Problems()
    # 0.1 m/s: at least the smallest Weibull c a climate holds (c = 2V/sqrt(pi) > V).
    check_range(p, "mean_speed_ms", mean_speed_ms, 0.1, 30, "m/s")
    if not isinstance(n_sectors, (int, np.integer)) or not 1 <= n_sectors <= 72:
        p.add("n_sectors", f"must be a whole number 1..72, got {n_sectors!r}")
    p.raise_if_any()
    c = float(mean_speed_ms) * 2.0 / math.sqrt(math.pi)
    return WindClimate(height_m=height_m, roughness_m=roughness_m,
                       frequency=tuple([1.0 / n_sectors] * n_sectors),
                       weibull_k=tuple([2.0] * n_sectors), weibull_c_ms=tuple([c] * n_sectors),
                       displacement_m=displacement_m, source="mean_speed",
                       label=LOWER_CONFIDENCE_LABEL)
