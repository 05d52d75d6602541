"""Neighbour inputs on the layout step: the noise and flicker criteria, and the measured
background noise at each place where noise matters.

Every value is written into the working copy (``consent.noise``, ``consent.flicker`` and each
receptor's ``background_speed_ms`` / ``background_db``) and checked by the engine
(:class:`engine.core.consent.NoiseSettings`, :class:`~engine.core.consent.FlickerSettings`,
:class:`engine.core.site_model.Receptor`); the engine's message for a field shows beneath
it. The defaults and their sources are the engine's (``engine.core.consent``). No formula
lives here.
"""
from __future__ import annotations

import dataclasses
import itertools
import math

import numpy as np
import streamlit as st

from dashboard import state, widgets
from engine.core import consent

#: The noise criteria in plain words.
CRITERION_LABELS = {
    "limit": "A fixed limit at each place (its noise criterion in the table of places)",
    "background_plus": "The measured background plus a margin (never below the fixed limit)",
}
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
ONE, TWELVE = "One value for the year", "A value for each month"
SUNSHINE = "consent.flicker.sunshine_fraction"
SUNSHINE_MEMORY = "sunshine_memory"


def _defaults() -> dict:
    """The engine's default of each noise and flicker setting, by field name."""
    out = {f.name: getattr(consent.NoiseSettings(), f.name)
           for f in dataclasses.fields(consent.NoiseSettings)}
    out.update({f.name: getattr(consent.FlickerSettings(), f.name)
                for f in dataclasses.fields(consent.FlickerSettings)})
    return out


def _ensure_settings(draft: dict) -> None:
    """The draft's ``consent.noise`` and ``consent.flicker`` exist, each key the engine's
    default where the file left it out (what the engine would use anyway)."""
    c = draft.get("consent")
    if not isinstance(c, dict):
        c = draft["consent"] = {}
    for part, cls in (("noise", consent.NoiseSettings), ("flicker", consent.FlickerSettings)):
        if not isinstance(c.get(part), dict):
            c[part] = {}
        for k, v in dataclasses.asdict(cls()).items():
            c[part].setdefault(k, list(v) if isinstance(v, tuple) else v)


def _default_caption(field: str, shown: str) -> None:
    st.caption(f"Engine default{' ' + shown if shown else ''}: "
               f"{consent.DEFAULT_SOURCES[field]}.")


def _noise_fields() -> None:
    d = _defaults()
    widgets.choice("Noise criterion", "consent.noise.criterion", consent.NOISE_CRITERIA,
                   fmt=CRITERION_LABELS.get,
                   help="How the level at each place is judged, in each 1 m/s bin of hub "
                        "wind speed")
    _default_caption("criterion", "")
    c1, c2 = st.columns(2)
    with c1:
        widgets.number("Margin above background (dB)",
                       "consent.noise.margin_above_background_db", fmt="%.1f", step=0.5,
                       help="Used with the background-plus criterion: the allowed level is "
                            "the background at that wind speed plus this margin")
        _default_caption("margin_above_background_db",
                         f"{d['margin_above_background_db']:g} dB")
    with c2:
        widgets.number("Tolerance (dB)", "consent.noise.tolerance_db", fmt="%.1f", step=0.5,
                       help="A level above the criterion by no more than this is not counted "
                            "as breaking it")
        _default_caption("tolerance_db", f"{d['tolerance_db']:g} dB")


def _flicker_limits() -> None:
    d = _defaults()
    c1, c2, c3 = st.columns(3)
    for col, field, label, unit in (
            (c1, "worst_hours_per_year_limit", "Worst case, hours a year", "h"),
            (c2, "worst_minutes_per_day_limit", "Worst case, minutes a day", "min"),
            (c3, "expected_hours_per_year_limit", "Expected, hours a year", "h")):
        with col:
            widgets.number(f"{label} ({unit})", f"consent.flicker.{field}", fmt="%.1f",
                           step=1.0)
            _default_caption(field, f"{d[field]:g} {unit}")
    widgets.number("Lowest sun counted (°)", "consent.flicker.min_sun_elevation_deg",
                   fmt="%.1f", step=0.5,
                   help="Sun elevation above the horizon below which no shadow is counted")
    _default_caption("min_sun_elevation_deg", f"{d['min_sun_elevation_deg']:g}°")


