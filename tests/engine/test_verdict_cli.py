"""The rank command leads with the verdict; its JSON carries verdicts and reasons."""
import json
import subprocess
import sys
from pathlib import Path

from engine.chain import pipeline, verdict
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"


def run(*args):
    return subprocess.run([sys.executable, "-m", "engine", *args], cwd=ROOT, capture_output=True,
                          text=True, timeout=120)


def test_rank_table_opens_with_the_headline():
    """First line of the table output = the engine's headline for the site."""
    r = run("rank", str(DEMO))
    assert r.returncode == 0, r.stderr
    want = verdict.headline_for(pipeline.evaluate(sitefile.load(DEMO)))
    assert r.stdout.splitlines()[0] == want


def test_rank_json_has_verdicts_and_keeps_old_fields_first():
    """Every JSON row has a verdict from the fixed list and a reason; fixed fields unchanged."""
    r = run("rank", str(DEMO), "--format", "json")
    rows = json.loads(r.stdout)["positions"]
    for row in rows:
        assert list(row)[:8] == ["rank", "position_id", "turbine_id", "hub_height_m",
                                 "mean_speed_ms", "aep_kwh", "capacity_factor", "flags"]
        assert row["verdict"] in verdict.VERDICTS and row["verdict_reason"]
        if row["excluded"]:
            assert row["verdict"] == "not allowed here" and row["exclusion_reason"]
