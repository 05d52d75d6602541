"""Command line end to end: the demo ranks; broken files exit 2 with a readable message."""
import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
RANK_KEYS = {"rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", "aep_kwh",
             "capacity_factor", "flags"}


def run(*args):
    return subprocess.run([sys.executable, "-m", "engine", *args], cwd=ROOT, capture_output=True,
                          text=True, timeout=120)


def test_rank_json_on_demo():
    """`rank --format json` gives the documented fields, sorted by rank."""
    r = run("rank", str(DEMO), "--format", "json")
    assert r.returncode == 0, r.stderr
    doc = json.loads(r.stdout)
    assert doc["site"]["name"].startswith("Larkspur Yard")
    rows = doc["positions"]
    assert rows and all(RANK_KEYS <= set(row) for row in rows)
    assert [row["rank"] for row in rows] == list(range(1, len(rows) + 1))


def test_rank_table_and_csv():
    """Table and CSV outputs name every position."""
    t = run("rank", str(DEMO))
    c = run("rank", str(DEMO), "--format", "csv")
    assert t.returncode == 0 and c.returncode == 0
    for pid in ("mill-centre", "mill-tower-gap", "yard-mast"):
        assert pid in t.stdout and pid in c.stdout
    assert c.stdout.splitlines()[0].startswith("rank,position_id,turbine_id")


@pytest.mark.parametrize("content, expect", [
    ("", "not valid JSON"),
    ('{"site": {}}', "is missing"),
    ('{"site": {"name": "x", "altitude_m": "high"}}', "must be a number"),
])
def test_broken_file_exit_code_2(tmp_path, content, expect):
    """A broken site file exits 2 and says what is wrong, without a traceback."""
    p = tmp_path / "bad.json"
    p.write_text(content, encoding="utf-8")
    r = run("rank", str(p))
    assert r.returncode == 2
    assert expect in r.stderr
    assert "Traceback" not in r.stderr


def test_missing_file_exit_code_2(tmp_path):
    """A path that does not exist exits 2 and names it."""
    r = run("rank", str(tmp_path / "nope.json"))
    assert r.returncode == 2 and "nope.json" in r.stderr
