"""Perch engine: the physics and data chain for siting small wind turbines on and between buildings.

The packages follow the chain, each importing only from the ones before it::

    core       dataclasses of every input, the one input-error type, display units
    io         site file (JSON, schema, migration, atomic save), record readers, autosave, safe CSV
    climate    quality control, Weibull fits, long-term correction, air density
    flow       vertical profiles, transfer to the site, roof zones and flow, shelter, gaps,
               spot readings, and the effective climate per position (the joint)
    energy     turbines and power curves, annual energy, uncertainty, loads, noise, economics
    chain      evaluate (the one chain), ranking, the ranked table's JSON/CSV documents
    screening  many buildings from a table: checks, neighbourhood, local and Dask engines
    report     the siting summary (HTML/PDF) and the chart builders (the only Altair users)
    cli        ``python -m engine <command>``

The common entry points are re-exported here, so ``from engine import evaluate, load_site``
works; they are imported on first use, so ``import engine`` stays light. The engine never
imports the dashboard framework.
"""
from __future__ import annotations

import importlib

from engine.core import __version__

#: Public name -> (module, attribute). Each module named here is the one place it is defined.
_FRONT = {
    "Assessment": ("engine.core.model", "Assessment"),
    "InputError": ("engine.core.errors", "InputError"),
    "load_site": ("engine.io.sitefile", "load"),
    "loads_site": ("engine.io.sitefile", "loads"),
    "save_site": ("engine.io.sitefile", "save"),
    "read_record": ("engine.io.records", "read_record"),
    "climate_from_record": ("engine.climate.fit", "climate_from_record"),
    "effective_climate": ("engine.flow.effective", "effective_climate"),
    "EffectiveClimate": ("engine.flow.effective", "EffectiveClimate"),
    "evaluate": ("engine.chain.pipeline", "evaluate"),
    "Evaluation": ("engine.chain.pipeline", "Evaluation"),
    "rank_document": ("engine.chain.documents", "rank_document"),
}

__all__ = ["__version__", *_FRONT]


def __getattr__(name: str):
    try:
        module, attribute = _FRONT[name]
    except KeyError:
        raise AttributeError(f"module 'engine' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module), attribute)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
