"""engine.core.model is the front of the site file's dataclasses, which live in modules of
engine.core by subject: the front must hand out the very same objects, list every public name
of those modules, and let the site-file reader resolve every type hint in its namespace."""
from __future__ import annotations

import ast
import dataclasses
import inspect
import typing
from pathlib import Path

import pytest

from engine.core import (assessment_model, climate_model, consent, model, settings_model,
                         site_model, turbine_model)
from engine.io import sitefile

SUBJECT_MODULES = (site_model, climate_model, turbine_model, settings_model, assessment_model)


ROOT = Path(__file__).resolve().parents[2]


def _public(module):
    """Public names a module defines at its top level (classes, functions, constants)."""
    names = set()
    for node in ast.parse(inspect.getsource(module)).body:
        if isinstance(node, (ast.ClassDef, ast.FunctionDef)):
            names.add(node.name)
        elif isinstance(node, ast.Assign):
            names |= {t.id for t in node.targets if isinstance(t, ast.Name)}
    return {n for n in names if not n.startswith("_")}


@pytest.mark.parametrize("module", SUBJECT_MODULES, ids=lambda m: m.__name__)
def test_front_re_exports_each_subject_module_as_the_same_objects(module):
    names = _public(module)
    assert names, module.__name__
    assert names <= set(model.__all__), sorted(names - set(model.__all__))
    for name in names:
        assert getattr(model, name) is getattr(module, name), name


def test_front_lists_only_names_it_has():
    assert len(set(model.__all__)) == len(model.__all__)
    assert [n for n in model.__all__ if not hasattr(model, n)] == []


def _dataclasses_reachable_from(cls, seen):
    """``cls`` and every dataclass its fields hold (directly, in tuples or Optional)."""
    if cls in seen:
        return
    seen.add(cls)
    for hint in typing.get_type_hints(cls, vars(model)).values():
        for part in (hint, *typing.get_args(hint)):
            if dataclasses.is_dataclass(part):
                _dataclasses_reachable_from(part, seen)


def test_every_site_file_hint_resolves_in_the_front_and_in_its_own_module():
    """The reader resolves hints in the front's namespace; each class's own module agrees."""
    seen = set()
    _dataclasses_reachable_from(model.Assessment, seen)
    assert {model.Site, model.Turbine, model.EnergySettings, consent.ConsentSettings} <= seen
    for cls in seen:
        in_front = typing.get_type_hints(cls, vars(model))
        in_own = typing.get_type_hints(cls)
        assert in_front == in_own, cls.__name__


def test_a_site_file_round_trip_builds_the_front_classes():
    """What the reader builds are instances of the classes the front hands out."""
    a = sitefile.load(ROOT / "demo_sites" / "larkspur_yard.json")
    assert type(a) is model.Assessment
    assert type(a.site) is site_model.Site and type(a.turbines[0]) is model.Turbine
    assert type(a.energy) is settings_model.EnergySettings