def _switch_sunshine(values: list, to_twelve: bool) -> list:
    """The sunshine list after a change of mode; the other mode's values are remembered, so
    switching back gives them again (nothing entered is lost)."""
    ss = st.session_state
    # kept for this working copy: another file opened forgets it
    memory = ss.setdefault(f"{SUNSHINE_MEMORY}|{id(ss['draft'])}", {})
    memory["twelve" if len(values) == 12 else "one"] = list(values)
    if to_twelve:
        return list(memory.get("twelve") or [values[0] if values else None] * 12)
    return list(memory.get("one") or values[:1])


def _sunshine(draft_flicker: dict) -> bool:
    """Sunshine share, one value or twelve; True when the mode changed."""
    ss = st.session_state
    values = draft_flicker.get("sunshine_fraction")
    if not isinstance(values, list) or not values:
        # a field to type into (an empty list would give the field nowhere to write)
        values = draft_flicker["sunshine_fraction"] = [values if values != [] else None]
        state.validate()
    key = f"sunshine_mode|{ss['gen']}"
    if key not in ss:
        ss[key] = TWELVE if len(values) == 12 else ONE
    mode = st.radio("Share of daylight with direct sun", (ONE, TWELVE), key=key,
                    horizontal=True, disabled=not widgets.editing(),
                    help="Used for the expected flicker hours; the worst case assumes sun "
                         "all day")
    changed = (mode == TWELVE) != (len(values) == 12)
    if changed:
        for k in [k for k in ss if isinstance(k, str)
                  and k.startswith(f"{state.WIDGET_PREFIX}{SUNSHINE}.")]:
            del ss[k]  # the fields start again from the draft's new list
        draft_flicker["sunshine_fraction"] = _switch_sunshine(values, mode == TWELVE)
        state.validate()
    if mode == ONE:
        widgets.number("Sunshine share (0 to 1)", f"{SUNSHINE}.0", fmt="%.2f", step=0.05)
    else:
        for row in (0, 6):
            cols = st.columns(6)
            for j, col in enumerate(cols):
                with col:
                    widgets.number(MONTHS[row + j], f"{SUNSHINE}.{row + j}", fmt="%.2f",
                                   step=0.05)
    widgets.field_messages(SUNSHINE, "Sunshine share")
    _default_caption("sunshine_fraction",
                     ", ".join(f"{v:g}" for v in _defaults()["sunshine_fraction"]))
    return changed


def closest_noise_margin(table):
    """The row closest to its noise criterion among those not excluded (all rows when every
    one is excluded), or None when the table has no finite noise margin."""
    if "noise_margin_db" not in table or not len(table):
        return None
    kept = table[~table["excluded"].astype(bool)] if "excluded" in table else table
    rows = kept if len(kept) else table
    rows = rows[np.isfinite(rows["noise_margin_db"].to_numpy(float))]
    return None if not len(rows) else rows.loc[rows["noise_margin_db"].idxmin()]


def _closest_margin_note() -> None:
    """Where the current results stand closest to a noise criterion, from the engine's
    columns (the last complete inputs)."""
    row = closest_noise_margin(state.evaluation().table)
    if row is None:
        return
    m = float(row["noise_margin_db"])
    side = f"{m:.1f} dB below it" if m >= 0 else f"{-m:.1f} dB above it"
    where = ""
    if "noise_worst_receptor" in row.index and row["noise_worst_receptor"]:
        where = f" at {widgets.plain(row['noise_worst_receptor'])}"
        v = row.get("noise_worst_speed_ms")
        if v is not None and np.isfinite(v):
            S = state.unit_of("speed")
            where += f", hub wind {state.to_display(float(v), 'speed'):.1f} {S}"
    st.markdown(f"Closest to its noise criterion in the results now: "
                f"**{widgets.plain(row['position_id'])}** with "
                f"**{widgets.plain(row['turbine_id'])}**, {side}{where}.")


