"""Bring site files written in an older ``format_version`` up to the current one.

A migration works on the parsed JSON (plain dicts and lists) before the model validates it, and
never throws away what the user entered: every field it moves or converts is named in a note
returned to the caller, so the dashboard and the command line can say what changed.

Format versions
---------------
0
    Perch's own pre-release draft layout. Such files say ``"format_version": 0`` or carry no
    ``format_version`` key; a file without the key is read as version 0 only when it holds a
    field of that layout (below), otherwise as the current version (the key defaults to it).
    Differences from version 1:

    * a position gives ``hub_height_m``, the hub height **above the ground**, instead of
      ``mast_height_m``, the height above the position's base (the roof for a roof position);
    * a turbine gives its power curve as ``power_curve``, a list of ``[speed_ms, power_w]``
      pairs, instead of the two lists ``curve_speed_ms`` and ``curve_power_w``.
1
    The current layout (:data:`engine.core.model.FORMAT_VERSION`), described in ``docs/site-file.md``.

A file from a *newer* version than this program knows is refused with a clear message rather
than guessed at.
"""
from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field

from engine.core.model import FORMAT_VERSION


@dataclass
class Migration:
    """Result of :func:`migrate`: the upgraded data, what was changed, what could not be.

    Attributes
    ----------
    data : the parsed site file in the current layout (a new object; the input is not touched)
    from_version : the version the file was written in
    notes : human-readable lines, one per change, naming the field
    problems : ``(where, message)`` items for values the migration could not convert; the
        loader raises them together with any validation problems
    covered : field paths whose validation problems the migration's own problems already
        explain (the new field a failed conversion would have written); the loader drops them
    """

    data: object
    from_version: int
    notes: list = field(default_factory=list)
    problems: list = field(default_factory=list)
    covered: set = field(default_factory=set)

    def fail(self, where: str, message: str, *covers: str) -> None:
        """Record a value that could not be converted, and the paths it explains."""
        self.problems.append((where, message))
        self.covered.update((where,) + covers)

    @property
    def migrated(self) -> bool:
        return self.from_version != FORMAT_VERSION


def _is_number(v) -> bool:
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return False
    try:
        return math.isfinite(float(v))
    except OverflowError:
        return False


def _v0_positions(data: dict, m: Migration) -> None:
    positions = data.get("positions")
    if not isinstance(positions, list):
        return
    heights = {}
    for b in data.get("buildings") or []:
        if isinstance(b, dict) and isinstance(b.get("id"), str) and _is_number(b.get("height_m")):
            heights[b["id"]] = float(b["height_m"])
    for i, pos in enumerate(positions):
        if not isinstance(pos, dict) or "hub_height_m" not in pos:
            continue
        where = f"positions[{i}].hub_height_m"
        if "mast_height_m" in pos:
            m.fail(where, "give either hub_height_m (format 0) or mast_height_m (format 1), "
                          "not both; delete hub_height_m")
            continue
        hub = pos.pop("hub_height_m")
        if not _is_number(hub):
            # Keep the value under its new name; validation then reports it there.
            pos["mast_height_m"] = hub
            continue
        hub = float(hub)
        if pos.get("kind") == "roof":
            bid = pos.get("building_id")
            if bid not in heights:
                m.fail(where, f"cannot convert the hub height above ground to a mast height: "
                              f"building {bid!r} is not in buildings; add it or give "
                              "mast_height_m", f"positions[{i}].mast_height_m")
                pos["hub_height_m"] = hub
                continue
            mast = hub - heights[bid]
            if mast <= 0:
                m.fail(where, f"hub height {hub:g} m above ground is not above the roof of "
                              f"{bid!r} ({heights[bid]:g} m); give the hub height above ground, "
                              "or mast_height_m above the roof", f"positions[{i}].mast_height_m")
                pos["hub_height_m"] = hub
                continue
            pos["mast_height_m"] = mast
            m.notes.append(f"positions[{i}] ({pos.get('id', '?')}): hub_height_m {hub:g} m above "
                           f"ground became mast_height_m {mast:g} m above the roof of {bid!r}")
        else:
            pos["mast_height_m"] = hub
            m.notes.append(f"positions[{i}] ({pos.get('id', '?')}): hub_height_m {hub:g} m "
                           f"became mast_height_m {hub:g} m (a {pos.get('kind', '?')} position "
                           "stands on the ground)")


