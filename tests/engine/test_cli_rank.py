"""The result contract (engine.chain.columns) and the ``rank`` command's outputs.

The ranked table may hold only declared columns; the JSON and CSV keep the fields, order and
values the ``rank`` command wrote before the contract existed (a recorded copy of the demo's
output, ``tests/engine/data/demo_rank_recorded.json``). When a model changes the numbers on
purpose, record the output again with
``python -m engine rank demo_sites/larkspur_yard.json --format json``.
"""
from __future__ import annotations

import csv
import io
import json
import math
from contextlib import redirect_stdout
from pathlib import Path

import pytest

from engine import cli
from engine.chain import columns, pipeline
from engine.chain.documents import export_names, file_stem, ranking_csv_text
from engine.cli import rank as rank_cli
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
RECORDED = Path(__file__).with_name("data") / "demo_rank_recorded.json"

#: The ``rank`` JSON fields, in order, as the command wrote them before the contract.
RANK_JSON_FIELDS = [
    "rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", "aep_kwh",
    "capacity_factor", "flags", "kind", "mast_height_m", "gross_aep_kwh", "rated_power_kw",
    "full_load_hours", "p50_aep_kwh", "p75_aep_kwh", "p90_aep_kwh", "speed_sensitivity",
    "skew_speed_factor", "lcoe_per_kwh", "payback_years", "npv", "co2_avoided_kg_per_year",
    "thrust_rated_n", "thrust_extreme_n", "mast_base_moment_nm", "speedup",
    "turbulence_intensity", "in_recirculation_zone", "in_turbulence_zone", "in_roof_wake",
    "min_clear_mast_m", "spilled_fraction", "governing_limit", "shelter_factor",
    "spot_measured_speedup", "spot_speedup_ci_low", "spot_speedup_ci_high",
    "spot_model_speedup", "mast_to_clear_turbulence_m", "rotor_in_turbulence_zone",
    "noise_db_at_receptors", "noise_exceeds_limit", "noise_margin_db", "noise_worst_receptor",
    "excluded"]


def _out(argv) -> str:
    buf = io.StringIO()
    with redirect_stdout(buf):
        assert cli.main(argv) == 0
    return buf.getvalue()


@pytest.fixture(scope="module")
def ev():
    return pipeline.evaluate(sitefile.load(DEMO))


def test_ranked_table_declares_every_column(ev):
    """Every column of the demo's ranked table is declared in the contract."""
    assert columns.undeclared(ev.table.columns) == []


def test_undeclared_column_is_found(ev):
    """A column nobody declared is named by the check (so the test above can fail)."""
    t = ev.table.assign(wake_loss_fraction=0.0)
    assert columns.undeclared(t.columns) == ["wake_loss_fraction"]
    # ... and still written, after the declared ones, so no result is lost meanwhile.
    assert columns.csv_columns(t.columns)[-1] == "wake_loss_fraction"


def test_contract_is_well_formed():
    """Unique names, known kinds, a label and meaning each; ``*_m``/``*_ms`` carry m and m/s
    (the dashboard converts display units by that suffix)."""
    names = [c.name for c in columns.COLUMNS + columns.DERIVED]
    assert len(names) == len(set(names))
    for c in columns.COLUMNS + columns.DERIVED:
        assert c.kind in columns.KINDS and c.label and c.meaning and c.layer, c
        if c.name.endswith("_ms"):
            assert c.unit == "m/s", c
        elif c.name.endswith("_m"):
            assert c.unit == "m", c
        assert "_" not in c.label, c  # a label is words, never a field name


def test_rank_json_keeps_fields_order_and_values(ev):
    """Same fields in the same order and the same values as the recorded output."""
    doc = json.loads(_out(["rank", str(DEMO), "--format", "json"]))
    recorded = json.loads(RECORDED.read_text(encoding="utf-8"))
    assert doc["site"] == recorded["site"]
    # the fields recorded before the contract keep their names and order; later ones follow
    n = len(RANK_JSON_FIELDS)
    assert all(list(r)[:n] == RANK_JSON_FIELDS for r in doc["positions"])
    assert [list(r) for r in recorded["positions"]] == [list(r) for r in doc["positions"]]
    for got, want in zip(doc["positions"], recorded["positions"]):
        for k in RANK_JSON_FIELDS:
            g, w = got[k], want[k]
            if isinstance(w, float):
                assert g == pytest.approx(w, rel=1e-12, abs=1e-12), (want["rank"], k)
            else:
                assert g == w, (want["rank"], k)


