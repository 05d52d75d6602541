"""`python -m engine climate`: QC summary and per-sector table; JSON shape; bad files exit 2."""
import json

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from engine import cli

SECTOR_KEYS = {"sector_deg", "frequency", "weibull_k", "weibull_c_ms", "mean_speed_ms"}


@pytest.fixture
def record(tmp_path):
    """A record written by the test (seeded Weibull speeds, uniform directions)."""
    rng = np.random.default_rng(12)
    n = 3000
    t = pd.date_range("2025-01-01", periods=n, freq="10min", tz="UTC")
    v = stats.weibull_min.rvs(2.0, scale=6.0, size=n, random_state=rng)
    df = pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "speed_kmh": np.round(v * 3.6, 2),
                       "direction_deg": np.round(rng.uniform(0, 360, n), 1)})
    df.loc[10, "speed_kmh"] = -999.0
    path = tmp_path / "rec.csv"
    df.to_csv(path, index=False)
    return path, v


def test_json_shape(record, capsys):
    """JSON has qc, sectors (fixed keys first) and all; speeds converted from km/h."""
    path, v = record
    assert cli.main(["climate", str(path), "--height-m", "12", "--sectors", "8",
                     "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert set(doc) == {"qc", "sectors", "all"}
    assert len(doc["sectors"]) == 8 and all(SECTOR_KEYS <= set(s) for s in doc["sectors"])
    assert list(doc["sectors"][0])[:5] == ["sector_deg", "frequency", "weibull_k",
                                           "weibull_c_ms", "mean_speed_ms"]
    assert sum(s["frequency"] for s in doc["sectors"]) == pytest.approx(1.0)
    assert doc["qc"]["rules"]["sentinel"] == 1 and doc["qc"]["valid_rows"] == 2999
    # km/h -> m/s by 1/3.6 (NIST SP 811); mean of the speeds the test wrote, less the sentinel row
    kept = np.delete(np.round(v * 3.6, 2), 10) / 3.6
    assert doc["all"]["mean_speed_ms"] == pytest.approx(kept.mean(), rel=1e-9)
    assert doc["all"]["height_m"] == 12.0


def test_table_output(record, capsys):
    """The table output shows the QC summary and one line per sector."""
    path, _ = record
    assert cli.main(["climate", str(path), "--method", "moments"]) == 0
    out = capsys.readouterr().out
    assert "Quality control" in out and "recovery" in out and "all sectors" in out


def test_bad_file_exits_2(tmp_path, capsys):
    """A file without a speed column exits 2 with a readable message."""
    p = tmp_path / "bad.csv"
    p.write_text("timestamp,direction_deg\n2025-01-01T00:00Z,10\n")
    assert cli.main(["climate", str(p)]) == 2
    assert "speed" in capsys.readouterr().err
    assert cli.main(["climate", str(tmp_path / "missing.csv")]) == 2


@pytest.fixture
def thin_record(tmp_path):
    """A record with five records in one of eight sectors (too few for a fit of its own)."""
    rng = np.random.default_rng(5)
    n = 3000
    t = pd.date_range("2025-01-01", periods=n, freq="10min", tz="UTC")
    v = stats.weibull_min.rvs(2.0, scale=6.0, size=n, random_state=rng)
    d = rng.choice([0.0, 90.0, 135.0, 180.0, 225.0, 270.0, 315.0], n)
    d[:5] = 45.0
    path = tmp_path / "thin.csv"
    pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "speed_ms": np.round(v, 2),
                  "direction_deg": d}).to_csv(path, index=False)
    return path


def test_fit_values_explained(thin_record, capsys):
    """The table says in words what each sector's fit means; the JSON carries the meanings."""
    from engine.cli.climate import FIT_MEANINGS, FIT_WORDS
    assert cli.main(["climate", str(thin_record), "--sectors", "8"]) == 0
    out = capsys.readouterr().out
    assert "Weibull fit" in out and FIT_WORDS["all-sector shape"] in out
    assert FIT_MEANINGS["all-sector shape"] in out and FIT_MEANINGS["own"] in out
    assert not any(line.rstrip().endswith((" own", " shape")) for line in out.splitlines())
    assert cli.main(["climate", str(thin_record), "--sectors", "8", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["sectors"][1]["fit"] == "all-sector shape"  # the JSON value keeps its name
    assert doc["all"]["fit_meanings"] == FIT_MEANINGS


def test_default_roughness_is_the_engine_constant(record, capsys):
    """The command's default roughness is the engine's one constant (EN 1991-1-4:2005
    Table 4.1, terrain category II: z0 = 0.05 m), the same the engine's fits default to."""
    import inspect

    from engine.climate import fit
    assert fit.RECORD_ROUGHNESS_M == 0.05  # EN 1991-1-4:2005 Table 4.1, category II
    assert inspect.signature(fit.climate_from_record).parameters["roughness_m"].default == \
        fit.RECORD_ROUGHNESS_M
    path, _ = record
    assert cli.main(["climate", str(path), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["all"]["roughness_m"] == fit.RECORD_ROUGHNESS_M
