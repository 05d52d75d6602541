"""Transfer of a reference climate (a station, a logger) to the site's terrain and hub heights.

Two ways to carry the speed scale, chosen in :class:`engine.core.model.TransferSettings`:

* ``log_law`` (default): both speeds referred to the same basic wind through the EN 1991-1-4
  roughness factor, c_r(z) = k_r ln((z − d)/z0), k_r = 0.19 (z0/0.05)^0.07, so
  c_site / c_station = c_r,site(z_hub) / c_r,station(z_station)
  (:func:`engine.flow.profiles.transfer_speed_ratio`).
* ``power_law``: with a user exponent α, U2 = U1 (z2/z1)^α in one terrain; with α = 0 the
  exponent and boundary-layer depth of each terrain come from the ASHRAE Handbook table and
  U_H = U_met (δ_met/H_met)^a_met (H/δ)^a.

The site's roughness and displacement are the site's own, or (``use_morphometry``) derived from
the plan and frontal area fractions and mean building height by Macdonald et al. (1998). The
Weibull shape is kept, or adjusted with height by Justus & Mikhail (1976).

References
----------
EN 1991-1-4:2005, §4.3.2 and Table 4.1.
Macdonald, R. W., Griffiths, R. F. and Hall, D. J. (1998), "An improved method for the
estimation of surface roughness of obstacle arrays", Atmos. Environ. 32:1857-1864.
ASHRAE Handbook - Fundamentals, chapter "Airflow Around Buildings", Table 1 (atmospheric
boundary layer parameters) and the meteorological-station transfer equation.
Justus, C. G. and Mikhail, A. (1976), "Height variation of wind speed and wind distributions
statistics", Geophys. Res. Lett. 3:261-264.
"""
from __future__ import annotations

import numpy as np

from engine.flow import profiles
from engine.core.errors import InputError
from engine.flow.profiles import KARMAN

#: Macdonald et al. (1998) layout constants: layout -> (A, β).
MACDONALD_LAYOUTS = {"staggered": (4.43, 1.0), "square": (3.59, 0.55)}
#: Drag coefficient of a cube, Macdonald et al. (1998).
MACDONALD_DRAG = 1.2

#: ASHRAE Fundamentals, Airflow Around Buildings, Table 1: terrain -> (exponent a, depth δ [m]).
ASHRAE_TERRAIN = {
    "city_centre": (0.33, 460.0),
    "urban_suburban": (0.22, 370.0),
    "open_scattered": (0.14, 270.0),
    "flat_open": (0.10, 210.0),
}
#: Roughness-length upper bounds [m] used to pick an ASHRAE terrain row (common practice:
#: EN 1991-1-4 categories 0-I flat open, II open scattered, III urban/suburban, IV city).
_ASHRAE_Z0_BOUNDS = ((0.02, "flat_open"), (0.15, "open_scattered"), (0.7, "urban_suburban"),
                     (np.inf, "city_centre"))


def macdonald_roughness(plan_area_fraction, frontal_area_fraction, mean_building_height_m,
                        layout: str = "staggered", drag_coefficient: float = MACDONALD_DRAG):
    """Roughness length and displacement of a building array (Macdonald et al. 1998) [m].

    Parameters
    ----------
    plan_area_fraction : λp, built plan area / total area [-], 0 < λp < 1
    frontal_area_fraction : λf, frontal area facing the wind / total area [-], > 0
    mean_building_height_m : H [m]
    layout : "staggered" (A = 4.43, β = 1.0) or "square" (A = 3.59, β = 0.55)
    drag_coefficient : C_D of an isolated building (1.2)

    Returns
    -------
    z0_m, d_m : roughness length and zero-plane displacement [m]

    Notes
    -----
    d/H = 1 + A^(−λp) (λp − 1);
    z0/H = (1 − d/H) exp{−[0.5 β (C_D/κ²) (1 − d/H) λf]^(−1/2)}, κ = 0.4.
    """
    if layout not in MACDONALD_LAYOUTS:
        raise InputError([("morphometry_layout", f"must be one of "
                                                 f"{', '.join(MACDONALD_LAYOUTS)}, got {layout!r}")])
    a, beta = MACDONALD_LAYOUTS[layout]
    lp = np.asarray(plan_area_fraction, float)
    lf = np.asarray(frontal_area_fraction, float)
    h = np.asarray(mean_building_height_m, float)
    d_h = 1.0 + a ** (-lp) * (lp - 1.0)
    z0_h = (1.0 - d_h) * np.exp(-(0.5 * beta * drag_coefficient / KARMAN ** 2
                                  * (1.0 - d_h) * lf) ** -0.5)
    return z0_h * h, d_h * h


