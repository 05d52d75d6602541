"""Quality control (engine.climate.qc): each injected fault counted exactly, nothing else flagged."""
import numpy as np
import pandas as pd
import pytest

from engine.climate import qc
from engine.io import records as ts
from engine.core.errors import InputError


def _clean_frame(n=2000, seed=5):
    """A fault-free 10-minute record built here (seeded); faults are then injected by hand."""
    rng = np.random.default_rng(seed)
    t = pd.date_range("2025-01-01", periods=n, freq="10min")
    return pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                         "speed_ms": np.round(1.0 + rng.weibull(2.0, n) * 6.0, 2).astype(object),
                         "direction_deg": np.round(rng.uniform(0, 359.9, n), 1),
                         "temperature_c": np.round(rng.normal(8, 3, n), 1)})


def _report(df, **kw):
    rec = ts.read_record(df.to_csv(index=False).encode(), "t.csv")
    return rec, qc.run_qc(rec, qc.QCSettings(**kw) if kw else None)


def test_clean_record_flags_nothing():
    """A clean record: no rule fires, recovery 100 %."""
    _, rep = _report(_clean_frame())
    assert rep.n_excluded == 0 and all(r.count == 0 for r in rep.rules)
    assert rep.recovery_rate == pytest.approx(1.0) and rep.n_gaps == 0
    assert rep.step_s == 600.0


def test_each_injected_fault_counted_exactly():
    """Sentinels, range, direction, stuck runs, text, blanks, duplicate and out-of-order rows."""
    df = _clean_frame()
    df.loc[[100, 300, 500], "speed_ms"] = -999.0          # 3 sentinels
    df.loc[[700], "direction_deg"] = 9999.0                # 1 sentinel in direction
    df.loc[[800, 900], "speed_ms"] = 72.0                  # 2 out of range (> 50 m/s)
    df.loc[[1000, 1010, 1020], "direction_deg"] = 400.0    # 3 impossible directions
    df.loc[1100:1109, "speed_ms"] = 5.55                   # a stuck run of 10
    df.loc[1200:1207, "direction_deg"] = 123.4             # a stuck vane run of 8
    df.loc[[1300], "speed_ms"] = "ERR"                     # 1 text cell
    df.loc[[1400, 1401], "speed_ms"] = None                # 2 blanks
    df.loc[[1500], "temperature_c"] = -999.0               # 1 temperature value blanked
    a = 1600
    df.iloc[[a, a + 1]] = df.iloc[[a + 1, a]].to_numpy()   # 1 out of order: sorted, kept
    df = pd.concat([df.iloc[:1701], df.iloc[[1700]], df.iloc[1701:]], ignore_index=True)  # 1 dup
    rec, rep = _report(df)
    # Counts are the faults injected above (constructed in this test).
    expect = {"sentinel": 4, "speed_out_of_range": 2, "impossible_direction": 3,
              "stuck_speed": 10, "stuck_direction": 8, "unreadable": 1, "missing": 2,
              "out_of_order": 0, "duplicate_timestamp": 1, "bad_timestamp": 0}
    assert {r.name: r.count for r in rep.rules} == expect
    assert rep.n_excluded == sum(expect.values())
    blanked = {(r.field, r.name): r.count for r in rep.value_rules}
    assert blanked[("temperature", "sentinel")] == 1 and sum(blanked.values()) == 1
    assert rep.rules[5].first_rows == (101, 301, 501, 701)   # data rows from 1
    assert any("1 row(s) were out of time order and were sorted" in n for n in rep.notes)
    assert any("1 row(s) were out of time order and were sorted" in n for n in rep.notes)
    t = rec.time_ns[rep.valid]
    assert np.all(np.diff(t) > 0)                            # valid times strictly increase
    text = rep.to_text()
    assert "stuck" in text and "recovery" in text


def test_calms_are_not_stuck():
    """Repeated zeros (calm) are not a stuck sensor (common practice)."""
    df = _clean_frame()
    df.loc[200:230, "speed_ms"] = 0.0
    _, rep = _report(df)
    assert rep.count("stuck_speed") == 0 and rep.n_excluded == 0


def test_gaps_and_recovery_rate():
    """Removed steps show as gaps; recovery = valid / possible records at the nominal step."""
    df = _clean_frame(1000)
    df = df.drop(index=list(range(100, 136)) + list(range(500, 503))).reset_index(drop=True)
    df.loc[10, "speed_ms"] = -999.0
    _, rep = _report(df)
    assert rep.n_gaps == 2 and rep.missing_steps == 39
    assert rep.longest_gap_s == pytest.approx(37 * 600.0)
    assert rep.expected_records == 1000
    # Definition: valid records / possible records (common practice)
    assert rep.recovery_rate == pytest.approx((1000 - 39 - 1) / 1000)


def test_stuck_threshold_is_a_setting():
    """A run shorter than stuck_min_records is kept; the limit is user-set."""
    df = _clean_frame()
    df.loc[50:53, "speed_ms"] = 7.77
    assert _report(df)[1].count("stuck_speed") == 0
    assert _report(df, stuck_min_records=4)[1].count("stuck_speed") == 4


def test_settings_are_validated_together():
    """Bad limits are all reported at once."""
    with pytest.raises(InputError) as e:
        qc.QCSettings(speed_max_ms=1.0, stuck_min_records=1)
    assert {w for w, _ in e.value.problems} == {"speed_max_ms", "stuck_min_records"}


def test_report_dict_is_json_ready():
    """The JSON summary has per-rule counts and the recovery rate."""
    import json
    d = _report(_clean_frame(50))[1].to_dict()
    assert json.loads(json.dumps(d))["rules"]["sentinel"] == 0
    assert 0 <= d["recovery_rate"] <= 1


def test_irregular_steps_are_noted_not_excluded():
    """Irregular logging (steps off the nominal step) is noted; the rows stay valid."""
    df = _clean_frame(600)
    t = pd.to_datetime(df["timestamp"])
    jitter = pd.to_timedelta(np.where(np.arange(600) % 10 == 5, 180, 0), unit="s")
    df["timestamp"] = (t + jitter).dt.strftime("%Y-%m-%dT%H:%M:%SZ")
    _, rep = _report(df)
    assert rep.n_excluded == 0 and rep.step_s == 600.0
    assert any("irregular" in n for n in rep.notes)
