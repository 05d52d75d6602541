"""The dashboard's steps through Streamlit's AppTest: demo, validation, what-ifs, site files."""
from __future__ import annotations

import ast
import io
import json
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from streamlit.testing.v1 import AppTest

from dashboard import exports, results_view
from engine import cli
from engine.chain import documents
from engine.chain import pipeline
from engine.io import sitefile


def shown(markdown: str) -> str:
    """The text a person reads from Markdown source whose user text is backslash-escaped."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")  # escapes, word breaks


ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
PAGES = ["steps/step_site.py", "steps/step_climate.py", "steps/step_layout.py",
         "steps/step_turbines.py", "steps/step_results.py", "steps/step_summary.py",
         "steps/step_compare.py"]
ALT = "w|site.altitude_m|length|m"


def _app() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    assert not at.exception, at.exception
    return at


def _go(at: AppTest, page: str) -> AppTest:
    at.switch_page(page).run()
    assert not at.exception, at.exception
    return at


def _texts(at: AppTest, kind: str) -> list:
    return [shown(e.value) for e in getattr(at, kind)]


@pytest.fixture(scope="module")
def demo_eval():
    return pipeline.evaluate(sitefile.load(DEMO))


def test_opens_on_the_demo_site_with_no_input():
    """The first page is the site step with the built-in demo loaded and every step complete."""
    at = _app()
    assert at.title[0].value == "1. Site"
    assert at.text_input(key="w|site.name|plain|-").value.startswith("Larkspur Yard")
    assert "All steps complete." in _texts(at, "success")
    # the standing cautions panel names every hazard (common practice for small wind)
    md = " ".join(_texts(at, "markdown"))
    for hazard in ("Working at height", "Roof structure", "Mast loads", "Electrical work",
                   "Noise for neighbours", "Planning permission"):
        assert hazard in md


@pytest.mark.parametrize("page", PAGES)
def test_every_step_draws_without_error(page):
    """Every step renders for the demo site without an exception or an error message."""
    at = _go(_app(), page)
    assert not _texts(at, "error")


def test_walking_every_step_changes_nothing():
    """Visiting every step, twice, leaves the site file byte for byte as loaded."""
    at = _app()
    for page in PAGES + PAGES[::-1]:
        _go(at, page)
    assert exports.site_file_bytes(at.session_state["valid"]) == DEMO.read_bytes()
    assert not at.session_state["problems"]


def test_results_show_the_engine_ranking(demo_eval):
    """The ranked table shows the engine's own ranking, bounded by rated power × 8760 h."""
    at = _go(_app(), "steps/step_results.py")
    shown = at.table[0].value
    expect = demo_eval.table.head(5)
    assert list(shown["position"]) == list(expect["position_id"])
    assert list(shown["turbine"]) == list(expect["turbine_id"])
    energy = [float(v.replace(",", "")) for v in shown["net energy (kWh/yr)"]]
    # physical bound: no turbine makes more than its rated power all year (common practice)
    rated = expect["rated_power_kw"].to_numpy() * 8760.0
    assert all(0 <= e <= r for e, r in zip(energy, rated))
    spec = at.get("vega_lite_chart")[0].proto.spec
    assert "http" not in json.loads(spec).get("data", {}).get("url", "")


def test_invalid_input_shows_a_message_and_keeps_the_rest():
    """An altitude out of range is named beside its field; other inputs and results stay."""
    at = _app()
    at.number_input(key=ALT).set_value(9000.0).run()
    errs = " ".join(_texts(at, "error"))
    assert "Altitude" in errs and "5000" in errs  # the rule's bound from the model
    assert at.text_input(key="w|site.name|plain|-").value.startswith("Larkspur Yard")
    assert any("Needs attention" in w for w in _texts(at, "warning"))
    at = _go(at, "steps/step_results.py")
    assert any("last complete inputs" in w for w in _texts(at, "warning"))
    assert len(at.table[0].value) == 5
    at = _go(at, "steps/step_site.py")
    assert at.number_input(key=ALT).value == 9000.0  # nothing typed is lost
    at.number_input(key=ALT).set_value(45.0).run()
    assert "All steps complete." in _texts(at, "success")


