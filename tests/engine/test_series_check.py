"""The summary's time-series yield beside the Weibull yield for the leading option.

Independent reference: records drawn from Weibull distributions with scipy.stats.weibull_min;
the series yield's mean power on such a record converges to the Weibull integral (law of large
numbers), and a record whose speeds are 10 % lower must give less energy (the power curve is
non-decreasing below rated).
"""
import dataclasses
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from engine import report
from engine.chain import pipeline
from engine.io import sitefile
from engine.report import series_check

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"
H = 3600 * 10**9


@pytest.fixture(scope="module")
def ev():
    """The demo site, its climate marked as fitted from a record (the record drawn below)."""
    a = sitefile.load(DEMO)
    clim = dataclasses.replace(a.climate, record_file="invented_record.csv")
    return pipeline.evaluate(dataclasses.replace(a, climate=clim))


def _record_from(climate, n, seed, scale=1.0):
    """n hourly records drawn from the climate's own per-sector Weibull distributions."""
    rng = np.random.default_rng(seed)
    f = np.asarray(climate.frequency, float)
    sec = rng.choice(f.size, size=n, p=f / f.sum())
    width = 360.0 / f.size
    d = np.mod(sec * width + rng.uniform(-width / 2, width / 2, n), 360.0)
    k = np.asarray(climate.weibull_k, float)[sec]
    c = np.asarray(climate.weibull_c_ms, float)[sec]
    v = scale * stats.weibull_min.rvs(k, scale=c, random_state=rng)
    t = np.int64(1735689600) * 10**9 + np.arange(n, dtype=np.int64) * H
    return t, v, d


def _best(ev):
    row = ev.table[~ev.table["excluded"]].iloc[0]
    return {"position_id": row["position_id"], "turbine_id": row["turbine_id"],
            "aep_kwh": float(row["aep_kwh"]), "gross_aep_kwh": float(row["gross_aep_kwh"])}


def test_series_on_the_climates_own_weibull_record_agrees_and_names_the_ranking_figure(ev):
    """Ten years of hourly draws from the climate itself: the series agrees with the fit
    within 2 % (sampling error of the mean power over 87 600 records, a fraction of a per cent
    for these curves; derived), and the Weibull figures are the ranked table's own."""
    best = _best(ev)
    r = series_check.leading_series_yield(ev, best, _record_from(ev.assessment.climate,
                                                                 10 * 8760, 5))
    assert abs(r["difference"]) < 0.02
    assert r["weibull_gross_wh"] / 1000 == pytest.approx(best["gross_aep_kwh"], rel=1e-9)
    assert r["weibull_net_wh"] / 1000 == pytest.approx(best["aep_kwh"], rel=1e-9)
    assert 0 < r["series_net_wh"] <= r["series_gross_wh"]
    table, words = series_check.series_blocks(ev, best, _record_from(ev.assessment.climate,
                                                                     10 * 8760, 5))
    assert "the ranking uses this" in table.rows[0][0]
    assert table.rows[0][2] == f"{best['aep_kwh']:,.0f} kWh"
    assert "the ranking and the P-values use the Weibull figure" in words.text


def test_a_windless_record_gives_less_and_says_the_fit_overstates(ev):
    """Speeds 10 % below the climate's: less energy than the fit (the curve rises with speed
    below rated), called out as the cautious figure; a half-year record says it is short."""
    best = _best(ev)
    rec = _record_from(ev.assessment.climate, 4380, 9, scale=0.9)
    r = series_check.leading_series_yield(ev, best, rec)
    assert r["difference"] < -0.03 and r["days"] < 365
    table, words = series_check.series_blocks(ev, best, rec)
    assert words.tone == "caution"
    assert "the lower, series figure is the cautious one" in words.text
    assert "less than a year" in words.text
    assert table.rows[2][1] == f"{r['difference']:+.1%}"


def test_no_record_no_comparison(ev):
    best = _best(ev)
    assert series_check.series_blocks(ev, best, None) == ()
    assert series_check.series_blocks(ev, None, _record_from(ev.assessment.climate, 100, 1)) == ()
    s = report.build_summary(ev, with_charts=False, generated_at="2026-01-01T00:00:00Z")
    assert all(t.key != "series-yield" for t in s.tables())
    # A record handed over for a climate that names none (a table) is not compared with.
    table_ev = pipeline.evaluate(sitefile.load(DEMO))
    rec = _record_from(ev.assessment.climate, 1000, 2)
    assert series_check.series_blocks(table_ev, best, rec) == ()


def test_summary_with_a_record_shows_both_yields_and_keeps_the_body_to_eight_pages(ev, tmp_path):
    """The data-quality section carries the table; the PDF body stays at most 8 pages (the
    summary's page limit, tests/engine/test_report.py)."""
    rec = _record_from(ev.assessment.climate, 8760, 3)
    s = report.build_summary(ev, generated_at="2026-01-01T00:00:00Z", record=rec)
    keys = [t.key for t in s.section("quality").blocks if hasattr(t, "key")]
    assert "series-yield" in keys
    html = report.render_html(s)
    assert "Time series over the record" in html and "the ranking uses this" in html
    exe = shutil.which("pdftotext")
    if exe is None:
        pytest.skip("pdftotext (poppler-utils) is not installed")
    f = tmp_path / "s.pdf"
    f.write_bytes(report.render_pdf(s))
    text = subprocess.run([exe, "-layout", str(f), "-"], check=True, capture_output=True,
                          text=True).stdout
    pages = text.split("\f")
    start = next(i for i, p in enumerate(pages) if re.search(r"^\s*Appendix\s*$", p, re.M))
    assert start <= 8
    assert "Time series over the record" in " ".join(" ".join(pages[:start]).split())


def _csv(t, v, d) -> bytes:
    import pandas as pd
    return pd.DataFrame({"timestamp": pd.to_datetime(t, utc=True).strftime("%Y-%m-%dT%H:%M:%SZ"),
                         "speed_ms": np.round(v, 3),
                         "direction_deg": np.round(d, 1)}).to_csv(index=False).encode()


def test_cli_report_with_the_climates_record(tmp_path, capsys):
    """``engine report SITE --record FILE``: the climate fitted from the file shows both yields;
    another file (SHA-256 differs) and a site without a record exit 2 naming --record."""
    from engine import cli
    from engine.climate import fit
    a = sitefile.load(DEMO)
    t, v, d = _record_from(a.climate, 8760, 8)
    data = _csv(t, v, d)
    (tmp_path / "rec.csv").write_bytes(data)
    clim = fit.climate_from_csv_bytes(data, "rec.csv", height_m=a.climate.height_m,
                                      roughness_m=a.climate.roughness_m)[0]
    site = tmp_path / "site.json"
    site.write_text(sitefile.dumps(dataclasses.replace(a, climate=clim)),
                    encoding="utf-8")
    out = tmp_path / "s.html"
    assert cli.main(["report", str(site), "--out", str(out), "--record",
                     str(tmp_path / "rec.csv"), "--generated-at", "2026-01-01T00:00:00Z"]) == 0
    assert "Time series over the record" in out.read_text(encoding="utf-8")
    other = tmp_path / "other.csv"
    other.write_bytes(_csv(t, v * 1.01, d))
    capsys.readouterr()
    assert cli.main(["report", str(site), "--out", str(out), "--record", str(other)]) == 2
    assert "--record" in capsys.readouterr().err
    assert cli.main(["report", str(DEMO), "--out", str(out), "--record",
                     str(tmp_path / "rec.csv")]) == 2
    assert "names no record" in capsys.readouterr().err
