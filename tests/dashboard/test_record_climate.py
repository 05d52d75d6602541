"""The climate step's measured record: where it was measured, the long-term correction, the
kept files, and the same climate as ``engine climate RECORD --long-term REFERENCE``."""
from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from streamlit.testing.v1 import AppTest

from engine import cli
from engine.climate import site_record

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
RECORDS = ROOT / "demo_sites" / "records"
LOGGER = RECORDS / "roof_logger_two_heights.csv"
STATION = RECORDS / "reference_station_hourly.csv"


def shown(markdown: str) -> str:
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


def _climate_page() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page("steps/step_climate.py").run()
    at.radio(key="climate_mode_w").set_value("measured").run()
    assert not at.exception, at.exception
    return at


def _upload(at, key, path, mime="text/csv"):
    at.file_uploader(key=key).upload(path.name, path.read_bytes(), mime).run()
    assert not at.exception, at.exception


def _with_reference(at, reference=STATION):
    _upload(at, "record_upload", LOGGER)
    _upload(at, "lt_upload", reference)
    at.toggle(key="rf|lt_on").set_value(True).run()
    return at


def _triple(c):
    return (np.asarray(c["frequency"]), np.asarray(c["weibull_k"]),
            np.asarray(c["weibull_c_ms"]))


def test_dashboard_and_command_line_give_the_same_long_term_climate(capsys):
    """The demo logger against the demo reference station: the climate the page stores, the
    command's JSON ``climate`` and the shared engine call agree (frequencies, k, c)."""
    at = _with_reference(_climate_page())
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    page = at.session_state["draft"]["climate"]
    assert page["source"] == "long_term"
    assert at.session_state["valid"].climate.source == "long_term"  # it validated
    assert cli.main(["climate", str(LOGGER), "--long-term", str(STATION), "--format",
                     "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    direct = site_record.record_climate(
        LOGGER.read_bytes(), LOGGER.name,
        reference=site_record.ReferenceFile(STATION.read_bytes(), STATION.name)).climate
    ref = (np.asarray(direct.frequency), np.asarray(direct.weibull_k),
           np.asarray(direct.weibull_c_ms))
    for got in (_triple(page), _triple(doc["climate"])):
        for a, b in zip(got, ref):
            np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-12)
    assert doc["climate"]["height_m"] == page["height_m"] == 5.0  # the top logged height
    # the page shows the correction: the correlation table, the scatter and the adjustment
    assert at.session_state["record_result"]["long_term"]["sectors"].shape[0] == 12
    labels = [m.label for m in at.metric]
    assert "Long-term adjustment" in labels
    assert "Its uncertainty (1σ)" in labels
    assert any(w.value and "averages over 60 minutes" in shown(w.value) for w in at.warning)


def test_measured_at_a_position_sets_the_logger_position_and_shows_ti_and_shear():
    """A roof logger at mill-centre: the climate is measured there at base + 5 m, that
    position's mast is set to the logged height so the assessment's check passes, and the
    measured TI and shear the engine found are shown."""
    at = _climate_page()
    _upload(at, "record_upload", LOGGER)
    at.radio(key="rf|where").set_value("position").run()
    at.selectbox(key="rf|pos").set_value("mill-centre").run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    a = at.session_state["valid"]
    c = a.climate
    assert (c.measured_at, c.position_id) == ("position", "mill-centre")
    pos = next(p for p in a.positions if p.id == "mill-centre")
    assert pos.mast_height_m == pytest.approx(5.0)                # the top logged height
    assert a.hub_height_m(pos) == pytest.approx(c.height_m, abs=1e-6)
    assert at.session_state["problems"] == []
    assert len(c.turbulence_intensity) == 12 and len(c.shear_exponent) == 12
    table = at.dataframe[0].value
    assert {"measured TI", "shear exponent"} <= set(table.columns)
    # 0 < TI < 1 and the exponent within the check's -0.5..1.5 (physical bounds of the fields)
    assert ((table["measured TI"] > 0) & (table["measured TI"] < 1)).all()


