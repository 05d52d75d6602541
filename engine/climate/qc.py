"""Quality control of a measured wind record, with a report a person can read.

Each rule is a vectorised test over the whole record. A row is *excluded* when its time, speed
or direction fails a rule; it is never silently dropped: every excluded row is counted under
the first rule that caught it (rules are applied in the order of :data:`ROW_RULES`), so the
counts add up to the number excluded. Problems in the optional gust, temperature and pressure
columns blank only that value and are counted separately. Gaps (missing time steps) are
reported with the data recovery rate,

    recovery = valid records / records possible in the period at the nominal step.

The default limits are common practice for 10-minute means from cup or sonic anemometers
(plausible ranges, sentinel codes written by loggers, a sensor that repeats one value).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from engine.core.errors import Problems, check_range
from engine.io.records import NAT_NS, Record

#: Row rules, in the order they are applied: (name, readable label).
ROW_RULES = (
    ("bad_timestamp", "timestamp missing, unreadable or rejected"),
    ("duplicate_timestamp", "timestamp repeated"),
    ("out_of_order", "timestamp earlier than a previous row"),
    ("unreadable", "speed or direction is text, not a number"),
    ("missing", "speed or direction blank"),
    ("sentinel", "logger code for no data (-999, 9999, ...)"),
    ("speed_out_of_range", "speed outside the plausible range"),
    ("impossible_direction", "direction outside 0-360 deg"),
    ("stuck_speed", "speed repeats the same value (stuck sensor)"),
    ("stuck_direction", "direction repeats the same value (stuck vane)"),
)
#: Value rules for optional columns (the value is blanked, the row kept).
VALUE_RULES = ("unreadable", "sentinel", "out_of_range")

#: Codes loggers write for "no data" (common practice).
DEFAULT_SENTINELS = (-9999.0, -999.9, -999.0, -99.99, -99.9, -99.0, 999.0, 999.9, 9999.0,
                     99999.0)


@dataclass(frozen=True)
class QCSettings:
    """Limits of the quality-control rules (SI units)."""

    speed_min_ms: float = 0.0
    speed_max_ms: float = 50.0
    gust_max_ms: float = 85.0
    temperature_min_c: float = -50.0
    temperature_max_c: float = 50.0
    pressure_min_pa: float = 60000.0
    pressure_max_pa: float = 110000.0
    #: A run of this many identical consecutive values is a stuck sensor [records].
    stuck_min_records: int = 6
    #: Speeds below this are calms, which legitimately repeat; not tested as stuck [m/s].
    stuck_ignore_below_ms: float = 0.5
    sentinels: tuple = DEFAULT_SENTINELS
    #: A step longer than this many nominal steps is a gap [-].
    gap_factor: float = 1.5

    def __post_init__(self):
        p = Problems()
        check_range(p, "speed_min_ms", self.speed_min_ms, -1, 5, "m/s")
        check_range(p, "speed_max_ms", self.speed_max_ms, 10, 120, "m/s")
        check_range(p, "gust_max_ms", self.gust_max_ms, 10, 150, "m/s")
        check_range(p, "temperature_min_c", self.temperature_min_c, -90, 0, "°C")
        check_range(p, "temperature_max_c", self.temperature_max_c, 0, 70, "°C")
        check_range(p, "pressure_min_pa", self.pressure_min_pa, 30000, 100000, "Pa")
        check_range(p, "pressure_max_pa", self.pressure_max_pa, 90000, 120000, "Pa")
        check_range(p, "stuck_min_records", self.stuck_min_records, 2, 10000, "records")
        check_range(p, "stuck_ignore_below_ms", self.stuck_ignore_below_ms, 0, 5, "m/s")
        check_range(p, "gap_factor", self.gap_factor, 1.01, 100)
        p.raise_if_any()


@dataclass(frozen=True)
class RuleResult:
    """One rule's outcome: how many rows (or values) it caught and the first few rows."""

    name: str
    label: str
    field: str
    count: int
    first_rows: tuple = ()


