"""Consent inputs on the layout step: the local rule set chosen from a JSON file.

The file is read and checked by the engine (:func:`engine.chain.rules.load_rule_set`); a file
that fails leaves the site's rules as they were and names each problem's field. No formula
lives here.
"""
from __future__ import annotations

import dataclasses

import streamlit as st

from dashboard import state, widgets
from engine.chain import rules as rule_sets
from engine.core.consent import RULE_KINDS
from engine.core.errors import InputError
from engine.io.safe_files import parse_json

#: Largest rule-set file accepted [MiB].
MAX_RULE_SET_MIB = 1
PROBLEMS_KEY = "rule_set_problems"


def rule_set_from_bytes(data: bytes, file_name: str) -> dict:
    """``{"rule_set_name", "rules"}`` for the site file's ``consent``, from a rule-set file.

    Raises :class:`InputError` naming the field (``rule_set``, ``rules[2] (max-area).limit``)
    when the file is not a valid rule set.
    """
    if len(data) > MAX_RULE_SET_MIB * 1024 * 1024:
        raise InputError([("rule_set", f"must be at most {MAX_RULE_SET_MIB} MiB, got "
                                       f"{len(data) / 1048576:.1f} MiB")])
    parsed = parse_json(bytes(data), "rule_set", "a rule-set file")
    if not isinstance(parsed, dict):
        raise InputError([("rule_set", f"must be a JSON object with name, note and rules, got "
                                       f"a JSON {type(parsed).__name__}")])
    # Parsed here, so the engine is given the dict and never reads a path from user text.
    name, _note, rules = rule_sets.load_rule_set(parsed)
    return {"rule_set_name": name or file_name,
            "rules": [dataclasses.asdict(r) for r in rules]}


def _show_current(consent: dict) -> None:
    rules = consent.get("rules") or []
    if not rules:
        st.markdown("No rule set chosen: the ranking lists no rule columns.")
        return
    name = widgets.plain(consent.get("rule_set_name") or "(unnamed)")
    st.markdown(f"Rule set in use: **{name}**, {len(rules)} rule(s):")
    st.dataframe([{"rule": r.get("id"), "kind": r.get("kind"), "limit": r.get("limit"),
                   "note": r.get("note", "")} for r in rules], hide_index=True,
                 width="stretch")


def rule_set_section(draft: dict, edit: bool) -> bool:
    """The rule-set expander; True when the draft's rules changed."""
    ss = st.session_state
    changed = False
    with st.expander("Local siting rules (a rule-set file)", expanded=False):
        st.caption(rule_sets.CAUTION)
        st.caption('A JSON file: {"name": ..., "note": ..., "rules": [{"id": ..., "kind": '
                   f'..., "limit": ..., "note": ...}}, ...]}} with the kinds '
                   f"{', '.join(RULE_KINDS)}.")
        consent = draft.get("consent") or {}
        _show_current(consent)
        up = st.file_uploader("Rule-set file (JSON, up to 1 MiB)", type=["json"],
                              key="rule_set_upload", max_upload_size=MAX_RULE_SET_MIB,
                              disabled=not edit)
        c1, c2 = st.columns(2)
        if c1.button("Use this rule set", key="use_rule_set", disabled=up is None or not edit):
            try:
                chosen = rule_set_from_bytes(up.getvalue(), up.name)
                draft.setdefault("consent", {}).update(chosen)
                ss[PROBLEMS_KEY] = []
                changed = True
            except InputError as e:
                ss[PROBLEMS_KEY] = [(up.name, where, msg) for where, msg in e.problems]
        if c2.button("Use no rule set", key="clear_rule_set",
                     disabled=not edit or not consent.get("rules")):
            draft.setdefault("consent", {}).update({"rule_set_name": "", "rules": []})
            ss[PROBLEMS_KEY] = []
            changed = True
        bad = ss.get(PROBLEMS_KEY) or []
        if bad:
            st.error(f"{widgets.plain(bad[0][0])} was not used; the rules above are unchanged."
                     "\n\n" + "\n".join(f"- **{widgets.plain(w)}:** {widgets.plain(m)}"
                                        for _, w, m in bad), icon=":material/error:")
    if changed:
        # The list above was drawn before the button: draw the page again from the draft,
        # which now holds the chosen rules (and every other edit so far).
        state.validate()
        st.rerun()
    return changed
