"""Site file: exact round trip, schema from the model, and every kind of defect reported at once."""
import copy
import json
from pathlib import Path

import pytest

from engine.core import model
from engine.io import sitefile
from engine.core.errors import InputError

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture()
def demo_dict():
    return json.loads(DEMO.read_text(encoding="utf-8"))


def test_demo_round_trip_is_byte_exact():
    """Loading then saving the demo site file reproduces its bytes exactly."""
    text = DEMO.read_text(encoding="utf-8")
    assert sitefile.dumps(sitefile.loads(text)) == text


def test_save_then_load_equals(tmp_path):
    """An assessment saved and loaded again compares equal (dataclass equality)."""
    a = sitefile.load(DEMO)
    out = sitefile.save(a, tmp_path / "copy.json")
    assert sitefile.load(out) == a
    assert sitefile.content_hash(sitefile.load(out)) == sitefile.content_hash(a)


@pytest.mark.parametrize("mast_m, price", [(8.3, 0.271), (3.1, 0.1 + 0.2), (12.7, 1 / 3)])
def test_round_trip_of_a_changed_working_copy_is_equal(demo_dict, mast_m, price):
    """A working copy changed by what-ifs, read from its dict and then from its own text,
    gives equal assessments (the dashboard evaluates the text with the assessment it was
    written from); floats keep every bit (JSON's shortest repr, Python's float parsing)."""
    demo_dict["positions"][0]["mast_height_m"] = mast_m
    demo_dict["economics"]["tariff_per_kwh"] = price
    a = sitefile.assessment_from_dict(demo_dict)
    b = sitefile.loads(sitefile.dumps(a))
    assert b == a
    assert b.positions[0].mast_height_m == mast_m and b.economics.tariff_per_kwh == price


def test_save_keeps_previous_version(tmp_path):
    """Saving over a file keeps the previous one as .bak."""
    a = sitefile.load(DEMO)
    p = tmp_path / "s.json"
    sitefile.save(a, p)
    b = sitefile.loads(sitefile.dumps(a).replace("Larkspur Yard", "Renamed"))
    sitefile.save(b, p)
    assert "Renamed" in p.read_text(encoding="utf-8")
    assert "Larkspur Yard" in (tmp_path / "s.json.bak").read_text(encoding="utf-8")


def test_schema_lists_every_model_field():
    """The JSON Schema is generated from the model: every dataclass field appears."""
    schema = sitefile.json_schema()
    assert set(schema["properties"]) == {f for f in model.Assessment.__dataclass_fields__}
    turbine = schema["$defs"]["Turbine"]
    assert set(turbine["properties"]) == set(model.Turbine.__dataclass_fields__)
    assert "rated_power_w" in turbine["required"]
    assert turbine["additionalProperties"] is False


def test_all_defects_reported_together(demo_dict):
    """Unknown key, wrong type, missing field and out-of-range value come in one error."""
    d = copy.deepcopy(demo_dict)
    d["site"]["altitude_ft"] = 100            # unknown key
    d["buildings"][0]["height_m"] = "tall"    # wrong type
    del d["turbines"][0]["rated_power_w"]     # missing field
    d["positions"][1]["mast_height_m"] = -3   # out of range
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    where = [w for w, _ in exc.value.problems]
    assert "site.altitude_ft" in where
    assert "buildings[0].height_m" in where
    assert "turbines[0].rated_power_w" in where
    assert "positions[1].mast_height_m" in where
    msg = dict(exc.value.problems)["positions[1].mast_height_m"]
    assert ">= 0.5" in msg and "-3" in msg


def test_cross_references_checked(demo_dict):
    """A roof position on a building that does not exist is named."""
    d = copy.deepcopy(demo_dict)
    d["positions"][0]["building_id"] = "ghost"
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    assert any("ghost" in m for _, m in exc.value.problems)


@pytest.mark.parametrize("raw, where_part", [
    (b"", "line 1"),
    (b"{not json", "line 1"),
    (b"\xff\xfe\x00\x01binary", "file"),
    (b"[1, 2, 3]", "file"),
])
def test_broken_files_give_input_error(raw, where_part):
    """Empty, malformed, binary and wrong-shaped files raise InputError, never a traceback."""
    with pytest.raises(InputError) as exc:
        sitefile.loads(raw)
    assert any(where_part in w for w, _ in exc.value.problems)


