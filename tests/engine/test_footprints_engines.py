"""A footprint file screened on every engine: local, a two-worker loopback Dask cluster, and
tiles of two sizes give the same table, to the last bit.

The footprints are invented here (seeded), in UTM zone 31N coordinates offshore (nowhere
real); they are inputs, never check values. The check is agreement between the engines, and
the physics bounds of every yield.
"""
from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from engine import screening
from engine.core.errors import InputError
from engine.io import sitefile
from engine.screening import positions as sp
from footprint_rings import rectangle_ring

ROOT = Path(__file__).resolve().parents[2]
HOURS_PER_YEAR = 8760.0  # 365 d x 24 h


def invented_footprints(n: int = 36, seed: int = 18) -> bytes:
    """``n`` invented blocks on a 6 x 6 grid 60 m apart, jittered (seeded)."""
    rng = np.random.default_rng(seed)
    x0, y0 = 500000.0, 6000000.0
    feats = []
    for k in range(n):
        i, j = divmod(k, 6)
        x, y = x0 + 60.0 * i + rng.uniform(-8, 8), y0 + 60.0 * j + rng.uniform(-8, 8)
        L, W = rng.uniform(14, 40), rng.uniform(10, 18)
        feats.append({"type": "Feature",
                      "properties": {"ref": f"b{k:02d}", "h": round(rng.uniform(6, 30), 1)},
                      "geometry": {"type": "Polygon", "coordinates": [
                          rectangle_ring(x, y, max(L, W), min(L, W), rng.uniform(0, 180))]}})
    return json.dumps({"type": "FeatureCollection",
                       "crs": {"type": "name", "properties": {"name": "EPSG:32631"}},
                       "features": feats}).encode()


@pytest.fixture(scope="module")
def ctx():
    """The demo's climate and turbines, per-sector surroundings and wakes on, a 100 m fetch,
    and chunks of 16 candidates (so the Dask run has many tasks)."""
    c = screening.context_from_assessment(sitefile.load(ROOT / "demo_sites" /
                                                        "larkspur_yard.json"))
    return replace(c, transfer=replace(c.transfer, sector_morphometry=True,
                                       sector_fetch_m=100.0),
                   settings=replace(c.settings, upwind_shelter=True, chunk_rows=16))


@pytest.fixture(scope="module")
def data():
    return invented_footprints()


@pytest.fixture(scope="module")
def local(ctx, data):
    return sp.screen_footprints(data, ctx, height_field="h", id_field="ref", spacing_m=5.0)


def _same(a, b):
    pd.testing.assert_frame_equal(a.positions, b.positions, check_exact=True)
    pd.testing.assert_frame_equal(a.buildings, b.buildings, check_exact=True)
    assert a.problems == b.problems and a.n_features == b.n_features


def test_local_run_is_within_physics(local, ctx):
    """Every candidate's yield is between 0 and rated power all year (common practice), its
    capacity factor at most 1, its mean hub speed non-negative, and the wakes only slow the
    wind (a speed factor of at most 1)."""
    pos = local.positions
    assert len(local.buildings) == 36 and len(pos) > 36 * 2
    rated = {t.id: float(t.rated_power_w) / 1000.0 * HOURS_PER_YEAR for t in ctx.turbines}
    for tid, most in rated.items():
        aep = pos[f"aep_kwh_{tid}"].dropna()
        assert ((aep >= 0) & (aep <= most)).all()
    cf = pos["best_capacity_factor"].dropna()
    assert ((cf >= 0) & (cf <= 1)).all()
    assert (pos["mean_speed_ms"] >= 0).all()
    assert ((pos["shelter_factor"] > 0) & (pos["shelter_factor"] <= 1 + 1e-12)).all()
    assert (pos["shelter_factor"] < 1).any()  # some roofs stand in a neighbour's wake


def test_dask_two_workers_equals_local(local, ctx, data, dask_client):
    assert len(dask_client.scheduler_info()["workers"]) == 2
    got = sp.screen_footprints(data, ctx, height_field="h", id_field="ref", spacing_m=5.0,
                               client=dask_client)
    _same(local, got)


@pytest.mark.parametrize("tile_m", [100.0, 250.0])
def test_tiles_of_two_sizes_equal_local(local, ctx, data, tile_m):
    got = sp.screen_footprints(data, ctx, height_field="h", id_field="ref", spacing_m=5.0,
                               tile_m=tile_m)
    _same(local, got)


def test_tiles_on_dask_equal_local(local, ctx, data, dask_client):
    got = sp.screen_footprints(data, ctx, height_field="h", id_field="ref", spacing_m=5.0,
                               tile_m=150.0, client=dask_client)
    _same(local, got)


def test_tiles_need_per_sector_surroundings_and_a_tile_above_the_halo(ctx, data):
    off = replace(ctx, transfer=replace(ctx.transfer, sector_morphometry=False))
    with pytest.raises(InputError) as e:
        sp.screen_footprints(data, off, height_field="h", tile_m=300.0)
    (where, msg), = e.value.problems
    assert where == "tile_m" and "needs per-sector surroundings" in msg
    with pytest.raises(InputError) as e:
        sp.screen_footprints(data, ctx, height_field="h", tile_m=50.0)
    (where, msg), = e.value.problems
    assert where == "tile_m" and "must be at least the halo" in msg


def test_screen_command_on_workers_and_tiles_writes_the_local_files(tmp_path, data):
    """`screen FILE.geojson` with --workers 2 (a loopback cluster the command starts) and with
    --tile-m writes the same two CSVs, byte for byte, as the local run."""
    import subprocess
    import sys

    src = tmp_path / "blocks.geojson"
    src.write_bytes(data)
    site = json.loads((ROOT / "demo_sites" / "larkspur_yard.json").read_text())
    site.setdefault("transfer", {}).update(sector_morphometry=True, sector_fetch_m=100.0)
    (tmp_path / "site.json").write_text(json.dumps(site))
    outs = {}
    for name, extra in (("local", []), ("dask", ["--workers", "2"]),
                        ("tiles", ["--tile-m", "200"])):
        best, every = tmp_path / f"{name}-best.csv", tmp_path / f"{name}-every.csv"
        got = subprocess.run(
            [sys.executable, "-m", "engine", "screen", str(src), "--climate",
             str(tmp_path / "site.json"), "--height-field", "h", "--id-field", "ref",
             "--grid-spacing-m", "5", "--out", str(best), "--positions-out", str(every),
             "--quiet", *extra], cwd=ROOT, capture_output=True, text=True, timeout=300)
        assert got.returncode == 0, got.stderr
        outs[name] = (best.read_bytes(), every.read_bytes())
    assert outs["dask"] == outs["local"] and outs["tiles"] == outs["local"]
    assert outs["local"][1].count(b"\n") > 36 * 2  # a header and every candidate
