"""The joint between the climate and building models and the energy model.

:class:`EffectiveClimate` is the one structure the energy model sees: for every candidate
position and every sector, a Weibull climate at hub height *including* the building effects,
a turbulence intensity and an inflow skew, plus per-position flags and diagnostics. Either side
can change alone as long as this structure keeps its meaning.

Array shapes: P positions, S sectors.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from engine.flow import buildings
from engine.flow import gaps
from engine.flow import measured_position
from engine.flow import profiles
from engine.flow import roofflow
from engine.flow import roofzones
# The roof branch's array functions, read from here by the chain and the screening too.
from engine.flow.roof_arrays import roof_effects, roof_flow, roof_geometry  # noqa: F401
from engine.flow import shelter
from engine.flow import spot
from engine.core.errors import InputError


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

    The climate is carried from its height and roughness to the site's terrain as the
    assessment's :class:`~engine.core.model.TransferSettings` say (EN 1991-1-4 terrain factor and
    log law by default): see :func:`engine.flow.transfer.free_stream_weibull`.
    """
    from engine.core.model import TransferSettings
    from engine.flow.transfer import free_stream_weibull
    settings = getattr(assessment, "transfer", None) or TransferSettings()
    return free_stream_weibull(assessment.climate, assessment.site, hub_height_m, settings)


def ambient_turbulence_intensity(assessment, hub_height_m):
    """Turbulence intensity of the undisturbed flow at each hub height [-], (P,).

    On the same terrain as the speed transfer (:func:`engine.flow.transfer.site_roughness`:
    the site's z0 and d, or Macdonald's from the morphometry) and the same in-canopy profile
    (:func:`engine.flow.profiles.turbulence_intensity_terrain`).
    """
    from engine.core.model import TransferSettings
    from engine.flow.transfer import site_canopy, site_roughness
    settings = getattr(assessment, "transfer", None) or TransferSettings()
    z0, d, _ = site_roughness(assessment.site, settings)
    return profiles.turbulence_intensity_terrain(np.asarray(hub_height_m, float), z0, d,
                                                 **site_canopy(assessment.site, settings))


def position_terrain(assessment, px_m, py_m, exclude=None) -> dict:
    """Terrain around each position: the site's, or per sector from the buildings upwind.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    px_m, py_m : (P,) position on the plan [m]
    exclude : (P, B) bool, the site's blocks left out of a position's surroundings (the roof
        it stands on, whose flow the roof models give)

    Returns
    -------
    dict: ``roughness_m``, ``displacement_m`` [m], ``frontal_area_fraction`` [-],
    ``canopy_height_m`` [m] (None where unknown): scalars for the site's own terrain
    (:func:`engine.flow.transfer.site_roughness`), or (P, S) arrays with
    ``transfer.sector_morphometry`` on (:func:`engine.flow.sector_roughness.sector_terrain`
    over the site's buildings within ``transfer.sector_fetch_m``; sectors with no building
    keep the site's), then also ``from_buildings`` (P, S) bool.
    """
    from engine.core.model import TransferSettings
    from engine.flow import sector_roughness
    from engine.flow.transfer import site_roughness
    settings = getattr(assessment, "transfer", None) or TransferSettings()
    site = assessment.site
    z0, d, _ = site_roughness(site, settings)
    own = {"roughness_m": z0, "displacement_m": d,
           "frontal_area_fraction": site.frontal_area_fraction,
           "canopy_height_m": site.mean_building_height_m}
    if not settings.sector_morphometry:
        return own
    bldg = buildings.building_arrays(assessment.buildings)
    lp, lf, hbar = sector_roughness.sector_morphometry_points(
        px_m, py_m, bldg, len(assessment.climate.frequency), settings.sector_fetch_m, exclude)
    return sector_roughness.sector_terrain(lp, lf, hbar, own, settings.morphometry_layout)