@dataclass(frozen=True)
class QCReport:
    """Outcome of :func:`run_qc`.

    ``valid`` is a (N,) bool mask over the record's rows; valid rows have strictly increasing
    times. Row numbers in ``first_rows`` count data rows from 1 (the header is row 0).
    """

    file_name: str
    n_rows: int
    n_valid: int
    rules: tuple
    value_rules: tuple
    step_s: float
    period_start: str
    period_end: str
    expected_records: int
    recovery_rate: float
    n_gaps: int
    missing_steps: int
    longest_gap_s: float
    valid: np.ndarray = field(repr=False, compare=False, default=None)
    notes: tuple = ()

    @property
    def n_excluded(self) -> int:
        return self.n_rows - self.n_valid

    def count(self, rule: str) -> int:
        """Rows excluded by ``rule`` (first rule to catch them)."""
        return next(r.count for r in self.rules if r.name == rule)

    def to_dict(self) -> dict:
        """JSON-ready summary (no per-row arrays)."""
        return {
            "file": self.file_name, "rows": self.n_rows, "valid_rows": self.n_valid,
            "excluded_rows": self.n_excluded,
            "rules": {r.name: r.count for r in self.rules},
            "blanked_values": {f"{r.field}.{r.name}": r.count for r in self.value_rules},
            "step_s": self.step_s, "period_start": self.period_start,
            "period_end": self.period_end, "expected_records": self.expected_records,
            "recovery_rate": self.recovery_rate, "gaps": self.n_gaps,
            "missing_steps": self.missing_steps, "longest_gap_h": self.longest_gap_s / 3600.0,
            "notes": list(self.notes),
        }

    def to_text(self) -> str:
        """The report as plain lines for a person."""
        lines = [f"Quality control of {self.file_name or 'record'}: {self.n_rows} rows, "
                 f"{self.n_valid} valid, {self.n_excluded} excluded",
                 f"  period {self.period_start} to {self.period_end}, step "
                 f"{self.step_s / 60:g} min, recovery {100 * self.recovery_rate:.1f} % of "
                 f"{self.expected_records} possible records",
                 f"  gaps: {self.n_gaps} ({self.missing_steps} missing steps, longest "
                 f"{self.longest_gap_s / 3600:.1f} h)"]
        for r in self.rules:
            rows = (" (rows " + ", ".join(str(i) for i in r.first_rows)
                    + (", ..." if r.count > len(r.first_rows) else "") + ")") if r.count else ""
            lines.append(f"  {r.label:<46s} {r.count:>8d}{rows}")
        for r in self.value_rules:
            if r.count:
                lines.append(f"  {r.field} value blanked: {r.label:<28s} {r.count:>8d}")
        lines += [f"  note: {n}" for n in self.notes]
        return "\n".join(lines)


def _runs_mask(values: np.ndarray, min_len: int, eligible: np.ndarray) -> np.ndarray:
    """Mask of rows in runs of >= ``min_len`` identical consecutive eligible values."""
    n = values.shape[0]
    if n == 0:
        return np.zeros(0, bool)
    same = np.zeros(n, bool)
    same[1:] = (values[1:] == values[:-1]) & eligible[1:] & eligible[:-1]
    # A run starts where ``same`` is False; label each row with the start of its run.
    starts = np.flatnonzero(~same)
    run_id = np.cumsum(~same) - 1
    lengths = np.diff(np.append(starts, n))
    return (lengths[run_id] >= min_len) & eligible


def _first_rows(mask: np.ndarray, k: int = 5, file_row=None) -> tuple:
    """The first ``k`` rows caught, as data-row numbers of the file (from 1), in file order."""
    idx = np.flatnonzero(mask)
    if file_row is None:
        return tuple(int(i) + 1 for i in idx[:k])
    return tuple(int(r) + 1 for r in np.sort(np.asarray(file_row)[idx])[:k])


def _iso(ns) -> str:
    return str(np.datetime64(int(ns), "ns").astype("datetime64[s]")) + "Z"


