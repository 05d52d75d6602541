"""The site file as one dataclass: :class:`Assessment`, everything a result depends on.

It holds the dataclasses of :mod:`engine.core.site_model`, :mod:`engine.core.climate_model`,
:mod:`engine.core.turbine_model`, :mod:`engine.core.settings_model` and
:mod:`engine.core.consent`, and checks what ties them together (unique ids, positions naming
buildings that exist, morphometry present when asked for, measured positions, spot readings).
Re-exported by :mod:`engine.core.model`.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from engine.core.climate_model import SpotReading, WindClimate
from engine.core.consent import ConsentSettings
from engine.core.errors import InputError, Problems
from engine.core.measured_checks import check_measured_position
from engine.core.settings_model import (EnergySettings, Economics, Losses, RankingSettings,
                                        TransferSettings, Uncertainty)
from engine.core.site_model import Building, Position, Receptor, Site
from engine.core.turbine_model import Turbine

FORMAT_VERSION = 1


@dataclass(frozen=True)
class Assessment:
    """Everything a result depends on: what a site file holds."""

    site: Site
    climate: WindClimate
    buildings: tuple[Building, ...]
    positions: tuple[Position, ...]
    turbines: tuple[Turbine, ...]
    losses: Losses = field(default_factory=Losses)
    economics: Economics = field(default_factory=Economics)
    uncertainty: Uncertainty = field(default_factory=Uncertainty)
    ranking: RankingSettings = field(default_factory=RankingSettings)
    receptors: tuple[Receptor, ...] = ()
    spot_readings: tuple[SpotReading, ...] = ()
    transfer: TransferSettings = field(default_factory=TransferSettings)
    energy: EnergySettings = field(default_factory=EnergySettings)
    consent: ConsentSettings = field(default_factory=ConsentSettings)
    format_version: int = FORMAT_VERSION

    def __post_init__(self):
        p = Problems()
        if self.format_version != FORMAT_VERSION:
            p.add("format_version", f"must be {FORMAT_VERSION}, got {self.format_version!r}")
        for group in ("buildings", "positions", "turbines", "receptors"):
            seen = set()
            for i, obj in enumerate(getattr(self, group)):
                if obj.id in seen:
                    p.add(f"{group}[{i}].id", f"duplicate id {obj.id!r}; ids must be unique")
                seen.add(obj.id)
        if not self.positions:
            p.add("positions", "list at least one candidate position")
        if not self.turbines:
            p.add("turbines", "list at least one turbine")
        b_ids = {b.id for b in self.buildings}
        for i, pos in enumerate(self.positions):
            if pos.kind == "roof" and pos.building_id not in b_ids:
                p.add(f"positions[{i}].building_id",
                      f"names building {pos.building_id!r}, which is not in buildings; "
                      "choose one of the site's buildings or delete the position")
            if pos.kind == "gap":
                for b in pos.gap_buildings:
                    if b not in b_ids:
                        p.add(f"positions[{i}].gap_buildings",
                              f"names building {b!r}, which is not in buildings; choose "
                              "one of the site's buildings or delete the position")
                if len(set(pos.gap_buildings)) != len(pos.gap_buildings):
                    p.add(f"positions[{i}].gap_buildings", "must name two different buildings")
        if self.transfer.use_morphometry:
            for name in ("plan_area_fraction", "frontal_area_fraction", "mean_building_height_m"):
                if getattr(self.site, name) is None:
                    p.add(f"site.{name}", "is needed when transfer.use_morphometry is true; "
                                          "enter it or set use_morphometry to false")
        pos_ids = {q.id for q in self.positions}
        check_measured_position(p, self)
        for i, s in enumerate(self.spot_readings):
            if s.position_id not in pos_ids:
                p.add(f"spot_readings[{i}].position_id",
                      f"names position {s.position_id!r}, which is not in positions; "
                      "choose one of the positions or delete the reading")
        p.raise_if_any()

    def building(self, building_id: str) -> Building:
        for b in self.buildings:
            if b.id == building_id:
                return b
        raise InputError([("building_id", f"no building {building_id!r}")])

    def base_height_m(self, pos: Position) -> float:
        """Height of a position's base above ground [m] (roof surface for roof positions)."""
        if pos.kind == "roof":
            b = self.building(pos.building_id)
            return float(b.height_m)
        return 0.0

    def hub_height_m(self, pos: Position) -> float:
        """Hub height above ground [m]."""
        return self.base_height_m(pos) + float(pos.mast_height_m)