def test_betz_violation_in_power_curve(demo_dict):
    """A curve above 16/27 of the wind's power for its swept area is refused (actuator-disc theory)."""
    d = copy.deepcopy(demo_dict)
    t = d["turbines"][0]
    t["curve_power_w"] = [p * 3 for p in t["curve_power_w"]]
    t["rated_power_w"] = max(t["curve_power_w"])
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    assert any("Betz" in m for _, m in exc.value.problems)


def test_cut_in_rated_cut_out_order(demo_dict):
    """cut-in < rated < cut-out is enforced with the values in the message."""
    d = copy.deepcopy(demo_dict)
    d["turbines"][1]["cut_in_ms"] = 30.0
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    assert any("cut-in < rated < cut-out" in m for _, m in exc.value.problems)


@pytest.mark.parametrize("path, value, what", [
    (("positions", 0, "id"), "mill\x00centre", "U+0000"),
    (("buildings", 0, "id"), "block\x1f", "U+001F"),
    (("turbines", 0, "name"), "T\ufffe", "U+FFFE"),
    (("site", "name"), "Yard \ud800", "U+D800"),
    (("positions", 0, "gap_buildings"), ["a\x07"], "U+0007"),
])
def test_text_fields_refuse_controls_surrogates_and_noncharacters(demo_dict, path, value, what):
    """Every text field is checked on the way in, naming the field (Unicode 15 §23.7 for the
    non-characters; C0 controls per ISO/IEC 6429)."""
    d = copy.deepcopy(demo_dict)
    node = d
    for part in path[:-1]:
        node = node[part]
    node[path[-1]] = value
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    where = ".".join(str(p) if isinstance(p, str) else f"[{p}]" for p in path).replace(".[", "[")
    assert any(w.startswith(where) and what in m for w, m in exc.value.problems), \
        exc.value.problems


def test_notes_keep_line_breaks(demo_dict):
    d = copy.deepcopy(demo_dict)
    d["site"]["notes"] = "first line\nsecond line\r\n\tindented"
    assert sitefile.assessment_from_dict(d).site.notes.startswith("first line\n")


def test_long_id_refused_at_once(demo_dict):
    """A 100,000-character id is refused by the length limit (the summary took 115 s)."""
    import time
    d = copy.deepcopy(demo_dict)
    d["positions"][0]["id"] = "p" * 100_000
    t0 = time.perf_counter()
    with pytest.raises(InputError) as exc:
        sitefile.assessment_from_dict(d)
    assert time.perf_counter() - t0 < 1.0
    assert any(w == "positions[0].id" and "at most 200 characters" in m
               for w, m in exc.value.problems)


def test_schema_states_the_text_limits():
    s = sitefile.json_schema()
    assert s["$defs"]["Position"]["properties"]["id"]["maxLength"] == 200
    assert s["$defs"]["Site"]["properties"]["notes"]["maxLength"] == 10_000
    assert s["$defs"]["Position"]["properties"]["gap_buildings"]["items"]["maxLength"] == 200


def test_a_deleted_building_or_position_is_named_with_the_fix(demo_dict):
    """A roof position on a deleted building, a spot reading of a deleted position: each
    message names what is missing and how to mend it."""
    d = copy.deepcopy(demo_dict)
    mill = d["buildings"][0]["id"]
    d["buildings"] = d["buildings"][1:]
    spot = d["spot_readings"][0]["position_id"]
    d["positions"] = [p for p in d["positions"] if p["id"] != spot]
    with pytest.raises(InputError) as e:
        sitefile.assessment_from_dict(d)
    roofs = [m for w, m in e.value.problems if w.endswith(".building_id")]
    spots = [m for w, m in e.value.problems if w.startswith("spot_readings")]
    assert roofs and spots, e.value.problems
    assert all(f"names building {mill!r}" in m and "choose one of the site's buildings or "
               "delete the position" in m for m in roofs), roofs
    assert all("choose one of the positions or delete the reading" in m for m in spots), spots
