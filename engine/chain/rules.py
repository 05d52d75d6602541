"""Local planning and siting rules as data: load a rule set, check each position against it.

A rule set is a JSON file::

    {"name": "...", "note": "...",
     "rules": [{"id": "tip-above-roof", "kind": "tip_above_roof_max_m", "limit": 3.0,
                "note": "..."}, ...]}

with the kinds of :data:`engine.core.consent.RULE_KINDS`. Each position x turbine gets, for
each rule, ``met``, ``broken``, ``not applicable`` (a roof rule at a ground mast) or
``not checked`` (no boundary or no dwelling entered). Perch never says a position is
permitted: it says which of the chosen rules it meets, and the local authority decides.

Geometry: the tip height is the hub height plus the rotor's half vertical extent
(:attr:`engine.core.model.Turbine.rotor_radius_m`); the topple distance is measured from
the mast base on the plan against the tip height above that base; distances to dwellings
are on the plan, from the mast to each receptor marked ``dwelling``.
"""
from __future__ import annotations

import json

import numpy as np

from engine.core.consent import RULE_KINDS, SitingRule
from engine.core.errors import InputError, Problems
from engine.io.sitefile import build_dataclass

CAUTION = ("Siting rules: Perch shows which of the chosen rules each position meets or breaks. "
           "It does not say a position is permitted; the local planning authority decides, "
           "and its current rules and any other consents (listed buildings, conservation "
           "areas, building regulations) apply.")
RULE_SET_KEYS = ("name", "note", "rules")


def load_rule_set(source):
    """Rules of a rule-set file: ``(name, note, tuple of SitingRule)``.

    ``source`` is a path, the file's text, or the parsed dict. Every problem is collected and
    raised as one :class:`InputError`, each naming the rule (``rules[2] (max-area).limit``).
    """
    data = source
    if not isinstance(source, dict):
        text = source
        if not (isinstance(source, str) and source.lstrip().startswith("{")):
            try:
                with open(source, encoding="utf-8") as fh:
                    text = fh.read()
            except OSError as exc:
                raise InputError([("rule_set", f"cannot read the rule-set file {source!s}: "
                                                f"{exc.strerror}")]) from None
        try:
            data = json.loads(text)
        except json.JSONDecodeError as exc:
            raise InputError([("rule_set", f"must be valid JSON; line {exc.lineno} column "
                                           f"{exc.colno}: {exc.msg}")]) from None
    p = Problems()
    if not isinstance(data, dict):
        raise InputError([("rule_set", f"must be a JSON object, got {type(data).__name__}")])
    for key in data:
        if key not in RULE_SET_KEYS:
            p.add(f"rule_set.{key}", f"is not a rule-set key; use {', '.join(RULE_SET_KEYS)}")
    rules = data.get("rules")
    if not isinstance(rules, list) or not rules:
        p.add("rule_set.rules", "must be a non-empty list of rules")
        rules = []
    built, seen = [], set()
    for i, item in enumerate(rules):
        rid = item.get("id") if isinstance(item, dict) else None
        where = f"rules[{i}] ({rid})" if isinstance(rid, str) and rid else f"rules[{i}]"
        rule = build_dataclass(SitingRule, item, where, p)
        if rule is not None:
            if rule.id in seen:
                p.add(f"{where}.id", f"duplicate rule id {rule.id!r}; ids must be unique")
            seen.add(rule.id)
            built.append(rule)
    p.raise_if_any()
    return str(data.get("name", "")), str(data.get("note", "")), tuple(built)