def test_invalid_table_row_is_named_by_row():
    """A building lower than the model's 2 m minimum gets a message naming its row."""
    at = _app()
    draft = at.session_state["draft"]
    draft["buildings"][1]["height_m"] = 1.0
    at.session_state["draft"] = draft
    at.session_state["gen"] = at.session_state["gen"] + 1
    at = _go(at, "steps/step_layout.py")
    errs = " ".join(_texts(at, "error"))
    assert "Buildings, row 2 (tower)" in errs and "height" in errs


def test_mast_height_change_reranks():
    """A taller mast raises the hub by the same amount, the speed there, and re-ranks."""
    at = _go(_app(), "steps/step_results.py")
    ev0 = pipeline.evaluate(at.session_state["valid"])
    at.selectbox(key="whatif_position_w").set_value("terrace-ridge").run()
    at.number_input(key="w|positions.4.mast_height_m|length|m|whatif").set_value(10.0).run()
    ev1 = pipeline.evaluate(at.session_state["valid"])
    r0 = ev0.table[ev0.table.position_id == "terrace-ridge"].iloc[0]
    r1 = ev1.table[ev1.table.position_id == "terrace-ridge"].iloc[0]
    assert r1["hub_height_m"] == pytest.approx(7.5 + 10.0)  # eaves 7.5 m + mast (model rule)
    assert r1["mean_speed_ms"] > r0["mean_speed_ms"]  # speed grows with height (log law)
    assert r1["rank"] <= r0["rank"]  # more wind, others unchanged: never ranked lower
    shown = at.table[0].value
    assert list(shown["position"]) == list(ev1.table.head(5)["position_id"])
    assert list(ev0.table["position_id"]) != list(ev1.table["position_id"])


def test_scenarios_save_and_compare_with_differences():
    """Two saved what-ifs compare side by side, and the changed mast height is listed."""
    at = _go(_app(), "steps/step_results.py")
    at.selectbox(key="whatif_position_w").set_value("mill-centre").run()
    at.text_input(key="scenario_name").set_value("as drawn").run()
    at.button(key="save_scenario").click().run()
    at.number_input(key="w|positions.0.mast_height_m|length|m|whatif").set_value(9.0).run()
    at.text_input(key="scenario_name").set_value("taller mast").run()
    at.button(key="save_scenario").click().run()
    assert list(at.session_state["scenarios"]) == ["as drawn", "taller mast"]
    at = _go(at, "steps/step_compare.py")
    diff = at.table[1].value
    row = diff.loc["positions mill-centre: mast height (m)"]
    assert row["as drawn"] == "6" and row["taller mast"] == "9"
    outcome = at.table[0].value
    assert "leading position" in outcome.index


