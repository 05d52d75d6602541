"""Session state: the working copy of the assessment, its validation and the saved what-ifs.

The working copy (``draft``) is a site-file dict: exactly what a site file holds, in SI, and
it may be invalid while someone is typing. Every widget writes into it, so nothing typed is
lost on a rerun, an error or a page change. ``valid`` is the last
:class:`~engine.core.model.Assessment` built from it without problems; the results always come
from that one, and a step whose inputs have problems says so.
"""
from __future__ import annotations

import copy
import json

import streamlit as st

from engine.io import autosave
from engine.io import sitefile
from engine.core import units
from engine.core.errors import InputError

from . import cache

#: (key, title, where-prefixes of the site file the step edits)
STEPS = (
    ("site", "Site", ("site",)),
    ("climate", "Wind climate", ("climate",)),
    ("layout", "Buildings & positions", ("buildings", "positions", "receptors",
                                         "spot_readings")),
    ("turbines", "Turbines & costs", ("turbines", "losses", "economics", "uncertainty")),
    ("results", "Results", ("ranking", "format_version")),
    ("summary", "Summary", ()),
)

#: Widget keys: ``w|<path>|<kind>|<unit>[|<scope>]`` where kind is speed, length or plain.
WIDGET_PREFIX = "w|"


def init() -> None:
    """Set up the session once: the built-in demo site, SI-metric units, no scenarios."""
    ss = st.session_state
    if "draft" in ss:
        return
    text = cache.demo_text()
    ss["draft"] = json.loads(text)
    ss["valid"] = sitefile.loads(text)
    ss["problems"] = []
    ss["local_problems"] = {}
    ss["speed_unit"] = "m/s"
    ss["length_unit"] = "m"
    ss["scenarios"] = {}
    ss["presentation"] = False
    ss["gen"] = 0
    ss["climate_mode"] = "demo"
    ss["loaded_from"] = "built-in demo site"
    ss["notes"] = []
    # An autosave from an earlier session is offered, not applied; it is kept aside (its own
    # file) until it is restored or declined, whatever this session autosaves meanwhile.
    ss["autosaved_text"] = autosave.draft_text(ss["draft"])
    ss["autosave_error"] = ""
    try:
        found = autosave.find_offer()
    except InputError as e:
        found = None
        ss["autosave_error"] = e.problems[0][1]
    if found is not None and autosave.draft_text(found[0]) != ss["autosaved_text"]:
        ss["autosave_found"] = found
    elif found is not None:
        autosave.forget_offer()  # the same as the demo: nothing to offer


def units_now() -> tuple[str, str]:
    """(speed unit, length unit) chosen for display and entry."""
    return st.session_state["speed_unit"], st.session_state["length_unit"]


def unit_of(kind: str) -> str:
    s, L = units_now()
    return {"speed": s, "length": L}.get(kind, "-")


def to_display(value, kind: str):
    if value is None or kind not in ("speed", "length"):
        return value
    s, L = units_now()
    return units.speed_from_si(value, s) if kind == "speed" else units.length_from_si(value, L)


def to_si(value, kind: str):
    if value is None or kind not in ("speed", "length"):
        return value
    s, L = units_now()
    return units.speed_to_si(value, s) if kind == "speed" else units.length_to_si(value, L)


# ---------------------------------------------------------------- paths into the draft

def _split(path: str) -> list:
    return [int(p) if p.isdigit() else p for p in path.split(".")]


def get_path(path: str, default=None):
    node = st.session_state["draft"]
    try:
        for part in _split(path):
            node = node[part]
    except (KeyError, IndexError, TypeError):
        return default
    return node


def set_path(path: str, value) -> None:
    parts = _split(path)
    node = st.session_state["draft"]
    try:
        for part in parts[:-1]:
            node = node[part]
        node[parts[-1]] = value
    except (KeyError, IndexError, TypeError):
        pass  # the row went away (deleted in a table): nothing to write


def engine_where(path: str) -> str:
    """Site-file path in the engine's notation: ``positions.2.x_m`` -> ``positions[2].x_m``."""
    out = ""
    for part in _split(path):
        out += f"[{part}]" if isinstance(part, int) else (f".{part}" if out else part)
    return out


# ---------------------------------------------------------------- sync and validation

def sync_widgets() -> None:
    """Copy every live widget value into the draft (SI), before anything is drawn.

    Widgets keyed for another unit than the current one are stale (the unit just changed)
    and are skipped: their replacements start from the draft.
    """
    ss = st.session_state
    for key in list(ss.keys()):
        if not isinstance(key, str) or not key.startswith(WIDGET_PREFIX):
            continue
        parts = key.split("|")
        if len(parts) not in (4, 5):
            continue
        path, kind, unit = parts[1:4]
        if kind in ("speed", "length") and unit != unit_of(kind):
            continue
        set_path(path, to_si(ss[key], kind))


