"""Older site-file layouts load with a note; nothing the user entered is lost."""
from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

from engine.io import migrate
from engine.io import sitefile
from engine.core.errors import InputError
from engine.core.model import FORMAT_VERSION

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


def _as_format_0(current: dict, explicit: bool = True) -> dict:
    """Write a current-format dict back in the format-0 layout (see engine/migrate.py)."""
    old = copy.deepcopy(current)
    heights = {b["id"]: b["height_m"] for b in old["buildings"]}
    for pos in old["positions"]:
        base = heights[pos["building_id"]] if pos["kind"] == "roof" else 0.0
        pos["hub_height_m"] = base + pos.pop("mast_height_m")
    for t in old["turbines"]:
        t["power_curve"] = [[v, p] for v, p in zip(t.pop("curve_speed_ms"), t.pop("curve_power_w"))]
    if explicit:
        old["format_version"] = 0
    else:
        del old["format_version"]
    return old


@pytest.fixture()
def demo_dict():
    return json.loads(DEMO.read_text(encoding="utf-8"))


@pytest.mark.parametrize("explicit", [True, False])
def test_format_0_file_migrates_to_the_same_assessment(demo_dict, explicit):
    """A format-0 file (hub height above ground, curve pairs) loads equal to its current form."""
    old_text = json.dumps(_as_format_0(demo_dict, explicit))
    got, notes = sitefile.loads_with_notes(old_text)
    want = sitefile.assessment_from_dict(demo_dict)
    # Equality up to float rounding of hub - roof height (IEEE 754 double, common practice).
    for g, w in zip(got.positions, want.positions):
        assert g.mast_height_m == pytest.approx(w.mast_height_m, abs=1e-9)
    assert got.turbines == want.turbines
    assert got.buildings == want.buildings and got.climate == want.climate
    assert got.format_version == FORMAT_VERSION
    assert any("format_version 0" in n for n in notes)
    # One note per converted position and turbine, each naming the field it changed.
    assert sum("hub_height_m" in n for n in notes) == len(demo_dict["positions"])
    assert sum("power_curve" in n for n in notes) == len(demo_dict["turbines"])


def test_roof_note_gives_the_arithmetic(demo_dict):
    """The note for a roof position states hub above ground, roof height and the mast height."""
    old = _as_format_0(demo_dict)
    i = next(i for i, p in enumerate(old["positions"]) if p["kind"] == "roof")
    b = next(b for b in old["buildings"] if b["id"] == old["positions"][i]["building_id"])
    old["positions"][i]["hub_height_m"] = b["height_m"] + 4.0
    m = migrate.migrate(old)
    # Hub height = base height + mast height (definition in engine/model.py, Position).
    assert m.data["positions"][i]["mast_height_m"] == pytest.approx(4.0)
    note = next(n for n in m.notes if n.startswith(f"positions[{i}]"))
    assert f"{b['height_m'] + 4.0:g} m above ground" in note and "mast_height_m 4 m" in note


def test_current_file_has_no_notes(demo_dict):
    """A current file, with or without the format_version key, loads with no notes."""
    _, notes = sitefile.loads_with_notes(json.dumps(demo_dict))
    assert notes == []
    del demo_dict["format_version"]
    _, notes = sitefile.loads_with_notes(json.dumps(demo_dict))
    assert notes == []


def test_migration_leaves_the_input_untouched(demo_dict):
    """migrate() works on a copy: the caller's dict is unchanged."""
    old = _as_format_0(demo_dict)
    before = copy.deepcopy(old)
    migrate.migrate(old)
    assert old == before


def test_newer_version_is_refused_clearly(demo_dict):
    """A file from a newer format says so once, naming format_version and the fix."""
    demo_dict["format_version"] = FORMAT_VERSION + 1
    with pytest.raises(InputError) as e:
        sitefile.loads(json.dumps(demo_dict))
    assert e.value.problems == [("format_version", e.value.problems[0][1])]
    assert "newer" in e.value.problems[0][1]


@pytest.mark.parametrize("value", ["1", 1.5, True, -1, None])
def test_bad_format_version_reported(demo_dict, value):
    """A format_version that is not a known whole number gives one InputError naming it."""
    demo_dict["format_version"] = value
    with pytest.raises(InputError) as e:
        sitefile.loads(json.dumps(demo_dict))
    assert [w for w, _ in e.value.problems] == ["format_version"]


def test_unconvertible_values_reported_with_the_rest(demo_dict):
    """Migration problems and validation problems come together, each named once."""
    old = _as_format_0(demo_dict)
    roof = next(i for i, p in enumerate(old["positions"]) if p["kind"] == "roof")
    old["positions"][roof]["hub_height_m"] = 1.0           # below the roof
    old["turbines"][0]["power_curve"][2] = [3.0]           # not a pair
    old["site"]["altitude_m"] = 99999.0                     # a plain validation problem
    with pytest.raises(InputError) as e:
        sitefile.loads(json.dumps(old))
    where = [w for w, _ in e.value.problems]
    assert f"positions[{roof}].hub_height_m" in where
    assert "turbines[0].power_curve" in where
    assert "site.altitude_m" in where
    # The fields a failed conversion would have written are not reported a second time.
    assert f"positions[{roof}].mast_height_m" not in where
    assert "turbines[0].curve_speed_ms" not in where
    assert len(where) == len(set(where))


def test_both_layouts_in_one_position_refused(demo_dict):
    """A position with both hub_height_m and mast_height_m is refused, naming the old field."""
    demo_dict["format_version"] = 0
    demo_dict["positions"][0]["hub_height_m"] = 20.0
    with pytest.raises(InputError) as e:
        sitefile.loads(json.dumps(demo_dict))
    assert ("positions[0].hub_height_m" in [w for w, _ in e.value.problems])


def test_load_with_notes_from_disk(tmp_path, demo_dict):
    """load_with_notes reads a file and saving it writes the current layout."""
    path = tmp_path / "old.json"
    path.write_text(json.dumps(_as_format_0(demo_dict)), encoding="utf-8")
    a, notes = sitefile.load_with_notes(path)
    assert notes
    sitefile.save(a, path)
    assert json.loads(path.read_text(encoding="utf-8"))["format_version"] == FORMAT_VERSION
    assert json.loads((tmp_path / "old.json.bak").read_text(encoding="utf-8"))["format_version"] == 0
    assert sitefile.load_with_notes(path)[1] == []
