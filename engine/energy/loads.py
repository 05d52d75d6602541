"""Rotor thrust and mast-base bending moment: cautions for a screening, not structural design.

These numbers tell an assessor whether a position is plausible and what a structural engineer
will need to check; they are never a design. Roof structure, fixings, mast, foundations and
fatigue must be checked by a structural engineer under the local codes, and the installation
done by licensed installers following the manufacturer's instructions.

References
----------
IEC 61400-2:2013, Wind turbines - Part 2: Small wind turbines, turbine classes (Table 1) and
V_e50 = 1.4 V_ref (values beyond V_ref from memory).
Burton, T. et al. (2011), Wind Energy Handbook, 2nd ed., §3.2 (actuator disc thrust).
"""
from __future__ import annotations

import numpy as np

from engine.core.errors import InputError
from engine.core.model import RHO_STANDARD

#: IEC 61400-2 small-turbine classes: V_ref and V_ave [m/s] (V_ref verified, V_ave from memory).
IEC_SMALL_CLASS_SPEEDS = {
    "I": (50.0, 10.0),
    "II": (42.5, 8.5),
    "III": (37.5, 7.5),
    "IV": (30.0, 6.0),
}
#: Extreme wind speed with a 50-year recurrence as a multiple of V_ref (IEC 61400-2, from memory).
VE50_OVER_VREF = 1.4
#: One-year extreme as a fraction of the 50-year extreme (IEC 61400-2, from memory).
VE1_OVER_VE50 = 0.75

CAUTION = ("Loads are a screening estimate, not a structural design. A structural engineer must "
           "check the roof, the fixings, the mast and its foundation under the local codes "
           "before anything is mounted; installation is work at height for licensed installers "
           "following the manufacturer's instructions.")


def iec_class_speeds(iec_class: str, v_ref_ms: float = 0.0) -> dict:
    """Reference speeds of an IEC 61400-2 small-turbine class [m/s].

    Parameters
    ----------
    iec_class : "I", "II", "III", "IV" or "S"
    v_ref_ms : reference speed of a class S turbine [m/s] (ignored otherwise)

    Returns
    -------
    dict with ``v_ref_ms``, ``v_ave_ms`` (NaN for class S), ``v_e50_ms``, ``v_e1_ms``

    Notes
    -----
    V_e50 = 1.4 V_ref, V_e1 = 0.75 V_e50 (IEC 61400-2; from memory beyond V_ref).
    """
    if iec_class == "S":
        if not v_ref_ms > 0:
            raise InputError([("v_ref_ms", f"class S needs v_ref_ms > 0 m/s, got {v_ref_ms}")])
        v_ref, v_ave = float(v_ref_ms), float("nan")
    elif iec_class in IEC_SMALL_CLASS_SPEEDS:
        v_ref, v_ave = IEC_SMALL_CLASS_SPEEDS[iec_class]
    else:
        raise InputError([("iec_class", f"must be one of I, II, III, IV, S, got {iec_class!r}")])
    v_e50 = VE50_OVER_VREF * v_ref
    return {"v_ref_ms": v_ref, "v_ave_ms": v_ave, "v_e50_ms": v_e50,
            "v_e1_ms": VE1_OVER_VE50 * v_e50}


def rotor_thrust_n(air_density_kgm3, swept_area_m2, thrust_coefficient, speed_ms):
    """Rotor thrust T = ½ ρ A C_T V² [N].

    Parameters
    ----------
    air_density_kgm3 : ρ [kg/m³]
    swept_area_m2 : A [m²]
    thrust_coefficient : C_T [-] (8/9 for the ideal actuator disc at the Betz optimum)
    speed_ms : V [m/s]

    Notes
    -----
    Actuator-disc momentum theory (Burton et al. 2011, §3.2).
    """
    return (0.5 * np.asarray(air_density_kgm3, float) * np.asarray(swept_area_m2, float)
            * np.asarray(thrust_coefficient, float) * np.asarray(speed_ms, float) ** 2)


def mast_base_moment_nm(thrust_n, mast_height_m):
    """Bending moment at the mast base from the rotor thrust at hub height, M = T h [N m].

    Notes
    -----
    Rotor thrust only: wind drag on the mast itself, the nacelle and any guying are left out,
    and dynamic amplification is not included, so this understates the real moment.
    """
    return np.asarray(thrust_n, float) * np.asarray(mast_height_m, float)


def turbine_loads(turbines, mast_height_m, air_density_kgm3):
    """Thrust at rated and extreme speed, and the mast-base moment, arrays (P, T).

    Parameters
    ----------
    turbines : sequence of :class:`engine.core.model.Turbine`
    mast_height_m : (P,) mast heights (hub above the mounting base) [m]
    air_density_kgm3 : site air density [kg/m³]

    Returns
    -------
    dict of ``thrust_rated_n`` (P, T), ``thrust_extreme_n`` (P, T), ``mast_base_moment_nm``
    (P, T) from the larger thrust, and ``v_e50_ms`` (T,)

    Notes
    -----
    Rated: T = ½ ρ A C_T V_rated² at the site density. Extreme: the same formula at
    V_e50 = 1.4 V_ref of the turbine's class, at max(ρ, 1.225 kg/m³), with the turbine's
    C_T over the whole swept area. A parked or furled rotor presents far less than its swept
    area, so this extreme thrust is deliberately on the high side; the simplified load model
    of IEC 61400-2 (blade planform drag) gives lower values and is the engineer's business.
    """
    area = np.array([t.area_m2 for t in turbines], float)
    ct = np.array([t.thrust_coefficient for t in turbines], float)
    v_rated = np.array([t.rated_speed_ms for t in turbines], float)
    v_e50 = np.array([iec_class_speeds(t.iec_class, t.v_ref_ms)["v_e50_ms"] for t in turbines])
    rated = rotor_thrust_n(air_density_kgm3, area, ct, v_rated)
    extreme = rotor_thrust_n(max(float(air_density_kgm3), RHO_STANDARD), area, ct, v_e50)
    h = np.asarray(mast_height_m, float)[:, None]
    P = h.shape[0]
    return {"thrust_rated_n": np.broadcast_to(rated, (P, len(turbines))).copy(),
            "thrust_extreme_n": np.broadcast_to(extreme, (P, len(turbines))).copy(),
            "mast_base_moment_nm": mast_base_moment_nm(np.maximum(rated, extreme)[None, :], h),
            "v_e50_ms": v_e50}