def run_qc(record: Record, settings: QCSettings | None = None) -> QCReport:
    """Apply every quality-control rule to ``record`` and report.

    Parameters
    ----------
    record : the record as imported by :func:`engine.io.records.read_record`
    settings : rule limits; :class:`QCSettings` defaults when None

    Returns
    -------
    QCReport
        Counts per rule, the valid-row mask, gaps and the recovery rate.

    Notes
    -----
    Duplicate: a time equal to the latest time seen so far. Out of order: a time earlier than
    the latest so far. Both leave the valid times strictly increasing without sorting.
    :func:`engine.io.records.read_record` already sorts the rows by time (and says so in its
    notes), so an imported record has no row out of order; arrays made in memory may.
    Nominal step: the median of the positive steps between valid rows.
    """
    s = settings or QCSettings()
    t = record.time_ns
    speed = record.si("speed")
    direction = record.si("direction") if record.has("direction") else np.zeros(record.n_rows)
    tally = _RuleTally(record.n_rows, record.file_row)
    bad_t, prev_max = _time_rules(tally, t)
    _reading_rules(tally, record, s, speed, direction)
    _stuck_rules(tally, record.has("direction"), s, speed, direction)
    valid = ~tally.caught
    value_results = _optional_value_rules(record, s)
    notes = list(record.notes)
    # Gaps are steps missing from the file's time axis (rows with a usable, increasing time),
    # not rows excluded for their values; the recovery rate accounts for both.
    axis = _time_axis(t[~bad_t & (t > prev_max)], s.gap_factor, notes)
    expected = axis.pop("expected_records")
    recovery = float(valid.sum() / expected) if expected else 0.0
    return QCReport(file_name=record.file_name, n_rows=record.n_rows,
                    n_valid=int(valid.sum()), rules=tuple(tally.results),
                    value_rules=tuple(value_results), expected_records=expected,
                    recovery_rate=recovery, valid=valid, notes=tuple(notes), **axis)


class _RuleTally:
    """Rows caught so far and one :class:`RuleResult` per row rule, in the order applied.

    A row is counted under the first rule that catches it, so the counts add up.
    """

    def __init__(self, n_rows: int, file_row):
        self.caught = np.zeros(n_rows, bool)
        self.results = []
        self.file_row = file_row

    def apply(self, name, label, fld, mask) -> None:
        """Count the rows of ``mask`` not caught before under rule ``name``."""
        new = mask & ~self.caught
        self.caught |= new
        self.results.append(RuleResult(name, label, fld, int(new.sum()),
                                       _first_rows(new, file_row=self.file_row)))


_LABELS = dict(ROW_RULES)


def _time_rules(tally: _RuleTally, t: np.ndarray):
    """Bad, duplicate and out-of-order times; returns (bad time mask, latest earlier time [ns])."""
    n = t.shape[0]
    bad_t = t == NAT_NS
    tally.apply("bad_timestamp", _LABELS["bad_timestamp"], "time", bad_t)
    t_ok = np.where(bad_t, np.iinfo(np.int64).min, t)
    prev_max = np.empty(n, np.int64)
    if n:
        prev_max[0] = np.iinfo(np.int64).min
        prev_max[1:] = np.maximum.accumulate(t_ok)[:-1]
    tally.apply("duplicate_timestamp", _LABELS["duplicate_timestamp"], "time",
                ~bad_t & (t == prev_max))
    tally.apply("out_of_order", _LABELS["out_of_order"], "time", ~bad_t & (t < prev_max))
    return bad_t, prev_max


def _reading_rules(tally, record, s, speed, direction) -> None:
    """Unreadable, blank, logger-code and out-of-range speeds [m/s] and directions [deg]."""
    has_dir = record.has("direction")
    sentinels = np.asarray(s.sentinels, float)
    unread = record.unreadable["speed"] | (record.unreadable["direction"] if has_dir else False)
    tally.apply("unreadable", _LABELS["unreadable"], "speed/direction", unread)
    raw_s = record.raw["speed"]
    raw_d = record.raw["direction"] if has_dir else np.zeros(record.n_rows)
    missing = ~np.isfinite(raw_s) | ~np.isfinite(raw_d)
    tally.apply("missing", _LABELS["missing"], "speed/direction", missing)
    # A code counts as a sentinel only where it is not a plausible value (999 hPa is real).
    with np.errstate(invalid="ignore"):
        sent = ((np.isin(raw_s, sentinels) & ((speed < s.speed_min_ms) | (speed > s.speed_max_ms)))
                | (np.isin(raw_d, sentinels) & ((direction < 0) | (direction > 360))))
    tally.apply("sentinel", _LABELS["sentinel"], "speed/direction", sent)
    with np.errstate(invalid="ignore"):
        tally.apply("speed_out_of_range",
                    f"speed outside {s.speed_min_ms:g}-{s.speed_max_ms:g} m/s", "speed",
                    (speed < s.speed_min_ms) | (speed > s.speed_max_ms))
        tally.apply("impossible_direction", _LABELS["impossible_direction"], "direction",
                    (direction < 0) | (direction > 360))