def ambient_climate(climate, terrain: dict, hub_height_m, settings):
    """Undisturbed climate at each hub over each position's terrain, (P, S) arrays.

    Parameters
    ----------
    climate : :class:`engine.core.model.WindClimate`
    terrain : mapping as :func:`position_terrain` returns (scalars, (P,) or (P, S) arrays)
    hub_height_m : (P,) hub heights above ground [m]
    settings : :class:`engine.core.model.TransferSettings`

    Returns
    -------
    (frequency, weibull_k, free_c_ms, ambient_ti), each (P, S): sector frequency [-], Weibull
    shape [-] and scale [m/s] by :func:`engine.flow.transfer.weibull_at_hub`, and the
    turbulence intensity of the same terrain and in-canopy profile
    (:func:`engine.flow.profiles.turbulence_intensity_terrain`)
    """
    from engine.flow.transfer import weibull_at_hub
    hub = np.atleast_1d(np.asarray(hub_height_m, float))
    z0, d = terrain["roughness_m"], terrain["displacement_m"]
    lf, hc = terrain.get("frontal_area_fraction"), terrain.get("canopy_height_m")
    k, free_c = weibull_at_hub(climate, z0, d, hub, settings, lf, hc)
    P, S = free_c.shape
    freq = np.broadcast_to(np.asarray(climate.frequency, float), (P, S)).copy()
    per_sector = max(np.ndim(z0), np.ndim(d)) == 2
    attenuation = profiles.canopy_attenuation(z0, d, lf)
    ti0 = profiles.turbulence_intensity_terrain(hub[:, None] if per_sector else hub, z0, d,
                                                attenuation=attenuation, canopy_height_m=hc)
    ti0 = np.array(np.broadcast_to(ti0 if per_sector else np.broadcast_to(ti0, hub.shape)[:, None],
                                   (P, S)))
    return freq, k, free_c, ti0


