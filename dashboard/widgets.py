"""Form pieces bound to the working copy: each widget reads the draft, writes it back, and
shows the engine's message for its own field right beneath it."""
from __future__ import annotations

import math
import re

import numpy as np
import pandas as pd
import streamlit as st

from engine.report import CAUTIONS  # (title, text): the engine's one list, as in the summary

from . import state

CAUTION_FOOTER = ("These figures support a decision; they do not replace local codes, a "
                  "structural engineer's check or a licensed installer's design.")


_MARKDOWN_PUNCT = re.compile(r"([!-/:-@\[-`{-~])")
#: Where the renderer's literal autolinks start (``http://``, ``www.``, ``a@b.c``): a zero-width
#: space after the scheme or ``www`` and before ``@`` keeps user text from becoming a link.
_AUTOLINK_START = re.compile(r"(?i)(\b(?:https?|ftp|mailto|www))(?=\\[:.])|(?=\\@)")


def plain(text) -> str:
    """User text (names, ids, file names, messages quoting them) made inert for Markdown.

    Every ASCII punctuation character is backslash-escaped (CommonMark allows it for all of
    them) and line breaks become spaces, so a site name holding ``![x](http://...)`` shows as
    those characters and the browser fetches nothing; a zero-width space after ``http``,
    ``www`` and before ``@`` keeps a web or mail address from turning into a link.
    """
    escaped = _MARKDOWN_PUNCT.sub(r"\\\1", " ".join(str(text).splitlines()))
    return _AUTOLINK_START.sub(lambda m: (m.group(1) or "") + "\u200b", escaped)


def cautions(expanded: bool = False) -> None:
    """The standing safety panel."""
    with st.expander("⚠ Safety cautions before any installation", expanded=expanded):
        for title, text in CAUTIONS:
            st.markdown(f"**{title}.** {text}")
        st.caption(CAUTION_FOOTER)


def field_messages(path: str, label: str, kind: str = "plain") -> None:
    """The engine's messages for one field, beside it."""
    msgs = state.problems_at(state.engine_where(path))
    for m in msgs:
        note = ""
        if kind in ("speed", "length") and state.unit_of(kind) not in ("m/s", "m"):
            note = f" (the rule is checked in {'m/s' if kind == 'speed' else 'metres'})"
        st.error(f"**{label}** {plain(m)}{note}", icon=":material/error:")


def _key(path: str, kind: str, scope: str = "") -> str:
    """Widget key; ``scope`` keeps a field shown on two pages from sharing one widget key
    (a key left by the other page's widget is cleaned away at the end of a run)."""
    key = f"{state.WIDGET_PREFIX}{path}|{kind}|{state.unit_of(kind)}"
    return f"{key}|{scope}" if scope else key


def number(label: str, path: str, kind: str = "plain", fmt: str = "%.2f", step=None,
           help: str | None = None, optional: bool = False, disabled: bool = False,
           scope: str = ""):
    """A number field bound to ``path`` in the draft; speeds and lengths in display units."""
    key = _key(path, kind, scope)
    if key not in st.session_state:
        v = state.to_display(state.get_path(path), kind)
        st.session_state[key] = None if v is None else (
            float(v) if isinstance(v, (int, float)) and not isinstance(v, bool) else None)
    unit = state.unit_of(kind)
    shown = f"{label} ({unit})" if kind in ("speed", "length") else label
    # value=None: Streamlit replaces a non-finite entry (1e999 typed) by the widget's default;
    # with None as the default the field shows as empty and the site file's check names it,
    # instead of a silent 0.0.
    value = st.number_input(shown, value=None, key=key, format=fmt, step=step, help=help,
                            disabled=disabled or not editing(),
                            placeholder="not given" if optional else None)
    state.set_path(path, state.to_si(value, kind))
    field_messages(path, shown, kind)
    return value


def text(label: str, path: str, help: str | None = None, area: bool = False):
    key = _key(path, "plain")
    if key not in st.session_state:
        st.session_state[key] = str(state.get_path(path, "") or "")
    fn = st.text_area if area else st.text_input
    value = fn(label, key=key, help=help, disabled=not editing())
    state.set_path(path, value)
    field_messages(path, label)
    return value


