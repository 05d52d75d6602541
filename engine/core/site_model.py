"""Site-file dataclasses of the place: the site, its buildings, candidate positions, receptors.

Each class validates itself on construction and raises one
:class:`~engine.core.errors.InputError` listing every problem as ``(field, message)``.
Re-exported by :mod:`engine.core.model`, the front of the site file's dataclasses.

Conventions
-----------
* Plan coordinates are local metres: ``x_m`` east, ``y_m`` north.
* Directions are degrees clockwise from north, the direction the wind comes *from*.
* A position's ``mast_height_m`` is the hub height above its base: the roof surface for a
  roof position, the ground for gap and mast positions.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

from engine.core.consent import receptor_problems
from engine.core.errors import Problems, check_choice, check_id, check_range

POSITION_KINDS = ("roof", "gap", "mast")
ROOF_TYPES = ("flat", "pitched")


@dataclass(frozen=True)
class Site:
    """The site as a whole: where it is and what surrounds it."""

    name: str
    altitude_m: float = 0.0
    air_temperature_c: float = 10.0
    #: Roughness length of the surroundings [m] (EN 1991-1-4 Table 4.1 gives typical values).
    terrain_roughness_m: float = 0.5
    #: Zero-plane displacement of the surroundings [m]; 0 in open terrain.
    displacement_m: float = 0.0
    #: Optional morphometry of the surroundings (Macdonald et al. 1998); when all three are
    #: given the climate transfer may derive roughness and displacement from them.
    plan_area_fraction: Optional[float] = None
    frontal_area_fraction: Optional[float] = None
    mean_building_height_m: Optional[float] = None
    #: Mean station pressure [Pa] when measured; otherwise ISA from altitude.
    air_pressure_pa: Optional[float] = None
    assessor: str = ""
    notes: str = ""
    #: Where the local plan's origin (x 0, y 0) is on Earth [deg]: set when the site came from
    #: GIS data (the plan is a transverse Mercator about it, engine.io.footprints) and needed
    #: for the sun's path (shadow flicker, engine.energy.flicker).
    origin_lat_deg: Optional[float] = None
    origin_lon_deg: Optional[float] = None
    #: The coordinate reference system the buildings were given in ("EPSG:27700"), for exports.
    crs: str = ""

    def __post_init__(self):
        p = Problems()
        if not isinstance(self.name, str) or not self.name.strip():
            p.add("name", "must be a non-empty text (the site's name)")
        check_range(p, "altitude_m", self.altitude_m, -450, 5000, "m")
        check_range(p, "air_temperature_c", self.air_temperature_c, -50, 50, "°C")
        check_range(p, "terrain_roughness_m", self.terrain_roughness_m, 1e-4, 5.0, "m")
        check_range(p, "displacement_m", self.displacement_m, 0, 100, "m")
        if self.plan_area_fraction is not None:
            check_range(p, "plan_area_fraction", self.plan_area_fraction, 0, 1, "", True, True)
        if self.frontal_area_fraction is not None:
            check_range(p, "frontal_area_fraction", self.frontal_area_fraction, 0, 1, "", True, True)
        if self.mean_building_height_m is not None:
            check_range(p, "mean_building_height_m", self.mean_building_height_m, 0, 300, "m", True)
        if self.air_pressure_pa is not None:
            check_range(p, "air_pressure_pa", self.air_pressure_pa, 50000, 110000, "Pa")
        if (self.origin_lat_deg is None) != (self.origin_lon_deg is None):
            p.add("origin_lat_deg", "and origin_lon_deg must be given together, or neither")
        if self.origin_lat_deg is not None:
            check_range(p, "origin_lat_deg", self.origin_lat_deg, -85, 85, "deg")
        if self.origin_lon_deg is not None:
            check_range(p, "origin_lon_deg", self.origin_lon_deg, -180, 180, "deg")
        if not isinstance(self.crs, str) or len(self.crs) > 2000:
            p.add("crs", "must be a text of at most 2000 characters (e.g. 'EPSG:27700')")
        p.raise_if_any()


@dataclass(frozen=True)
class Building:
    """A rectangular block on the plan.

    ``orientation_deg`` is the bearing of the ``length_m`` side, clockwise from north; the
    block is centred on (``x_m``, ``y_m``).
    """

    id: str
    x_m: float
    y_m: float
    length_m: float
    width_m: float
    height_m: float
    orientation_deg: float = 0.0
    roof_type: str = "flat"
    roof_pitch_deg: float = 0.0
    parapet_height_m: float = 0.0
    #: The true footprint on the plan when it came from GIS data, as x0, y0, x1, y1, ... [m]
    #: (the block above is its oriented minimum rectangle); empty for a drawn block.
    outline_xy_m: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        check_id(p, "id", self.id)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "length_m", self.length_m, 1, 1000, "m")
        check_range(p, "width_m", self.width_m, 1, 1000, "m")
        check_range(p, "height_m", self.height_m, 2, 300, "m")
        check_range(p, "orientation_deg", self.orientation_deg, 0, 360, "deg", hi_open=True)
        check_choice(p, "roof_type", self.roof_type, ROOF_TYPES)
        check_range(p, "roof_pitch_deg", self.roof_pitch_deg, 0, 60, "deg")
        check_range(p, "parapet_height_m", self.parapet_height_m, 0, 5, "m")
        _check_outline(p, self.outline_xy_m)
        p.raise_if_any()


#: Most vertices kept for one footprint outline.
MAX_OUTLINE_VERTICES = 2000


def _check_outline(p: Problems, xy) -> None:
    n = len(xy)
    if n == 0:
        return
    if n % 2 or n < 6:
        p.add("outline_xy_m", f"must be x, y pairs of at least 3 vertices, got {n} numbers")
    elif n > 2 * MAX_OUTLINE_VERTICES:
        p.add("outline_xy_m", f"must have at most {MAX_OUTLINE_VERTICES} vertices, got {n // 2}"
                              "; simplify the outline in the GIS")
    elif not all(math.isfinite(v) and abs(v) <= 1e5 for v in xy):
        p.add("outline_xy_m", "must hold finite coordinates within ±100 km of the origin [m]")


@dataclass(frozen=True)
class Position:
    """A candidate mounting position.

    ``kind`` is ``roof`` (on ``building_id``), ``gap`` (in the passage between the two
    ``gap_buildings``) or ``mast`` (free-standing on the ground).
    """

    id: str
    kind: str
    x_m: float
    y_m: float
    mast_height_m: float
    building_id: str = ""
    gap_buildings: tuple[str, ...] = ()
    note: str = ""

    def __post_init__(self):
        p = Problems()
        check_id(p, "id", self.id)
        check_choice(p, "kind", self.kind, POSITION_KINDS)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "mast_height_m", self.mast_height_m, 0.5, 60, "m")
        if self.kind == "roof" and not self.building_id:
            p.add("building_id", "a roof position must name the building it stands on")
        if self.kind == "gap" and len(self.gap_buildings) != 2:
            p.add("gap_buildings", f"a gap position must name exactly two buildings, "
                                   f"got {len(self.gap_buildings)}")
        p.raise_if_any()


@dataclass(frozen=True)
class Receptor:
    """A place where noise matters (a window, a garden), with its limit.

    ``facing_deg`` is the bearing a window looks out to (None: not a window, no flicker);
    ``background_db`` per ``background_speed_ms`` is the measured background (else a default).
    """

    id: str
    x_m: float
    y_m: float
    height_m: float = 4.0
    limit_db: float = 40.0
    facing_deg: Optional[float] = None
    window_height_m: float = 1.2
    dwelling: bool = True
    background_speed_ms: tuple[float, ...] = ()
    background_db: tuple[float, ...] = ()

    def __post_init__(self):
        p = Problems()
        check_id(p, "id", self.id)
        check_range(p, "x_m", self.x_m, -1e5, 1e5, "m")
        check_range(p, "y_m", self.y_m, -1e5, 1e5, "m")
        check_range(p, "height_m", self.height_m, 0, 300, "m")
        check_range(p, "limit_db", self.limit_db, 10, 100, "dB(A)")
        p.extend(receptor_problems(self))
        p.raise_if_any()

