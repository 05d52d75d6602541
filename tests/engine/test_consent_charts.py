"""Neighbour tables and charts on the demo site: shapes, physical bounds, chart specs."""
import numpy as np
import pytest

from engine.chain import neighbours, pipeline
from engine.io import sitefile
from engine.report import consent_charts
from pathlib import Path

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def ev():
    return pipeline.evaluate(sitefile.load(DEMO))


def test_noise_table_bounds(ev):
    """Hours per bin are non-negative and sum to at most a year; the criterion is at least the
    receptor's fixed limit; margin = criterion - level."""
    tab = neighbours.noise_speed_table(ev, "mill-centre", "ha-1k5")
    assert len(tab) == len(ev.assessment.receptors) * 12
    assert (tab["hours"] >= 0).all() and tab.groupby("receptor_id")["hours"].sum().max() <= 8760
    ok = tab["turbine_db"].notna()
    assert np.allclose(tab.loc[ok, "margin_db"], tab.loc[ok, "limit_db"] - tab.loc[ok, "turbine_db"])


def test_table_columns_match_ranked_table(ev):
    """The ranked table's worst margin is the smallest margin of the per-speed table."""
    tab = neighbours.noise_speed_table(ev, "mill-centre", "ha-1k5")
    row = ev.table[(ev.table.position_id == "mill-centre") & (ev.table.turbine_id == "ha-1k5")]
    assert row["noise_margin_db"].iloc[0] == pytest.approx(tab["margin_db"].min())


def test_rule_table_and_charts(ev):
    """Every chosen rule has a result; the charts build as Vega-Lite specs."""
    rt = neighbours.rule_table(ev, "yard-mast", "ha-1k5")
    assert len(rt) == len(ev.assessment.consent.rules) and rt["result"].str.len().min() > 0
    assert consent_charts.noise_by_speed_chart(ev, "mill-centre", "ha-1k5").to_dict()
    spec = consent_charts.flicker_calendar_chart(ev, "mill-centre", "ha-1k5").to_dict()
    assert "facet" in spec
