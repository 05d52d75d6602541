"""Autosave keeps every version a person could want (engine.io.autosave)."""
import json

import pytest

from engine.io import autosave
from engine.report import render as chart_render
from engine.core.errors import InputError

GOOD = {"site": {"name": "good"}, "climate": {}, "buildings": [], "positions": [],
        "turbines": []}


def _files(folder) -> list:
    return sorted(p.name for p in folder.iterdir())


def test_corrupt_autosave_set_aside_and_bak_never_rotated_over(tmp_path):
    """A corrupt autosave is moved aside under its own name; the next write keeps the .bak."""
    p = tmp_path / "working-site.json"
    autosave.write_draft(GOOD, p)
    autosave.write_draft({**GOOD, "site": {"name": "newer"}}, p)
    p.write_bytes(b"{not json")  # damaged after the last good write
    with pytest.raises(InputError) as exc:
        autosave.read_draft(p)
    msg = exc.value.problems[0][1]
    assert "set aside as working-site.json.unreadable-" in msg and ".bak" in msg
    aside = [n for n in _files(tmp_path) if ".unreadable-" in n]
    assert len(aside) == 1 and (tmp_path / aside[0]).read_bytes() == b"{not json"
    autosave.write_draft({**GOOD, "site": {"name": "next session"}}, p)
    # The good .bak from before the damage is still there, untouched by the new write.
    assert json.loads((tmp_path / "working-site.json.bak").read_text())["site"]["name"] == "good"


@pytest.mark.parametrize("data, where", [({}, "site"), ({**GOOD, "buildings": None}, "buildings"),
                                         ({k: v for k, v in GOOD.items() if k != "buildings"},
                                          "buildings"),
                                         ({**GOOD, "positions": "p1"}, "positions"),
                                         ({**GOOD, "turbines": None}, "turbines"),
                                         ({**GOOD, "positions": [1, 2]}, "positions[0]"),
                                         ([1, 2], "autosave")])
def test_misshapen_autosave_refused_with_a_message(tmp_path, data, where):
    p = tmp_path / "working-site.json"
    p.write_text(json.dumps(data))
    with pytest.raises(InputError) as exc:
        autosave.read_draft(p)
    assert f"not shaped like a working site: {where}" in exc.value.problems[0][1]
    assert not p.exists()  # set aside, never offered again


def test_offered_autosave_kept_until_declined(tmp_path):
    """An offer survives any number of the new session's autosaves, until forgotten."""
    p = tmp_path / "working-site.json"
    autosave.write_draft({**GOOD, "site": {"name": "yesterday"}}, p)
    data, _ = autosave.find_offer(p)
    assert data["site"]["name"] == "yesterday"
    for i in range(5):  # the new session edits and autosaves
        autosave.write_draft({**GOOD, "site": {"name": f"today {i}"}}, p)
    again, _ = autosave.find_offer(p)  # e.g. the tab was closed before deciding
    assert again["site"]["name"] == "yesterday"
    autosave.forget_offer(p)
    assert autosave.find_offer(p)[0]["site"]["name"] == "today 4"


def test_lone_surrogate_in_draft_is_written_as_an_escape(tmp_path):
    p = tmp_path / "working-site.json"
    autosave.write_draft({**GOOD, "site": {"name": "x\ud800"}}, p)
    assert autosave.read_draft(p)[0]["site"]["name"] == "x\ud800"


def test_renderer_crash_is_an_error_and_the_next_chart_draws():
    """vl-convert aborts its process on a control character in a label (SIGABRT); in the child
    process that is a ChartError, and the parent goes on drawing."""
    spec = {"data": {"values": [{"a": "x\x01y", "b": 1}]}, "mark": "bar",
            "encoding": {"x": {"field": "a", "type": "nominal"},
                         "y": {"field": "b", "type": "quantitative"}}}
    with pytest.raises(chart_render.ChartError, match="stopped"):
        chart_render.to_svg(spec, clean=False)
    assert "<svg" in chart_render.to_svg(spec)  # cleaned text draws