def effective_climate(assessment, air_density_kgm3: float,
                      calibrate_with_spot_readings: bool = True) -> EffectiveClimate:
    """Effective climate of every position: free stream at hub height, then building effects.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    air_density_kgm3 : site air density [kg/m³]
    calibrate_with_spot_readings : put measured speed-ups in place of the model's for the
        spot readings marked ``use_for_calibration`` (others are only compared)

    Returns
    -------
    EffectiveClimate

    Notes
    -----
    speed_factor = S_roof · S_gap · S_shelter per position and sector, each 1 where it does not
    apply: roof positions get the roof-flow model (:mod:`engine.flow.roofflow`) on the ASHRAE zones
    of their own block (:mod:`engine.flow.roofzones`); gap positions the passage concentrator with
    spillage (:mod:`engine.flow.gaps`); every position the wake of the other upwind blocks
    (:mod:`engine.flow.shelter`; a position's own roof and its passage's walls are left out).
    The terrain is the site's, or with ``transfer.sector_morphometry`` one per position and
    sector from the buildings upwind (:func:`position_terrain`; diagnostics
    ``sector_roughness_m``, ``sector_displacement_m``, ``sector_roughness_from_buildings``).
    Turbulence: the ambient intensity on the transfer's own terrain
    (:func:`ambient_climate`); roof and passage keep the ambient σ_u through
    modest speed changes; each model adds its own turbulence in quadrature (see the modules).

    **Main energy sectors** (:func:`engine.flow.roofzones.main_energy_sectors`): per position, the
    fewest sectors, largest first, carrying 80 % of the undisturbed wind energy at hub height
    (f c³ Γ(1 + 3/k)). Zone flags and the minimum mast height use these sectors only.

    Diagnostics of shape (P,) (the pipeline makes them rank-table columns):

    * ``in_recirculation_zone`` — hub inside the roof recirculation bubble of its block, or in a
      block's wake cavity, in a main energy sector;
    * ``in_turbulence_zone`` — hub inside the roof's high-turbulence zone (under max(Z1, Z2))
      in a main energy sector. Evaluated **at the hub**: a rotor of radius r clears the zone
      when ``mast_height_m − r ≥ min_clear_mast_m``; :func:`rotor_in_turbulence_zone` gives
      that per turbine;
    * ``min_clear_mast_m`` — lowest mast height above the roof surface putting the hub at the
      top of the high-turbulence zone in every main sector [m] (NaN off roofs);
    * ``in_roof_wake`` — hub under the roof-wake boundary Z3 in a main sector (a caution);
    * ``spilled_fraction`` — passage positions: share of the capture flow that spills round,
      weighted by sector energy share (the model's spill does not depend on direction);
      NaN elsewhere;
    * ``governing_limit`` — passage positions: "pressure" or "continuity", the limit governing
      in the sector carrying most energy; "" elsewhere;
    * ``shelter_factor`` — energy-weighted mean of the upwind-wake speed factor [-].

    Diagnostics of shape (P, S): ``energy_share``, ``main_sector``, ``zone_top_m`` (height
    above the roof surface of the high-turbulence zone's top at the position), clearances
    ``clearance_recirculation_m``, ``clearance_turbulence_m``, ``clearance_wake_m``,
    ``roof_scaling_length_m``, ``shelter_speed_factor``, ``gap_wall_force_per_q_m2``,
    ``spot_calibrated``, ``no_turbulence_credit`` (hub in a roof recirculation bubble or a
    wake cavity in that sector: the energy model caps the curve at the published one). With spot readings, ``spot_readings`` holds the comparison of
    :func:`engine.flow.spot.spot_comparison` as a dict of columns, and (P,) ``spot_measured_speedup``,
    ``spot_speedup_ci_low``, ``spot_speedup_ci_high``, ``spot_model_speedup``.
    """
    here = measured_position.measuring_index(assessment)
    if here is not None:  # measured AT a position: see _measured_at_position
        return _measured_at_position(assessment, air_density_kgm3, calibrate_with_spot_readings,
                                     here)
    positions = assessment.positions
    hub = np.array([assessment.hub_height_m(p) for p in positions], dtype=float)
    terrain, (freq, k, free_c, ti0) = _undisturbed(assessment, hub)
    sector_deg = np.asarray(assessment.climate.sector_deg, float)
    fx = _building_effects(assessment, hub, sector_deg, freq, k, free_c, ti0)
    fx["diagnostics"].update(_terrain_diagnostics(terrain))
    eff = EffectiveClimate(
        position_ids=tuple(p.id for p in positions), sector_deg=sector_deg,
        hub_height_m=hub, frequency=freq, weibull_k=k, free_c_ms=free_c,
        speed_factor=fx["speed_factor"], turbulence_intensity=fx["turbulence_intensity"],
        inflow_skew_deg=fx["inflow_skew_deg"], air_density_kgm3=float(air_density_kgm3),
        flags=fx["flags"], diagnostics=fx["diagnostics"])
    if assessment.spot_readings:
        eff = _with_spot_readings(assessment, eff, calibrate_with_spot_readings)
    _check_physics(eff)
    return eff


def _terrain_diagnostics(terrain) -> dict:
    """The per-sector terrain as diagnostics, when it came from the buildings ({} otherwise)."""
    if "from_buildings" not in terrain:
        return {}
    return {"sector_roughness_m": terrain["roughness_m"],
            "sector_displacement_m": terrain["displacement_m"],
            "sector_roughness_from_buildings": terrain["from_buildings"]}


def _measured_at_position(assessment, air_density_kgm3, calibrate, here):
    """Effective climate for a climate measured at position ``here``.

    The climate already holds that position's transfer and building speed-up. It is referred to
    the free stream by the model's own speed factor at the logger (for the other positions,
    :func:`reference_climate`), then put back unchanged at its own position: no second
    transfer, no second building speed-up (:mod:`engine.flow.measured_position`).
    """
    reference = replace(assessment, climate=reference_climate(assessment, air_density_kgm3))
    eff = effective_climate(reference, air_density_kgm3, calibrate)
    return measured_position.use_at_position(eff, assessment, here)


