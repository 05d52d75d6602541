"""``engine report SITE --record FILE`` for corrected climates: the corrected series is rebuilt
through engine.climate.site_record (the call that built the climate) and used only when the
rebuilt climate equals the site file's; otherwise the command refuses, naming the option.

Bounds checked: the series' energy a year is positive and at most the curve's top power for
8760 h (the curve never exceeds its highest value); the rebuilt series is the one the climate
was fitted on (its Weibull figures are the ranked table's own, as in test_series_check).
"""
from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import numpy as np
import pytest

from engine import cli
from engine.chain import pipeline
from engine.climate import site_record
from engine.io import sitefile
from engine.report import series_check

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
LOGGER = ROOT / "demo_sites" / "records" / "roof_logger_two_heights.csv"
GRID = ROOT / "demo_sites" / "records" / "reanalysis_grid.nc"
CELL = ["--lat-deg", "51.5", "--lon-deg", "-1.25"]


@pytest.fixture(scope="module")
def logger_site(tmp_path_factory):
    """The demo site with the roof logger's long-term climate measured at mill-centre (its mast
    set to the logged 5 m), as the dashboard's climate step builds it."""
    a = sitefile.load(DEMO)
    pos = next(p for p in a.positions if p.id == "mill-centre")
    base = a.base_height_m(pos)
    ref = site_record.ReferenceFile(GRID.read_bytes(), GRID.name, lat_deg=51.5, lon_deg=-1.25)
    lc = site_record.record_climate(LOGGER.read_bytes(), LOGGER.name, base_height_m=base,
                                    position_id=pos.id, reference=ref)
    moved = dataclasses.replace(pos, mast_height_m=lc.climate.height_m - base)
    a = dataclasses.replace(a, climate=lc.climate, positions=tuple(
        moved if p.id == pos.id else p for p in a.positions))
    path = tmp_path_factory.mktemp("site") / "logger.json"
    path.write_text(sitefile.dumps(a), encoding="utf-8")
    return path, lc


def _report(site, out, *extra):
    return cli.main(["report", str(site), "--out", str(out), "--record", str(LOGGER),
                     "--generated-at", "2026-01-01T00:00:00Z", *extra])


def test_long_term_climate_gets_its_rebuilt_series(logger_site, tmp_path):
    site, lc = logger_site
    out = tmp_path / "s.html"
    assert _report(site, out, "--long-term", str(GRID), *CELL) == 0
    html = out.read_text(encoding="utf-8")
    assert "Time series over the record" in html
    ev = pipeline.evaluate(sitefile.load(site))
    row = ev.table[~ev.table["excluded"]].iloc[0]
    want = series_check.leading_series_yield(ev, row, lc.series)
    assert f"{want['difference']:+.1%}" in html
    tur = next(t for t in ev.assessment.turbines if t.id == row["turbine_id"])
    assert 0.0 < want["series_gross_wh"] <= max(tur.curve_power_w) * 8760.0
    # the series is the long-term predicted one (3-hourly, the reference's interval)
    assert np.median(np.diff(lc.series[0])) == 3 * 3600 * 10**9


def test_long_term_climate_without_its_reference_is_refused(logger_site, tmp_path, capsys):
    site, _ = logger_site
    assert _report(site, tmp_path / "s.html") == 2
    err = capsys.readouterr().err
    assert "--record" in err and "--long-term REFERENCE" in err


def test_other_options_give_another_climate_and_are_refused(logger_site, tmp_path, capsys):
    """The least-squares line is not the variance-ratio line the climate was built with: the
    rebuilt climate differs, so its series is not used."""
    site, _ = logger_site
    assert _report(site, tmp_path / "s.html", "--long-term", str(GRID), *CELL,
                   "--lt-method", "linear") == 2
    err = capsys.readouterr().err
    assert "--record" in err and re.search(r"differs from the site file's", err)
    assert not (tmp_path / "s.html").exists()


def test_logger_height_climate_without_correction_gets_its_series(tmp_path):
    """A two-height logger's climate (the top height, not the file's first speed column) is
    rebuilt through the same call; before, the command refused any multi-height record."""
    a = sitefile.load(DEMO)
    lc = site_record.record_climate(LOGGER.read_bytes(), LOGGER.name)
    site = tmp_path / "site.json"
    site.write_text(sitefile.dumps(dataclasses.replace(a, climate=lc.climate)),
                    encoding="utf-8")
    out = tmp_path / "s.html"
    assert _report(site, out) == 0
    assert "Time series over the record" in out.read_text(encoding="utf-8")