def morphometric_roughness(plan_area_fraction, frontal_area_fraction, mean_building_height_m,
                           layout: str = "staggered"):
    """Roughness length and displacement from area fractions, held in the chain's range [m].

    Arrays broadcast together (one site, or one value per building of a table).

    Returns
    -------
    z0_m, d_m : :func:`macdonald_roughness`, z0 clipped to [1e-4, 5] m

    Notes
    -----
    EN 1991-1-4 has no roughness length below 1e-4 m; 5 m is the top of the range the rest of
    the chain accepts.
    """
    z0, d = macdonald_roughness(plan_area_fraction, frontal_area_fraction,
                                mean_building_height_m, layout)
    return np.clip(z0, 1e-4, 5.0), d


def site_roughness(site, settings):
    """Roughness length and displacement of the site's surroundings [m] and where they came from.

    Returns
    -------
    (z0_m, d_m, note)
    """
    if not settings.use_morphometry:
        return float(site.terrain_roughness_m), float(site.displacement_m), "site"
    missing = [n for n in ("plan_area_fraction", "frontal_area_fraction",
                           "mean_building_height_m") if getattr(site, n) is None]
    if missing:
        raise InputError([(f"site.{n}", "is needed when transfer.use_morphometry is on; enter it "
                                        "or turn morphometry off") for n in missing])
    z0, d = morphometric_roughness(site.plan_area_fraction, site.frontal_area_fraction,
                                   site.mean_building_height_m, settings.morphometry_layout)
    return float(z0), float(d), "Macdonald et al. 1998"


def ashrae_terrain(roughness_m) -> str:
    """ASHRAE Table 1 terrain row for a roughness length (mapping is common practice)."""
    for bound, name in _ASHRAE_Z0_BOUNDS:
        if roughness_m < bound:
            return name
    return "city_centre"


def ashrae_terrain_parameters(roughness_m):
    """ASHRAE Table 1 exponent a [-] and boundary-layer depth δ [m] for roughness lengths.

    Arrays of the shape of ``roughness_m``; the row is the one :func:`ashrae_terrain` picks.
    """
    z0 = np.asarray(roughness_m, float)
    bounds = np.array([b for b, _ in _ASHRAE_Z0_BOUNDS[:-1]])
    row = np.searchsorted(bounds, z0, side="right")
    names = [n for _, n in _ASHRAE_Z0_BOUNDS]
    a = np.array([ASHRAE_TERRAIN[n][0] for n in names])
    depth = np.array([ASHRAE_TERRAIN[n][1] for n in names])
    return a[row], depth[row]


def speed_ratio_power_law(height_to_m, height_from_m, roughness_to_m=None,
                          roughness_from_m=None, exponent: float = 0.0):
    """Ratio of mean speeds by the power law [-].

    Heights and roughness lengths may be arrays broadcasting together (one terrain per row).

    Notes
    -----
    With ``exponent`` α > 0: U2/U1 = (z2/z1)^α (one terrain). With α = 0, the ASHRAE
    meteorological-station transfer U_H/U_met = (δ_met/H_met)^a_met (H/δ)^a, with (a, δ) of
    each terrain from :data:`ASHRAE_TERRAIN` picked by roughness length.
    """
    z2 = np.asarray(height_to_m, float)
    z1 = np.asarray(height_from_m, float)
    if exponent > 0:
        return (z2 / z1) ** exponent
    a_to, dl_to = ashrae_terrain_parameters(roughness_to_m)
    a_fr, dl_fr = ashrae_terrain_parameters(roughness_from_m)
    return (dl_fr / z1) ** a_fr * (z2 / dl_to) ** a_to


