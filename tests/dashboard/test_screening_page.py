"""The district-screening page through Streamlit's AppTest: screen, shortlist, open, bad input.

Check values come from outside the page: the engine's own ``screen_local`` and
``pipeline.evaluate`` run here beside it (the page only arranges and calls), the physics bound
rated power x 8760 h (common practice), and line numbers counted in the uploaded text itself.
"""
from __future__ import annotations

import copy
import io
import json
from pathlib import Path

import pandas as pd
import pyarrow as pa
import pytest
from streamlit.testing.v1 import AppTest

from dashboard import scenario_store
from engine import screening
from engine.chain import pipeline
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
PAGE = "screening_page.py"
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
DISTRICT = ROOT / "demo_sites" / "district_1000.csv"
HOURS_PER_YEAR = 8760.0  # 365 d x 24 h
STEPS_BUT_LAYOUT = ["steps/step_site.py", "steps/step_climate.py", "steps/step_turbines.py",
                    "steps/step_results.py", "steps/step_summary.py", "steps/step_compare.py"]
#: Rows of the district for the upload tests (small: the tests stay fast).
SMALL_ROWS = 60


def _page() -> AppTest:
    """The app, moved to the screening page, with nothing screened yet."""
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    assert not at.exception, at.exception
    at.switch_page(PAGE).run()
    assert not at.exception, at.exception
    return at


def _screen(at: AppTest) -> AppTest:
    """Press the form's Screen button (widget values set before it are sent with it)."""
    at.button(key="FormSubmitter:screening_form-Screen").click().run()
    assert not at.exception, at.exception
    return at


def _upload(at: AppTest, name: str, data: bytes, mime: str = "text/csv") -> AppTest:
    at.file_uploader(key="screening_upload").upload(name, data, mime)
    return _screen(at)


def _texts(at: AppTest, kind: str) -> list:
    return [e.value for e in getattr(at, kind)]


def _metrics(at: AppTest) -> dict:
    return {m.label: m.value for m in at.metric}


def _count(text: str) -> int:
    return int(text.replace(",", ""))


def _rated_kwh(ctx) -> dict:
    """Most a turbine can make in a year: rated power all year round (common practice)."""
    return {t.id: float(t.rated_power_w) / 1000.0 * HOURS_PER_YEAR for t in ctx.turbines}


@pytest.fixture(scope="module")
def demo_ctx():
    """The engine's context for the demo assessment and all its turbines, as the page uses."""
    return screening.context_from_assessment(sitefile.load(DEMO))


@pytest.fixture(scope="module")
def engine_result(demo_ctx):
    """The engine's own screening of the demo district, run beside the page."""
    return screening.screen_local(DISTRICT, demo_ctx)


@pytest.fixture(scope="module")
def screened():
    """The page after pressing Screen on the demo district (read only in the tests)."""
    return _screen(_page())


@pytest.fixture(scope="module")
def small_district() -> pd.DataFrame:
    return pd.read_csv(DISTRICT, dtype={"id": str}, keep_default_na=False).iloc[:SMALL_ROWS]


def test_page_draws_for_the_demo_without_error():
    """The page draws for the demo: title, form, cautions; no exception, no error, no result."""
    at = _page()
    assert at.title[0].value == "District screening"
    assert not _texts(at, "error")
    assert at.session_state["valid"] == sitefile.load(DEMO)  # the demo is the working copy
    turbines = at.multiselect(key="screening_turbines")
    assert turbines.value == [t.id for t in sitefile.load(DEMO).turbines]
    md = " ".join(_texts(at, "markdown"))
    for hazard in ("Working at height", "Roof structure", "Mast loads"):  # common practice
        assert hazard in md
    assert not at.metric  # nothing screened before the button is pressed
    assert not at.get("vega_lite_chart")


def test_screen_demo_metrics_equal_the_engine(screened, engine_result):
    """Rows screened and the count per class are the engine's for the same context."""
    assert not _texts(screened, "error")
    shown = _metrics(screened)
    res = engine_result
    assert shown == {
        f"Screened, of {res.n_rows:,d} rows": f"{res.n_screened:,d}",
        **{name.capitalize(): f"{int((res.table['suitability'] == name).sum()):,d}"
           for name in screening.CLASSES}}
    assert res.n_rows == 1000 == res.n_screened  # the demo table has no bad row
    # every screened building is in exactly one class (counting)
    assert sum(_count(shown[n.capitalize()]) for n in screening.CLASSES) == res.n_screened
    bar = screened.get("progress")[0].proto
    assert bar.value == 100 and bar.text == "Done"