def test_site_file_round_trip_through_the_page():
    """A downloaded site file opened again through the page gives the same bytes."""
    at = _app()
    original = exports.site_file_bytes(at.session_state["valid"])
    at.number_input(key=ALT).set_value(120.0).run()
    assert at.session_state["valid"].site.altitude_m == 120.0
    at.file_uploader(key="site_upload").upload("yard.perch.json", original,
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert not at.exception
    assert exports.site_file_bytes(at.session_state["valid"]) == original
    assert at.number_input(key=ALT).value == 45.0


def test_bad_site_file_is_refused_with_a_message():
    """A broken site file is refused, its problem shown, and the open assessment kept."""
    at = _app()
    before = exports.site_file_bytes(at.session_state["valid"])
    at.file_uploader(key="site_upload").upload("bad.json", b'{"site": {"name": 3',
                                               "application/json").run()
    at.button(key="open_site").click().run()
    assert any("JSON" in e for e in _texts(at, "error"))
    assert exports.site_file_bytes(at.session_state["valid"]) == before


def test_lengths_in_feet_convert_at_entry():
    """Choosing feet shows the altitude in feet and stores what is typed in metres."""
    at = _app()
    at.radio(key="length_unit").set_value("ft").run()
    ft = at.number_input(key="w|site.altitude_m|length|ft")
    assert ft.value == pytest.approx(45.0 / 0.3048)  # 1 ft = 0.3048 m (NIST SP 811)
    ft.set_value(100.0).run()
    assert at.session_state["valid"].site.altitude_m == pytest.approx(30.48)  # NIST SP 811


def test_presentation_mode_hides_editing_widgets():
    """Presentation mode removes the what-if inputs and the save button from the results."""
    at = _go(_app(), "steps/step_results.py")
    assert any(b.key == "save_scenario" for b in at.button)
    at.toggle(key="presentation").set_value(True).run()
    assert not any(b.key == "save_scenario" for b in at.button)
    assert not any(str(n.key).startswith("w|positions") for n in at.number_input)
    assert len(at.table[0].value) == 5


def test_climate_mean_speed_form_and_back_to_demo():
    """A mean-speed climate uses the Rayleigh scale c = 2 V / sqrt(pi); the demo comes back."""
    at = _go(_app(), "steps/step_climate.py")
    at.radio(key="climate_mode_w").set_value("mean_speed").run()
    at.number_input(key="mf|mean|m/s").set_value(5.0).run()
    clim = at.session_state["valid"].climate
    # Rayleigh: mean = c * Gamma(1.5) = c * sqrt(pi)/2 (any statistics handbook)
    assert clim.weibull_c_ms[0] == pytest.approx(5.0 * 2 / 3.141592653589793 ** 0.5, rel=1e-9)
    at.radio(key="climate_mode_w").set_value("demo").run()
    assert at.session_state["valid"].climate == sitefile.load(DEMO).climate


def test_exports_are_the_engine_documents(demo_eval):
    """Rank CSV and JSON exports carry the engine's rows with SI column names."""
    csv = pd.read_csv(io.BytesIO(exports.rank_csv_bytes(demo_eval)))
    assert list(csv["position_id"]) == list(demo_eval.table["position_id"])
    assert "hub_height_m" in csv.columns and "aep_kwh" in csv.columns
    doc = json.loads(exports.rank_json_bytes(demo_eval))
    assert doc == json.loads(json.dumps(documents.rank_document(demo_eval)))
    assert exports.file_stem(demo_eval.assessment) == "larkspur-yard-invented-demo-estate"


def test_input_differences_name_the_changed_field():
    """Comparing two site files lists exactly the inputs that differ."""
    a = json.loads(DEMO.read_text())
    b = json.loads(DEMO.read_text())
    b["economics"]["tariff_per_kwh"] = 0.3
    diff = results_view.input_differences({"one": a, "two": b})
    assert list(diff["input"]) == ["economics: tariff (per kWh)"]
    assert diff.iloc[0]["two"] == "0.3"


def test_engine_never_imports_streamlit():
    """No module under engine/ imports streamlit (the engine stays usable without it)."""
    for path in (ROOT / "engine").rglob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = ([a.name for a in node.names] if isinstance(node, ast.Import)
                     else [node.module or ""] if isinstance(node, ast.ImportFrom) else [])
            assert not any(n.split(".")[0] == "streamlit" for n in names), path


def _record_csv() -> bytes:
    """An invented 10-minute record (seeded), 30 days, speed and direction."""
    import numpy as np
    rng = np.random.default_rng(20261201)
    n = 30 * 144
    t = pd.date_range("2025-01-01", periods=n, freq="10min", tz="UTC")
    speed = rng.weibull(2.0, n) * 6.0
    direction = (rng.normal(240.0, 60.0, n)) % 360.0
    df = pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "speed_ms": speed.round(2), "direction_deg": direction.round(0)})
    return df.to_csv(index=False).encode()


def test_measured_record_builds_the_climate_through_the_page():
    """An uploaded record becomes the climate, tied to the file by its SHA-256."""
    import hashlib
    data = _record_csv()
    at = _go(_app(), "steps/step_climate.py")
    at.radio(key="climate_mode_w").set_value("measured").run()
    at.file_uploader(key="record_upload").upload("mast.csv", data, "text/csv").run()
    at.button(key="build_record").click().run()
    assert not at.exception
    clim = at.session_state["valid"].climate
    assert clim.source == "measured"
    assert clim.record_sha256 == hashlib.sha256(data).hexdigest()  # FIPS 180-4 digest
    assert sum(clim.frequency) == pytest.approx(1.0, abs=1e-3)
    assert any("Quality control" in m for m in _texts(at, "markdown"))
    at = _go(at, "steps/step_results.py")
    assert len(at.table[0].value) == 5


@pytest.mark.slow
def test_report_files_are_built_when_the_engine_has_them(demo_eval):
    """The summary step's report builder returns an HTML page and a PDF."""
    if exports.report_builders() is None:
        pytest.skip("engine/report.py has no builders yet")
    files = exports.build_report(demo_eval)
    assert files["html"].startswith(b"<!DOCTYPE html>")
    assert files["pdf"].startswith(b"%PDF-")  # PDF 1.x header (ISO 32000-1, 7.5.2)


