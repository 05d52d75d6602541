"""Record import never loses data silently (engine.io.records, engine.io.record_checks, engine.climate.qc):
out-of-order rows sorted and reported, wrong timestamps rejected one by one and listed,
direction units and date order decided or asked for, a large loss refused."""
import math

import numpy as np
import pandas as pd
import pytest

from engine.climate import fit as climate
from engine.climate import qc
from engine.io import record_checks
from engine.io import records as ts
from engine.core.errors import InputError

N_YEAR = 52_560  # one year of 10-minute steps: 365 × 144


def _frame(n, seed=3, start="2025-01-01"):
    """A record made here from a seeded generator (test input, not a check value)."""
    rng = np.random.default_rng(seed)
    t = pd.date_range(start, periods=n, freq="10min")
    return pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                         "speed_ms": np.round(1.0 + rng.weibull(2.0, n) * 6.0, 2),
                         "direction_deg": np.round(rng.uniform(0, 359.9, n), 1)})


def _bytes(df) -> bytes:
    return df.to_csv(index=False).encode()


def _message(fn) -> str:
    with pytest.raises(InputError) as exc:
        fn()
    return " ".join(f"{w}: {m}" for w, m in exc.value.problems)


@pytest.mark.parametrize("stamp", ["1970-01-01T00:00:00Z", "2099-06-01T00:00:00Z"])
def test_one_wrong_timestamp_costs_one_row(stamp):
    """A single 1970 or 2099 stamp in a year of 10-minute data: that row alone is rejected,
    listed by row number; every other row stays valid (it used to keep 100 of 52,560)."""
    df = _frame(N_YEAR)
    df.loc[100, "timestamp"] = stamp
    rec = ts.read_record(_bytes(df), "year.csv")
    rep = qc.run_qc(rec)
    assert rep.n_valid == N_YEAR - 1 and rep.count("bad_timestamp") == 1
    assert rep.count("out_of_order") == 0
    assert rep.rules[0].first_rows == (101,)
    note = next(n for n in rec.notes if n.startswith("rejected 1 timestamp"))
    assert "row 101" in note and stamp[:4] in note


def test_shuffled_rows_are_sorted_and_reported():
    """3,000 rows in random order: all kept, in time order, and the import says so."""
    df = _frame(3000)
    shuffled = df.sample(frac=1.0, random_state=7).reset_index(drop=True)
    rec = ts.read_record(_bytes(shuffled), "shuffled.csv")
    rep = qc.run_qc(rec)
    assert rep.n_valid == 3000 and np.all(np.diff(rec.time_ns) > 0)
    assert any("were out of time order and were sorted" in n for n in rep.notes)
    # The rows keep their values: speed at each time equals the original's.
    orig = ts.read_record(_bytes(df), "sorted.csv")
    np.testing.assert_array_equal(rec.si("speed"), orig.si("speed"))
    # file_row points back to each row's place in the shuffled file (from 0).
    np.testing.assert_array_equal(shuffled["speed_ms"].to_numpy()[rec.file_row], rec.si("speed"))


def test_duplicates_still_caught_after_sorting():
    df = _frame(500)
    df = pd.concat([df, df.iloc[[10, 20]]], ignore_index=True)
    rep = qc.run_qc(ts.read_record(_bytes(df), "dup.csv"))
    assert rep.count("duplicate_timestamp") == 2 and rep.n_valid == 500


def test_implausible_times_leaves_a_clean_series_alone():
    t = np.arange(1000, dtype=np.int64) * 600 * 10**9 + 1_735_689_600 * 10**9
    assert not record_checks.implausible_times(t).any()
    t[0], t[-1] = 0, 4_000_000_000 * 10**9  # first stamp 1970, last one in 2096
    assert record_checks.implausible_times(t).tolist() == [True] + [False] * 998 + [True]


def _radian_frame(n=2000, header="direction_rad"):
    df = _frame(n)
    df = df.rename(columns={"direction_deg": header})
    df[header] = np.round(np.deg2rad(df[header]), 5)
    return df


def test_radians_from_the_header_are_converted():
    """direction_rad: converted to degrees (180/π per radian, ISO 80000-3)."""
    df = _radian_frame()
    rec = ts.read_record(_bytes(df), "rad.csv")
    assert rec.units["direction"] == "rad"
    np.testing.assert_allclose(rec.si("direction"), np.rad2deg(df["direction_rad"]), atol=1e-9)


