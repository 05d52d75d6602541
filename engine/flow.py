"""The joint between the climate and building models and the energy model.

:class:`EffectiveClimate` is the one structure the energy model sees: for every candidate
position and every sector, a Weibull climate at hub height *including* the building effects,
a turbulence intensity and an inflow skew, plus per-position flags and diagnostics. Either side
can change alone as long as this structure keeps its meaning.

Array shapes: P positions, S sectors.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import profiles


@dataclass(frozen=True)
class EffectiveClimate:
    """Per position and sector wind at hub height, after building effects.

    Attributes
    ----------
    position_ids : (P,) position ids, in the assessment's order
    sector_deg : (S,) sector centres [deg from north, wind from]
    hub_height_m : (P,) hub height above ground [m]
    frequency : (P, S) sector frequency [-], each row sums to 1
    weibull_k : (P, S) Weibull shape at hub height [-]
    free_c_ms : (P, S) Weibull scale of the undisturbed flow at hub height [m/s]
    speed_factor : (P, S) building effect on the mean speed (speed-up > 1, shelter < 1) [-]
    turbulence_intensity : (P, S) longitudinal turbulence intensity at hub height [-]
    inflow_skew_deg : (P, S) angle of the mean flow to the horizontal at the rotor [deg]
    air_density_kgm3 : site air density [kg/m³]
    flags : per position, a tuple of short reasons (``"in roof recirculation zone"``)
    diagnostics : named per-position arrays from the building models, shape (P,) or (P, S)
        (``in_recirculation_zone``, ``min_clear_mast_m``, ``spilled_fraction``, ...)
    """

    position_ids: tuple
    sector_deg: np.ndarray
    hub_height_m: np.ndarray
    frequency: np.ndarray
    weibull_k: np.ndarray
    free_c_ms: np.ndarray
    speed_factor: np.ndarray
    turbulence_intensity: np.ndarray
    inflow_skew_deg: np.ndarray
    air_density_kgm3: float
    flags: tuple = ()
    diagnostics: dict = field(default_factory=dict)

    @property
    def weibull_c_ms(self) -> np.ndarray:
        """Weibull scale at the rotor, building effects included [m/s], (P, S)."""
        return self.free_c_ms * self.speed_factor

    @property
    def n_positions(self) -> int:
        return len(self.position_ids)


def free_stream_at_hub(assessment, hub_height_m):
    """Undisturbed per-sector Weibull at each hub height: (k, c) arrays of shape (P, S).

    The climate's scale is carried from its height and roughness to the site's roughness and
    displacement with the EN 1991-1-4 terrain factor and the log law
    (:func:`engine.profiles.transfer_speed_ratio`); the shape k is kept.
    """
    clim, site = assessment.climate, assessment.site
    ratio = profiles.transfer_speed_ratio(
        np.asarray(hub_height_m, float), site.terrain_roughness_m, clim.height_m,
        clim.roughness_m, site.displacement_m, clim.displacement_m)
    c = np.asarray(clim.weibull_c_ms, float)[None, :] * ratio[:, None]
    k = np.broadcast_to(np.asarray(clim.weibull_k, float), c.shape).copy()
    return k, c


def effective_climate(assessment, air_density_kgm3: float) -> EffectiveClimate:
    """Effective climate of every position: free stream at hub height, then building effects."""
    positions = assessment.positions
    hub = np.array([assessment.hub_height_m(p) for p in positions], dtype=float)
    k, free_c = free_stream_at_hub(assessment, hub)
    P, S = free_c.shape
    freq = np.broadcast_to(np.asarray(assessment.climate.frequency, float), (P, S)).copy()
    site = assessment.site
    ti = np.broadcast_to(profiles.turbulence_intensity_terrain(
        hub, site.terrain_roughness_m, site.displacement_m)[:, None], (P, S)).copy()
    return EffectiveClimate(
        position_ids=tuple(p.id for p in positions),
        sector_deg=np.asarray(assessment.climate.sector_deg, float),
        hub_height_m=hub, frequency=freq, weibull_k=k, free_c_ms=free_c,
        speed_factor=np.ones((P, S)), turbulence_intensity=ti,
        inflow_skew_deg=np.zeros((P, S)), air_density_kgm3=float(air_density_kgm3),
        flags=tuple(() for _ in positions), diagnostics={})
