"""Domain model: small frozen dataclasses that travel together through the chain.

This module is the front of the site file's dataclasses: every name below is defined in a
module of :mod:`engine.core` by subject and re-exported here as the same object, so
``from engine.core.model import Turbine`` and ``model.Turbine`` are the class itself.

==========================================  =============================================
:mod:`engine.core.site_model`               ``Site``, ``Building``, ``Position``, ``Receptor``
:mod:`engine.core.climate_model`            ``WindClimate``, ``SpotReading``
:mod:`engine.core.turbine_model`            ``Turbine``, ``BETZ_CP``, ``RHO_STANDARD``
:mod:`engine.core.settings_model`           ``Losses``, ``Economics``, ``Uncertainty``,
                                            ``RankingSettings``, ``TransferSettings``,
                                            ``EnergySettings``
:mod:`engine.core.consent`                  ``ConsentSettings``, ``NoiseSettings``,
                                            ``FlickerSettings``, ``SitingRule``
:mod:`engine.core.assessment_model`         ``Assessment``, ``FORMAT_VERSION``
==========================================  =============================================

Every class validates itself on construction and raises one :class:`~engine.core.errors.InputError`
listing every problem, each as ``(field, message)``. The site-file loader prefixes the field with
where the object sits (``turbines[1].rated_power_w``). SI units throughout: m, m/s, W, Pa, °C for
temperatures entered by people; units are in the field names.

Conventions
-----------
* Plan coordinates are local metres: ``x_m`` east, ``y_m`` north.
* Directions are degrees clockwise from north, the direction the wind comes *from*.
* Sector ``i`` of ``n`` is centred on ``i * 360 / n`` degrees (sector 0 centred on north).
* A position's ``mast_height_m`` is the hub height above its base: the roof surface for a
  roof position, the ground for gap and mast positions.

The site-file reader (:mod:`engine.io.sitefile`) resolves the dataclasses' type hints in this
module's namespace, so every name a hint uses (``Optional`` included) is imported here.
"""
from __future__ import annotations

from typing import Optional  # noqa: F401  (hints of the dataclasses resolve here)

from engine.core.assessment_model import FORMAT_VERSION, Assessment
from engine.core.climate_model import CLIMATE_SOURCES, SpotReading, WindClimate
from engine.core.consent import (ConsentSettings, FlickerSettings, NoiseSettings,
                                 SitingRule, receptor_problems, turbine_problems)
from engine.core.errors import InputError, Problems, check_range
from engine.core.measured_checks import check_measured_position, check_sector_values
from engine.core.settings_model import (LOAD_PROFILES, MORPHOMETRY_LAYOUTS, OBJECTIVES,
                                        TRANSFER_METHODS, EnergySettings, Economics, Losses,
                                        RankingSettings, TransferSettings, Uncertainty)
from engine.core.site_model import (MAX_OUTLINE_VERTICES, POSITION_KINDS, ROOF_TYPES,
                                    Building, Position, Receptor, Site)
from engine.core.turbine_model import (AXIS_TYPES, BETZ_CP, IEC_SMALL_CLASSES, MIN_JUDGED_POWER_W,
                                       REGULATION_TYPES, RHO_STANDARD, Turbine)

__all__ = [
    # the site file as one object
    "Assessment", "FORMAT_VERSION",
    # the place
    "Site", "Building", "Position", "Receptor", "POSITION_KINDS", "ROOF_TYPES",
    "MAX_OUTLINE_VERTICES",
    # the wind
    "WindClimate", "SpotReading", "CLIMATE_SOURCES",
    # the turbine
    "Turbine", "BETZ_CP", "MIN_JUDGED_POWER_W", "RHO_STANDARD", "AXIS_TYPES", "REGULATION_TYPES",
    "IEC_SMALL_CLASSES",
    # the assessor's choices
    "Losses", "Economics", "Uncertainty", "RankingSettings", "TransferSettings",
    "EnergySettings", "OBJECTIVES", "LOAD_PROFILES", "TRANSFER_METHODS", "MORPHOMETRY_LAYOUTS",
    # consent inputs and checks
    "ConsentSettings", "NoiseSettings", "FlickerSettings", "SitingRule", "receptor_problems",
    "turbine_problems", "check_measured_position", "check_sector_values",
    # errors
    "InputError", "Problems", "check_range",
]
