"""Display units: convert SI speeds and lengths to what a person reads and types, and back.

The chain computes in SI (m/s, m). A person may read and enter speeds in m/s, km/h, mph or
knots and lengths in metres or feet. Every factor lives here, once, so no other layer holds a
conversion coefficient.

References
----------
NIST Special Publication 811 (2008), Guide for the Use of the International System of Units,
Appendix B.8 (factors for units listed alphabetically): 1 ft = 0.3048 m exactly,
1 mi/h = 0.44704 m/s exactly, 1 knot = 1852/3600 m/s exactly, 1 km/h = 1/3.6 m/s.
"""
from __future__ import annotations

import numpy as np

from engine.core.errors import InputError

#: Speed unit -> metres per second in one unit [m/s] (NIST SP 811, B.8).
SPEED_UNITS = {
    "m/s": 1.0,
    "km/h": 1000.0 / 3600.0,
    "mph": 0.44704,
    "knots": 1852.0 / 3600.0,
}

#: Length unit -> metres in one unit [m] (NIST SP 811, B.8).
LENGTH_UNITS = {
    "m": 1.0,
    "ft": 0.3048,
}


def _factor(table: dict, unit: str, what: str) -> float:
    try:
        return table[unit]
    except KeyError:
        raise InputError([(f"{what} unit", f"must be one of {', '.join(table)}, "
                                          f"got {unit!r}")]) from None


def speed_from_si(speed_ms, unit: str):
    """Speed in ``unit`` from a speed in m/s.

    Parameters
    ----------
    speed_ms : scalar or array [m/s]
    unit : one of :data:`SPEED_UNITS`

    Notes
    -----
    v_unit = v_SI / f_unit with f_unit the size of one unit in m/s.
    """
    f = _factor(SPEED_UNITS, unit, "speed")
    return np.asarray(speed_ms, dtype=float) / f if np.ndim(speed_ms) else float(speed_ms) / f


def speed_to_si(speed, unit: str):
    """Speed in m/s from a speed in ``unit`` [m/s]; v_SI = v_unit f_unit."""
    f = _factor(SPEED_UNITS, unit, "speed")
    return np.asarray(speed, dtype=float) * f if np.ndim(speed) else float(speed) * f


def length_from_si(length_m, unit: str):
    """Length in ``unit`` from a length in metres; L_unit = L_SI / f_unit."""
    f = _factor(LENGTH_UNITS, unit, "length")
    return np.asarray(length_m, dtype=float) / f if np.ndim(length_m) else float(length_m) / f


def length_to_si(length, unit: str):
    """Length in metres from a length in ``unit`` [m]; L_SI = L_unit f_unit."""
    f = _factor(LENGTH_UNITS, unit, "length")
    return np.asarray(length, dtype=float) * f if np.ndim(length) else float(length) * f


def convert_columns(frame, speed_unit: str = "m/s", length_unit: str = "m", to_si: bool = False):
    """Copy of a table with its ``*_ms`` and ``*_m`` columns converted to or from SI.

    Columns keep their SI names; :func:`column_label` gives the header a person reads.
    Columns of other units (``_kwh``, ``_m2``, ``_deg``) are left alone.
    """
    out = frame.copy()
    for col in out.columns:
        name = str(col)
        if name.endswith("_ms"):
            fn = speed_to_si if to_si else speed_from_si
            out[col] = fn(out[col].to_numpy(dtype=float), speed_unit)
        elif name.endswith("_m"):
            fn = length_to_si if to_si else length_from_si
            out[col] = fn(out[col].to_numpy(dtype=float), length_unit)
    return out


def column_label(name: str, speed_unit: str = "m/s", length_unit: str = "m") -> str:
    """Readable header for a column name with its unit: ``hub_height_m`` -> ``hub height (ft)``."""
    for suffix, unit in (("_per_kwh", "per kWh"), ("_ms", speed_unit), ("_m", length_unit),
                         ("_kwh", "kWh"),
                         ("_kw", "kW"), ("_w", "W"), ("_deg", "°"), ("_m2", "m²"),
                         ("_db", "dB(A)"), ("_n", "N"), ("_years", "years")):
        if name.endswith(suffix):
            return f"{name[: -len(suffix)].replace('_', ' ')} ({unit})"
    return name.replace("_", " ")
