"""Checks of a wind climate's per-sector values and of where it was measured.

Used by :class:`engine.core.model.WindClimate` and :class:`engine.core.model.Assessment`.
The climate's measured fields:

* ``measured_at`` — "reference" (carried to every position) or "position" (measured at
  ``position_id``, ``height_m`` being that position's hub height above ground);
* ``turbulence_intensity`` — measured turbulence intensity per sector, 10-minute σ_u/U [-]
  (empty: none measured);
* ``shear_exponent`` — fitted power-law shear exponent per sector from two or more heights [-]
  (empty: none);
* ``long_term_uncertainty`` — one-sigma uncertainty of the long-term correction, as a fraction
  of the mean speed [-] (0: none);
* ``averaging_s`` — averaging interval of the record behind the climate [s] (0: unknown or
  not a record).

A position-measured climate must name a position of the assessment and stand at its hub
height.
"""
from __future__ import annotations

import math

from engine.core.errors import InputError, Problems, check_range

#: Where a climate was measured: a reference (station, reanalysis, open-terrain mast) carried to
#: the site, or at a named candidate position (a roof or mast logger), used there as measured.
MEASURED_AT = ("reference", "position")


def _choice(p, where, value, options):
    if value not in options:
        p.add(where, f"must be one of {', '.join(options)}, got {value!r}")


def check_sector_values(p: Problems, climate, sources) -> None:
    """Sector count, frequencies, Weibull k and c, source, monthly means and measured fields."""
    check_measured(p, climate)
    n = len(climate.frequency)
    if n < 1 or n > 72:
        p.add("frequency", f"must list 1 to 72 sectors, got {n}")
    for name in ("weibull_k", "weibull_c_ms"):
        if len(getattr(climate, name)) != n:
            p.add(name, f"must have one value per sector ({n}), got {len(getattr(climate, name))}")
    for i, f in enumerate(climate.frequency):
        check_range(p, f"frequency[{i}]", f, 0, 1)
    for i, k in enumerate(climate.weibull_k):
        check_range(p, f"weibull_k[{i}]", k, 0.5, 10, "")
    for i, c in enumerate(climate.weibull_c_ms):
        check_range(p, f"weibull_c_ms[{i}]", c, 0.1, 40, "m/s")
    try:
        total = math.fsum(float(f) for f in climate.frequency)
        if n and abs(total - 1.0) > 1e-3:
            p.add("frequency", f"sector frequencies must sum to 1, got {total:.4f}; "
                               "divide each by their sum")
    except (TypeError, ValueError, OverflowError):  # bad values are reported one by one
        pass
    _choice(p, "source", climate.source, sources)
    if len(climate.monthly_mean_ms) not in (0, 12):
        p.add("monthly_mean_ms",
              f"must be empty or 12 values, got {len(climate.monthly_mean_ms)}")
    for i, v in enumerate(climate.monthly_mean_ms):
        check_range(p, f"monthly_mean_ms[{i}]", v, 0, 40, "m/s")


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