def _stuck_rules(tally, has_dir, s, speed, direction) -> None:
    """Runs of one repeated speed or direction among rows not caught yet (calms excepted)."""
    ok = ~tally.caught
    stuck_s = _runs_mask(speed, s.stuck_min_records, ok & (speed >= s.stuck_ignore_below_ms))
    tally.apply("stuck_speed", _LABELS["stuck_speed"], "speed", stuck_s)
    if has_dir:
        ok = ~tally.caught
        stuck_d = _runs_mask(direction, s.stuck_min_records,
                             ok & (speed >= s.stuck_ignore_below_ms))
        tally.apply("stuck_direction", _LABELS["stuck_direction"], "direction", stuck_d)
    else:
        tally.results.append(RuleResult("stuck_direction", _LABELS["stuck_direction"],
                                        "direction", 0))


def _optional_value_rules(record, s) -> list:
    """Value rules on gust [m/s], temperature [°C] and pressure [Pa]: blank the value only."""
    sentinels = np.asarray(s.sentinels, float)
    value_results = []
    limits = {"gust": (0.0, s.gust_max_ms, "m/s"),
              "temperature": (s.temperature_min_c, s.temperature_max_c, "°C"),
              "pressure": (s.pressure_min_pa, s.pressure_max_pa, "Pa")}
    for fld, (lo, hi, unit) in limits.items():
        if not record.has(fld):
            continue
        v_raw, v = record.raw[fld], record.si(fld)
        done = np.zeros(record.n_rows, bool)
        for rule, mask, label in (
                ("unreadable", record.unreadable[fld], "text, not a number"),
                ("sentinel", np.isin(v_raw, sentinels) & ~((v >= lo) & (v <= hi)),
                 "logger no-data code"),
                ("out_of_range", np.isfinite(v) & ((v < lo) | (v > hi)),
                 f"outside {lo:g}-{hi:g} {unit}")):
            new = mask & ~done
            done |= new
            value_results.append(RuleResult(rule, label, fld, int(new.sum()),
                                            _first_rows(new, file_row=record.file_row)))
    return value_results


def _time_axis(tv: np.ndarray, gap_factor: float, notes: list) -> dict:
    """Nominal step [s], period, gaps and records possible, from the usable times ``tv`` [ns].

    Appends a note to ``notes`` when the logging is irregular or too short for a step.
    """
    if tv.size < 2:
        notes.append("fewer than two valid rows: no step, gaps or recovery can be worked out")
        start = _iso(tv[0]) if tv.size else ""
        return {"step_s": 0.0, "period_start": start, "period_end": start,
                "expected_records": int(tv.size), "n_gaps": 0, "missing_steps": 0,
                "longest_gap_s": 0.0}
    steps = np.diff(tv)
    step = float(np.median(steps))
    gap_mask = steps > gap_factor * step
    step_s = step / 1e9
    irregular = np.mean(np.abs(steps - step) > 0.01 * step) - np.mean(gap_mask)
    if irregular > 0.01:
        notes.append(f"{100 * irregular:.1f} % of steps differ from the nominal "
                     f"{step_s / 60:g} min without being gaps: the logging is irregular")
    return {"step_s": step_s, "period_start": _iso(tv[0]), "period_end": _iso(tv[-1]),
            "expected_records": int(round((tv[-1] - tv[0]) / step)) + 1,
            "n_gaps": int(gap_mask.sum()),
            "missing_steps": int(np.sum(np.round(steps[gap_mask] / step) - 1)),
            "longest_gap_s": float(steps.max()) / 1e9 if gap_mask.any() else 0.0}


def clean_values(record: Record, report: QCReport, name: str,
                 settings: QCSettings | None = None) -> np.ndarray:
    """SI values of ``name`` on the valid rows, with values caught by a value rule as NaN."""
    s = settings or QCSettings()
    v = record.si(name).copy()
    if name in ("gust", "temperature", "pressure"):
        lo, hi = {"gust": (0.0, s.gust_max_ms),
                  "temperature": (s.temperature_min_c, s.temperature_max_c),
                  "pressure": (s.pressure_min_pa, s.pressure_max_pa)}[name]
        with np.errstate(invalid="ignore"):
            bad = ~np.isfinite(v) | (v < lo) | (v > hi)
        v[bad] = np.nan
    return v[report.valid]