def test_power_curve_file_replaces_the_curve():
    """A curve table in kW read through the page is stored in W (1 kW = 1000 W)."""
    at = _go(_app(), "steps/step_turbines.py")
    csv = b"speed_ms,power_kw\n3,0.03\n5,0.15\n8,0.62\n11,1.5\n25,1.5\n"
    key = f"curve_upload_{at.session_state['gen']}"
    at.file_uploader(key=key).upload("curve.csv", csv, "text/csv").run()
    at.button(key="curve_use").click().run()
    assert not at.exception
    t = at.session_state["valid"].turbines[0]
    assert t.curve_speed_ms == (3.0, 5.0, 8.0, 11.0, 25.0)
    assert t.curve_power_w == pytest.approx((30.0, 150.0, 620.0, 1500.0, 1500.0))  # SI prefix


def test_results_label_one_year_and_life_p90_and_turbulence_effect(demo_eval):
    """The results name a single-year P90 and a project-life P90 apart, and show what
    turbulence did to the energy (± %), from the engine's own columns."""
    at = _go(_app(), "steps/step_results.py")
    labels = [m.label for m in at.metric]
    assert any("single year" in lab for lab in labels)
    assert any(lab.startswith("P90, ") and "-year life" in lab for lab in labels)
    assert any("Turbulence effect" in lab for lab in labels)
    shown = at.table[0].value
    best = demo_eval.table.iloc[0]
    life_col = [c for c in shown.columns if c.startswith("P90, average year over")]
    assert life_col and "P90, a single year (kWh/yr)" in shown.columns
    assert float(shown["P90, a single year (kWh/yr)"].iloc[0].replace(",", "")) == \
        pytest.approx(best["p90_one_year_aep_kwh"], abs=0.5)
    assert shown["turbulence effect"].iloc[0][0] in "+−"


def test_all_rows_table_formats_every_number_and_leads_with_key_columns(demo_eval):
    """Every numeric column of the all-rows table has a display format (no raw floats); the
    position, turbine, energy, P90, cost and exclusion come first."""
    shown = results_view.display_table(demo_eval.table, "m/s", "m")
    config = results_view.display_config(demo_eval.table, "m/s", "m")
    numeric = [c for c in shown.columns if pd.api.types.is_float_dtype(shown[c])
               or pd.api.types.is_integer_dtype(shown[c])]
    assert numeric
    for c in numeric:
        assert config.get(c, ("", {}))[1].get("format"), c
    lead = ["rank", "position_id", "turbine_id", "aep_kwh", "p90_aep_kwh",
            "p90_one_year_aep_kwh", "lcoe_per_kwh", "excluded"]
    assert list(shown.columns[:8]) == [results_view.header(c, "m/s", "m") for c in lead]
    at = _go(_app(), "steps/step_results.py")
    assert list(at.dataframe[0].value.columns[:3]) == [
        results_view.header(c, "m/s", "m") for c in lead[:3]]


def test_position_detail_gives_one_minimum_mast_the_rotor_clear_one(demo_eval):
    """The detail of the best row states one shortest mast: the chain's rotor-clear figure
    for that turbine (not the lower hub-only one), and its notes hold no other mast advice."""
    at = _go(_app(), "steps/step_results.py")
    t = demo_eval.table
    # The best-ranked roof row (a roof has a turbulence zone to clear), opened in the detail.
    best = t[np.isfinite(t["mast_to_clear_turbulence_m"].astype(float))].iloc[0]
    at.selectbox(key="detail_position_w").set_value(best["position_id"]).run()
    at.selectbox(key="detail_turbine_w").set_value(best["turbine_id"]).run()
    masts = [c.value for c in at.caption if c.value.startswith("Shortest mast")]
    assert masts == ["Shortest mast that keeps the whole rotor clear of the roof's "
                     f"high-turbulence zone: {best['mast_to_clear_turbulence_m']:.1f} m"]
    notes = [shown(m.value) for m in at.markdown if m.value.startswith("- ")]
    assert notes == [f"- {f}" for f in best["flags"]]
    assert not any("puts the hub above" in n for n in notes)
