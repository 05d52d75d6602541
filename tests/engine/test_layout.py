"""The engine's package layout: imports point down the chain, no cycles, no private names used
across modules, the UI framework and chart libraries only where they belong, and no giant
module or function.

These read the source with :mod:`ast`, so they hold for imports inside functions too.
"""
from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
ENGINE = ROOT / "engine"

#: The chain, bottom first. A module may import from its own layer or any layer below it.
LAYERS = ("core", "io", "climate", "flow", "energy", "chain", "screening", "report", "cli")
RANK = {name: i for i, name in enumerate(LAYERS)}
TOP = len(LAYERS)  # engine/__init__.py (the front) and engine/__main__.py

#: Packages allowed to import presentation libraries.
PRESENTATION = {"report"}
MAX_MODULE_LINES = 600
MAX_FUNCTION_LINES = 80

#: Offenders still open (listed so that no new one can appear unnoticed; each is work to do,
#: and removing it from here is part of fixing it).
OPEN_CYCLES = set()
OPEN_PRIVATE_USES = set()
OPEN_LONG_MODULES = set()
OPEN_LONG_FUNCTIONS = set()


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


MODULES = {_module_name(p): p for p in sorted(ENGINE.rglob("*.py"))
           if "turbine_library" not in p.parts}


def _layer(module: str) -> int:
    parts = module.split(".")
    if len(parts) == 1 or parts[1] == "__main__":
        return TOP
    return RANK[parts[1]]


def _is_package(module: str) -> bool:
    return MODULES[module].name == "__init__.py"


def _resolve(importer: str, node: ast.ImportFrom) -> str:
    if node.level == 0:
        return node.module or ""
    base = importer.split(".")
    if not _is_package(importer):
        base = base[:-1]
    base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def engine_imports(module: str):
    """(imported engine module, name or None, line) for every import in ``module``."""
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.split(".")[0] == "engine":
                    yield alias.name, None, node.lineno
        elif isinstance(node, ast.ImportFrom):
            target = _resolve(module, node)
            if target.split(".")[0] != "engine":
                continue
            for alias in node.names:
                sub = f"{target}.{alias.name}"
                if sub in MODULES:  # ``from engine.flow import profiles`` imports a module
                    yield sub, None, node.lineno
                else:
                    yield target, alias.name, node.lineno


def third_party_imports(module: str) -> set[str]:
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            found.add(node.module.split(".")[0])
    return found


def test_every_engine_module_sits_in_a_layer():
    """Each module of engine/ is in one of the chain's packages (or is the front)."""
    stray = [m for m in MODULES if m.count(".") >= 1 and m.split(".")[1] not in RANK
             and m != "engine.__main__"]
    assert stray == []


def test_imports_point_down_the_chain():
    """No module imports from a layer above its own, nor from the package front."""
    upward = []
    for module in MODULES:
        own = _layer(module)
        for target, name, line in engine_imports(module):
            if target == "engine" and own < TOP and name != "__version__":
                upward.append(f"{module}:{line} imports the front 'engine' ({name})")
            elif target != "engine" and target in MODULES and _layer(target) > own:
                upward.append(f"{module}:{line} imports {target} (layer "
                              f"{LAYERS[_layer(target)]} is above {LAYERS[own]})")
            elif target != "engine" and target not in MODULES:
                upward.append(f"{module}:{line} imports {target}, which does not exist")
    assert upward == []


def test_no_import_cycle():
    """The module import graph (package fronts included) has no cycle."""
    graph = {m: set() for m in MODULES}
    for module in MODULES:
        for target, name, _ in engine_imports(module):
            if target in MODULES and target != module:
                graph[module].add(target)
    state, cycles = {}, []

    def visit(node, path):
        state[node] = 1
        for nxt in sorted(graph[node]):
            if state.get(nxt) == 1:
                cycles.append(" -> ".join(path[path.index(nxt):] + [nxt]))
            elif nxt not in state:
                visit(nxt, path + [nxt])
        state[node] = 2

    for m in sorted(graph):
        if m not in state:
            visit(m, [m])
    assert set(cycles) <= OPEN_CYCLES, sorted(set(cycles) - OPEN_CYCLES)


