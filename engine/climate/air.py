"""Air density at the site.

References
----------
ISO 2533:1975, Standard Atmosphere (International Standard Atmosphere, troposphere).
"""
from __future__ import annotations

import numpy as np

#: Specific gas constant of dry air [J/(kg K)].
R_DRY_AIR = 287.05
P0_PA = 101325.0
T0_K = 288.15
LAPSE_K_PER_M = 0.0065
#: Barometric exponent g / (R L) for the ISA troposphere [-].
BARO_EXPONENT = 5.2559


def isa_pressure_pa(altitude_m):
    """ISA pressure p = p0 (1 - L h / T0)^5.2559 [Pa] (ISO 2533)."""
    return P0_PA * (1.0 - LAPSE_K_PER_M * np.asarray(altitude_m, float) / T0_K) ** BARO_EXPONENT


def air_density_kgm3(altitude_m=0.0, temperature_c=15.0, pressure_pa=None):
    """Dry-air density ρ = p / (R T) [kg/m³], with ISA pressure from altitude unless measured.

    Parameters
    ----------
    altitude_m : site altitude above sea level [m]
    temperature_c : mean air temperature [°C]
    pressure_pa : measured mean pressure [Pa]; when None, ISA pressure at ``altitude_m``
    """
    p = isa_pressure_pa(altitude_m) if pressure_pa is None else np.asarray(pressure_pa, float)
    return p / (R_DRY_AIR * (np.asarray(temperature_c, float) + 273.15))


def site_air_density_kgm3(site) -> float:
    """Air density for a :class:`engine.core.model.Site` [kg/m³]."""
    return float(air_density_kgm3(site.altitude_m, site.air_temperature_c, site.air_pressure_pa))
