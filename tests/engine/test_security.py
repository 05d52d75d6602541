"""Security checks: no code from data, engine apart from the UI, inert exports, escaped HTML, loopback."""
from __future__ import annotations

import ast
import dataclasses
import functools
import io
import tomllib
from pathlib import Path

import pandas as pd
import pytest

from engine.io import exports
from engine.chain import pipeline
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"

#: Modules that turn bytes into live objects or code.
UNSAFE_MODULES = {"pickle", "cPickle", "dill", "marshal", "shelve", "cloudpickle", "joblib"}
#: Builtins that run text as code.
UNSAFE_BUILTINS = {"eval", "exec", "compile", "__import__"}
#: Attribute calls that unpickle or run code (pandas, numpy, yaml).
UNSAFE_ATTRS = {"read_pickle", "to_pickle", "loads_pickle", "unsafe_load", "full_load"}


def _sources(*dirs):
    for d in dirs:
        base = ROOT / d
        if base.is_dir():
            yield from sorted(base.rglob("*.py"))


@functools.lru_cache(maxsize=None)
def _tree(path: Path):
    return ast.parse(path.read_text(encoding="utf-8"), filename=str(path))


def _imports(tree):
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            yield from (a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            yield node.module.split(".")[0]


def test_no_pickle_eval_or_exec_in_engine_or_dashboard():
    """No module of engine/ or dashboard/ imports pickle-like modules or calls eval/exec."""
    found = []
    for path in _sources("engine", "dashboard"):
        tree = _tree(path)
        for name in _imports(tree):
            if name in UNSAFE_MODULES:
                found.append(f"{path.relative_to(ROOT)} imports {name}")
        for node in ast.walk(tree):
            if isinstance(node, ast.Call):
                f = node.func
                if isinstance(f, ast.Name) and f.id in UNSAFE_BUILTINS:
                    found.append(f"{path.relative_to(ROOT)}:{node.lineno} calls {f.id}()")
                if isinstance(f, ast.Attribute) and f.attr in UNSAFE_ATTRS:
                    found.append(f"{path.relative_to(ROOT)}:{node.lineno} calls .{f.attr}()")
                if isinstance(f, ast.Attribute) and f.attr == "load" and any(
                        k.arg == "allow_pickle" and not (isinstance(k.value, ast.Constant)
                                                         and k.value.value is False)
                        for k in node.keywords):
                    found.append(f"{path.relative_to(ROOT)}:{node.lineno} loads with pickle")
    assert not found, "\n".join(found)


def test_scan_catches_what_it_looks_for(tmp_path):
    """The scan's own check: a file with pickle and eval is caught."""
    bad = ast.parse("import pickle\nx = eval('1')\ny = pd.read_pickle('f')\n")
    assert {n for n in _imports(bad)} & UNSAFE_MODULES
    calls = [n.func for n in ast.walk(bad) if isinstance(n, ast.Call)]
    assert any(isinstance(f, ast.Name) and f.id == "eval" for f in calls)
    assert any(isinstance(f, ast.Attribute) and f.attr == "read_pickle" for f in calls)


def test_engine_never_imports_streamlit():
    """engine/ stays free of the dashboard framework (the dashboard calls the engine, not back)."""
    bad = [str(p.relative_to(ROOT)) for p in _sources("engine")
           if {"streamlit", "dashboard"} & set(_imports(_tree(p)))]
    assert not bad, f"engine modules importing streamlit or dashboard: {bad}"


FORMULAS = ["=1+1", "+1+1", "-2+3", "@SUM(A1)", "\t=1", "\r=1", "=cmd|' /C calc'!A0",
            "=HYPERLINK(\"http://example.invalid\")"]


def test_safe_csv_neutralises_every_formula_start():
    """Cells starting with = + - @ tab or CR get a leading apostrophe (OWASP CSV injection, from memory)."""
    table = pd.DataFrame({"text": FORMULAS, "listed": [[f] for f in FORMULAS],
                          "number": [-1.5] * len(FORMULAS)})
    back = pd.read_csv(io.StringIO(exports.safe_csv(table)), dtype=str, keep_default_na=False)
    for cell in list(back["text"]) + list(back["listed"]):
        assert cell.startswith("'"), cell
    # Numbers stay numbers: a negative value is data, not a formula.
    assert set(back["number"]) == {"-1.5"}


def test_safe_csv_keeps_a_carriage_return_inside_its_cell():
    """A CR inside text cannot start a new spreadsheet row that begins with a formula."""
    table = pd.DataFrame({"text": ["note\r=cmd|' /C calc'!A0", "a\r\n+1", "plain"]})
    back = pd.read_csv(io.StringIO(exports.safe_csv(table)), dtype=str, keep_default_na=False)
    # Still one row per record, and a cell is judged by its first character only.
    assert len(back) == len(table)
    for cell in back["text"]:
        assert not cell.startswith(("=", "+", "-", "@", "\r", "\n")), cell


def _hostile_assessment():
    a = sitefile.load(DEMO)
    spot = {s.position_id for s in a.spot_readings}
    i = next(i for i, p in enumerate(a.positions) if p.id not in spot)
    pos = list(a.positions)
    pos[i] = dataclasses.replace(pos[i], id="=cmd|' /C calc'!A0",
                                 note="<script>alert('note')</script>")
    site = dataclasses.replace(a.site, name="<img src=x onerror=alert(1)> & Co",
                               notes="</td><script>alert('site')</script>")
    return dataclasses.replace(a, site=site, positions=tuple(pos))


def test_rank_exports_neutralise_a_formula_position_id():
    """The ranking CSV of the command line, dashboard and summary keeps a formula id inert."""
    ev = pipeline.evaluate(_hostile_assessment())
    outputs = {"engine.io.exports.safe_csv": exports.safe_csv(ev.table)}
    try:
        from engine import report
        outputs["engine.report.ranking_csv"] = report.ranking_csv(ev).decode("utf-8")
    except ImportError:
        pass
    for name, text in outputs.items():
        assert "'=cmd|" in text, name
        for line in text.splitlines():
            for cell in line.split(","):
                assert not cell.strip('"').startswith(("=", "@")), f"{name}: {cell!r}"


@pytest.mark.slow
def test_summary_html_escapes_user_text():
    """Site name, notes, ids and assessor text appear escaped in the HTML summary, never as tags."""
    report = pytest.importorskip("engine.report")
    ev = pipeline.evaluate(_hostile_assessment())
    html = report.summary_html_bytes(ev, assessor="<b onmouseover=alert(2)>me</b>",
                                     notes="<iframe src=//x>").decode("utf-8")
    for raw in ("<script>alert", "<img src=x", "<b onmouseover", "<iframe", "</td><script>"):
        assert raw not in html, raw
    assert "&lt;img src=x onerror=alert(1)&gt; &amp; Co" in html
    assert "&lt;iframe src=//x&gt;" in html


@pytest.mark.slow
def test_summary_html_loads_nothing_from_outside():
    """The HTML summary is self-contained: no script, image or style fetched from a URL."""
    report = pytest.importorskip("engine.report")
    html = report.summary_html_bytes(pipeline.evaluate(sitefile.load(DEMO))).decode("utf-8")
    for needle in ('src="http', "src='http", 'src="//', 'href="http', "@import", "url(http"):
        assert needle not in html, needle


def test_dashboard_config_binds_to_loopback():
    """The dashboard listens on 127.0.0.1 only, sends no usage statistics and bounds uploads."""
    path = ROOT / ".streamlit" / "config.toml"
    if not path.exists():
        pytest.skip("the dashboard has no .streamlit/config.toml yet")
    cfg = tomllib.loads(path.read_text(encoding="utf-8"))
    assert cfg["server"]["address"] == "127.0.0.1"
    assert cfg["browser"]["gatherUsageStats"] is False
    assert 0 < cfg["server"]["maxUploadSize"] <= 200  # [MB]


def test_every_dashboard_upload_is_bounded():
    """Each file_uploader in the dashboard has its own size limit or falls under the config's."""
    path = ROOT / ".streamlit" / "config.toml"
    has_global = path.exists() and "maxUploadSize" in tomllib.loads(
        path.read_text(encoding="utf-8")).get("server", {})
    unbounded = []
    for p in _sources("dashboard"):
        for node in ast.walk(_tree(p)):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr == "file_uploader"
                    and not any(k.arg == "max_upload_size" for k in node.keywords)):
                unbounded.append(f"{p.relative_to(ROOT)}:{node.lineno}")
    assert has_global or not unbounded, unbounded