def choice(label: str, path: str, options, help: str | None = None, fmt=None,
           scope: str = ""):
    key = _key(path, "plain", scope)
    options = list(options)
    if key not in st.session_state or st.session_state[key] not in options:
        cur = state.get_path(path)
        st.session_state[key] = cur if cur in options else options[0]
    value = st.selectbox(label, options, key=key, help=help, format_func=fmt or str,
                         disabled=not editing())
    state.set_path(path, value)
    field_messages(path, label)
    return value


def toggle(label: str, path: str, help: str | None = None, scope: str = ""):
    key = _key(path, "plain", scope)
    if key not in st.session_state:
        st.session_state[key] = bool(state.get_path(path, False))
    value = st.checkbox(label, key=key, help=help, disabled=not editing())
    state.set_path(path, value)
    return value


# ---------------------------------------------------------------- tables

def _speed_list_text(values) -> str:
    """A list of speeds [m/s] as comma-separated text in the display speed unit."""
    if not isinstance(values, (list, tuple)):
        return "" if values is None else str(values)
    out = []
    for v in values:
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(f"{state.to_display(float(v), 'speed'):.5g}")
        else:
            out.append(str(v))  # an unreadable entry stays as typed, for its message
    return ", ".join(out)


def _speed_list(value) -> list:
    """Comma-separated speeds in the display unit read back as a list in m/s; an entry that is
    not a number is kept as typed so the site file's check names it."""
    out = []
    for s in str(value).replace(";", ",").split(","):
        s = s.strip()
        if not s:
            continue
        try:
            out.append(state.to_si(float(s), "speed"))
        except ValueError:
            out.append(s)
    return out


def _cell(value, kind: str):
    """A table cell read back: None for empty; SI for speeds and lengths."""
    if kind == "bool":
        # an unticked or new row's box (None/NaN) is false, the site file's default
        return bool(value) if isinstance(value, (bool, np.bool_)) else False
    if kind == "speedlist" and (value is None
                                or (isinstance(value, float) and math.isnan(value))):
        return []
    if value is None:
        return None
    if isinstance(value, float) and math.isnan(value):
        return None
    if isinstance(value, (np.floating, np.integer)):
        value = value.item()
    if kind in ("speed", "length"):
        try:
            return state.to_si(float(value), kind)
        except (TypeError, ValueError):
            return value
    if kind == "number":
        return float(value) if isinstance(value, (int, float)) else value
    if kind == "speedlist":
        return _speed_list(value)
    if kind == "list":
        return [s.strip() for s in str(value).replace(";", ",").split(",") if s.strip()]
    if kind == "text":
        return str(value)
    return value