def reference_climate(assessment, air_density_kgm3: float = 1.225):
    """The assessment's climate as a free-stream reference (what other sites can be given).

    A reference climate is returned as it is. A climate measured at a position is referred to
    the free stream at the logger by the model's own factor there, c_free,s = c_meas,s /
    R_s(logger), R the model's speed factor with the transfer to the logger's rotor
    (:func:`engine.flow.measured_position.free_stream_equivalent`), at the logger's height in
    the site's terrain: a position identical to the logger gets the measured climate back. The pipeline uses it for the positions other
    than the logger and the portfolio screening for every building, so both refer a measured
    climate to the free stream by the same step.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    air_density_kgm3 : air density [kg/m³] (the speed factor does not depend on it)

    Returns
    -------
    :class:`engine.core.model.WindClimate` with ``measured_at="reference"``
    """
    here = measured_position.measuring_index(assessment)
    if here is None:
        return assessment.climate
    at_logger = effective_climate(measured_position.logger_only(assessment, here),
                                  air_density_kgm3, False)
    # The model's whole factor from the climate to the logger's rotor: transfer (1 unless the
    # transfer's terrain differs from the site's z0, e.g. by morphometry) times speed-up.
    factor = at_logger.weibull_c_ms[0] / np.asarray(assessment.climate.weibull_c_ms, float)
    return measured_position.free_stream_equivalent(assessment, factor).climate
def _undisturbed(assessment, hub):
    """(terrain, ambient climate) of the assessment's positions (see effective_climate)."""
    from engine.core.model import TransferSettings
    positions = assessment.positions
    px = np.array([float(p.x_m) for p in positions])
    py = np.array([float(p.y_m) for p in positions])
    ids = {b.id: i for i, b in enumerate(assessment.buildings)}
    own = np.zeros((len(positions), len(ids)), bool)
    for i, p in enumerate(positions):
        if p.kind == "roof" and p.building_id in ids:
            own[i, ids[p.building_id]] = True
    settings = getattr(assessment, "transfer", None) or TransferSettings()
    terrain = position_terrain(assessment, px, py, own)
    return terrain, ambient_climate(assessment.climate, terrain, hub, settings)


def rotor_in_turbulence_zone(eff: EffectiveClimate, mast_height_m, rotor_radius_m):
    """Whether each rotor disc dips into the roof's high-turbulence zone: (P, T) bool.

    Parameters
    ----------
    eff : effective climate (its ``min_clear_mast_m`` diagnostic)
    mast_height_m : (P,) mast heights above the roof [m]
    rotor_radius_m : (T,) half the rotor's vertical extent [m]

    Notes
    -----
    In the zone when mast − r < min_clear_mast_m; positions off roofs (NaN) are never in it.
    """
    need = np.asarray(eff.diagnostics.get("min_clear_mast_m", np.full(eff.n_positions, np.nan)))
    low = (np.asarray(mast_height_m, float)[:, None] - np.asarray(rotor_radius_m, float)[None, :])
    return np.where(np.isfinite(need)[:, None], low < need[:, None] - 1e-9, False)