def shape_justus_mikhail(k_ref, height_ref_m, height_m):
    """Weibull shape at another height (Justus & Mikhail 1976) [-].

    Notes
    -----
    k2 = k1 [1 − 0.088 ln(z1/10)] / [1 − 0.088 ln(z2/10)], heights in metres.
    """
    z1 = np.asarray(height_ref_m, float)
    z2 = np.asarray(height_m, float)
    return np.asarray(k_ref, float) * (1.0 - 0.088 * np.log(z1 / 10.0)) / (
        1.0 - 0.088 * np.log(z2 / 10.0))


def scale_justus_mikhail(c_ref_ms, height_ref_m, height_m):
    """Weibull scale at another height in the same terrain (Justus & Mikhail 1976) [m/s].

    Notes
    -----
    c2 = c1 (z2/z1)^n, n = [0.37 − 0.088 ln c1] / [1 − 0.088 ln(z1/10)], c in m/s.
    """
    c1 = np.asarray(c_ref_ms, float)
    z1 = np.asarray(height_ref_m, float)
    n = (0.37 - 0.088 * np.log(c1)) / (1.0 - 0.088 * np.log(z1 / 10.0))
    return c1 * (np.asarray(height_m, float) / z1) ** n


def free_stream_weibull(climate, site, hub_height_m, settings):
    """Undisturbed per-sector Weibull (k, c) at each hub height, each of shape (P, S).

    Parameters
    ----------
    climate : :class:`engine.core.model.WindClimate` at its own height, roughness, displacement
    site : :class:`engine.core.model.Site` (terrain roughness, displacement, morphometry)
    hub_height_m : (P,) hub heights above ground [m]
    settings : :class:`engine.core.model.TransferSettings`

    Notes
    -----
    The site's roughness and displacement (:func:`site_roughness`), then
    :func:`weibull_at_hub`.
    """
    z0, d, _ = site_roughness(site, settings)
    return weibull_at_hub(climate, z0, d, hub_height_m, settings, site.frontal_area_fraction,
                          site.mean_building_height_m)


def site_canopy(site, settings) -> dict:
    """The site's in-canopy profile: ``attenuation`` (a_t, a_c) and ``canopy_height_m``.

    :func:`engine.flow.profiles.canopy_attenuation` on the z0 and d of :func:`site_roughness` (the
    same terrain as the speed transfer), the site's frontal area fraction and mean building
    height when given.
    """
    z0, d, _ = site_roughness(site, settings)
    return {"attenuation": profiles.canopy_attenuation(z0, d, site.frontal_area_fraction),
            "canopy_height_m": site.mean_building_height_m}


