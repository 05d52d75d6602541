"""Mean speed, turbulence and inflow skew above a roof, against height and fetch from the edge.

A documented engineering model, not a published one. Its shape follows the ASHRAE zones of
:mod:`engine.flow.roofzones` (the flow separates at the windward edge, a recirculation bubble sits on
the roof, speed is raised just above the separated shear layer and relaxes with height and
fetch); its coefficients are calibrated to the findings below, all recalled **from memory**:

* Mertens (2003), wind-tunnel and CFD study of the flow over a flat roof: mean-speed gains of
  order 10–30 % only above the separation layer; the flow near the windward edge is skewed
  upwards (inflow angles of the order of 20–30 deg); inside the layer, low speed and high
  turbulence.
* Ledo, Kosasih and Cooper (2011), CFD of flat, pyramidal and pitched roofs: the flat roof gives
  the most consistent speed-up over directions; turbulence falls with height above the roof;
  a pitched roof is the most sensitive to direction (largest gains with the wind across the
  ridge, least along it).
* Heath, Walshe and Watson (2007): free-stream estimates over-predict the yield of roof mounts
  in suburbs — a reason to keep the speed-up modest.

The speed factor is the ratio to the undisturbed mean speed at the same height above ground.

Model
-----
With Z1(X) the recirculation top, R the scaling length and η = (z − Z1)/R the height above
the bubble in units of R:

    S = S_b                                         for η < 0 (inside the bubble)
    S = 1 + (S_pk − 1) e^(−η/η0) − (S_pk − S_b) e^(−η/δ)   for η ≥ 0,
    S_pk = 1 + A d_s e^(−X/(λ R)),

so S is continuous at the bubble top, peaks a little above it (about 0.12 R) and returns to 1
aloft. With the coefficients of :data:`ROOF_FLOW` the realised peak gain is about 21 % at
X = 0.1 R, 16 % at 0.5 R and 11 % at 1 R: inside Mertens' 10–30 %.
Turbulence keeps the ambient σ_u through modest speed changes (rapid distortion, common
practice over hills and roofs) and adds the shear layer's own in quadrature:

    I = sqrt[(I_0 / max(S, S_σ))² + (ΔI d_t e^(−max(z − Z_t, 0)/(μ R)))²],

S_σ = 0.7: below it the flow is separated, not distorted, and the shear-layer term carries the
turbulence (keeping σ_u there would give intensities above 1 that no roof measurement shows).

Z_t the top of the high-turbulence zone. Inflow skew θ = θ_max e^(−X/(ν R)) e^(−max(η,0)/η0).
Pitched roofs: d_s = 0.3 + 0.9 cos²γ and d_t = 1 + 0.5 sin²γ, γ the angle between the wind
and the ridge's normal (ridge along the block's length); flat roofs d_s = d_t = 1.

References
----------
Mertens, S. (2003), "The energy yield of roof mounted wind turbines", Wind Engineering
27(6):507-518.
Ledo, L., Kosasih, P. B. and Cooper, P. (2011), "Roof mounting site analysis for micro-wind
turbines", Renewable Energy 36(5):1379-1391.
Heath, M. A., Walshe, J. D. and Watson, S. J. (2007), "Estimating the potential yield of small
building-mounted wind turbines", Wind Energy 10(3):271-287.
"""
from __future__ import annotations

import numpy as np

from engine.flow import roofzones

#: Coefficients of the roof-flow model (calibrated from memory, see module docstring).
ROOF_FLOW = {
    "speedup_amplitude": 0.35,     # A: sets realised peak gains of 21/16/11 % at X = 0.1/0.5/1 R
    "bubble_speed_ratio": 0.3,     # S_b: mean speed ratio inside the recirculation bubble
    "decay_height_r": 0.35,        # η0: gain e-folds within about a third of R above the bubble
    "shear_layer_r": 0.03,         # δ: thickness of the separated shear layer in R
    "fetch_decay_r": 1.5,          # λ: gain relaxes with fetch from the windward edge
    "sigma_speed_floor": 0.7,      # S_σ: rapid distortion only down to this speed ratio
    "added_ti": 0.2,               # ΔI: shear-layer turbulence intensity
    "ti_decay_r": 0.25,            # μ: added turbulence e-folds above the zone
    "skew_max_deg": 25.0,          # θ_max: upward inflow at the windward edge
    "skew_fetch_r": 0.5,           # ν: skew confined to the first half R
}


def direction_weights(pitched, ridge_normal_angle_deg):
    """Direction weights (d_s, d_t) of the gain and the added turbulence [-].

    Parameters
    ----------
    pitched : bool, pitched roof
    ridge_normal_angle_deg : angle γ between the wind and the ridge's normal [deg]
    """
    c2 = np.cos(np.radians(np.asarray(ridge_normal_angle_deg, float))) ** 2
    pitched = np.asarray(pitched, bool)
    ds = np.where(pitched, 0.3 + 0.9 * c2, 1.0)
    dt = np.where(pitched, 1.0 + 0.5 * (1.0 - c2), 1.0)
    return ds, dt


