"""``python -m engine rank SITE.json`` and ``python -m engine schema``."""
from __future__ import annotations

import json
import sys
from dataclasses import replace

import pandas as pd

from engine.chain import pipeline, rules
from engine.chain.documents import rank_document
from engine.io import sitefile


def _table_text(table: pd.DataFrame) -> str:
    show = table[["rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms",
                  "aep_kwh", "capacity_factor"]].copy()
    show["flags"] = ["; ".join(f) for f in table["flags"]]
    with pd.option_context("display.width", 200, "display.max_columns", 20,
                           "display.max_colwidth", 60):
        return show.to_string(index=False, float_format=lambda x: f"{x:.3f}")


def cmd_rank(args) -> int:
    assessment = sitefile.load(args.site)
    if getattr(args, "rules", None):
        name, _, chosen = rules.load_rule_set(args.rules)
        assessment = replace(assessment, consent=replace(assessment.consent, rules=chosen,
                                                         rule_set_name=name))
    ev = pipeline.evaluate(assessment)
    if args.format == "json":
        print(json.dumps(rank_document(ev), indent=2, ensure_ascii=False))
    elif args.format == "csv":
        from engine.io.exports import safe_csv
        sys.stdout.write(safe_csv(ev.table))
    else:
        print(_table_text(ev.table))
    return 0


def cmd_schema(args) -> int:
    print(json.dumps(sitefile.json_schema(), indent=2, ensure_ascii=False))
    return 0


def register_rank(sub):
    p = sub.add_parser("rank", help="rank candidate positions x turbines for a site file")
    p.add_argument("site", help="site file (JSON)")
    p.add_argument("--format", choices=("table", "json", "csv"), default="table")
    p.add_argument("--rules", help="local rule-set file (JSON) replacing the site file's rules")
    p.set_defaults(func=cmd_rank)


def register_schema(sub):
    p = sub.add_parser("schema", help="print the site file's JSON Schema")
    p.set_defaults(func=cmd_schema)
