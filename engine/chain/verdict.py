"""Is it worth it? A plain verdict for every position x turbine, and the site's headline.

Each row gets one of :data:`VERDICTS` from its money (:mod:`engine.energy.economics`) and its
constraints (:mod:`engine.chain.ranking`), with a one-line reason that carries the numbers:

* ``pays back within its life``: the net present value without any grant or support is >= 0
  (the discounted cash flow repays the installed cost within the lifetime);
* ``pays back only with support``: it does so only with the site file's grant or support;
* ``does not pay back``: not even with them;
* ``not allowed here``: a constraint excludes it (whatever its money).

The headline (:func:`headline`) answers the client's question in its first sentence; when
nothing allowed pays back it says so first and names the least bad option, never
"recommended".
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from engine.energy.economics import PAYBACK_HORIZON_YEARS

VERDICTS = ("pays back within its life", "pays back only with support", "does not pay back",
            "not allowed here")
#: Columns of :func:`top_rows`.
TOP_COLUMNS = ("rank", "position_id", "turbine_id", "verdict", "verdict_reason", "aep_kwh",
               "npv", "payback_years", "lcoe_per_kwh")


def money_class(table: pd.DataFrame) -> np.ndarray:
    """0 pays back on its own, 1 only with support, 2 does not (2 without money columns)."""
    n = len(table)
    if "npv" not in table:
        return np.full(n, 2)
    npv = table["npv"].to_numpy(dtype=float)
    alone = table["npv_without_support"].to_numpy(dtype=float) if "npv_without_support" in \
        table else npv
    return np.where(alone >= 0, 0, np.where(npv >= 0, 1, 2))


def _money(v, cur):
    return f"{v:+,.0f} {cur}".replace("+-", "-")


def _money_reason(row, cls, e) -> str:
    cur, life = e.currency, f"{e.lifetime_years:g}-year life"
    npv, pb = float(row["npv"]), float(row["payback_years"])
    if cls == 0:
        return (f"NPV {_money(npv, cur)} over its {life} at {e.discount_rate:.1%} discount; "
                f"cash payback {pb:.1f} years")
    if cls == 1:
        return (f"NPV {_money(float(row['npv_without_support']), cur)} on its own, "
                f"{_money(npv, cur)} with the grant and support")
    saving = float(row["first_year_saving"])
    if saving <= 0:
        return (f"upkeep and standby use cost more than the energy saves ({_money(saving, cur)}"
                f" a year), so it never repays its {float(row['installed_cost']):,.0f} {cur}; "
                f"NPV {_money(npv, cur)}")
    cost = float(row["installed_cost"])
    if np.isfinite(pb) and pb <= e.lifetime_years:
        return (f"cash payback {pb:.1f} years, but discounted at {e.discount_rate:.1%} it does "
                f"not repay its {cost:,.0f} {cur} within its {life}; NPV {_money(npv, cur)}")
    when = (f"payback {pb:.1f} years against a {life}" if np.isfinite(pb) else
            f"no payback within {PAYBACK_HORIZON_YEARS} years (against a {life})")
    return (f"saves {saving:,.0f} {cur} a year after upkeep and standby use against "
            f"{cost:,.0f} {cur} installed: {when}; NPV {_money(npv, cur)}")


def add_verdicts(table: pd.DataFrame, economics) -> pd.DataFrame:
    """The ranked table with ``verdict`` and ``verdict_reason`` appended (same row order).

    An excluded row's reason is its constraint texts (``exclusion_reason`` from
    :func:`engine.chain.ranking.rank`), then what its money would be.
    """
    out = table.copy()
    cls = money_class(out)
    excluded = out["excluded"].to_numpy(dtype=bool) if "excluded" in out else np.zeros(len(out),
                                                                                       bool)
    why_out = (out["exclusion_reason"].tolist() if "exclusion_reason" in out
               else [""] * len(out))
    has_money = {"npv", "payback_years", "first_year_saving", "installed_cost"} <= set(out)
    verdicts, reasons = [], []
    # only the columns a reason reads: the whole row (lists of flags and all) costs ten
    # times as much to turn into records, on every what-if
    cols = [c for c in ("npv", "npv_without_support", "payback_years", "first_year_saving",
                        "installed_cost") if c in out]
    for i, row in enumerate(out[cols].to_dict("records")):
        money = _money_reason(row, cls[i], economics) if has_money else "no cost figures"
        if excluded[i]:
            verdicts.append(VERDICTS[3])
            reasons.append(f"{why_out[i] or 'fails a constraint'} (money: {VERDICTS[cls[i]]}, "
                           f"{money})")
        else:
            verdicts.append(VERDICTS[cls[i]])
            reasons.append(money)
    out["verdict"] = np.array(verdicts, dtype=object)
    out["verdict_reason"] = np.array(reasons, dtype=object)
    return out


def _name(row) -> str:
    return f"{row['turbine_id']} at {row['position_id']}"


def _break_even(row, e) -> str:
    be = float(row.get("break_even_import_price", np.nan))
    if not np.isfinite(be):
        return ""
    return (f" It would break even at an import price of {be:.2f} {e.currency}/kWh "
            f"(now {e.tariff_per_kwh:.2f}).")


def headline(table: pd.DataFrame, economics) -> str:
    """The site's answer in one or two sentences, the verdict first (never "recommended").

    Parameters
    ----------
    table : ranked table with verdicts (:func:`add_verdicts`), best first
    economics : :class:`engine.core.model.Economics`

    Returns
    -------
    str
        When no allowed option pays back, it opens with "None of the options pays back at
        these prices; the least bad is ..." (the allowed option with the highest NPV).
    """
    if "verdict" not in table:
        table = add_verdicts(table, economics)
    if len(table) == 0:
        return "There is nothing to judge: the site lists no position or no turbine."
    ok = table[table["verdict"] != VERDICTS[3]]
    if len(ok) == 0:
        first = table.iloc[0]
        return ("None of the options is allowed here; every position and turbine fails a "
                f"constraint. The first, {_name(first)}: {first['verdict_reason']}.")
    lead = ok.iloc[0]
    verdict = lead["verdict"]
    pays = ok[ok["verdict"] == VERDICTS[0]]
    if not ok["verdict"].isin(VERDICTS[:2]).any():
        least = ok.iloc[int(np.argmax(ok["npv"].to_numpy(dtype=float)))] if "npv" in ok else lead
        text = (f"None of the options pays back at these prices; the least bad is "
                f"{_name(least)}: {least['verdict_reason']}.") + _break_even(least, economics)
        if least is not lead and _name(least) != _name(lead):
            text += (f" The option ranked first, {_name(lead)}, {lead['verdict']} either "
                     f"(it ranks first on the chosen objective, not on money): "
                     f"{lead['verdict_reason']}.")
        return text
    text = f"{_name(lead)} {verdict}: {lead['verdict_reason']}."
    if verdict != VERDICTS[0]:
        text += _break_even(lead, economics)
    if verdict != VERDICTS[0] and len(pays):
        best = pays.iloc[0]
        text += f" {_name(best)} {VERDICTS[0]}: {best['verdict_reason']}."
    return text


def headline_for(evaluation) -> str:
    """:func:`headline` of an :class:`engine.chain.pipeline.Evaluation` (dashboard, summary, CLI)."""
    return headline(evaluation.table, evaluation.assessment.economics)


def top_rows(table: pd.DataFrame, n: int = 5) -> pd.DataFrame:
    """The top ``n`` rows to show: allowed ones first; an excluded row only with its reason.

    Returns the :data:`TOP_COLUMNS` present in ``table``; every excluded row shown has a
    non-empty ``verdict_reason`` that starts with its constraint.
    """
    if "verdict" not in table:
        raise ValueError("top_rows needs a table with verdicts (engine.chain.verdict.add_verdicts)")
    allowed = table[table["verdict"] != VERDICTS[3]]
    rest = table[(table["verdict"] == VERDICTS[3])
                 & (table["verdict_reason"].astype(str).str.len() > 0)]
    top = pd.concat([allowed.head(n), rest.head(max(0, n - len(allowed)))])
    return top[[c for c in TOP_COLUMNS if c in top]].reset_index(drop=True)