def table(name: str, rows: list, columns: list, *, dynamic: bool = True,
          disabled: bool = False, height: int | None = None) -> list:
    """An editable table of site-file rows; returns the edited rows (SI).

    ``columns`` lists ``(field, label, kind, config)`` with kind speed, length, number, text,
    list, choice, speedlist (a list of speeds [m/s] shown as comma-separated text in the
    display speed unit; a cell left as shown keeps its stored values exactly) or bool (a
    checkbox; empty reads as false); ``config`` is an optional ``st.column_config`` object.
    Fields of a row that the table does not show are kept. The editor's own state lives under
    a key tied to the draft's generation and the units, so a page change, an error or a unit
    change never throws edits away: the table restarts from the draft, which holds every edit.
    """
    ss = st.session_state
    s_unit, l_unit = state.units_now()
    key = f"ed|{name}|{ss['gen']}|{s_unit}|{l_unit}"
    base_key = f"base|{name}"
    if key not in ss or base_key not in ss:
        ss[base_key] = [dict(r) for r in rows]
    base_rows = ss[base_key]
    data = {}
    shown = {}
    for field, label, kind, _ in columns:
        vals = [r.get(field) for r in base_rows]
        if kind == "speedlist":
            vals = [_speed_list_text(v) for v in vals]
            shown[label] = list(vals)
        elif kind == "bool":
            vals = [v is True for v in vals]
        elif kind in ("speed", "length"):
            vals = [state.to_display(v, kind) if isinstance(v, (int, float)) else None
                    for v in vals]
        elif kind == "list":
            vals = [", ".join(map(str, v)) if isinstance(v, (list, tuple)) else (v or "")
                    for v in vals]
        if not vals:
            # An empty table's column types from their kinds: with no rows pandas would make
            # every column a float column, which a text column's editor refuses.
            vals = pd.Series([], dtype=float if kind in ("speed", "length", "number")
                             else bool if kind == "bool" else object)
        data[label] = vals
    frame = pd.DataFrame(data, index=pd.RangeIndex(len(base_rows)))
    config = {}
    for field, label, kind, cfg in columns:
        if cfg is not None:
            config[label] = cfg
    extra = {"height": height} if height else {}
    edited = st.data_editor(frame, key=key, num_rows="dynamic" if dynamic else "fixed",
                            column_config=config, disabled=disabled, hide_index=True,
                            width="stretch", **extra)
    out = []
    for idx, rec in zip(edited.index, edited.to_dict("records")):
        i = int(idx) if isinstance(idx, (int, np.integer)) else -1
        row = dict(base_rows[i]) if 0 <= i < len(base_rows) else {}
        for field, label, kind, _ in columns:
            if (kind == "speedlist" and 0 <= i < len(base_rows)
                    and rec.get(label) == shown[label][i]):
                continue  # left as shown: keep the stored values, not a rounded copy
            row[field] = _cell(rec.get(label), kind)
        out.append(row)
    return out


def row_messages(group: str, rows: list, labels: dict, id_field: str = "id") -> int:
    """Messages for rows of a table, as ``Buildings, row 3 (mill), height (m): ...`` (the
    table named, so a spot reading's message never reads like a position's); returns how many
    were shown."""
    table_name = group.replace("_", " ").capitalize()
    prefix = f"{group}["
    shown = 0
    for where, msg in st.session_state["problems"]:
        if not where.startswith(prefix):
            continue
        try:
            i = int(where[len(prefix):].split("]")[0])
        except ValueError:
            continue
        field = where.split("].", 1)[1] if "]." in where else ""
        rid = rows[i].get(id_field) if i < len(rows) else ""
        label = labels.get(field.split("[")[0], field.replace("_", " ")) if field else ""
        st.error(f"**{table_name}, row {i + 1}{f' ({plain(rid)})' if rid else ''}"
                 f"{', ' + plain(label) if label else ''}:** "
                 f"{plain(msg)}", icon=":material/error:")
        shown += 1
    for where, msg in st.session_state["problems"]:
        if where == group:
            st.error(f"**{table_name}:** {plain(msg)}", icon=":material/error:")
            shown += 1
    return shown


def step_banner(step: str, title: str) -> None:
    """Heading with the step's state: one banner, green only when nothing needs attention.

    The results and the summary also say which earlier steps need attention (their figures
    then come from the last complete inputs). Presentation mode shows the heading alone.
    """
    st.title(title)
    if not editing():
        return
    own = state.step_problems(step)
    earlier = []
    if step in ("results", "summary"):
        earlier = [t for k, t in state.steps_needing_attention() if k != step]
    if own:
        st.warning(f"Needs attention: {len(own)} problem(s) below. The results keep using the "
                   "last complete inputs until they are fixed.", icon=":material/warning:")
    elif earlier:
        st.warning("Shown from the last complete inputs. Needs attention: "
                   + ", ".join(earlier) + ".", icon=":material/warning:")
    elif step == "summary":
        st.success("Every step is complete.", icon=":material/check_circle:")
    else:
        st.success("Complete: this step's inputs are consistent.", icon=":material/check_circle:")


def editing() -> bool:
    """False in presentation mode (editing widgets hidden)."""
    return not st.session_state.get("presentation", False)
