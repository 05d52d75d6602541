"""User text holding Markdown or HTML shows as its characters on the screening and Compare pages.

A building id, a site name or a scenario name such as ``![x](http://127.0.0.1:9/x.png)`` must
reach Streamlit's Markdown with every punctuation character escaped (CommonMark §2.4:
a backslash before ASCII punctuation makes it a literal character), so it shows as typed and
the browser fetches nothing. Each check reads the raw Markdown the page sends: the hostile text
must not be there as written, and with the escapes removed (what a person reads) it must be.
"""
from __future__ import annotations

import re
from pathlib import Path

import pandas as pd
from streamlit.testing.v1 import AppTest

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DISTRICT = ROOT / "demo_sites" / "district_1000.csv"

#: An image link and an HTML tag: as Markdown they would fetch a picture and make bold text.
HOSTILE = "![x](http://127.0.0.1:9/x.png) <b>B</b>"


def _shown(markdown: str) -> str:
    """What a person reads: CommonMark backslash escapes and zero-width spaces removed."""
    return re.sub(r"\\(.)", r"\1", markdown).replace("\u200b", "")


def _check_inert(values, text: str) -> int:
    """Every element quoting ``text`` quotes it escaped; returns how many quote it."""
    quoting = [v for v in values if text in _shown(v)]
    for v in quoting:
        assert text not in v, f"unescaped user text in {v!r}"
        assert "](" not in v.replace("\\]\\(", ""), v
    return len(quoting)


def _app() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=90)
    at.run()
    assert not at.exception, at.exception
    return at


def _set_site_name(at: AppTest, name: str) -> None:
    at.switch_page("steps/step_site.py").run()
    at.text_input(key="w|site.name|plain|-").set_value(name).run()
    assert not at.exception, at.exception
    assert at.session_state["valid"].site.name == name


def test_building_id_and_site_name_show_as_text_on_the_screening_page():
    at = _app()
    _set_site_name(at, "Yard " + HOSTILE)
    at.switch_page("screening_page.py").run()
    assert _check_inert([c.value for c in at.caption], "Yard " + HOSTILE) >= 1

    table = pd.read_csv(DISTRICT, dtype={"id": str}, keep_default_na=False).iloc[:40]
    table.loc[0, "id"] = HOSTILE
    at.file_uploader(key="screening_upload").upload("b.csv", table.to_csv(index=False).encode(),
                                                    "text/csv")
    at.button(key="FormSubmitter:screening_form-Screen").click().run()
    assert not at.exception, at.exception
    ids = at.session_state["screening_result"].table["id"].tolist()
    assert HOSTILE in ids  # screened under its own id, nothing dropped
    at.selectbox(key="screening_pick").set_value(HOSTILE).run()
    at.button(key="screening_open").click().run()
    assert not at.exception, at.exception
    # The warning quotes the id, the site name and the scenario name made from the id.
    assert _check_inert([w.value for w in at.warning], HOSTILE) >= 1
    assert _check_inert([w.value for w in at.warning], "Yard " + HOSTILE) >= 1
    label = at.button(key="screening_open_yes").label
    assert HOSTILE not in label and _shown(label).endswith(f"and open {HOSTILE}")
    at.button(key="screening_open_yes").click().run()
    assert not at.exception, at.exception
    assert _check_inert([s.value for s in at.success], HOSTILE) >= 1
    # The scenario keeps the name as typed; only its display is escaped.
    assert f"before screening building {HOSTILE}" in at.session_state["scenarios"]


def test_site_and_scenario_names_show_as_text_on_compare():
    at = _app()
    _set_site_name(at, "First " + HOSTILE)
    at.switch_page("steps/step_results.py").run()
    assert not at.exception, at.exception
    at.text_input(key="scenario_name").input("what " + HOSTILE).run()
    at.button(key="save_scenario").click().run()
    assert "what " + HOSTILE in at.session_state["scenarios"]
    _set_site_name(at, "Second <img src=x onerror=alert(1)>")
    at.switch_page("steps/step_compare.py").run()
    assert not at.exception, at.exception
    warnings = [w.value for w in at.warning]
    # Two sites: the warning names both, each escaped.
    assert _check_inert(warnings, "First " + HOSTILE) >= 1
    assert _check_inert(warnings, "Second <img src=x onerror=alert(1)>") >= 1
    # The caption names the first column, the scenario.
    assert _check_inert([c.value for c in at.caption], "what " + HOSTILE) >= 1
