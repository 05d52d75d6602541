"""Results in words that do not recommend what does not pay back, the top table's reasons,
and the what-if price driving the verdict live (AppTest)."""
from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from engine.chain import pipeline, verdict
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
APP = str(ROOT / "dashboard" / "app.py")
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
TARIFF = "w|economics.tariff_per_kwh|plain|-|whatif"
ZONE = "w|ranking.require_clear_of_turbulence_zone|plain|-|whatif"
NOISE = "w|ranking.apply_noise_limits|plain|-|whatif"
WORDS = re.compile(r"\b(best|recommend\w*)\b", re.IGNORECASE)


@pytest.fixture(scope="module")
def demo_eval():
    return pipeline.evaluate(sitefile.load(DEMO))


def _results() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=90)
    at.run()
    at.switch_page("steps/step_results.py").run()
    assert not at.exception, at.exception
    return at


def _headline(at) -> str:
    bold = [m.value for m in at.markdown if m.value.startswith("**")
            and not m.value.startswith("**What if")]
    # user text in it is backslash-escaped for Markdown; the text a person reads:
    return re.sub(r"\\(.)", r"\1", bold[0][2:-2])


@pytest.mark.parametrize("page", ["steps/step_results.py", "steps/step_summary.py",
                                  "steps/step_compare.py"])
def test_no_best_or_recommended_for_a_row_that_does_not_pay(page, demo_eval):
    """The demo's leading allowed row does not pay back (the engine's verdict): no label,
    heading, caption or table header on the page calls anything best or recommended."""
    lead = demo_eval.table[~demo_eval.table["excluded"]].iloc[0]
    assert lead["verdict"] != verdict.VERDICTS[0]  # the premise: the leader does not pay
    at = AppTest.from_file(APP, default_timeout=90)
    at.run()
    at.switch_page(page).run()
    assert not at.exception, at.exception
    texts = [m.label for m in at.metric] + [m.value for m in at.markdown] + [
        s.value for s in at.subheader] + [c.value for c in at.caption]
    texts += [str(c) for t in at.table for c in t.value.columns]
    texts += [str(i) for t in at.table for i in t.value.index]
    assert not [t for t in texts if WORDS.search(str(t))]


def test_leading_metric_names_the_row_with_its_verdict(demo_eval):
    """The first metric under the headline names the leading option with the engine's
    verdict for it, e.g. "Leading option (does not pay back)"."""
    lead = demo_eval.table[~demo_eval.table["excluded"]].iloc[0]
    at = _results()
    first = at.metric[0]
    assert first.label == f"Leading option ({lead['verdict']})"
    assert first.value == lead["position_id"]


def test_top_table_is_the_engine_selection_with_each_excluded_reason(demo_eval):
    """The ranked table shows the rows engine.chain.verdict.top_rows picks, each with its
    verdict; every excluded row carries its constraint reason, word for word."""
    want = verdict.top_rows(demo_eval.table, 5)
    shown = _results().table[0].value
    assert [int(r) for r in shown.index] == list(want["rank"])
    assert list(shown["verdict"]) == list(want["verdict"])
    assert list(shown["reason"]) == list(want["verdict_reason"])
    out = want[want["verdict"] == verdict.VERDICTS[3]]
    assert len(out)  # the demo shows excluded rows (roof turbulence zone, noise)
    by_rank = demo_eval.table.set_index("rank")
    for rank, reason in shown.loc[shown["verdict"] == verdict.VERDICTS[3], "reason"].items():
        constraint = by_rank.loc[int(rank), "exclusion_reason"]
        assert constraint and reason.startswith(constraint)


def test_import_price_what_if_changes_the_verdict_live(demo_eval):
    """With the two constraints off, the demo still pays back nowhere at its own price; a high
    import price typed in the what-if turns the headline into a paying verdict, the same as
    the engine's own headline for that site file."""
    at = _results()
    at.checkbox(key=ZONE).uncheck().run()
    at.checkbox(key=NOISE).uncheck().run()
    assert not at.exception, at.exception
    assert _headline(at).startswith("None of the options pays back")
    at.number_input(key=TARIFF).set_value(1.5).run()
    assert not at.exception, at.exception
    a = demo_eval.assessment
    b = dataclasses.replace(
        a, economics=dataclasses.replace(a.economics, tariff_per_kwh=1.5),
        ranking=dataclasses.replace(a.ranking, require_clear_of_turbulence_zone=False,
                                    apply_noise_limits=False))
    want = verdict.headline_for(pipeline.evaluate(b))
    got = _headline(at)
    assert got == want
    assert not got.startswith("None of the options")
    assert verdict.VERDICTS[0] in got
    assert at.metric[0].label == "Leading option (pays back within its life)"
    # and back to the demo's price: the verdict follows again
    at.number_input(key=TARIFF).set_value(a.economics.tariff_per_kwh).run()
    assert _headline(at).startswith("None of the options pays back")


def test_rank_by_net_present_value(demo_eval):
    """'Rank by net present value' ranks the allowed rows by NPV, largest first, as the
    engine's ranking with that objective does (the same site file, one chain)."""
    at = _results()
    at.selectbox(key="w|ranking.objective|plain|-|whatif").set_value("npv").run()
    assert not at.exception, at.exception
    a = demo_eval.assessment
    b = dataclasses.replace(a, ranking=dataclasses.replace(a.ranking, objective="npv"))
    want = pipeline.evaluate(b).table
    allowed = want[~want["excluded"]]
    assert list(allowed["npv"]) == sorted(allowed["npv"], reverse=True)
    assert _headline(at) == verdict.headline_for(pipeline.evaluate(b))
