"""``engine screen --tile-m``: the tiled screening from the command line.

Check values are the command's own untiled output on the same file (the tiled screening must
not change a number, docs/screening.md "Tiles with a halo"), not recorded numbers.
"""
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
sys.path.insert(0, str(ROOT / "demo_sites"))
import make_district  # noqa: E402  (seeded invented district)

FETCH_M = 150.0


def run(*args):
    return subprocess.run([sys.executable, "-m", "engine", *args], cwd=ROOT, capture_output=True,
                          text=True, timeout=300)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    """A seeded 200-building district (CSV) and the demo site with per-sector surroundings."""
    d = tmp_path_factory.mktemp("tiled")
    make_district.make_district(200).to_csv(d / "district.csv", index=False)
    site = json.loads(DEMO.read_text())
    site.setdefault("transfer", {}).update(sector_morphometry=True, sector_fetch_m=FETCH_M)
    (d / "site.json").write_text(json.dumps(site))
    return d


def _read(path):
    return pd.read_csv(path, keep_default_na=False, na_values=[""])


def test_tiled_output_equals_untiled_output(files):
    whole = run("screen", str(files / "district.csv"), "--climate", str(files / "site.json"),
                "--out", str(files / "whole.csv"), "--quiet")
    assert whole.returncode == 0, whole.stderr
    tiled = run("screen", str(files / "district.csv"), "--climate", str(files / "site.json"),
                "--out", str(files / "tiled.csv"), "--tile-m", "160", "--quiet")
    assert tiled.returncode == 0, tiled.stderr
    assert "halo of 150 m" in tiled.stderr
    a, b = _read(files / "whole.csv"), _read(files / "tiled.csv")
    assert list(a.columns) == list(b.columns) and len(a) == len(b) == 200
    for c in a.columns:
        if a[c].dtype.kind == "f":
            # Yields equal to rounding: the bins sums' blocks follow the table's size.
            np.testing.assert_allclose(b[c], a[c], rtol=1e-12, atol=0, err_msg=c)
        else:
            assert (a[c].astype(str) == b[c].astype(str)).all(), c


def test_tile_smaller_than_the_halo_is_refused(files):
    r = run("screen", str(files / "district.csv"), "--climate", str(files / "site.json"),
            "--out", str(files / "small.csv"), "--tile-m", "100")
    assert r.returncode == 2
    assert "--tile-m" in r.stderr and "150 m" in r.stderr and "Traceback" not in r.stderr
    assert not (files / "small.csv").exists()


def test_tiles_without_per_sector_surroundings_are_refused(files):
    r = run("screen", str(files / "district.csv"), "--climate", str(DEMO),
            "--out", str(files / "off.csv"), "--tile-m", "500")
    assert r.returncode == 2
    assert "--tile-m" in r.stderr and "sector_morphometry" in r.stderr
    assert "Traceback" not in r.stderr


def test_bad_rows_are_named_as_the_untiled_command_names_them(files):
    """A bad height in a CSV and in a Parquet copy: the tiled run names the same line (CSV)
    or row (Parquet) as the untiled run."""
    frame = make_district.make_district(200)
    frame.loc[4, "height_m"] = -3.0
    frame.to_csv(files / "bad.csv", index=False)
    frame.to_parquet(files / "bad.parquet", index=False)
    for name, where in (("bad.csv", "line 6 "), ("bad.parquet", "row 5 ")):
        for extra in ((), ("--tile-m", "200")):
            r = run("screen", str(files / name), "--climate", str(files / "site.json"),
                    "--out", str(files / "bad_out.csv"), "--quiet", *extra)
            assert r.returncode == 0, r.stderr
            assert f"{where}(id 'B0000005'): height_m" in r.stderr, (name, extra, r.stderr)