def _boundary_distance_m(x, y, bx, by):
    """Signed plan distance of points to a closed polygon's edges: + inside, - outside [m]."""
    x, y = np.asarray(x, float)[:, None], np.asarray(y, float)[:, None]
    ax, ay = np.asarray(bx, float)[None, :], np.asarray(by, float)[None, :]
    cx, cy = np.roll(ax, -1, 1), np.roll(ay, -1, 1)
    ex, ey = cx - ax, cy - ay
    t = np.clip(((x - ax) * ex + (y - ay) * ey) / np.maximum(ex ** 2 + ey ** 2, 1e-12), 0, 1)
    dist = np.hypot(x - ax - t * ex, y - ay - t * ey).min(1)
    # Even-odd ray casting for inside.
    crosses = ((ay > y) != (cy > y)) & (x < ax + (y - ay) * ex / np.where(ey == 0, 1e-12, ey))
    inside = crosses.sum(1) % 2 == 1
    return np.where(inside, dist, -dist)


def rule_metrics(assessment) -> dict:
    """Quantities the rules test, arrays (P, T); NaN where a quantity does not apply."""
    pos, tur = assessment.positions, assessment.turbines
    mast = np.array([p.mast_height_m for p in pos], float)[:, None]
    hub = np.array([assessment.hub_height_m(p) for p in pos], float)[:, None]
    radius = np.array([t.rotor_radius_m for t in tur], float)[None, :]
    roof = np.array([p.kind == "roof" for p in pos])[:, None]
    above_base = mast + radius
    x = np.array([p.x_m for p in pos], float)
    y = np.array([p.y_m for p in pos], float)
    c = assessment.consent
    boundary = (_boundary_distance_m(x, y, c.boundary_x_m, c.boundary_y_m)[:, None]
                if c.boundary_x_m else np.full((len(pos), 1), np.nan))
    homes = [r for r in assessment.receptors if r.dwelling]
    if homes:
        dwell = np.hypot(x[:, None] - np.array([r.x_m for r in homes])[None],
                         y[:, None] - np.array([r.y_m for r in homes])[None]).min(1)[:, None]
    else:
        dwell = np.full((len(pos), 1), np.nan)
    shape = np.broadcast_shapes(mast.shape, radius.shape)
    tip = hub + radius
    return {
        "tip_above_roof_max_m": np.where(roof, above_base, np.nan),
        "tip_height_max_m": np.broadcast_to(tip, shape),
        "swept_area_max_m2": np.broadcast_to(np.array([t.area_m2 for t in tur])[None], shape),
        "boundary_distance_min_m": np.broadcast_to(boundary, shape),
        "dwelling_distance_min_tip_multiple": dwell / tip,
        "topple_distance_min_tip_multiple": np.fmin(boundary, dwell) / above_base,
        "mast_height_max_m": np.broadcast_to(mast, shape),
    }


def _why_missing(kind, assessment):
    if kind == "tip_above_roof_max_m":
        return "not applicable (not on a roof)"
    if kind == "boundary_distance_min_m" or (kind == "topple_distance_min_tip_multiple"
                                             and not assessment.consent.boundary_x_m):
        return "not checked (no site boundary entered)"
    return "not checked (no dwelling among the receptors)"


def rule_columns(assessment) -> dict:
    """``rules_met``, ``rules_broken`` (rule ids) and ``rule_results`` (id -> text) per row."""
    rules = assessment.consent.rules
    n = len(assessment.positions) * len(assessment.turbines)
    met, broken = [[] for _ in range(n)], [[] for _ in range(n)]
    results = [{} for _ in range(n)]
    if not rules:
        return {"rules_met": met, "rules_broken": broken, "rule_results": results}
    metrics = rule_metrics(assessment)
    for rule in rules:
        value = metrics[rule.kind].ravel()
        is_max = "_max_" in rule.kind
        ok = value <= rule.limit + 1e-9 if is_max else value >= rule.limit - 1e-9
        missing = _why_missing(rule.kind, assessment)
        for i, v in enumerate(value):  # one short text per row and rule
            if not np.isfinite(v):
                results[i][rule.id] = missing
                continue
            state = "met" if ok[i] else "broken"
            (met if ok[i] else broken)[i].append(rule.id)
            results[i][rule.id] = f"{state}: {v:.2f}; {RULE_KINDS[rule.kind]} {rule.limit:g}"
    return {"rules_met": met, "rules_broken": broken, "rule_results": results}