def weibull_at_hub(climate, roughness_m, displacement_m, hub_height_m, settings,
                   frontal_area_fraction=None, canopy_height_m=None):
    """Undisturbed per-sector Weibull (k, c) at hub heights over given terrain, each (P, S).

    Parameters
    ----------
    climate : :class:`engine.core.model.WindClimate` at its own height, roughness, displacement
    roughness_m, displacement_m : the terrain at the hub [m], scalars or (P,) (one terrain per
        position, e.g. per building of a screened table), or (P, S) / (1, S) (one terrain per
        position and sector, :func:`engine.flow.sector_roughness.sector_terrain`)
    hub_height_m : (P,) hub heights above ground [m]
    settings : :class:`engine.core.model.TransferSettings`
    frontal_area_fraction : λf of that terrain [-], of the roughness's shape, for the in-canopy
        attenuation (:func:`engine.flow.profiles.canopy_attenuation`); None when unknown
    canopy_height_m : mean height of the surrounding buildings [m], same shape; None
        when unknown (then only the log law's continuation below z_t)

    Notes
    -----
    c = c_ref · ratio per sector, the ratio by the log law (:func:`engine.flow.profiles.transfer_speed_ratio`)
    or the power law (:func:`speed_ratio_power_law`). Heights for the shape adjustment are
    heights above the displacement plane, held at 1 m at least (the Justus–Mikhail fit is for
    open-terrain towers). Below z_t = d + z_min, where EN 1991-1-4 §4.3.2 holds the profile
    for loads, the mean speed follows the in-canopy exponential profile
    (:func:`engine.flow.profiles.canopy_factor`, Macdonald 2000) on both sides of the transfer, so
    it keeps falling towards the ground.
    """
    z0 = np.asarray(roughness_m, float)
    d = np.asarray(displacement_m, float)
    hub = np.atleast_1d(np.asarray(hub_height_m, float))
    # Per-sector terrain: (P, S) or (1, S) roughness; the hubs become a (P, 1) column.
    per_sector = max(z0.ndim, d.ndim) == 2
    if per_sector:
        hub = hub[:, None]
    attenuation = profiles.canopy_attenuation(z0, d, frontal_area_fraction)
    if settings.method == "power_law":
        # Like EN 1991-1-4, hold the profile at its value at z_min above the displacement plane.
        z_to = np.maximum(hub - d, profiles.minimum_height_m(z0))
        z_from = max(climate.height_m - climate.displacement_m,
                     float(profiles.minimum_height_m(climate.roughness_m)))
        ratio = speed_ratio_power_law(z_to, z_from, z0, climate.roughness_m,
                                      settings.power_law_exponent)
        ratio = ratio * profiles.canopy_factor(hub, z0, d, attenuation, canopy_height_m) / \
            profiles.canopy_factor(climate.height_m, climate.roughness_m, climate.displacement_m)
    else:
        ratio = profiles.transfer_speed_ratio(hub, z0, climate.height_m, climate.roughness_m,
                                              d, climate.displacement_m,
                                              attenuation_to=attenuation,
                                              canopy_height_to_m=canopy_height_m)
    c_ref = np.asarray(climate.weibull_c_ms, float)[None, :]
    if per_sector:
        c = c_ref * np.asarray(ratio, float)
    else:
        c = c_ref * np.broadcast_to(np.asarray(ratio, float), hub.shape)[:, None]
    c = np.array(np.broadcast_to(c, (hub.shape[0], c_ref.shape[1])))
    k_ref = np.asarray(climate.weibull_k, float)
    if settings.adjust_shape_with_height:
        z_ref = max(climate.height_m - climate.displacement_m, 1.0)
        z_hub = np.maximum(hub - d, 1.0)
        z_hub = z_hub if per_sector else np.broadcast_to(z_hub, hub.shape)[:, None]
        k = shape_justus_mikhail(k_ref[None, :], z_ref, z_hub)
        k = np.broadcast_to(k, c.shape)
        k = np.clip(k, 0.5, 10.0)
    else:
        k = np.broadcast_to(k_ref, c.shape).copy()
    return k, c


def transfer_climate(climate, site, height_m: float, settings):
    """The climate carried to one height in the site's terrain, as a new WindClimate."""
    from engine.core.model import WindClimate
    k, c = free_stream_weibull(climate, site, [height_m], settings)
    z0, d, origin = site_roughness(site, settings)
    ratio = float(c[0, 0] / climate.weibull_c_ms[0])
    return WindClimate(height_m=float(height_m), roughness_m=z0, displacement_m=d,
                       frequency=climate.frequency, weibull_k=tuple(float(x) for x in k[0]),
                       weibull_c_ms=tuple(float(x) for x in c[0]), source=climate.source,
                       label=f"{climate.label} -> {height_m:g} m at the site ({settings.method}, "
                             f"roughness from {origin})".strip(),
                       monthly_mean_ms=tuple(m * ratio for m in climate.monthly_mean_ms),
                       record_file=climate.record_file, record_sha256=climate.record_sha256)