def test_radians_without_a_unit_are_refused():
    """Read as degrees they put all the wind in the north sector; the import asks instead."""
    msg = _message(lambda: ts.read_record(_bytes(_radian_frame(header="wdir")), "r.csv"))
    assert "looks like radians" in msg and "'wdir'" in msg
    rec = ts.read_record(_bytes(_radian_frame(header="wdir")), "r.csv", direction_unit="rad")
    assert 300 < np.nanmax(rec.si("direction")) < 360


def test_degrees_header_contradicted_by_the_data_is_refused():
    msg = _message(lambda: ts.read_record(_bytes(_radian_frame(header="direction_deg")), "r.csv"))
    assert "says degrees" in msg


def test_radians_header_with_values_above_2pi_is_refused():
    df = _frame(500).rename(columns={"direction_deg": "direction_rad"})
    assert "above 2π" in _message(lambda: ts.read_record(_bytes(df), "r.csv"))


def _dmy(n=3000, start="2025-01-01"):
    df = _frame(n, start=start)
    df["timestamp"] = pd.to_datetime(df["timestamp"]).dt.strftime("%d/%m/%Y %H:%M")
    return df


def test_day_first_found_from_the_data():
    """dd/mm/yyyy over more than 12 days: a day above 12 shows the order; nothing is lost."""
    df = _dmy(30 * 144)
    rec = ts.read_record(_bytes(df), "dmy.csv")
    rep = qc.run_qc(rec)
    assert rep.n_valid == 30 * 144 and rep.period_start == "2025-01-01T00:00:00Z"
    assert rep.period_end == "2025-01-30T23:50:00Z"
    assert any("day first" in n for n in rec.notes)


def test_ambiguous_dates_refused_unless_the_order_is_given():
    df = _dmy(12 * 144)  # 1-12 January: every field at most 12
    msg = _message(lambda: ts.read_record(_bytes(df), "dmy.csv"))
    assert "day first" in msg and "month/day" in msg
    rec = ts.read_record(_bytes(df), "dmy.csv", day_first=True)
    assert qc.run_qc(rec).period_end == "2025-01-12T23:50:00Z"
    rec = ts.read_record(_bytes(df), "dmy.csv", day_first=False)  # as asked: month first
    assert qc.run_qc(rec).period_start == "2025-01-01T00:00:00Z"


def test_order_given_against_the_data_is_refused():
    df = _dmy(30 * 144)
    assert "check the date order" in _message(
        lambda: ts.read_record(_bytes(df), "dmy.csv", day_first=False))


def test_utf16_record_is_decoded_and_named():
    df = _frame(600)
    rec = ts.read_record(df.to_csv(index=False).encode("utf-16"), "u16.csv")
    assert rec.n_rows == 600 and any("UTF-16" in n for n in rec.notes)


def test_large_loss_refused_with_the_share_and_the_rules():
    """More than half the rows excluded: exit-2 error naming the count and the main rules."""
    df = _frame(3000)
    df.loc[df.index % 3 != 0, "direction_deg"] = 400.0
    msg = _message(lambda: climate.climate_from_csv_bytes(_bytes(df), "bad.csv", height_m=10.0))
    assert "excluded 2000 of 3000 rows" in msg and "direction outside 0-360" in msg
    clim, rep, _ = climate.climate_from_csv_bytes(_bytes(df), "bad.csv", height_m=10.0,
                                                  max_excluded_share=0.7)
    assert rep.n_valid == 1000 and math.isclose(sum(clim.frequency), 1.0, rel_tol=1e-9)


@pytest.mark.parametrize("kw, field", [({"utc_offset_h": float("nan")}, "utc_offset_h"),
                                       ({"utc_offset_h": 1e300}, "utc_offset_h"),
                                       ({"altitude_m": float("nan")}, "altitude_m")])
def test_non_finite_parameters_refused(kw, field):
    msg = _message(lambda: climate.climate_from_csv_bytes(_bytes(_frame(600)), "x.csv",
                                                          height_m=10.0, **kw))
    assert field in msg


def test_steady_record_refused_without_internal_field_names():
    df = _frame(3000)
    df["speed_ms"] = 5.0 + 0.01 * (np.arange(3000) % 3)
    msg = _message(lambda: climate.climate_from_csv_bytes(_bytes(df), "steady.csv",
                                                          height_m=10.0))
    assert "barely vary" in msg and "weibull_k[" not in msg