def _building_effects(assessment, hub, sector_deg, freq, k, free_c, ti0):
    """Roof, passage and wake models for every position and sector (see effective_climate).

    Each step works on the same (P, S) speed factor, turbulence intensity and skew: the roof
    effects on roof positions, the passage flow on gap positions, then the wakes of the other
    buildings on every position, and last the per-position summary and flags.
    """
    P, S = free_c.shape
    bldg = buildings.building_arrays(assessment.buildings)
    where = _position_layout(assessment.positions, bldg)
    share = roofzones.sector_energy_share(freq, k, free_c)
    main = roofzones.main_energy_sectors(share)
    top = np.argmax(share, axis=1)
    fx = _no_building_effects(P, S, ti0, share, main)
    _apply_roofs(fx, where, bldg, sector_deg, ti0, main)
    _apply_gaps(fx, where, bldg, sector_deg, hub, share, top)
    sh = shelter.shelter(where["x_m"], where["y_m"], hub, bldg, sector_deg, where["exclude"])
    fx["speed"], fx["ti"] = shelter.apply_shelter(fx["speed"], fx["ti"], sh)
    fx["diag"]["shelter_speed_factor"] = sh["speed_factor"]
    flags = _summarise_effects(fx, where["kind"], sh, share, main, top, bldg.ids)
    return {"speed_factor": fx["speed"], "turbulence_intensity": fx["ti"],
            "inflow_skew_deg": fx["skew"], "flags": flags, "diagnostics": fx["diag"]}


def _position_layout(positions, bldg) -> dict:
    """Kinds, plan coordinates [m], masts [m] and the buildings each position belongs to.

    ``own``, ``gap_a`` and ``gap_b`` are building indices (-1 where none); ``exclude`` (P, B)
    marks the buildings whose wake a position does not feel (its own roof, its passage walls).
    """
    ids = {b: i for i, b in enumerate(bldg.ids)}
    own = np.array([ids.get(p.building_id, -1) if p.kind == "roof" else -1 for p in positions])
    ga = np.array([ids[p.gap_buildings[0]] if p.kind == "gap" else -1 for p in positions])
    gb = np.array([ids[p.gap_buildings[1]] if p.kind == "gap" else -1 for p in positions])
    exclude = np.zeros((len(positions), bldg.n), bool)
    for col in (own, ga, gb):
        rows = np.flatnonzero(col >= 0)
        exclude[rows, col[rows]] = True
    return {"kind": np.array([p.kind for p in positions]),
            "x_m": np.array([float(p.x_m) for p in positions]),
            "y_m": np.array([float(p.y_m) for p in positions]),
            "mast_m": np.array([float(p.mast_height_m) for p in positions]),
            "own": own, "gap_a": ga, "gap_b": gb, "exclude": exclude}


def _no_building_effects(P, S, ti0, share, main) -> dict:
    """The working arrays before any building acts: speed factor 1, ambient TI, no skew."""
    nan_ps = np.full((P, S), np.nan)
    diag = {
        "energy_share": share, "main_sector": main, "zone_top_m": nan_ps.copy(),
        "clearance_recirculation_m": nan_ps.copy(), "clearance_turbulence_m": nan_ps.copy(),
        "clearance_wake_m": nan_ps.copy(), "roof_scaling_length_m": nan_ps.copy(),
        "gap_wall_force_per_q_m2": nan_ps.copy(),
    }
    return {"speed": np.ones((P, S)), "ti": ti0.copy(), "skew": np.zeros((P, S)),
            "diag": diag, "in_rec_ps": np.zeros((P, S), bool),
            "in_turb_ps": np.zeros((P, S), bool), "in_wake_ps": np.zeros((P, S), bool),
            "min_clear": np.full(P, np.nan), "spilled": np.full(P, np.nan),
            "governing": np.full(P, "", dtype=object)}