def _private_uses(path: Path, own_module: str | None):
    """Names starting with one underscore imported from, or read off, another engine module."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    aliases = {}
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            target = node.module or ""
            if node.level:
                target = _resolve(own_module, node) if own_module else target
            if target.split(".")[0] != "engine":
                continue
            for a in node.names:
                if a.name.startswith("_") and not a.name.startswith("__"):
                    out.append(f"{path.relative_to(ROOT)}:{node.lineno} imports {a.name}")
                full = f"{target}.{a.name}"
                if full in MODULES:
                    aliases[a.asname or a.name] = full
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.split(".")[0] == "engine" and a.asname:
                    aliases[a.asname] = a.name
    for node in ast.walk(tree):
        if (isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name)
                and node.value.id in aliases and node.attr.startswith("_")
                and not node.attr.startswith("__")):
            out.append(f"{path.relative_to(ROOT)}:{node.lineno} reads "
                       f"{node.value.id}.{node.attr}")
    return out


def test_no_private_name_used_across_modules():
    """Engine modules, the dashboard, the tests and the benchmarks use only public names of
    other engine modules (a ``_name`` is private to the module that defines it)."""
    found = []
    for module, path in MODULES.items():
        found += _private_uses(path, module)
    for folder in ("dashboard", "tests", "benchmarks", "demo_sites"):
        for path in sorted((ROOT / folder).rglob("*.py")):
            found += _private_uses(path, None)
    assert set(found) <= OPEN_PRIVATE_USES, sorted(set(found) - OPEN_PRIVATE_USES)


def test_presentation_libraries_only_in_presentation_packages():
    """No engine module imports streamlit; altair and vl_convert only in engine.report."""
    wrong = []
    for module in MODULES:
        libs = third_party_imports(module)
        if "streamlit" in libs:
            wrong.append(f"{module} imports streamlit")
        layer = module.split(".")[1] if "." in module else ""
        if libs & {"altair", "vl_convert"} and layer not in PRESENTATION:
            wrong.append(f"{module} imports {sorted(libs & {'altair', 'vl_convert'})}")
    assert wrong == []


def test_every_package_front_has_a_docstring_and_all():
    """Each package says its place in the chain and lists its public names."""
    missing = []
    for module, path in MODULES.items():
        if path.name != "__init__.py" or module.endswith(".cli"):
            continue
        tree = ast.parse(path.read_text(encoding="utf-8"))
        if not ast.get_docstring(tree):
            missing.append(f"{module}: no docstring")
        if not any(isinstance(n, ast.Assign) and any(getattr(t, "id", "") == "__all__"
                                                     for t in n.targets) for n in tree.body):
            missing.append(f"{module}: no __all__")
    assert missing == []


def test_front_names_resolve():
    """Every name the engine's front lists can be imported from it."""
    import engine
    for name in engine.__all__:
        assert getattr(engine, name) is not None, name


def _sizes():
    long_modules, long_functions = [], []
    for module, path in MODULES.items():
        text = path.read_text(encoding="utf-8")
        n = text.count("\n")
        if n > MAX_MODULE_LINES:
            long_modules.append(f"{module}: {n} lines")
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                length = node.end_lineno - node.lineno + 1
                if length > MAX_FUNCTION_LINES:
                    long_functions.append(f"{module}.{node.name}: {length} lines")
    return long_modules, long_functions


def test_no_giant_module():
    f"""No engine module is over {MAX_MODULE_LINES} lines (offenders listed)."""
    new = [m for m in _sizes()[0] if m.split(":")[0] not in OPEN_LONG_MODULES]
    assert new == []


def test_no_giant_function():
    f"""No engine function is over {MAX_FUNCTION_LINES} lines (offenders listed)."""
    new = [f for f in _sizes()[1] if f.split(":")[0] not in OPEN_LONG_FUNCTIONS]
    assert new == []


@pytest.mark.parametrize("module", sorted(MODULES))
def test_module_has_a_docstring(module):
    """Every engine module opens with a docstring that says what it holds."""
    assert ast.get_docstring(ast.parse(MODULES[module].read_text(encoding="utf-8")))


def test_test_files_have_unique_names_across_folders():
    """pytest imports test files by their base name (no __init__.py in tests/): two files of
    one name in tests/engine and tests/dashboard stop the whole run at collection."""
    names = [p.name for p in (ROOT / "tests").rglob("test_*.py")]
    assert sorted({n for n in names if names.count(n) > 1}) == []
