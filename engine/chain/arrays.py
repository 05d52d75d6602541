"""The chain over arrays of positions: climate at the hub, building effects, yield.

:func:`engine.chain.pipeline.evaluate` runs the chain for one assessment; the portfolio
screening runs it for many buildings at once, each with its own terrain. Both go through this
module's steps, so a correction made to a step reaches both:

* :func:`roof_climate` — the effective climate of roof positions given as arrays: the
  undisturbed climate carried to each hub over each position's own terrain
  (:func:`engine.flow.transfer.weibull_at_hub`), the ambient turbulence of that terrain
  (:func:`engine.flow.profiles.turbulence_intensity_terrain`), the main energy sectors
  (:func:`engine.flow.roofzones.main_energy_sectors`) and the roof zones and roof flow
  (:func:`engine.flow.effective.roof_effects`, which the roof branch of
  :func:`engine.flow.effective.effective_climate` calls);
* :func:`position_yields` — the yield of every position and turbine from an effective climate
  (:func:`engine.energy.aep.yield_arrays`), with the mean hub speed, the mean turbulence and
  the roof clearance per position; :func:`engine.chain.pipeline.energy_table` and the
  screening both call it.

Array shapes: P positions, S sectors, T turbines.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from engine.climate.weibull import mixture_mean_ms
from engine.energy import aep as energy
from engine.flow import effective as flow
from engine.flow import roofzones
from engine.flow import shelter as wakes


@dataclass(frozen=True)
class PositionYields:
    """Yield and hub conditions of every position x turbine.

    Attributes
    ----------
    yields : :class:`engine.energy.aep.YieldArrays` (P, T): gross and net energy [Wh], speed
        sensitivity (NaN when not asked for), capacity factor
    mean_speed_ms : (P,) mean hub speed with building effects, over all sectors [m/s]
    turbulence_intensity : (P,) frequency-weighted turbulence intensity at the hub [-]
    min_clear_mast_m : (P,) lowest mast putting the hub above the roof's high-turbulence zone
        in the main energy sectors [m] (NaN off roofs)
    hub_height_m : (P,) hub height above ground [m]
    """

    yields: energy.YieldArrays
    mean_speed_ms: np.ndarray
    turbulence_intensity: np.ndarray
    min_clear_mast_m: np.ndarray
    hub_height_m: np.ndarray

    @property
    def net_kwh(self) -> np.ndarray:
        """(P, T) net energy per year [kWh]."""
        return self.yields.net_wh / 1000.0

    @property
    def capacity_factor(self) -> np.ndarray:
        """(P, T) net capacity factor [-]."""
        return self.yields.capacity_factor


def position_yields(eff: flow.EffectiveClimate, turbines, losses, energy_settings=None,
                    speed_sensitivity: bool = True) -> PositionYields:
    """Yield of every position and turbine, and the hub's mean speed, turbulence and clearance.

    Parameters
    ----------
    eff : effective climate of P positions
    turbines : sequence of :class:`engine.core.model.Turbine`
    losses : :class:`engine.core.model.Losses`
    energy_settings : :class:`engine.core.model.EnergySettings` (the turbulence allowances;
        defaults when None)
    speed_sensitivity : also find d ln E / d ln V (for P75/P90); the screening leaves it out,
        which halves the cost of the bins sums

    Notes
    -----
    Energy by :func:`engine.energy.aep.yield_arrays` (density, turbulence and skew corrected
    curves integrated exactly, method of bins beside it, losses chain); mean speed V̄ = Σ_s f_s c_s Γ(1 + 1/k_s)
    (:func:`engine.climate.weibull.mixture_mean_ms`); TI = Σ_s f_s TI_s.
    """
    y = energy.yield_arrays(eff.frequency, eff.weibull_k, eff.weibull_c_ms,
                            eff.turbulence_intensity, eff.inflow_skew_deg, turbines,
                            eff.air_density_kgm3, losses, energy_settings=energy_settings,
                            no_credit=eff.diagnostics.get("no_turbulence_credit"),
                            with_sensitivity=speed_sensitivity)
    P = eff.n_positions
    need = np.asarray(eff.diagnostics.get("min_clear_mast_m", np.full(P, np.nan)), float)
    return PositionYields(
        yields=y, mean_speed_ms=mixture_mean_ms(eff.frequency, eff.weibull_k, eff.weibull_c_ms),
        turbulence_intensity=np.sum(eff.frequency * eff.turbulence_intensity, axis=-1),
        min_clear_mast_m=need if need.shape == (P,) else np.full(P, np.nan),
        hub_height_m=np.asarray(eff.hub_height_m, float))


def _column(roofs, name, default=0.0):
    if name in roofs:
        return np.asarray(roofs[name], float)
    return np.full(len(roofs["height_m"]), default)


def roof_geometry(roofs, sector_deg) -> dict:
    """:func:`engine.flow.effective.roof_geometry` of roof positions given as arrays, (P, S).

    ``roofs`` maps ``height_m``, ``length_m``, ``width_m``, ``orientation_deg``,
    ``parapet_height_m`` and optionally ``u_m``, ``v_m`` (the position in the block's own axes
    from its centre [m], default 0: the roof's centre) to (P,) arrays.
    """
    return flow.roof_geometry(sector_deg, np.asarray(roofs["height_m"], float),
                              np.asarray(roofs["length_m"], float),
                              np.asarray(roofs["width_m"], float),
                              np.asarray(roofs["orientation_deg"], float),
                              np.asarray(roofs["parapet_height_m"], float),
                              _column(roofs, "u_m"), _column(roofs, "v_m"))


def ambient_at_hub(climate, roughness_m, displacement_m, hub_height_m, transfer_settings,
                   frontal_area_fraction=None, canopy_height_m=None):
    """Undisturbed climate at each hub over each position's terrain, (P, S) arrays.

    The terrain may be one per position, (P,), or one per position and sector, (P, S)
    (:func:`engine.flow.effective.ambient_climate`, which the detailed chain calls).
    ``frontal_area_fraction`` and ``canopy_height_m`` (P,) describe the surrounding buildings
    where known (NaN or None elsewhere): below the log law's lowest height the speed and the
    turbulence then follow the in-canopy profile, as in the detailed chain
    (:func:`engine.flow.transfer.site_canopy`).

    Returns
    -------
    (frequency, weibull_k, free_c_ms, ambient_ti): sector frequency [-], Weibull shape [-]
    and scale [m/s] by :func:`engine.flow.transfer.weibull_at_hub`, turbulence intensity of
    the same terrain and profile (:func:`engine.flow.profiles.turbulence_intensity_terrain`)
    """
    terrain = {"roughness_m": roughness_m, "displacement_m": displacement_m,
               "frontal_area_fraction": frontal_area_fraction, "canopy_height_m": canopy_height_m}
    return flow.ambient_climate(climate, terrain, hub_height_m, transfer_settings)


#: Bases of a screened row's surroundings that describe the buildings around it (so its
#: canopy is known), as :func:`engine.screening.settings.assessment_for_building` reads them.
CANOPY_KNOWN_FROM = ("neighbours in the table", "table: area fractions",
                     "neighbours by sector")


def _terrain_canopy(terrain, n):
    """(λf, H̄) per position from a terrain mapping, NaN where the surroundings are not
    described by buildings (a roughness or terrain category given instead)."""
    if "frontal_area_fraction" not in terrain or "surroundings_height_m" not in terrain:
        return None, None
    known = np.ones(n, bool)
    if "surroundings_from" in terrain:
        known = np.isin(np.asarray(terrain["surroundings_from"], object), CANOPY_KNOWN_FROM)
    lf = np.asarray(terrain["frontal_area_fraction"], float)
    hc = np.asarray(terrain["surroundings_height_m"], float)
    if lf.ndim == 2:  # per sector: (P, S)
        known = known[:, None]
    lf = np.where(known, lf, np.nan)
    hc = np.where(known, hc, np.nan)
    return lf, hc


def roof_climate(roofs, terrain, mast_m, climate, air_density_kgm3, transfer_settings,
                 clearance_only: bool = False, geometry=None, main_sector=None, upwind=None):
    """Effective climate of roof positions given as arrays, each over its own terrain.

    Parameters
    ----------
    roofs : mapping of (P,) arrays: the block under each position (as :func:`roof_geometry`),
        ``roof_type`` ("flat"/"pitched") and ``id`` (position ids)
    terrain : mapping with (P,) or (P, S) ``roughness_m`` and ``displacement_m`` of each
        position's surroundings [m] (and optionally ``frontal_area_fraction``,
        ``surroundings_height_m``, ``surroundings_from``)
    mast_m : (P,) mast above the roof surface [m]
    climate : :class:`engine.core.model.WindClimate`
    air_density_kgm3 : air density [kg/m³]
    transfer_settings : :class:`engine.core.model.TransferSettings`
    clearance_only : return only ``(min_clear_mast_m, main_sector)``, (P,) [m] and (P, S) bool
        (the roof flow is skipped: what a mast search needs)
    geometry : :func:`roof_geometry` of the same positions, when already found (it does not
        depend on the mast)
    main_sector : (P, S) main energy sectors, when already found at another mast
    upwind : callable taking the (P,) hub heights [m] and giving the shelter of the positions
        by their upwind neighbours (:func:`engine.flow.shelter.shelter`: (P, S)
        ``speed_factor``, ``added_ti``, ``in_wake_recirculation``); None: no building upwind

    Returns
    -------
    :class:`engine.flow.effective.EffectiveClimate` with (P,) diagnostics
    ``min_clear_mast_m``, ``in_turbulence_zone``, ``in_recirculation_zone``, ``in_roof_wake``,
    ``shelter_factor`` (energy-weighted mean of the shelter's speed factor, 1 without
    ``upwind``).

    Notes
    -----
    The steps of :func:`engine.flow.effective.effective_climate` for roof positions, with the
    terrain per position instead of one site's: roof flow, then the upwind wakes
    (:func:`engine.flow.shelter.apply_shelter`; no turbulence credit in a wake cavity).
    """
    H = np.asarray(roofs["height_m"], float)
    mast = np.asarray(mast_m, float)
    hub = H + mast
    lf, hc = _terrain_canopy(terrain, hub.size)
    freq, k, free_c, ti0 = ambient_at_hub(climate, terrain["roughness_m"],
                                          terrain["displacement_m"], hub, transfer_settings,
                                          lf, hc)
    sector_deg = np.asarray(climate.sector_deg, float)
    main = (roofzones.main_energy_sectors(roofzones.sector_energy_share(freq, k, free_c))
            if main_sector is None else np.asarray(main_sector, bool))
    rf = flow.roof_effects(sector_deg, H, np.asarray(roofs["length_m"], float),
                           np.asarray(roofs["width_m"], float),
                           np.asarray(roofs["orientation_deg"], float),
                           np.asarray(roofs["parapet_height_m"], float),
                           np.asarray(roofs["roof_type"], object) == "pitched",
                           _column(roofs, "u_m"), _column(roofs, "v_m"), mast, ti0, main,
                           clearance_only=clearance_only, geometry=geometry)
    if clearance_only:
        return rf["min_clear_mast_m"], main
    clear = rf["clearance"]
    speed, ti = rf["speed_factor"], rf["turbulence_intensity"]
    # As in effective_climate: no turbulence credit in a recirculation bubble or a wake cavity.
    no_credit = clear["recirculation"] < 0
    shelter_mean = np.ones(hub.size)
    if upwind is not None:
        sh = upwind(hub)
        speed, ti = wakes.apply_shelter(speed, ti, sh)
        no_credit = no_credit | sh["in_wake_recirculation"]
        share = roofzones.sector_energy_share(freq, k, free_c)
        shelter_mean = np.sum(share * sh["speed_factor"], axis=1)
    diag = {"min_clear_mast_m": rf["min_clear_mast_m"],
            "in_turbulence_zone": ((clear["turbulence"] < 0) & main).any(axis=1),
            "in_recirculation_zone": (no_credit & main).any(axis=1),
            "in_roof_wake": ((clear["wake"] < 0) & main).any(axis=1),
            "no_turbulence_credit": no_credit, "shelter_factor": shelter_mean}
    return flow.EffectiveClimate(
        position_ids=tuple(roofs["id"]), sector_deg=sector_deg, hub_height_m=hub,
        frequency=freq, weibull_k=k, free_c_ms=free_c, speed_factor=speed,
        turbulence_intensity=ti,
        inflow_skew_deg=rf["inflow_skew_deg"], air_density_kgm3=float(air_density_kgm3),
        flags=(), diagnostics=diag)


def roof_yields(roofs, terrain, mast_m, climate, air_density_kgm3, transfer_settings,
                turbines, losses, geometry=None, main_sector=None,
                speed_sensitivity: bool = False, upwind=None):
    """:func:`position_yields` of :func:`roof_climate` (the whole chain for roof positions),
    and the (P,) ``shelter_factor`` of the upwind wakes [-]."""
    eff = roof_climate(roofs, terrain, mast_m, climate, air_density_kgm3, transfer_settings,
                       geometry=geometry, main_sector=main_sector, upwind=upwind)
    return (position_yields(eff, turbines, losses, speed_sensitivity=speed_sensitivity),
            eff.diagnostics["shelter_factor"])