def test_shortlist_is_the_engine_ranking_and_within_physics(screened, engine_result, demo_ctx):
    """The shortlist's rows are the engine's ranked rows; no AEP is negative or above rated
    power x 8760 h."""
    shown = screened.dataframe[0].value
    expect = engine_result.table
    expect = expect[expect["suitability"] != "unsuitable"]  # the page's default classes
    assert len(shown) == min(len(expect), 500)
    expect = expect.head(len(shown))
    assert list(shown["id"]) == list(expect["id"])
    assert list(shown["rank"]) == list(range(1, len(shown) + 1))
    assert list(shown["rank"]) == list(expect["rank"])
    assert list(shown["best_turbine_id"]) == list(expect["best_turbine_id"])
    assert shown["best_aep_kwh"].to_numpy() == pytest.approx(expect["best_aep_kwh"].to_numpy(),
                                                              rel=1e-12)
    # ranked: within a class the net AEP never rises down the list
    for _, grp in shown.groupby("suitability", sort=False):
        assert grp["best_aep_kwh"].is_monotonic_decreasing
    # physics: 0 <= net AEP <= rated power x 8760 h of the row's turbine (common practice)
    cap = shown["best_turbine_id"].map(_rated_kwh(demo_ctx)).to_numpy()
    aep = shown["best_aep_kwh"].to_numpy()
    assert (aep >= 0).all() and (aep <= cap).all()
    cf = shown["best_capacity_factor"].to_numpy()
    assert ((cf >= 0) & (cf <= 1)).all()
    assert aep == pytest.approx(cf * cap, rel=1e-9)  # capacity factor = AEP / (P_rated x 8760 h)
    assert (shown["hub_height_m"] > shown["height_m"]).all()  # the hub stands above the roof


def test_plan_chart_is_drawn_from_the_screened_rows(screened, engine_result):
    """The plan chart's spec is there: one circle per building, coloured by class, data inline."""
    charts = screened.get("vega_lite_chart")
    assert len(charts) == 1
    proto = charts[0].proto
    spec = json.loads(proto.spec)
    assert spec["mark"]["type"] == "circle"
    enc = spec["encoding"]
    assert enc["x"]["field"] == "x_m" and enc["y"]["field"] == "y_m"
    assert enc["color"]["field"] == "suitability"
    assert enc["color"]["scale"]["domain"] == list(screening.CLASSES)
    assert "url" not in spec.get("data", {})  # offline: no data fetched from anywhere
    data = pa.ipc.open_stream(proto.datasets[0].data.data).read_all().to_pandas()
    assert len(data) == engine_result.n_screened  # 1000 rows, under the thinning limit
    assert set(data["id"]) == set(engine_result.table["id"])


def test_open_top_building_in_the_detailed_assessment(engine_result, demo_ctx):
    """The top building becomes the working assessment; the detailed chain gives its AEP."""
    at = _screen(_page())
    top = engine_result.table.iloc[0]
    assert at.selectbox(key="screening_pick").value == top["id"]  # the default pick
    before = at.session_state["draft"]
    before_text = sitefile.dumps(at.session_state["valid"])
    at.button(key="screening_open").click().run()
    assert not at.exception, at.exception
    # it asks first: nothing replaced yet
    assert any("replaces the working copy" in w for w in _texts(at, "warning"))
    assert at.session_state["draft"] == before
    at.button(key="screening_open_yes").click().run()
    assert not at.exception, at.exception
    # the old working copy is kept as a scenario, on disk as well
    keep = f"before screening building {top['id']}"
    assert at.session_state["scenarios"][keep] == before_text
    assert scenario_store.read()[0][keep] == before_text
    assert any(f"Building {top['id']} is now the working assessment" in s
               for s in _texts(at, "success"))
    # the sidebar, drawn before the page, names the new working copy too
    assert any(f"from screening: building {top['id']}" in c for c in _texts(at, "caption"))
    a = at.session_state["valid"]
    assert at.session_state[screening.SESSION_KEY] == a
    assert at.session_state["draft"] == sitefile.assessment_to_dict(a)
    assert [b.id for b in a.buildings] == [top["id"]]
    (pos,) = a.positions
    assert pos.kind == "roof" and pos.building_id == top["id"]
    assert pos.mast_height_m == pytest.approx(float(top["mast_height_m"]), rel=1e-12)
    assert (pos.x_m, pos.y_m) == (a.buildings[0].x_m, a.buildings[0].y_m)  # the roof's centre
    ev = pipeline.evaluate(a).table.set_index("turbine_id")
    best = ev.loc[top["best_turbine_id"]]
    # same engine, same inputs: equal to floating-point rounding
    assert float(best["aep_kwh"]) == pytest.approx(float(top["best_aep_kwh"]), rel=1e-9)
    assert float(best["hub_height_m"]) == pytest.approx(float(top["hub_height_m"]), rel=1e-9)
    # the best turbine is the best in the detailed run too
    assert float(best["aep_kwh"]) == pytest.approx(float(ev["aep_kwh"].max()), rel=1e-12)
    assert 0 <= float(best["aep_kwh"]) <= _rated_kwh(demo_ctx)[top["best_turbine_id"]]
    # the detailed steps draw the new working copy (the layout step: see the next test)
    for step in STEPS_BUT_LAYOUT:
        at.switch_page(step).run()
        assert not at.exception, (step, at.exception)
        assert not _texts(at, "error"), step