def test_rank_csv_header_reads_the_contract(ev):
    """The CSV header is the contract's order; its rows carry the JSON's values."""
    text = _out(["rank", str(DEMO), "--format", "csv"])
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == columns.csv_columns(ev.table.columns)
    assert text == ranking_csv_text(ev.table)
    doc = json.loads(_out(["rank", str(DEMO), "--format", "json"]))
    i = rows[0].index("aep_kwh")
    assert [float(r[i]) for r in rows[1:]] == [p["aep_kwh"] for p in doc["positions"]]


def test_labels_come_from_the_contract():
    """Labels carry words and the display unit; undeclared names still get a label."""
    assert columns.column_label("mean_speed_ms") == "Mean speed at hub (m/s)"
    assert columns.column_label("mean_speed_ms", "mph", "ft") == "Mean speed at hub (mph)"
    assert columns.column_label("mast_to_clear_turbulence_m", length_unit="ft") == \
        "Mast for the rotor to clear roof zones (ft)"
    assert columns.column_label("capacity_factor", percent=True) == "Capacity factor (%)"
    assert columns.column_label("capacity_factor") == "Capacity factor"  # a fraction 0..1
    assert columns.column_label("lcoe_per_kwh", currency="EUR") == "Cost of energy (EUR per kWh)"
    assert columns.column_label("roof_gap_m") == "Roof gap (m)"


def test_rank_table_has_status_and_wrapped_notes(ev):
    """The table shows ranked/excluded with the reason, and no line runs past 160 characters."""
    text = _out(["rank", str(DEMO)])
    headline, table = text.split("\n\n", 1)  # the verdict headline leads, then the table
    assert "pays back" in headline
    lines = table.splitlines()
    assert "Status" in lines[0] and "Notes" in lines[0]
    assert max(len(line) for line in lines) <= 160
    status, notes = rank_cli.status_and_notes(ev.table, ev.assessment.ranking)
    assert len(status) == len(ev.table)
    for st, excluded in zip(status, ev.table["excluded"]):
        assert st.startswith("excluded: ") if excluded else st == "ranked"
    # every exclusion reason shows once, in the status, never again among the notes
    for st, nt in zip(status, notes):
        for n in nt:
            assert n not in st
    # the status column, read back from the wrapped lines, says the same per row
    a, b = lines[0].index("Status"), lines[0].index("Notes")
    blocks = []
    for line in lines[3:]:
        if line[:4].strip():
            blocks.append([])
        blocks[-1].append(line[a:b].strip())
    assert [" ".join(x for x in blk if x) for blk in blocks] == status


def test_format_has_help_on_every_command():
    """Every command with a --format option explains it in --help."""
    parser = cli.build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    seen = 0
    for name, p in sub.choices.items():
        for a in p._actions:
            if "--format" in a.option_strings:
                seen += 1
                assert a.help and len(a.help) > 20, name
    assert seen >= 2


def test_one_export_naming_scheme():
    """One function names every export; the stem is ASCII and safe in a file name."""
    names = export_names("Åland Wharf / North (test)")
    assert file_stem("Åland Wharf / North (test)") == "aland-wharf-north-test"
    assert names["site"].endswith(".perch.json") and names["rank_csv"].endswith("-ranking.csv")
    assert all(n.startswith("aland-wharf-north-test") for n in names.values())
    assert file_stem("") == "site" and not math.isnan(len(file_stem("x" * 200)))
    assert len(file_stem("x" * 200)) == 60


def test_dashboard_labels_read_the_contract():
    """The dashboard's results table takes its headers from the contract, in display units."""
    pytest.importorskip("streamlit")
    from dashboard import results_view
    for name in ("mean_speed_ms", "hub_height_m", "aep_kwh", "mast_to_clear_turbulence_m"):
        assert results_view.header(name, "mph", "ft") == columns.column_label(name, "mph", "ft")
    assert results_view.header("hub_height_m", "mph", "ft") == "Hub height (ft)"