def _apply_roofs(fx, where, bldg, sector_deg, ti0, main) -> None:
    """Roof zones, speed-up, turbulence and skew on the roof positions (``fx`` in place)."""
    roof = np.flatnonzero(where["kind"] == "roof")
    if not len(roof):
        return
    px, py, ib = where["x_m"], where["y_m"], where["own"][roof]
    u, v = buildings.to_local(px[roof], py[roof], bldg.x_m[ib], bldg.y_m[ib],
                              bldg.orientation_deg[ib])
    off = np.flatnonzero((np.abs(u) > 0.5 * bldg.length_m[ib] + 0.5)
                         | (np.abs(v) > 0.5 * bldg.width_m[ib] + 0.5))
    if len(off):
        raise InputError([
            (f"positions[{roof[i]}].x_m",
             f"({px[roof[i]]:g}, {py[roof[i]]:g}) m lies off the roof of "
             f"{bldg.ids[ib[i]]!r}; move the position onto that roof or make it a mast "
             "position") for i in off])
    rf = roof_effects(sector_deg, bldg.height_m[ib], bldg.length_m[ib], bldg.width_m[ib],
                      bldg.orientation_deg[ib], bldg.parapet_height_m[ib], bldg.pitched[ib],
                      u, v, where["mast_m"][roof], ti0[roof], main[roof])
    fx["ti"][roof] = rf["turbulence_intensity"]
    fx["skew"][roof] = rf["inflow_skew_deg"]
    fx["speed"][roof] *= rf["speed_factor"]
    diag = fx["diag"]
    diag["zone_top_m"][roof] = rf["zone_top_m"]
    diag["roof_scaling_length_m"][roof] = rf["roof_scaling_length_m"]
    for name in ("recirculation", "turbulence", "wake"):
        diag[f"clearance_{name}_m"][roof] = rf["clearance"][name]
    fx["in_rec_ps"][roof] = rf["clearance"]["recirculation"] < 0
    fx["in_turb_ps"][roof] = rf["clearance"]["turbulence"] < 0
    fx["in_wake_ps"][roof] = rf["clearance"]["wake"] < 0
    fx["min_clear"][roof] = rf["min_clear_mast_m"]


def _apply_gaps(fx, where, bldg, sector_deg, hub, share, top) -> None:
    """Passage flow (concentration with spillage) on the gap positions (``fx`` in place)."""
    gap = np.flatnonzero(where["kind"] == "gap")
    if not len(gap):
        return
    ga, gb = where["gap_a"], where["gap_b"]
    geo = gaps.passage_geometry(bldg, ga[gap], gb[gap])
    narrow = geo.width_m < 0.5
    if narrow.any():
        raise InputError([
            (f"positions[{gap[i]}].gap_buildings",
             f"buildings {bldg.ids[ga[gap[i]]]!r} and {bldg.ids[gb[gap[i]]]!r} touch or "
             f"overlap (gap {geo.width_m[i]:.2f} m, need at least 0.5 m); move the "
             "buildings apart or make this a roof or mast position")
            for i in np.flatnonzero(narrow)])
    gf = gaps.gap_flow(geo, sector_deg, hub[gap])
    sg = gf["speed_factor"]
    ti = fx["ti"]
    ti[gap] = np.hypot(ti[gap] / np.maximum(sg, roofflow.ROOF_FLOW["sigma_speed_floor"]),
                       gf["added_ti"])
    fx["speed"][gap] *= sg
    fx["spilled"][gap] = np.sum(share[gap] * gf["spilled_fraction"], axis=1)
    fx["governing"][gap] = gf["governing"][np.arange(len(gap)), top[gap]]
    fx["diag"]["gap_wall_force_per_q_m2"][gap] = gf["wall_force_per_q_m2"]


def _summarise_effects(fx, kind, sh, share, main, top, building_ids) -> tuple:
    """Per-position zone, spillage and shelter diagnostics (into ``fx``) and the flags.

    A zone counts for a position when it is hit in one of its main energy sectors.
    """
    diag = fx["diag"]
    in_rec_ps, in_cavity_ps = fx["in_rec_ps"], sh["in_wake_recirculation"]
    in_rec = ((in_rec_ps | in_cavity_ps) & main).any(axis=1)
    # A rotor in recirculating flow gets no credit from turbulence in those sectors.
    diag["no_turbulence_credit"] = in_rec_ps | in_cavity_ps
    in_turb = (fx["in_turb_ps"] & main).any(axis=1)
    in_wake = (fx["in_wake_ps"] & main).any(axis=1)
    shelter_mean = np.sum(share * sh["speed_factor"], axis=1)
    min_clear = fx["min_clear"]
    diag.update({"in_recirculation_zone": in_rec, "in_turbulence_zone": in_turb,
                 "in_roof_wake": in_wake, "min_clear_mast_m": min_clear,
                 "spilled_fraction": fx["spilled"],
                 "governing_limit": fx["governing"].astype(str),
                 "shelter_factor": shelter_mean})
    return tuple(_position_flags(i, kind[i], in_rec_ps[i] & main[i], in_cavity_ps[i] & main[i],
                                 in_turb[i], in_wake[i], min_clear[i], shelter_mean[i],
                                 sh["sheltering_building"][i, top[i]], building_ids)
                 for i in range(len(kind)))