def criteria_section(draft: dict) -> bool:
    """The expander "Noise and flicker criteria"; True when the draft changed here."""
    _ensure_settings(draft)
    with st.expander("Noise and flicker criteria", expanded=False):
        st.warning(consent.NEIGHBOUR_CAUTION, icon=":material/warning:")
        _closest_margin_note()
        st.caption("Enter what the local authority asks for. Defaults marked \"from memory\" "
                   "are the engine's own assumptions, not a published limit checked for "
                   "this site: the local authority's limits govern.")
        st.markdown("**Noise at neighbours' windows and gardens**")
        _noise_fields()
        st.markdown("**Shadow flicker at windows**")
        _flicker_limits()
        return _sunshine(draft["consent"]["flicker"])


# ---------------------------------------------------------------- measured background

def _background_rows(receptor: dict) -> list:
    speeds = receptor.get("background_speed_ms") or []
    levels = receptor.get("background_db") or []
    return [{"speed_ms": v, "level_db": lv}
            for v, lv in itertools.zip_longest(speeds, levels, fillvalue=None)]


def _background_messages(i: int) -> None:
    """The engine's messages for receptor ``i``'s background, beside its table, by row."""
    prefix = f"receptors[{i}]."
    fields = {"background_speed_ms": "wind speed", "background_db": "background level"}
    note = "" if state.unit_of("speed") == "m/s" else " (the rule is checked in m/s)"
    for where, msg in st.session_state["problems"]:
        if not where.startswith(prefix):
            continue
        field = where[len(prefix):]
        name = field.split("[")[0]
        if name not in fields:
            continue
        row = ""
        if "[" in field:
            row = f"Row {int(field.split('[')[1].rstrip(']')) + 1}, "
        extra = note if name == "background_speed_ms" else ""
        st.error(f"**{row}{fields[name]}:** {widgets.plain(msg)}{extra}",
                 icon=":material/error:")


def _background_table(i: int, receptor: dict, edit: bool) -> bool:
    """One receptor's measured background (wind speed -> L90); True when it changed."""
    S = state.unit_of("speed")
    cols = [("speed_ms", f"hub wind speed ({S})", "speed",
             st.column_config.NumberColumn(format="%.1f")),
            ("level_db", "background L90 (dB(A))", "number",
             st.column_config.NumberColumn(format="%.1f"))]
    before = _background_rows(receptor)
    rows = widgets.table(f"background|{i}|{receptor.get('id')}", before, cols,
                         disabled=not edit)
    if not before:
        st.caption("No measured background here: the engine uses its assumed default curve "
                   "(quiet suburban evening levels, from memory). It matters only under the "
                   "background-plus criterion; measure at this place instead.")
    _background_messages(i)
    rows = _kept_as_stored(before, rows)
    if rows == before:
        return False
    receptor["background_speed_ms"] = [r.get("speed_ms") for r in rows]
    receptor["background_db"] = [r.get("level_db") for r in rows]
    return True


def _kept_as_stored(before: list, rows: list) -> list:
    """``rows`` with each value that only went through the display unit and back (equal to
    the stored one but for rounding) given as stored, so a look at the table in mph or knots
    changes nothing in the site file."""
    out = []
    for k, r in enumerate(rows):
        r = dict(r)
        if k < len(before):
            for f, v in r.items():
                b = before[k].get(f)
                if (isinstance(v, float) and isinstance(b, (int, float))
                        and not isinstance(b, bool) and math.isclose(v, b, rel_tol=1e-12)):
                    r[f] = b
        out.append(r)
    return out


def background_section(receptors: list, edit: bool) -> bool:
    """The expander of measured background per place.

    A change is written to the working copy, and every table starts again from it (the
    table of places included, whose rows carry the background too), so no edit is lost.
    """
    changed = False
    with st.expander("Measured background noise at each place", expanded=False):
        st.caption("Background L90 measured at the place, one row per hub wind speed in "
                   "increasing order, as a noise survey gives it. The background-plus "
                   "criterion allows the background plus the margin at each speed (never "
                   "less than the place's fixed limit), held flat beyond the table's ends.")
        named = [(i, r) for i, r in enumerate(receptors) if isinstance(r, dict)]
        if not named:
            st.info("No places where noise matters yet: add them in the table above.",
                    icon=":material/info:")
            return False
        tabs = st.tabs([widgets.plain(r.get("id") or f"row {i + 1}") for i, r in named])
        for tab, (i, r) in zip(tabs, named):
            with tab:
                changed |= _background_table(i, r, edit)
    if changed:
        state.clear_widgets()
        state.validate()
        st.rerun()
    return changed
