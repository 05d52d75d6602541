"""Rotor thrust and mast-base bending moment: cautions for a screening, not structural design.

These numbers tell an assessor whether a position is plausible and what a structural engineer
will need to check; they are never a design. Roof structure, fixings, mast, foundations and
fatigue must be checked by a structural engineer under the local codes, and the installation
done by licensed installers following the manufacturer's instructions.

The extreme load is the parked rotor's of the simplified load model of IEC 61400-2 (blade
drag at the class's 50-year extreme wind), or the maker's declared parked load; the operating
thrust at rated speed comes from the rotor's thrust coefficient. A site whose turbulence
intensity exceeds the class's design value is flagged: the turbine's fatigue design does not
cover it.

References
----------
IEC 61400-2:2013, Wind turbines - Part 2: Small wind turbines, turbine classes (Table 1),
V_e50 = 1.4 V_ref, the simplified load model's parked-rotor case (blade drag coefficient
1.5 on the projected blade area) and I15 = 0.18 (values beyond V_ref from memory).
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
#: Drag coefficient of a parked blade in the simplified load model (IEC 61400-2, from memory).
PARKED_DRAG_COEFFICIENT = 1.5
#: Projected blade area over swept area when the maker gives none [-], by rotor axis: a
#: derived, cautious allowance (three slender blades of a small horizontal-axis rotor cover
#: about 5-8 % of the disc; an H-rotor's blades about a quarter of D × H; common practice).
PARKED_SOLIDITY = {"horizontal": 0.08, "vertical": 0.25}
#: Turbulence intensity at 15 m/s the standard classes I-IV are designed for, I15
#: (IEC 61400-2, from memory).
CLASS_DESIGN_TI = 0.18

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


def parked_rotor_thrust_n(air_density_kgm3, projected_area_m2, extreme_speed_ms,
                          drag_coefficient=PARKED_DRAG_COEFFICIENT):
    """Drag on a parked rotor at the extreme wind, F = ½ ρ C_d A_proj V_e50² [N].

    Parameters
    ----------
    air_density_kgm3 : ρ [kg/m³]
    projected_area_m2 : projected (planform) area of all blades, A_proj [m²]
    extreme_speed_ms : V_e50 of the turbine's class [m/s]
    drag_coefficient : C_d of a parked blade (1.5, IEC 61400-2, from memory)

    Notes
    -----
    The parked-rotor case of the simplified load model of IEC 61400-2: every blade flat to
    the wind at V_e50 (from memory). Nacelle, tail and mast drag are left out.
    """
    return (0.5 * np.asarray(air_density_kgm3, float) * float(drag_coefficient)
            * np.asarray(projected_area_m2, float) * np.asarray(extreme_speed_ms, float) ** 2)


def blade_projected_area_m2(turbine) -> float:
    """The turbine's projected blade area, or swept area × :data:`PARKED_SOLIDITY` [m²]."""
    if turbine.blade_projected_area_m2 > 0:
        return float(turbine.blade_projected_area_m2)
    return PARKED_SOLIDITY[turbine.axis] * turbine.area_m2


def extreme_load_method(turbine) -> str:
    """How a turbine's extreme thrust was found, for the results table."""
    if turbine.parked_thrust_n > 0:
        return "declared parked-rotor load (maker)"
    area = ("blade area given" if turbine.blade_projected_area_m2 > 0 else
            f"blade area {PARKED_SOLIDITY[turbine.axis]:.0%} of swept area, assumed")
    return (f"IEC 61400-2 simplified load model, parked rotor at V_e50 "
            f"(C_d {PARKED_DRAG_COEFFICIENT:g}, {area})")


def class_design_ti(turbine) -> float:
    """The class's design turbulence intensity I15 [-]; NaN for class S (stated by the maker)."""
    return CLASS_DESIGN_TI if turbine.iec_class in IEC_SMALL_CLASS_SPEEDS else float("nan")


def turbine_loads(turbines, mast_height_m, air_density_kgm3):
    """Operating thrust at rated speed, parked-rotor extreme thrust and mast-base moment (P, T).

    Parameters
    ----------
    turbines : sequence of :class:`engine.core.model.Turbine`
    mast_height_m : (P,) mast heights (hub above the mounting base) [m]
    air_density_kgm3 : site air density [kg/m³]

    Returns
    -------
    dict of ``thrust_rated_n`` (P, T), ``thrust_extreme_n`` (P, T), ``mast_base_moment_nm``
    (P, T) from the larger thrust, ``v_e50_ms`` (T,), ``extreme_load_method`` (T,) text and
    ``design_ti`` (T,)

    Notes
    -----
    Rated: T = ½ ρ A C_T V_rated² at the site density (:func:`rotor_thrust_n`). Extreme: the
    maker's declared parked load when given, else the parked rotor of the IEC 61400-2
    simplified load model, F = ½ ρ C_d A_proj V_e50² (:func:`parked_rotor_thrust_n`) at
    V_e50 = 1.4 V_ref of the class and max(ρ, 1.225 kg/m³). Moment = larger thrust × mast
    height (rotor only; :func:`mast_base_moment_nm`).
    """
    area = np.array([t.area_m2 for t in turbines], float)
    ct = np.array([t.thrust_coefficient for t in turbines], float)
    v_rated = np.array([t.rated_speed_ms for t in turbines], float)
    v_e50 = np.array([iec_class_speeds(t.iec_class, t.v_ref_ms)["v_e50_ms"] for t in turbines])
    rated = rotor_thrust_n(air_density_kgm3, area, ct, v_rated)
    parked = parked_rotor_thrust_n(max(float(air_density_kgm3), RHO_STANDARD),
                                   np.array([blade_projected_area_m2(t) for t in turbines]),
                                   v_e50)
    declared = np.array([t.parked_thrust_n for t in turbines], float)
    extreme = np.where(declared > 0, declared, parked)
    h = np.asarray(mast_height_m, float)[:, None]
    P = h.shape[0]
    return {"thrust_rated_n": np.broadcast_to(rated, (P, len(turbines))).copy(),
            "thrust_extreme_n": np.broadcast_to(extreme, (P, len(turbines))).copy(),
            "mast_base_moment_nm": mast_base_moment_nm(np.maximum(rated, extreme)[None, :], h),
            "v_e50_ms": v_e50,
            "extreme_load_method": [extreme_load_method(t) for t in turbines],
            "design_ti": np.array([class_design_ti(t) for t in turbines])}
