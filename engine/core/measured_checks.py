"""Checks of where a climate was measured (used by :mod:`engine.core.model`).

A :class:`~engine.core.model.WindClimate` is a ``reference`` or measured at a ``position``;
a position-measured climate must name a position of the assessment and stand at its hub height.
"""
from __future__ import annotations

from engine.core.errors import InputError, Problems, check_range

#: Where a climate was measured: a reference (station, reanalysis, open-terrain mast) carried to
#: the site, or at a named candidate position (a roof or mast logger), used there as measured.
MEASURED_AT = ("reference", "position")


def _choice(p, where, value, options):
    if value not in options:
        p.add(where, f"must be one of {', '.join(options)}, got {value!r}")


def check_measured(p: Problems, climate) -> None:
    """Where a climate was measured, its measured TI and shear, long-term uncertainty and
    averaging interval."""
    _choice(p, "measured_at", climate.measured_at, MEASURED_AT)
    if climate.measured_at == "position" and not str(climate.position_id).strip():
        p.add("position_id", "a climate measured at a position must name that position")
    n = len(climate.frequency)
    for name, lo, hi in (("turbulence_intensity", 0.0, 1.0), ("shear_exponent", -0.5, 1.5)):
        values = getattr(climate, name)
        if len(values) not in (0, n):
            p.add(name, f"must be empty or one value per sector ({n}), got {len(values)}")
        for i, v in enumerate(values):
            check_range(p, f"{name}[{i}]", v, lo, hi, "")
    check_range(p, "long_term_uncertainty", climate.long_term_uncertainty, 0, 1, "")
    check_range(p, "averaging_s", climate.averaging_s, 0, 86400 * 31, "s")


def check_measured_position(p: Problems, assessment) -> None:
    """A position-measured climate names a position here, at that position's hub height."""
    c = assessment.climate
    if c.measured_at != "position":
        return
    pos = [q for q in assessment.positions if q.id == c.position_id]
    if not pos:
        p.add("climate.position_id", f"names position {c.position_id!r}, which is not in "
                                     "positions; add the logger's position or set "
                                     "measured_at to reference")
        return
    try:
        hub = assessment.hub_height_m(pos[0])
    except InputError:
        return  # the missing building is reported on its own
    if abs(hub - float(c.height_m)) > 0.5:
        p.add("climate.height_m", f"must be the hub height of position {c.position_id!r} "
                                  f"({hub:g} m above ground) within 0.5 m, got "
                                  f"{c.height_m:g} m; set that position's mast height to "
                                  "the logger's height")

