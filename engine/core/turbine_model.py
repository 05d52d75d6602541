"""Site-file dataclass of a small wind turbine: power curve, rotor, class, certification.

:class:`Turbine` validates itself on construction (the curve against its rated power and the
Betz limit) and raises one :class:`~engine.core.errors.InputError` listing every problem as
``(field, message)``. Re-exported by :mod:`engine.core.model`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from engine.core.consent import turbine_problems
from engine.core.errors import Problems, check_choice, check_id, check_range

#: Betz limit on the power coefficient (actuator-disc theory, 16/27).
BETZ_CP = 16.0 / 27.0
#: Curve points below this power [W] are not held to the Betz limit (they are zero in use).
MIN_JUDGED_POWER_W = 1e-6
#: Reference air density of power curves [kg/m³] (ISO 2533 sea level, 15 °C).
RHO_STANDARD = 1.225

AXIS_TYPES = ("horizontal", "vertical")
REGULATION_TYPES = ("stall", "pitch")
IEC_SMALL_CLASSES = ("I", "II", "III", "IV", "S")


@dataclass(frozen=True)
class Turbine:
    """A small wind turbine with its power curve (at 1.225 kg/m³, as curves are published).

    The curve is a table of hub-height speeds [m/s] and electrical power [W], interpolated
    linearly; zero outside ``cut_in_ms``..``cut_out_ms``.
    """

    id: str
    name: str
    axis: str
    rated_power_w: float
    curve_speed_ms: tuple[float, ...]
    curve_power_w: tuple[float, ...]
    cut_in_ms: float
    rated_speed_ms: float
    cut_out_ms: float
    rotor_diameter_m: float = 0.0
    #: Swept area [m²]; when 0 it is π D²/4 for a horizontal axis rotor.
    swept_area_m2: float = 0.0
    #: Rotor height [m] of a vertical-axis rotor (swept area = diameter × height).
    rotor_height_m: float = 0.0
    regulation: str = "stall"
    #: Thrust coefficient near rated speed; 8/9 is the actuator-disc value at the Betz optimum.
    thrust_coefficient: float = 0.8
    sound_power_db: float = 90.0
    mass_kg: float = 50.0
    installed_cost: float = 5000.0
    iec_class: str = "II"
    #: Reference wind speed [m/s] for class S only.
    v_ref_ms: float = 0.0
    #: Turbulence intensity the published curve was measured at [-]. Curves tested to
    #: IEC 61400-12-1 are typically measured at 10-15 % (from memory); 0.12 when not stated.
    power_curve_ti: float = 0.12
    #: Projected (planform) area of all blades, parked [m²]; 0 estimates it from the swept
    #: area and a typical solidity (engine.energy.loads.PARKED_SOLIDITY).
    blade_projected_area_m2: float = 0.0
    #: The maker's declared parked-rotor load at the class's extreme wind [N]; 0 = not declared.
    parked_thrust_n: float = 0.0
    #: Certification (checked in engine.core.consent.turbine_problems): test standard and body,
    #: reference annual energy at 5 m/s mean [kWh], declared apparent sound power [dB(A)],
    #: and sound power per hub wind speed as declared in the manner of IEC 61400-11.
    certified: bool = False
    test_standard: str = ""
    test_body: str = ""
    reference_aep_5ms_kwh: float = 0.0
    declared_sound_power_db: float = 0.0
    sound_power_speed_ms: tuple[float, ...] = ()
    sound_power_by_speed_db: tuple[float, ...] = ()
    #: Rotor speed range [rpm] as (lowest, highest) in operation, where known (vibration).
    rotor_speed_rpm: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        check_id(p, "id", self.id)
        check_choice(p, "axis", self.axis, AXIS_TYPES)
        check_choice(p, "regulation", self.regulation, REGULATION_TYPES)
        check_choice(p, "iec_class", self.iec_class, IEC_SMALL_CLASSES)
        check_range(p, "rated_power_w", self.rated_power_w, 0, 100000, "W", lo_open=True)
        check_range(p, "rotor_diameter_m", self.rotor_diameter_m, 0, 20, "m")
        check_range(p, "swept_area_m2", self.swept_area_m2, 0, 200, "m²")
        check_range(p, "rotor_height_m", self.rotor_height_m, 0, 20, "m")
        check_range(p, "thrust_coefficient", self.thrust_coefficient, 0, 2, "")
        check_range(p, "sound_power_db", self.sound_power_db, 30, 130, "dB(A)")
        check_range(p, "mass_kg", self.mass_kg, 0, 20000, "kg")
        check_range(p, "installed_cost", self.installed_cost, 0, 1e7, "")
        check_range(p, "power_curve_ti", self.power_curve_ti, 0, 0.5, "")
        check_range(p, "blade_projected_area_m2", self.blade_projected_area_m2, 0, 200, "m²")
        check_range(p, "parked_thrust_n", self.parked_thrust_n, 0, 1e6, "N")
        speeds, power = self.curve_speed_ms, self.curve_power_w
        if len(speeds) < 2:
            p.add("curve_speed_ms", f"the power curve needs at least 2 points, got {len(speeds)}")
        if len(speeds) != len(power):
            p.add("curve_power_w", f"must have one value per speed ({len(speeds)}), got {len(power)}")
        try:
            bad = [i for i in range(1, len(speeds)) if not float(speeds[i]) > float(speeds[i - 1])]
            if bad:
                p.add("curve_speed_ms", f"speeds must increase strictly; check row {bad[0] + 1} "
                                        f"({speeds[bad[0]]} m/s after {speeds[bad[0] - 1]} m/s)")
            if speeds and (float(speeds[0]) < 0 or float(speeds[-1]) > 50):
                p.add("curve_speed_ms", "speeds must lie within 0..50 m/s")
            neg = [i for i, v in enumerate(power) if float(v) < 0]
            if neg:
                p.add("curve_power_w", f"power must not be negative; row {neg[0] + 1} has {power[neg[0]]} W")
            # Rated power is the curve's peak, so AEP <= rated power x 8760 h holds.
            over = [i for i, v in enumerate(power) if float(v) > float(self.rated_power_w) * (1 + 1e-9)]
            if over:
                p.add("curve_power_w", f"row {over[0] + 1} has {power[over[0]]} W, more than the "
                                       f"rated power {self.rated_power_w} W; set rated_power_w to "
                                       "the curve's peak, or check kW/W units")
        except (TypeError, ValueError):
            p.add("curve_speed_ms", "power-curve speeds and powers must be numbers")
        # Upper bounds (common practice): small turbines cut in below 10 m/s; no curve runs
        # beyond a 50 m/s speed limit, and rated power is reached below cut-out (an idealised
        # cubic curve may reach it close to the limit); the IEC 61400-2 reference speeds are
        # 37.5-50 m/s for classes I-IV, and class S stays below 70 m/s.
        check_range(p, "cut_in_ms", self.cut_in_ms, 0, 15, "m/s")
        check_range(p, "rated_speed_ms", self.rated_speed_ms, 0, 50, "m/s", lo_open=True)
        check_range(p, "cut_out_ms", self.cut_out_ms, 0, 50, "m/s", lo_open=True)
        check_range(p, "v_ref_ms", self.v_ref_ms, 0, 70, "m/s")
        if not (float(self.cut_in_ms) < float(self.rated_speed_ms) < float(self.cut_out_ms)):
            p.add("cut_in_ms", f"need cut-in < rated < cut-out speed, got {self.cut_in_ms} < "
                               f"{self.rated_speed_ms} < {self.cut_out_ms} m/s")
        if self.axis == "vertical" and self.swept_area_m2 <= 0 and not (
                self.rotor_diameter_m > 0 and self.rotor_height_m > 0):
            p.add("swept_area_m2", "a vertical-axis rotor needs swept_area_m2, or rotor_diameter_m "
                                   "and rotor_height_m")
        if self.axis == "horizontal" and self.swept_area_m2 <= 0 and self.rotor_diameter_m <= 0:
            p.add("rotor_diameter_m", "a horizontal-axis rotor needs rotor_diameter_m > 0 "
                                      "(or swept_area_m2)")
        if self.iec_class == "S" and self.v_ref_ms <= 0:
            p.add("v_ref_ms", "class S needs its reference wind speed v_ref_ms > 0 m/s")
        p.extend(turbine_problems(self))
        if not p and self.area_m2 > 0:
            # Betz: no curve point may hold more power than 16/27 of the wind's at 1.225 kg/m³.
            # A point under a microwatt is zero power for every purpose (and below it the
            # ratio is subnormal rounding, not a coefficient).
            for i, (v, pw) in enumerate(zip(speeds, power)):
                if v > 0 and pw > MIN_JUDGED_POWER_W:
                    cp = pw / (0.5 * RHO_STANDARD * self.area_m2 * v ** 3)
                    if cp > BETZ_CP + 1e-9:
                        p.add("curve_power_w", f"row {i + 1}: {pw:g} W at {v:g} m/s means Cp = "
                                               f"{cp:.2f} > Betz limit 16/27 = 0.593 for "
                                               f"{self.area_m2:.2f} m² swept area; check the "
                                               "rotor size or the units")
                        break
        p.raise_if_any()

    @property
    def area_m2(self) -> float:
        """Swept area [m²]."""
        if self.swept_area_m2 > 0:
            return float(self.swept_area_m2)
        if self.axis == "vertical":
            return float(self.rotor_diameter_m * self.rotor_height_m)
        return math.pi * float(self.rotor_diameter_m) ** 2 / 4.0

    @property
    def rotor_radius_m(self) -> float:
        """Half the rotor's vertical extent [m] (for clearance checks)."""
        if self.axis == "vertical" and self.rotor_height_m > 0:
            return self.rotor_height_m / 2.0
        if self.rotor_diameter_m > 0:
            return self.rotor_diameter_m / 2.0
        return math.sqrt(self.area_m2 / math.pi)

