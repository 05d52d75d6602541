"""Core: the domain dataclasses, the one input-error type and display units.

The bottom of the chain: every other package imports from here, and nothing here imports
another package of the engine.
"""
__version__ = "0.1.0"

from engine.core import errors, model, units  # noqa: E402
from engine.core.errors import InputError, Problems  # noqa: E402
from engine.core.model import (  # noqa: E402
    Assessment, Building, Economics, Losses, Position, RankingSettings, Receptor, Site,
    SpotReading, TransferSettings, Turbine, Uncertainty, WindClimate)

__all__ = ["__version__", "errors", "model", "units", "InputError", "Problems", "Assessment",
           "Building", "Economics", "Losses", "Position", "RankingSettings", "Receptor", "Site",
           "SpotReading", "TransferSettings", "Turbine", "Uncertainty", "WindClimate"]