def _position_flags(i, kind, rec, cavity, turb, wake, min_clear, shelter_mean, strongest, ids):
    """Short reasons and cautions for one position (a handful of strings, not a data path)."""
    out = []
    if rec.any():
        out.append("in roof recirculation zone")
    if cavity.any():
        out.append("in the wake recirculation behind a building")
    if turb:
        out.append(f"a mast of {min_clear:.1f} m puts the hub above the roof's "
                   "high-turbulence zone")
    elif wake:
        out.append("hub below the roof-wake boundary: gusty, skewed inflow")
    if shelter_mean < 0.9 and strongest >= 0:
        out.append(f"sheltered by {ids[strongest]} ({(1 - shelter_mean) * 100:.0f} % slower)")
    if kind == "roof":
        out.append("roof mount: structural engineer to check roof and mast; licensed "
                   "installers for work at height")
    if kind == "gap":
        out.append("passage: channelled wind load on walls and mounts; structural engineer "
                   "to check")
    return tuple(out)


def _with_spot_readings(assessment, eff, calibrate):
    """Add the spot-reading comparison (and, if asked, the calibration) to the climate."""
    table = spot.spot_comparison(assessment, eff)
    P, S = eff.speed_factor.shape
    idx = {p: i for i, p in enumerate(eff.position_ids)}
    pi = np.array([idx[p] for p in table["position_id"]])
    diag = dict(eff.diagnostics)
    for name, col in (("spot_measured_speedup", "measured_speedup"),
                      ("spot_speedup_ci_low", "speedup_ci_low"),
                      ("spot_speedup_ci_high", "speedup_ci_high")):
        arr = np.full(P, np.nan)
        # The last reading set of a position is shown; the full table is in spot_readings.
        arr[pi] = table[col].to_numpy(float)
        diag[name] = arr
    model_su = np.full(P, np.nan)
    model_su[pi] = table["model_speedup"].to_numpy(float)
    diag["spot_model_speedup"] = model_su
    # A dict of columns (not a DataFrame): np.asarray of it is 0-d, so no consumer that turns
    # (P,) or (P, S) diagnostics into columns can mistake it for one.
    diag["spot_readings"] = table.to_dict("list")
    sf, done = eff.speed_factor, np.zeros((P, S), bool)
    flags = list(eff.flags)
    if calibrate:
        sf, done = spot.calibrated_speed_factor(eff.speed_factor, table, eff.position_ids)
        for i in np.flatnonzero(done.any(axis=1)):
            flags[i] = tuple(flags[i]) + ("speed-up calibrated by spot readings in "
                                          f"{int(done[i].sum())} sector(s)",)
    diag["spot_calibrated"] = done
    return replace(eff, speed_factor=sf, flags=tuple(flags), diagnostics=diag)


def _check_physics(eff: EffectiveClimate) -> None:
    """Speeds and turbulence must be finite and non-negative; a breach is a model bug."""
    for name in ("speed_factor", "turbulence_intensity"):
        arr = getattr(eff, name)
        if not (np.all(np.isfinite(arr)) and np.all(arr >= 0)):
            raise AssertionError(f"effective climate: {name} has negative or non-finite values")
