"""Input dataclasses for the neighbour and consent checks: noise, shadow flicker, local rules.

They hang off :class:`engine.core.model.Assessment` as ``consent`` (one object, all defaults),
so a site file without them loads as before. The checks on fields that
:mod:`engine.core.model` adds to existing classes (a receptor's window and background noise,
a turbine's certification and sound power by speed) live here too, as plain functions the model's ``__post_init__`` calls.

Every default here is a stated assumption, each marked in its comment; a site assessor should
replace them with the local authority's criteria and measured values.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

from engine.core.errors import Problems, check_range

NOISE_CRITERIA = ("limit", "background_plus")
#: Kinds of siting rule and what ``limit`` means for each.
RULE_KINDS = {
    "tip_above_roof_max_m": "blade tip height above the roof it stands on [m], at most",
    "tip_height_max_m": "blade tip height above ground [m], at most",
    "swept_area_max_m2": "rotor swept area [m²], at most",
    "boundary_distance_min_m": "distance from the mast to the site boundary [m], at least",
    "dwelling_distance_min_tip_multiple":
        "distance to the nearest dwelling, as a multiple of the tip height, at least",
    "topple_distance_min_tip_multiple":
        "distance to the boundary and to every dwelling, as a multiple of the tip height "
        "(the topple distance), at least",
    "mast_height_max_m": "mast height above its base [m], at most",
}
#: Octave-band centre frequencies of ISO 9613-2 [Hz].
OCTAVE_HZ = (63.0, 125.0, 250.0, 500.0, 1000.0, 2000.0, 4000.0, 8000.0)
#: A-weighted octave shape of broadband turbine noise relative to the total [dB]: a smooth
#: spectrum peaking at 500 Hz to 1 kHz (an assumed typical shape, from memory; enter the
#: turbine's declared octave spectrum where its test report gives one).
DEFAULT_OCTAVE_SHAPE_DB = (-20.0, -14.0, -9.0, -6.0, -5.0, -7.0, -11.0, -18.0)
#: Default background L90 at the receptor by hub-height wind speed: quiet suburban evening
#: levels (an assumed curve, from memory; measure background at the receptor instead).
DEFAULT_BACKGROUND_SPEED_MS = (3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0)
DEFAULT_BACKGROUND_DB = (28.0, 29.0, 30.0, 32.0, 34.0, 36.0, 38.0, 40.0, 42.0, 44.0)
#: Plausible range of a measured background L90 at a receptor [dB(A)]: below 10 dB(A) is
#: under the self-noise of the sound level meters used for surveys, above 80 dB(A) is no
#: dwelling's background but a source beside the microphone (plausibility bounds, from
#: memory; they catch a typing slip, such as a sound power entered in place of a level).
BACKGROUND_DB_RANGE = (10.0, 80.0)

#: Where each criterion default of :class:`NoiseSettings` and :class:`FlickerSettings` comes
#: from, in words, for every place that shows a default beside its field.
DEFAULT_SOURCES = {
    "criterion": "a fixed limit at each place; the local authority says which criterion applies",
    "margin_above_background_db": "background plus 5 dB, never below the fixed limit, is the "
                                  "form of UK wind-turbine noise guidance (ETSU-R-97, from "
                                  "memory)",
    "tolerance_db": "no tolerance: any level above the criterion counts (the sceptical choice)",
    "worst_hours_per_year_limit": "commonly quoted for the astronomical worst case (German "
                                  "guidance on turbine shadow, from memory)",
    "worst_minutes_per_day_limit": "commonly quoted for the astronomical worst case (German "
                                   "guidance on turbine shadow, from memory)",
    "expected_hours_per_year_limit": "commonly quoted for the expected case (German guidance "
                                     "on turbine shadow, from memory)",
    "sunshine_fraction": "an assumed value for northwest Europe (from memory); use the local "
                         "climate's sunshine record",
    "min_sun_elevation_deg": "no distinct shadow from a lower sun (common practice, from memory)",
}
#: What the neighbour figures are and who decides, for every page that shows them.
NEIGHBOUR_CAUTION = (
    "Noise and shadow flicker here are screening estimates, not a noise or flicker "
    "assessment. Consent rests with the local planning authority, whose criteria and limits "
    "govern over every default here. Where a position's noise margin is small (a few dB), a "
    "noise survey by a qualified acoustician is needed: measured background at the "
    "neighbours' windows and gardens, and the turbine's own noise, tonality and amplitude "
    "modulation.")


def _check_curve(p: Problems, speed_name: str, speeds, level_name: str, levels, lo, hi):
    """A speed-indexed table: equal lengths, speeds strictly increasing, levels in range.

    Each problem names its entry (``background_speed_ms[2]``) in the house form ``"must be
    <rule>, got <value> <unit>"``.
    """
    if len(speeds) != len(levels):
        p.add(level_name, f"must have one value per speed in {speed_name} ({len(speeds)}), "
                          f"got {len(levels)}")
        return
    for i, v in enumerate(speeds):
        check_range(p, f"{speed_name}[{i}]", v, 0, 50, "m/s")
    for i, v in enumerate(levels):
        check_range(p, f"{level_name}[{i}]", v, lo, hi, "dB(A)")
    try:
        values = [float(v) for v in speeds]
    except (TypeError, ValueError):
        return  # the entry that is not a number is named above
    for i in range(1, len(values)):
        if not values[i] > values[i - 1]:
            p.add(f"{speed_name}[{i}]", f"must be above the speed before it "
                                        f"({values[i - 1]:g} m/s), got {values[i]:g} m/s")


@dataclass(frozen=True)
class NoiseSettings:
    """How noise at receptors is propagated and judged (ISO 9613-2, see engine.energy.noise_bands).

    ``criterion`` ``limit``: the receptor's ``limit_db`` at every wind speed;
    ``background_plus``: the larger of ``limit_db`` and background + ``margin_above_background_db``
    at each speed. A bin breaks the criterion when the level is above it by more than
    ``tolerance_db``.
    """

    criterion: str = "limit"
    margin_above_background_db: float = 5.0
    tolerance_db: float = 0.0
    #: Rise of sound power with hub wind speed when the turbine declares one value only
    #: [dB per m/s] (an assumed slope, from memory, typical of small stall-regulated rotors).
    default_slope_db_per_ms: float = 1.5
    #: Hub speed at which a single declared sound power applies [m/s] (IEC 61400-11 declares
    #: small turbines at 8 m/s, from memory).
    declared_speed_ms: float = 8.0
    #: Highest hub speed assessed [m/s]; limits are commonly set up to 12 m/s (from memory).
    max_assessed_speed_ms: float = 12.0
    #: ISO 9613-2 ground factor G: 0 hard (paving), 1 porous (grass); one value for the site.
    ground_factor: float = 0.5
    air_temperature_c: float = 10.0
    relative_humidity_pct: float = 70.0
    #: Count the site's buildings as barriers (diffraction over the roof only).
    building_screening: bool = True
    octave_shape_db: tuple[float, ...] = DEFAULT_OCTAVE_SHAPE_DB

    def __post_init__(self):
        p = Problems()
        if self.criterion not in NOISE_CRITERIA:
            p.add("criterion", f"must be one of {', '.join(NOISE_CRITERIA)}, "
                               f"got {self.criterion!r}")
        check_range(p, "margin_above_background_db", self.margin_above_background_db, -10, 30, "dB")
        check_range(p, "tolerance_db", self.tolerance_db, 0, 10, "dB")
        check_range(p, "default_slope_db_per_ms", self.default_slope_db_per_ms, 0, 5, "dB/(m/s)")
        check_range(p, "declared_speed_ms", self.declared_speed_ms, 1, 30, "m/s")
        check_range(p, "max_assessed_speed_ms", self.max_assessed_speed_ms, 1, 40, "m/s")
        check_range(p, "ground_factor", self.ground_factor, 0, 1, "")
        check_range(p, "air_temperature_c", self.air_temperature_c, -20, 50, "°C")
        check_range(p, "relative_humidity_pct", self.relative_humidity_pct, 10, 100, "%")
        if len(self.octave_shape_db) != len(OCTAVE_HZ):
            p.add("octave_shape_db", f"must list {len(OCTAVE_HZ)} octave bands (63 Hz to 8 kHz), "
                                     f"got {len(self.octave_shape_db)}")
        for i, v in enumerate(self.octave_shape_db):
            check_range(p, f"octave_shape_db[{i}]", v, -60, 10, "dB")
        p.raise_if_any()


@dataclass(frozen=True)
class FlickerSettings:
    """Shadow flicker: limits and the expected-case assumptions (see engine.energy.flicker).

    Defaults are the limits commonly quoted for the astronomical worst case, 30 hours a year
    and 30 minutes a day, and 8 hours a year for the expected case (German guidance on
    turbine shadow, from memory); the local authority's limits govern.
    """

    worst_hours_per_year_limit: float = 30.0
    worst_minutes_per_day_limit: float = 30.0
    expected_hours_per_year_limit: float = 8.0
    #: Fraction of daylight with direct sun, one value or 12 (January first); 0.35 is an
    #: assumed value (from memory, northwest Europe); use the local climate's sunshine record.
    sunshine_fraction: tuple[float, ...] = (0.35,)
    #: No distinct shadow when the sun is lower than this [deg] (common practice, from memory).
    min_sun_elevation_deg: float = 3.0
    #: No flicker counted beyond this many rotor diameters (common practice, from memory).
    max_distance_rotor_diameters: float = 10.0
    #: Time step of the sun-position year [min].
    time_step_min: float = 5.0
    year: int = 2025

    def __post_init__(self):
        p = Problems()
        for name in ("worst_hours_per_year_limit", "expected_hours_per_year_limit"):
            check_range(p, name, getattr(self, name), 0, 8760, "h")
        check_range(p, "worst_minutes_per_day_limit", self.worst_minutes_per_day_limit, 0, 1440, "min")
        if len(self.sunshine_fraction) not in (1, 12):
            p.add("sunshine_fraction", f"must be 1 or 12 values, got {len(self.sunshine_fraction)}")
        for i, v in enumerate(self.sunshine_fraction):
            check_range(p, f"sunshine_fraction[{i}]", v, 0, 1)
        check_range(p, "min_sun_elevation_deg", self.min_sun_elevation_deg, 0, 20, "deg")
        check_range(p, "max_distance_rotor_diameters", self.max_distance_rotor_diameters, 1, 100, "")
        check_range(p, "time_step_min", self.time_step_min, 0.5, 30, "min")
        check_range(p, "year", self.year, 1950, 2100, "")
        p.raise_if_any()


@dataclass(frozen=True)
class SitingRule:
    """One local planning or siting rule: a ``kind`` from :data:`RULE_KINDS` and its ``limit``."""

    id: str
    kind: str
    limit: float
    note: str = ""

    def __post_init__(self):
        p = Problems()
        name = self.id if isinstance(self.id, str) and self.id.strip() else "?"
        if name == "?":
            p.add("id", f"must be a non-empty text (the rule's name), got {self.id!r}")
        if self.kind not in RULE_KINDS:
            p.add("kind", f"rule {name!r}: must be one of {', '.join(RULE_KINDS)}, "
                          f"got {self.kind!r}")
        try:
            ok = math.isfinite(float(self.limit)) and float(self.limit) > 0
        except (TypeError, ValueError):
            ok = False
        if not ok:
            p.add("limit", f"rule {name!r}: must be a number > 0, got {self.limit!r}")
        p.raise_if_any()


@dataclass(frozen=True)
class ConsentSettings:
    """Neighbour and consent inputs of an assessment, all optional."""

    noise: NoiseSettings = field(default_factory=NoiseSettings)
    flicker: FlickerSettings = field(default_factory=FlickerSettings)
    #: The chosen local rule set (see engine.chain.rules.load_rule_set) and its name.
    rule_set_name: str = ""
    rules: tuple[SitingRule, ...] = ()
    #: Site boundary as a closed polygon (vertices in order) in plan metres.
    boundary_x_m: tuple[float, ...] = ()
    boundary_y_m: tuple[float, ...] = ()
    #: Natural frequency range of the supporting structure [Hz], where the user knows it.
    structure_frequency_hz: tuple[float, ...] = ()
    #: One-sigma power-curve energy uncertainty for a turbine without certified test data
    #: (wider than a tested curve; 0.15 is an assumed value, from memory of field trials of
    #: small turbines that fell short of their makers' curves).
    uncertified_curve_uncertainty: float = 0.15

    def __post_init__(self):
        p = Problems()
        seen = set()
        for i, rule in enumerate(self.rules):
            if rule.id in seen:
                p.add(f"rules[{i}].id", f"duplicate rule id {rule.id!r}; ids must be unique")
            seen.add(rule.id)
        if len(self.boundary_x_m) != len(self.boundary_y_m):
            p.add("boundary_y_m", f"must have one value per boundary_x_m ({len(self.boundary_x_m)}), "
                                  f"got {len(self.boundary_y_m)}")
        elif 0 < len(self.boundary_x_m) < 3:
            p.add("boundary_x_m", f"a boundary needs at least 3 vertices, got {len(self.boundary_x_m)}")
        if len(self.structure_frequency_hz) not in (0, 2):
            p.add("structure_frequency_hz", "must be empty or [lowest, highest] in Hz, got "
                                            f"{len(self.structure_frequency_hz)} values")
        for i, v in enumerate(self.structure_frequency_hz):
            check_range(p, f"structure_frequency_hz[{i}]", v, 0, 1000, "Hz", lo_open=True)
        check_range(p, "uncertified_curve_uncertainty", self.uncertified_curve_uncertainty, 0, 1)
        p.raise_if_any()


def receptor_problems(r) -> Problems:
    """Checks of a receptor's window and background-noise fields (for Receptor.__post_init__)."""
    p = Problems()
    if r.facing_deg is not None:
        check_range(p, "facing_deg", r.facing_deg, 0, 360, "deg", hi_open=True)
    check_range(p, "window_height_m", r.window_height_m, 0, 20, "m")
    _check_curve(p, "background_speed_ms", r.background_speed_ms, "background_db",
                 r.background_db, *BACKGROUND_DB_RANGE)
    return p