def _v0_turbines(data: dict, m: Migration) -> None:
    turbines = data.get("turbines")
    if not isinstance(turbines, list):
        return
    for i, t in enumerate(turbines):
        if not isinstance(t, dict) or "power_curve" not in t:
            continue
        where = f"turbines[{i}].power_curve"
        if "curve_speed_ms" in t or "curve_power_w" in t:
            m.fail(where, "give either power_curve (format 0) or curve_speed_ms and "
                          "curve_power_w (format 1), not both")
            continue
        curve = t["power_curve"]
        bad = None
        if not isinstance(curve, list):
            bad = "must be a list of [speed_ms, power_w] pairs"
        else:
            for j, row in enumerate(curve):
                if not (isinstance(row, list) and len(row) == 2):
                    bad = f"row {j + 1} must be a pair [speed_ms, power_w], got {row!r:.60}"
                    break
        if bad:
            m.fail(where, bad, f"turbines[{i}].curve_speed_ms", f"turbines[{i}].curve_power_w")
            continue
        del t["power_curve"]
        t["curve_speed_ms"] = [row[0] for row in curve]
        t["curve_power_w"] = [row[1] for row in curve]
        m.notes.append(f"turbines[{i}] ({t.get('id', '?')}): power_curve pairs became "
                       f"curve_speed_ms and curve_power_w ({len(curve)} points)")


def _has_v0_fields(data: dict) -> bool:
    """True when positions carry ``hub_height_m`` or turbines ``power_curve`` (format 0)."""
    def any_key(group, key):
        items = data.get(group)
        return isinstance(items, list) and any(isinstance(o, dict) and key in o for o in items)
    return any_key("positions", "hub_height_m") or any_key("turbines", "power_curve")


def _v0_to_v1(data: dict, m: Migration) -> None:
    _v0_positions(data, m)
    _v0_turbines(data, m)
    data["format_version"] = 1


#: version -> function upgrading a dict in place from that version to the next.
STEPS = {0: _v0_to_v1}


def file_version(data) -> tuple:
    """The ``format_version`` a parsed site file declares: ``(version, problem or None)``.

    A file without the key is version 0 if it holds a field only that layout had, else current.
    """
    if not isinstance(data, dict):
        return FORMAT_VERSION, None
    if "format_version" not in data:
        return (0 if _has_v0_fields(data) else FORMAT_VERSION), None
    v = data["format_version"]
    if isinstance(v, bool) or not isinstance(v, int):
        return None, ("format_version", f"must be a whole number such as {FORMAT_VERSION}, "
                                        f"got {v!r:.40}")
    if v < 0:
        return None, ("format_version", f"must be 0 to {FORMAT_VERSION}, got {v}")
    if v > FORMAT_VERSION:
        return None, ("format_version", f"is {v}, newer than this Perch understands (up to "
                                        f"{FORMAT_VERSION}); open it with a newer Perch")
    return v, None


def migrate(data) -> Migration:
    """Upgrade parsed site-file JSON to :data:`~engine.core.model.FORMAT_VERSION`.

    Returns a :class:`Migration` whose ``data`` is a deep copy in the current layout, with one
    note per change. Input that is not a JSON object, or is already current, comes back as is
    (with no notes) for the validator to judge.
    """
    version, problem = file_version(data)
    if not isinstance(data, dict) or version == FORMAT_VERSION:
        return Migration(data=data, from_version=FORMAT_VERSION)
    if problem:
        return Migration(data=data, from_version=FORMAT_VERSION, problems=[problem],
                         covered={problem[0]})
    try:
        out = copy.deepcopy(data)
    except RecursionError:
        return Migration(data=data, from_version=FORMAT_VERSION,
                         problems=[("file", "nested too deeply to be a site file")],
                         covered={"file"})
    m = Migration(data=out, from_version=version)
    m.notes.append(f"site file is format_version {version}; upgraded to {FORMAT_VERSION}. "
                   "Save it to keep the new layout (the old file is kept as .bak).")
    while version < FORMAT_VERSION:
        STEPS[version](out, m)
        version += 1
    return m