def roof_speed_factor(height_above_roof_m, x_m, scaling_length_m, roof_length_m=np.inf,
                      gain_weight=1.0, coeffs=None, recirculation_top_m=None):
    """Mean-speed ratio above a roof to the undisturbed flow at the same height [-].

    Parameters
    ----------
    height_above_roof_m : hub height above the roof (above a parapet's top) [m]
    x_m : distance from the windward edge along the wind [m]
    scaling_length_m : ASHRAE scaling length R [m]
    roof_length_m : along-wind roof length [m]
    gain_weight : direction weight d_s (see :func:`direction_weights`)
    coeffs : overrides of :data:`ROOF_FLOW`
    recirculation_top_m : :func:`engine.flow.roofzones.recirculation_boundary_m` of the same x, R and
        roof length when already known [m]

    Notes
    -----
    See the module docstring for the equation. Always 0 < S ≤ 1 + A d_s.
    """
    c = {**ROOF_FLOW, **(coeffs or {})}
    r = np.asarray(scaling_length_m, float)
    x = np.asarray(x_m, float)
    z1 = (roofzones.recirculation_boundary_m(x, r, roof_length_m) if recirculation_top_m is None
          else recirculation_top_m)
    eta = (np.asarray(height_above_roof_m, float) - z1) / r
    sb = c["bubble_speed_ratio"]
    spk = 1.0 + c["speedup_amplitude"] * gain_weight * np.exp(-x / (c["fetch_decay_r"] * r))
    e = np.maximum(eta, 0.0)
    s = 1.0 + (spk - 1.0) * np.exp(-e / c["decay_height_r"]) - (spk - sb) * np.exp(
        -e / c["shear_layer_r"])
    return np.where(eta < 0, sb, np.maximum(s, sb))


def roof_turbulence_intensity(ambient_ti, speed_factor, height_above_roof_m, x_m,
                              scaling_length_m, roof_length_m=np.inf, turbulence_weight=1.0,
                              coeffs=None, zone_top_m=None):
    """Turbulence intensity above a roof [-].

    Parameters
    ----------
    ambient_ti : undisturbed turbulence intensity at the same height [-]
    speed_factor : from :func:`roof_speed_factor` [-]
    height_above_roof_m, x_m, scaling_length_m, roof_length_m : as there [m]
    turbulence_weight : direction weight d_t (see :func:`direction_weights`)
    zone_top_m : :func:`engine.flow.roofzones.turbulence_zone_top_m` of the same x, R and roof length
        when already known [m]

    Notes
    -----
    I = sqrt[(I_0 / max(S, S_σ))² + (ΔI d_t e^(−max(z − Z_t, 0)/(μ R)))²].
    """
    c = {**ROOF_FLOW, **(coeffs or {})}
    r = np.asarray(scaling_length_m, float)
    zt = (roofzones.turbulence_zone_top_m(x_m, r, roof_length_m) if zone_top_m is None
          else zone_top_m)
    above = np.maximum(np.asarray(height_above_roof_m, float) - zt, 0.0)
    added = c["added_ti"] * turbulence_weight * np.exp(-above / (c["ti_decay_r"] * r))
    s = np.maximum(np.asarray(speed_factor, float), c["sigma_speed_floor"])
    distorted = np.asarray(ambient_ti, float) / s
    # Both terms are intensities of order 0.01-1: the plain root needs no hypot's scaling.
    return np.sqrt(distorted * distorted + added * added)


def roof_inflow_skew_deg(height_above_roof_m, x_m, scaling_length_m, roof_length_m=np.inf,
                         coeffs=None, recirculation_top_m=None):
    """Upward inflow angle at the rotor above a roof [deg].

    Notes
    -----
    θ = θ_max e^(−X/(ν R)) e^(−max(η, 0)/η0): largest just above the bubble at the windward
    edge (Mertens 2003, from memory), gone within about a scaling length downstream.
    ``recirculation_top_m`` as in :func:`roof_speed_factor`.
    """
    c = {**ROOF_FLOW, **(coeffs or {})}
    r = np.asarray(scaling_length_m, float)
    x = np.asarray(x_m, float)
    z1 = (roofzones.recirculation_boundary_m(x, r, roof_length_m) if recirculation_top_m is None
          else recirculation_top_m)
    eta = np.maximum((np.asarray(height_above_roof_m, float) - z1) / r, 0.0)
    return (c["skew_max_deg"] * np.exp(-x / (c["skew_fetch_r"] * r))
            * np.exp(-eta / c["decay_height_r"]))