def test_bad_reference_names_the_field_and_loses_nothing():
    """A NetCDF reference without a latitude: the message names the field; the climate in use,
    the record and the reference stay in the session."""
    at = _climate_page()
    before = at.session_state["valid"].climate
    _with_reference(at, RECORDS / "reanalysis_grid.nc")
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    errors = [shown(e.value) for e in at.error]
    assert any("Latitude" in e and "latitude and longitude" in e for e in errors), errors
    assert at.session_state["valid"].climate == before
    assert at.session_state["record_file"]["name"] == LOGGER.name
    assert at.session_state["lt_file"]["name"] == "reanalysis_grid.nc"
    # with the cell's position given, the same files build (nothing had to be uploaded again)
    at.number_input(key="rf|lat_deg|").set_value(51.5).run()
    at.number_input(key="rf|lon_deg|").set_value(-1.25).run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    assert at.session_state["valid"].climate.source == "long_term"
    assert at.session_state["record_result"]["long_term"]["reference"]["kind"] == "netcdf"


def test_kept_files_survive_a_page_change():
    """The uploaded bytes are kept in the session; after another page the build still works."""
    at = _with_reference(_climate_page())
    at.switch_page("steps/step_site.py").run()
    at.switch_page("steps/step_climate.py").run()
    assert not at.exception, at.exception
    assert at.session_state["record_file"]["data"] == LOGGER.read_bytes()
    at.button(key="build_record").click().run()
    assert at.session_state["valid"].climate.source == "long_term"


def _logger_at_mill_long_term() -> AppTest:
    at = _climate_page()
    _with_reference(at, RECORDS / "reanalysis_grid.nc")
    at.number_input(key="rf|lat_deg|").set_value(51.5).run()
    at.number_input(key="rf|lon_deg|").set_value(-1.25).run()
    at.radio(key="rf|where").set_value("position").run()
    at.selectbox(key="rf|pos").set_value("mill-centre").run()
    at.button(key="build_record").click().run()
    assert not at.exception, at.exception
    assert at.session_state["problems"] == []
    return at


def test_results_show_the_series_yield_beside_the_weibull_yield():
    """Results show the leading option's series and Weibull yields and their difference, the
    engine's own figures for the kept long-term series (series_check.leading_series_yield),
    with a monthly and an hour-of-day chart; the summary gets the series section."""
    from dashboard import exports
    from engine.chain import pipeline
    from engine.report import series_check
    at = _logger_at_mill_long_term()
    at.switch_page("steps/step_results.py").run()
    assert not at.exception, at.exception
    assert "Time-series yield of the leading option" in [s.value for s in at.subheader]
    ev = pipeline.evaluate(at.session_state["valid"])
    row = ev.table[~ev.table["excluded"]].iloc[0]
    series = at.session_state["record_result"]["series"]
    want = series_check.leading_series_yield(ev, row, series)
    got = {m.label: m.value for m in at.metric}
    assert got["Series against fit"] == f"{want['difference']:+.1%}"
    assert got["Over the record, net (kWh/yr)"] == f"{want['series_net_wh'] / 1000:,.0f}"
    assert got["Weibull fit, net (kWh/yr)"] == f"{want['weibull_net_wh'] / 1000:,.0f}"
    # physical bounds: no month or hour gives negative energy, and the year's gross energy
    # is at most the curve's highest power for 8760 h (a curve never exceeds its top value)
    assert min(want["monthly_wh"]) >= 0.0 and min(want["hourly_wh"]) >= 0.0
    tur = next(t for t in ev.assessment.turbines if t.id == row["turbine_id"])
    assert 0.0 < want["series_gross_wh"] <= max(tur.curve_power_w) * 8760.0
    titles = [json.loads(c.proto.spec).get("title") for c in at.get("vega_lite_chart")]
    assert any(str(t).startswith("Net energy by hour of day (UTC)") for t in titles)
    assert any(str(t).startswith("Net energy by month over the record") for t in titles)
    files = exports.build_report(ev, series)
    assert b"Time series over the record" in files["html"]
    assert b"Time series over the record" not in exports.build_report(ev)["html"]


def test_no_series_section_for_a_climate_without_a_record():
    at = AppTest.from_file(APP, default_timeout=120)
    at.run()
    at.switch_page("steps/step_results.py").run()
    assert not at.exception, at.exception
    assert "Time-series yield of the leading option" not in [s.value for s in at.subheader]


@pytest.mark.slow
def test_summary_download_carries_the_series_section():
    """The summary step's files are built with the climate step's series."""
    at = _logger_at_mill_long_term()
    at.switch_page("steps/step_summary.py").run()
    at.button(key="make_report").click().run()
    assert not at.exception, at.exception
    html = at.session_state["report_files"]["html"].decode("utf-8")
    assert "Time series over the record" in html