def test_open_can_be_cancelled():
    """Cancel leaves the working copy as it was, with no scenario added."""
    at = _screen(_page())
    before = at.session_state["draft"]
    at.button(key="screening_open").click().run()
    at.button(key="screening_open_no").click().run()
    assert not at.exception, at.exception
    assert at.session_state["draft"] == before and not at.session_state["scenarios"]
    assert not any("replaces the working copy" in w for w in _texts(at, "warning"))


def test_opened_building_draws_on_the_layout_step():
    """The opened building (no noise receptors: an empty table) draws on the buildings &
    positions step, and its receptors table can be drawn empty."""
    at = _screen(_page())
    at.button(key="screening_open").click().run()
    at.button(key="screening_open_yes").click().run()
    at.switch_page("steps/step_layout.py").run()
    assert not at.exception, at.exception
    assert not _texts(at, "error")


@pytest.mark.parametrize("column, named", [("height_m", "'height_m'"),
                                           ("x_m", "x_m and y_m")])
def test_missing_column_is_named_and_nothing_is_lost(small_district, column, named):
    """A table without a required column: an error naming it; the assessment is unchanged."""
    at = _page()
    draft = copy.deepcopy(at.session_state["draft"])
    valid = at.session_state["valid"]
    data = small_district.drop(columns=[column]).to_csv(index=False).encode()
    at = _upload(at, "buildings.csv", data)
    errs = " ".join(_texts(at, "error"))
    assert "cannot be screened" in errs and named in errs
    assert not at.metric and not at.dataframe  # no result from a table that was not screened
    assert at.session_state["draft"] == draft
    assert at.session_state["valid"] == valid
    assert at.multiselect(key="screening_turbines").value == [t.id for t in valid.turbines]


def test_bad_row_is_left_out_and_named_by_its_line(small_district, demo_ctx):
    """A negative height: that row is left out, named by its line and id; the rest screened."""
    bad = small_district.copy()
    bad_id = bad.loc[2, "id"]
    bad.loc[2, "height_m"] = -5.0
    text = bad.to_csv(index=False)
    # the line of the bad row in the file itself (line 1 is the header)
    line = 1 + next(i for i, s in enumerate(text.splitlines()) if s.startswith(bad_id + ","))
    assert line == 4
    at = _upload(_page(), "buildings.csv", text.encode())
    assert not _texts(at, "error")
    shown = _metrics(at)
    assert shown[f"Screened, of {SMALL_ROWS} rows"] == f"{SMALL_ROWS - 1}"
    assert any(e.label.startswith("1 row(s) left out") for e in at.expander)
    (where, problem), = at.table[0].value.itertuples(index=False)
    assert where == f"line {line} (id {bad_id!r})"
    assert "height_m" in problem and "-5" in problem
    short = at.dataframe[0].value
    assert bad_id not in set(short["id"])
    # the others are screened as the engine screens the same text
    res = screening.screen_local(pd.read_csv(io.StringIO(text), dtype={"id": str},
                                             keep_default_na=False), demo_ctx)
    assert res.n_screened == SMALL_ROWS - 1
    keep = res.table[res.table["suitability"] != "unsuitable"]
    assert list(short["id"]) == list(keep["id"])
    assert short["best_aep_kwh"].to_numpy() == pytest.approx(keep["best_aep_kwh"].to_numpy(),
                                                              rel=1e-12)


def test_parquet_upload_screens_like_the_csv(small_district, tmp_path):
    """The same rows as Parquet give the same metrics as the CSV."""
    path = tmp_path / "buildings.parquet"
    small_district.to_parquet(path, index=False)
    at_pq = _upload(_page(), "buildings.parquet", path.read_bytes(), "application/octet-stream")
    at_csv = _upload(_page(), "buildings.csv", small_district.to_csv(index=False).encode())
    assert not _texts(at_pq, "error")
    assert _metrics(at_pq) == _metrics(at_csv)
    assert _metrics(at_pq)[f"Screened, of {SMALL_ROWS} rows"] == f"{SMALL_ROWS}"


def test_no_turbine_chosen_says_so_and_keeps_the_form():
    """No turbine: "Choose at least one turbine."; nothing crashes; one turbine screens again."""
    at = _page()
    at.multiselect(key="screening_turbines").set_value([])
    at = _screen(at)
    assert "Choose at least one turbine." in _texts(at, "error")
    assert not at.metric
    assert at.multiselect(key="screening_turbines").value == []  # the choice is kept
    at.multiselect(key="screening_turbines").set_value(["va-1k"])
    at = _screen(at)
    assert not _texts(at, "error")
    assert set(at.dataframe[0].value["best_turbine_id"]) <= {"va-1k"}
    assert [t.id for t in at.session_state["screening_context"].turbines] == ["va-1k"]
