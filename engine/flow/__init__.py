"""The wind at each candidate position: vertical profiles, transfer from the reference to the
site, the buildings' effects (roof zones, roof flow, shelter, gaps) and field spot readings,
joined in :class:`engine.flow.effective.EffectiveClimate`.

Above :mod:`engine.climate` (it carries a climate) and below :mod:`engine.energy` (which reads
only the effective climate, the one joint between the building models and the energy model).
"""
from engine.flow import (buildings, effective, gaps, profiles, roofflow, roofzones, shelter,
                         spot, transfer)
from engine.flow.effective import EffectiveClimate, effective_climate

__all__ = ["buildings", "effective", "gaps", "profiles", "roofflow", "roofzones", "shelter",
           "spot", "transfer", "EffectiveClimate", "effective_climate"]
