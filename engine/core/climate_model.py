"""Site-file dataclasses of the wind: the sector Weibull climate and spot readings.

Each class validates itself on construction and raises one
:class:`~engine.core.errors.InputError` listing every problem as ``(field, message)``.
Re-exported by :mod:`engine.core.model`.

Conventions
-----------
* Plan coordinates are local metres: ``x_m`` east, ``y_m`` north.
* Directions are degrees clockwise from north, the direction the wind comes *from*.
* Sector ``i`` of ``n`` is centred on ``i * 360 / n`` degrees (sector 0 centred on north).
"""
from __future__ import annotations

from dataclasses import dataclass

from engine.core.errors import Problems, check_id, check_range
from engine.core.measured_checks import check_sector_values

CLIMATE_SOURCES = ("table", "measured", "long_term", "mean_speed")


@dataclass(frozen=True)
class WindClimate:
    """A per-sector Weibull climate at a stated height, roughness and displacement.

    ``frequency`` sums to 1; sector ``i`` is centred on ``i * 360 / n`` degrees.
    """

    height_m: float
    roughness_m: float
    frequency: tuple[float, ...]
    weibull_k: tuple[float, ...]
    weibull_c_ms: tuple[float, ...]
    displacement_m: float = 0.0
    source: str = "table"
    label: str = ""
    #: Optional monthly mean speeds at ``height_m`` [m/s], January first, for monthly energy.
    monthly_mean_ms: tuple[float, ...] = ()
    #: The measured record behind this climate, if any: file name and SHA-256 of its bytes.
    record_file: str = ""
    record_sha256: str = ""
    #: Where measured, measured TI and shear, long-term uncertainty, averaging: see
    #: :mod:`engine.core.measured_checks` (the fields, their units and their checks).
    measured_at: str = "reference"
    position_id: str = ""
    turbulence_intensity: tuple[float, ...] = ()
    shear_exponent: tuple[float, ...] = ()
    long_term_uncertainty: float = 0.0
    averaging_s: float = 0.0

    def __post_init__(self):
        p = Problems()
        check_range(p, "height_m", self.height_m, 0, 300, "m", lo_open=True)
        check_range(p, "roughness_m", self.roughness_m, 1e-4, 5.0, "m")
        check_range(p, "displacement_m", self.displacement_m, 0, 100, "m")
        check_sector_values(p, self, CLIMATE_SOURCES)
        p.raise_if_any()

    @property
    def n_sectors(self) -> int:
        return len(self.frequency)

    @property
    def sector_deg(self) -> tuple[float, ...]:
        n = self.n_sectors
        return tuple(i * 360.0 / n for i in range(n))


@dataclass(frozen=True)
class SpotReading:
    """Short paired readings: a handheld sensor at a position and a reference at the same time."""

    position_id: str
    direction_deg: float
    position_speed_ms: tuple[float, ...]
    reference_speed_ms: tuple[float, ...]
    reference_height_m: float = 10.0
    note: str = ""
    #: Replace the model's speed-up of this position and sector by the measured one.
    use_for_calibration: bool = False

    def __post_init__(self):
        p = Problems()
        check_id(p, "position_id", self.position_id)
        check_range(p, "direction_deg", self.direction_deg, 0, 360, "deg", hi_open=True)
        if len(self.position_speed_ms) != len(self.reference_speed_ms):
            p.add("reference_speed_ms", "needs one reference reading per position reading")
        if len(self.position_speed_ms) < 3:
            p.add("position_speed_ms", "needs at least 3 paired readings")
        for name in ("position_speed_ms", "reference_speed_ms"):
            for i, v in enumerate(getattr(self, name)):
                check_range(p, f"{name}[{i}]", v, 0, 60, "m/s")
        if self.reference_speed_ms and not any(
                isinstance(v, (int, float)) and v > 0 for v in self.reference_speed_ms):
            # The speed-up is a ratio to the reference: no reference wind, nothing to set.
            p.add("reference_speed_ms",
                  "all reference readings are 0 m/s; record readings while the wind blows")
        p.raise_if_any()

