"""A climate measured at a candidate position (a roof or mast logger), used there as measured.

A record logged at a position already holds everything between a reference and that position:
the terrain, the height and the building's speed-up. Carrying it up the log law and applying
the roof model again would count those effects twice. So
:func:`engine.flow.effective.effective_climate` treats a climate with
``measured_at="position"`` in two steps:

1. **its own position**: the measured frequencies, k and c are used as they are (speed factor 1,
   no transfer), with the measured turbulence intensity per sector when the climate has one;
2. **the other positions**: the measured c is referred back to the free stream at the logger by
   the building model's own speed factor there, S_model(logger, sector), and that free-stream
   climate (at the logger's height above ground, in the site's roughness) goes through the
   ordinary chain. A position identical to the logger gets the measured climate back.

Notes
-----
c_free,s = c_meas,s / S_model,s(logger); at the logger c_eff,s = c_meas,s exactly. Step 2 is
only as good as the building model's speed factor at the logger; the summary says which climate
was used at each position (the ``climate_measured_here`` diagnostic and a flag).
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

#: Flag on the position where the climate was measured.
MEASURED_HERE_FLAG = ("climate measured at this position: used as measured (no transfer, no "
                      "building speed-up applied again)")


def measuring_index(assessment):
    """Index of the position the climate was measured at, or None for a reference climate."""
    c = assessment.climate
    if getattr(c, "measured_at", "reference") != "position":
        return None
    for i, p in enumerate(assessment.positions):
        if p.id == c.position_id:
            return i
    return None


def _as_reference(climate, site, weibull_c_ms=None):
    """The climate re-labelled as a free-stream reference at its height in the site's terrain."""
    return replace(climate, measured_at="reference", position_id="",
                   roughness_m=float(site.terrain_roughness_m),
                   displacement_m=min(float(site.displacement_m), 0.9 * float(climate.height_m)),
                   weibull_c_ms=climate.weibull_c_ms if weibull_c_ms is None else tuple(
                       float(v) for v in weibull_c_ms))


def logger_only(assessment, index: int):
    """The assessment reduced to the logger's position, its climate taken as a reference there
    (used only to read the building model's speed factor at the logger)."""
    return replace(assessment, climate=_as_reference(assessment.climate, assessment.site),
                   positions=(assessment.positions[index],), spot_readings=())


def free_stream_equivalent(assessment, speed_factor_at_logger):
    """The assessment with the measured climate referred to the free stream at the logger.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment` with a position-measured climate
    speed_factor_at_logger : (S,) the model's speed factor from the climate to the logger's
        rotor (building effects, and the transfer where its terrain is not the site's z0) [-]

    Notes
    -----
    c_free,s = c_meas,s / S_s (held within the climate's valid range 0.1..40 m/s).
    """
    c = assessment.climate
    sf = np.maximum(np.asarray(speed_factor_at_logger, float), 1e-6)
    free_c = np.clip(np.asarray(c.weibull_c_ms, float) / sf, 0.1, 40.0)
    return replace(assessment, climate=_as_reference(c, assessment.site, free_c))


def use_at_position(eff, assessment, index: int):
    """The effective climate with the logger's row replaced by the climate as measured.

    Parameters
    ----------
    eff : :class:`engine.flow.effective.EffectiveClimate` of the free-stream-equivalent chain
    assessment : the original assessment (its position-measured climate)
    index : the logger's position index

    Returns
    -------
    EffectiveClimate with, at ``index``: frequency, k, c as measured, speed factor 1, the
    measured TI where the climate has one; diagnostic ``climate_measured_here`` (P,) bool.
    """
    c = assessment.climate
    freq, k = eff.frequency.copy(), eff.weibull_k.copy()
    free_c, sf = eff.free_c_ms.copy(), eff.speed_factor.copy()
    ti = eff.turbulence_intensity.copy()
    freq[index] = np.asarray(c.frequency, float)
    k[index] = np.asarray(c.weibull_k, float)
    free_c[index] = np.asarray(c.weibull_c_ms, float)
    sf[index] = 1.0
    if len(c.turbulence_intensity):
        ti[index] = np.asarray(c.turbulence_intensity, float)
    here = np.zeros(eff.n_positions, bool)
    here[index] = True
    flags = list(eff.flags) if eff.flags else [()] * eff.n_positions
    flags[index] = tuple(flags[index]) + (MEASURED_HERE_FLAG,)
    diag = dict(eff.diagnostics)
    diag["climate_measured_here"] = here
    diag["measured_ti_used"] = here & bool(len(c.turbulence_intensity))
    return replace(eff, frequency=freq, weibull_k=k, free_c_ms=free_c, speed_factor=sf,
                   turbulence_intensity=ti, flags=tuple(flags), diagnostics=diag)