def turbine_problems(t) -> Problems:
    """Checks of a turbine's certification and sound-power-by-speed fields."""
    p = Problems()
    if not isinstance(t.certified, bool):
        p.add("certified", f"must be true or false, got {t.certified!r}")
    check_range(p, "reference_aep_5ms_kwh", t.reference_aep_5ms_kwh, 0, 1e6, "kWh")
    check_range(p, "declared_sound_power_db", t.declared_sound_power_db, 0, 130, "dB(A)")
    _check_curve(p, "sound_power_speed_ms", t.sound_power_speed_ms, "sound_power_by_speed_db",
                 t.sound_power_by_speed_db, 30, 130)
    if len(t.rotor_speed_rpm) not in (0, 2):
        p.add("rotor_speed_rpm", f"must be empty or [lowest, highest] in rpm, got "
                                 f"{len(t.rotor_speed_rpm)} values")
    for i, v in enumerate(t.rotor_speed_rpm):
        check_range(p, f"rotor_speed_rpm[{i}]", v, 0, 5000, "rpm", lo_open=True)
    if t.certified and not (t.test_standard.strip() and t.test_body.strip()):
        p.add("test_standard", "a certified turbine must name its test standard and test_body "
                               "(e.g. IEC 61400-2 and the certifying body)")
    return p


__all__ = ["NoiseSettings", "FlickerSettings", "SitingRule", "ConsentSettings", "RULE_KINDS",
           "OCTAVE_HZ", "BACKGROUND_DB_RANGE", "DEFAULT_SOURCES", "NEIGHBOUR_CAUTION",
           "NOISE_CRITERIA"]