def validate() -> None:
    """Rebuild the assessment from the draft; keep the last valid one when there are problems."""
    ss = st.session_state
    try:
        ss["valid"] = sitefile.assessment_from_dict(ss["draft"])
        ss["problems"] = []
    except InputError as e:
        ss["problems"] = list(e.problems)
    _autosave()


def _autosave() -> None:
    """Write the working copy to the autosave file when it has changed since the last write."""
    ss = st.session_state
    text = autosave.draft_text(ss["draft"])
    if text == ss.get("autosaved_text"):
        return
    try:
        autosave.write_draft(ss["draft"])
        ss["autosaved_text"] = text
        ss["autosave_error"] = ""
    except OSError as e:
        ss["autosave_error"] = f"autosave failed ({e.strerror}); save the site file by hand"
    except (TypeError, ValueError) as e:  # a value JSON cannot hold; the session goes on
        ss["autosave_error"] = (f"autosave failed ({e.__class__.__name__}); save the site "
                                "file by hand")


def restore_autosave() -> None:
    """Make the autosaved working copy from an earlier session the working copy."""
    ss = st.session_state
    data, saved_at = ss.pop("autosave_found")
    replace_draft(data, f"autosave of {saved_at:%Y-%m-%d %H:%M} UTC")
    if _autosave_written():
        autosave.forget_offer()  # it is the working copy now, and autosaved as such


def _autosave_written() -> bool:
    return not st.session_state.get("autosave_error")


def dismiss_autosave() -> None:
    """Decline the offered autosave: it is removed (the session's own autosave goes on)."""
    st.session_state.pop("autosave_found", None)
    autosave.forget_offer()


def set_local_problems(step: str, problems: list) -> None:
    """Problems found by a page before the engine sees the input (unreadable table cells)."""
    st.session_state["local_problems"][step] = list(problems)


def step_of(where: str) -> str:
    head = where.split(".")[0].split("[")[0]
    for key, _, prefixes in STEPS:
        if head in prefixes:
            return key
    return "site"


def step_problems(step: str) -> list:
    ss = st.session_state
    own = [(w, m) for w, m in ss["problems"] if step_of(w) == step]
    return own + list(ss["local_problems"].get(step, []))


def problems_at(where: str) -> list:
    """Messages for one field, in engine notation (``site.altitude_m``)."""
    return [m for w, m in st.session_state["problems"] if w == where]


def complete(step: str) -> bool:
    if step == "summary":
        return not any(step_problems(k) for k, _, _ in STEPS)
    return not step_problems(step)


def any_problems() -> bool:
    ss = st.session_state
    return bool(ss["problems"]) or any(ss["local_problems"].values())


# ---------------------------------------------------------------- replacing the whole draft

def clear_widgets() -> None:
    """Forget every widget's value so widgets start again from the draft."""
    ss = st.session_state
    for key in list(ss.keys()):
        if isinstance(key, str) and (key.startswith(WIDGET_PREFIX) or key.startswith("ed|")
                                     or key.startswith("base|")):
            del ss[key]
    ss["gen"] += 1
    ss["local_problems"] = {}


def replace_draft(data: dict, loaded_from: str, notes=()) -> None:
    """Make ``data`` (a site-file dict) the working copy; validate it."""
    ss = st.session_state
    ss["draft"] = copy.deepcopy(data)
    ss["loaded_from"] = loaded_from
    ss["notes"] = list(notes)
    for k in ("climate_mode_w", "climate_mode_shown", "climate_memory", "record_result"):
        ss.pop(k, None)
    clear_widgets()
    validate()


def draft_text() -> str:
    """Site-file text of the last valid assessment."""
    return sitefile.dumps(st.session_state["valid"])


def evaluation():
    """Evaluation of the last valid assessment (cached on its site-file text)."""
    return cache.evaluate_text(draft_text())


# ---------------------------------------------------------------- what-if scenarios

def save_scenario(name: str) -> str:
    """Save the last valid assessment under ``name``; returns the name used."""
    name = name.strip() or f"Scenario {len(st.session_state['scenarios']) + 1}"
    st.session_state["scenarios"][name] = draft_text()
    return name


def restore_scenario(name: str) -> None:
    text = st.session_state["scenarios"][name]
    replace_draft(json.loads(text), f"scenario {name!r}")


def delete_scenario(name: str) -> None:
    st.session_state["scenarios"].pop(name, None)
