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

from . import cache, scenario_store

#: (key, title, where-prefixes of the site file the step edits)
STEPS = (
    ("site", "Site", ("site",)),
    ("climate", "Wind climate", ("climate",)),
    ("layout", "Buildings & positions", ("buildings", "positions", "receptors",
                                         "spot_readings", "consent")),
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
    ss["validated_text"] = ss["autosaved_text"]  # ``valid`` was built from this very text
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
    _find_saved_scenarios()


def _find_saved_scenarios() -> None:
    """Scenarios saved in an earlier session are offered with the working copy."""
    ss = st.session_state
    try:
        found = scenario_store.read()
    except InputError as e:
        ss["autosave_error"] = e.problems[0][1]
        return
    if found is None:
        return
    scenarios, saved_at, problems = found
    if problems:
        ss["autosave_error"] = "; ".join(f"{w}: {m}" for w, m in problems)
    if scenarios:
        ss["autosave_found_scenarios"] = (scenarios, saved_at)


def earlier_work() -> str:
    """What an earlier session left to restore, in words ('' when nothing)."""
    ss = st.session_state
    draft, scen = ss.get("autosave_found"), ss.get("autosave_found_scenarios")
    parts, times = [], []
    if draft:
        parts.append("the working copy")
        times.append(draft[1])
    if scen:
        parts.append(f"{len(scen[0])} saved scenario(s)")
        times.append(scen[1])
    if not parts:
        return ""
    return f"{' and '.join(parts).capitalize()} from an earlier session (autosaved " \
           f"{max(times):%Y-%m-%d %H:%M} UTC)."


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
    """Rebuild the assessment from the draft; keep the last valid one when there are problems.

    The draft's text is compared first: a run that changed nothing (most reruns) skips the
    rebuild and the autosave.
    """
    ss = st.session_state
    text = autosave.draft_text(ss["draft"])
    if text == ss.get("validated_text"):
        return
    try:
        ss["valid"] = sitefile.assessment_from_dict(ss["draft"])
        ss["problems"] = []
    except InputError as e:
        ss["problems"] = list(e.problems)
    ss["validated_text"] = text


def flush_autosave() -> None:
    """Write the working copy to the autosave file when it has changed since the last write.

    Called at the end of a run, after the page is drawn, so the write (with its fsync) is not
    between a change and its result; a run cut short by a rerun leaves it to the next one.
    """
    ss = st.session_state
    text = ss.get("validated_text")
    if text is None or text == ss.get("autosaved_text"):
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
    """Make the earlier session's working copy and scenarios the current ones."""
    ss = st.session_state
    found = ss.pop("autosave_found", None)
    scen = ss.pop("autosave_found_scenarios", None)
    if scen is not None:
        ss["scenarios"] = {**scen[0], **ss["scenarios"]}
    if found is not None:
        data, saved_at = found
        replace_draft(data, f"autosave of {saved_at:%Y-%m-%d %H:%M} UTC")
        if _autosave_written():
            autosave.forget_offer()  # it is the working copy now, and autosaved as such


def _autosave_written() -> bool:
    return not st.session_state.get("autosave_error")


def dismiss_autosave() -> None:
    """Decline the offered autosave: it is removed (the session's own autosave goes on)."""
    st.session_state.pop("autosave_found", None)
    st.session_state.pop("autosave_found_scenarios", None)
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


def steps_needing_attention() -> list:
    """(key, title) of the input steps with problems; the summary is not a step of its own."""
    return [(k, t) for k, t, _ in STEPS if k != "summary" and not complete(k)]


def status_signature() -> tuple:
    """Everything the status marks and banners are drawn from, to notice a change."""
    ss = st.session_state
    return (tuple(map(tuple, ss["problems"])),
            tuple((k, tuple(map(tuple, v))) for k, v in sorted(ss["local_problems"].items())))


def any_problems() -> bool:
    ss = st.session_state
    return bool(ss["problems"]) or any(ss["local_problems"].values())


# ---------------------------------------------------------------- renames

def renamed_ids(before: list, after: list) -> dict:
    """``{old id: new id}`` for rows of a table renamed in one edit (same row, new id).

    Only a table that kept its number of rows is read this way; an id that still names
    another row, or a new id that already named a row, is not a rename.
    """
    if len(before) != len(after):
        return {}
    old_ids = {str(r.get("id")) for r in before if isinstance(r, dict)}
    new_ids = {str(r.get("id")) for r in after if isinstance(r, dict)}
    out = {}
    for b, a in zip(before, after):
        old, new = str(b.get("id") or ""), str(a.get("id") or "")
        if old and new and old != new and old not in new_ids and new not in old_ids:
            out[old] = new
    return out


def carry_renames(draft: dict, positions: dict, buildings: dict, climates=()) -> bool:
    """Make the rows that name a renamed position or building name it by its new id.

    Spot readings and a climate measured at a position name positions; roof and gap
    positions name buildings; ``climates`` are other climates kept for the session (the
    climate step's other ways). Returns True when anything changed.
    """
    changed = False
    for clim in (draft.get("climate"), *climates):
        if isinstance(clim, dict) and clim.get("position_id") in positions:
            clim["position_id"] = positions[clim["position_id"]]
            changed = True
    for r in draft.get("spot_readings", []) or []:
        if isinstance(r, dict) and r.get("position_id") in positions:
            r["position_id"] = positions[r["position_id"]]
            changed = True
    for p in draft.get("positions", []) or []:
        if not isinstance(p, dict):
            continue
        if p.get("building_id") in buildings:
            p["building_id"] = buildings[p["building_id"]]
            changed = True
        gap = p.get("gap_buildings") or []
        if any(g in buildings for g in gap):
            p["gap_buildings"] = [buildings.get(g, g) for g in gap]
            changed = True
    return changed


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
    """Site-file text of the last valid assessment (written once per assessment)."""
    ss = st.session_state
    memo = ss.get("valid_text")
    if memo is None or memo[0] is not ss["valid"]:
        memo = ss["valid_text"] = (ss["valid"], sitefile.dumps(ss["valid"]))
    return memo[1]


def evaluation():
    """Evaluation of the last valid assessment (cached on its site-file text)."""
    return cache.evaluate_text(draft_text(), st.session_state["valid"])


# ---------------------------------------------------------------- what-if scenarios

def _store_scenarios() -> None:
    ss = st.session_state
    try:
        scenario_store.write(ss["scenarios"])
    except OSError as e:
        ss["autosave_error"] = (f"scenarios not saved to disk ({e.strerror}); save the site "
                                "file by hand")


def save_scenario(name: str) -> str:
    """Save the last valid assessment under ``name`` (kept on disk too); returns the name."""
    name = name.strip() or f"Scenario {len(st.session_state['scenarios']) + 1}"
    st.session_state["scenarios"][name] = draft_text()
    _store_scenarios()
    return name


def restore_scenario(name: str) -> None:
    text = st.session_state["scenarios"][name]
    replace_draft(json.loads(text), f"scenario {name!r}")


def delete_scenario(name: str) -> None:
    st.session_state["scenarios"].pop(name, None)
    _store_scenarios()
