"""What every building is screened with: classes, settings, context; one building in detail.

:class:`ScreeningContext` is small and shipped to every worker: the site, the climate of each
zone, the turbines, losses, ranking and transfer settings and the screening's own
:class:`ScreeningSettings`. :func:`assessment_for_building` turns one screened row back into a
detailed :class:`engine.core.model.Assessment`, whose :func:`engine.chain.pipeline.evaluate`
gives the screening's numbers.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Optional

from engine.core import model
from engine.core.errors import InputError, Problems
from engine.flow import effective as flow_effective

#: Suitability classes, best first. The top class is named for what its rows need: a capacity
#: factor that high is rare for roof mounts in field trials, so it is a reason to measure on
#: the roof first, not a promise.
CLASSES = ("exceptional: measure first", "worth a visit", "marginal", "unsuitable")


@dataclass(frozen=True)
class ScreeningSettings:
    """Thresholds of the suitability classes and the screening's own choices.

    Capacity factors are net (after losses) of the best chosen turbine that the roof can
    carry.
    """

    #: Below this the roof is unsuitable: the best urban building-mounted turbine in the
    #: Energy Saving Trust field trial (2009) stayed below 3 % load factor.
    cf_unsuitable_below: float = 0.03
    #: Below this the roof is marginal: rural building-mounted turbines reached about 5 % in
    #: that trial; the Warwick Wind Trials (2009) mean was 4.15 % excluding downtime.
    cf_marginal_below: float = 0.05
    #: At or above this the roof is in the top class; above 10 % is rare for roof mounts in
    #: the field trials, so such rows carry a reason to measure before relying on it.
    cf_exceptional_from: float = 0.10
    #: Below this mean hub speed [m/s] (building effects included) the roof is unsuitable
    #: whatever its capacity factor: small turbines generally need an annual mean of at least
    #: 4 m/s (9 mph) (US DOE/NREL, "Small Wind Electric Systems: A U.S. Consumer's Guide";
    #: from memory). A high capacity factor at a lower mean speed comes from the turbulence
    #: and curve models, not from wind a field trial would find.
    min_mean_speed_ms: float = 4.0
    #: Largest rotor diameter as a fraction of the roof's smaller side [-]: with the mast at
    #: the roof's centre the blade tips then stay a quarter of that side inside the edge
    #: (room to work, and a rotor that does not overhang the edge's separated flow). A
    #: derived, conservative assumption, not a published rule: a setting. A turbine with a
    #: larger rotor is not screened on that roof.
    max_rotor_to_roof_side: float = 0.5
    #: Largest mast as a fraction of the building's height above ground [-]: a roof mast
    #: taller than half the building carries overturning moments that roof structures are
    #: rarely designed for. A derived, conservative assumption, not a published rule: a
    #: setting. A building that needs a taller mast is unsuitable; a structural engineer
    #: decides in every case.
    max_mast_to_building_height: float = 0.5
    #: Masts are chosen in steps of this length [m].
    mast_step_m: float = 0.1
    #: Plan area fraction above which the surroundings are called dense in the reasons [-].
    dense_plan_fraction: float = 0.35
    #: Height over the surroundings' mean height from which a building "stands above" them [-].
    tall_ratio: float = 1.5
    #: Buildings evaluated at once (bounds memory: about 50 kB per building and turbine).
    chunk_rows: int = 5000
    #: With per-sector surroundings (``transfer.sector_morphometry``): shelter every roof by
    #: the wakes of its neighbours within the fetch (engine.flow.shelter), as the detailed
    #: chain shelters a position by the site's buildings. Off only to show its effect.
    upwind_shelter: bool = True

    @classmethod
    def without_limits(cls, **kw) -> "ScreeningSettings":
        """The classes by capacity factor alone: no mean-speed floor, no rotor or mast limit
        from the roof (the screening before those rules; for comparison)."""
        return cls(min_mean_speed_ms=0.0, max_rotor_to_roof_side=math.inf,
                   max_mast_to_building_height=math.inf, **kw)

    def __post_init__(self):
        p = Problems()
        if not (0 <= self.cf_unsuitable_below <= self.cf_marginal_below
                <= self.cf_exceptional_from <= 1):
            p.add("screening", "need 0 <= cf_unsuitable_below <= cf_marginal_below <= "
                               f"cf_exceptional_from <= 1, got {self.cf_unsuitable_below}, "
                               f"{self.cf_marginal_below}, {self.cf_exceptional_from}")
        if not 0 <= self.min_mean_speed_ms <= 30:
            p.add("screening.min_mean_speed_ms",
                  f"must be >= 0 and <= 30, got {self.min_mean_speed_ms} m/s")
        for name in ("max_rotor_to_roof_side", "max_mast_to_building_height"):
            v = getattr(self, name)
            if not v > 0:  # inf switches the limit off
                p.add(f"screening.{name}", f"must be > 0, got {v}")
        if not self.mast_step_m > 0:
            p.add("screening.mast_step_m", f"must be > 0, got {self.mast_step_m}")
        if not isinstance(self.upwind_shelter, bool):
            p.add("screening.upwind_shelter", f"must be true or false, got "
                                              f"{self.upwind_shelter!r}")
        if not int(self.chunk_rows) >= 1:
            p.add("screening.chunk_rows", f"must be >= 1, got {self.chunk_rows}")
        p.raise_if_any()


@dataclass(frozen=True)
class ScreeningContext:
    """Everything a part is screened with, besides its rows (small: shipped to every worker).

    ``climates`` maps a zone name to its climate; the key ``""`` is the climate of rows whose
    zone has none of its own.
    """

    site: model.Site
    climates: dict
    turbines: tuple
    losses: model.Losses = field(default_factory=model.Losses)
    ranking: model.RankingSettings = field(default_factory=model.RankingSettings)
    settings: ScreeningSettings = field(default_factory=ScreeningSettings)
    transfer: model.TransferSettings = field(default_factory=model.TransferSettings)
    #: (latitude, longitude) [deg] of the local origin when the table gives latitude/longitude.
    origin_deg: Optional[tuple] = None

    def __post_init__(self):
        p = Problems()
        if not self.climates:
            p.add("climate", "give at least one wind climate")
        for zone, c in self.climates.items():
            if getattr(c, "measured_at", "reference") == "position":
                p.add(f"climates[{zone!r}].measured_at",
                      f"must be reference for a screening, got position (measured at "
                      f"{c.position_id!r}); screen from the site file holding that position "
                      "(its free-stream equivalent is used) or give a reference climate")
        if not self.turbines:
            p.add("turbines", "choose at least one turbine")
        ids = [t.id for t in self.turbines]
        if len(set(ids)) != len(ids):
            p.add("turbines", f"turbine ids must be unique, got {', '.join(ids)}")
        p.raise_if_any()

    def zones(self):
        """Zone names that have a climate, or None when a default climate serves every row."""
        return None if "" in self.climates else tuple(self.climates)

    @property
    def rotor_radius_m(self) -> float:
        """Largest rotor radius of the chosen turbines [m]: one mast serves all of them."""
        return max(float(t.rotor_radius_m) for t in self.turbines)


def context_from_assessment(assessment, turbine_ids=None, zone_climates=None,
                            settings: ScreeningSettings = None) -> ScreeningContext:
    """A screening context from a site file's assessment: its site, climate, turbines, losses.

    Parameters
    ----------
    assessment : :class:`engine.core.model.Assessment`
    turbine_ids : ids of the turbines to screen with (default: all of the assessment's)
    zone_climates : optional {zone: WindClimate}; the assessment's climate serves other zones
        (a climate measured at one of its positions as its free-stream equivalent)
    """
    turbines = assessment.turbines
    if turbine_ids:
        by_id = {t.id: t for t in turbines}
        missing = [t for t in turbine_ids if t not in by_id]
        if missing:
            raise InputError([("turbines", f"no turbine {m!r} in the site file (has "
                                           f"{', '.join(by_id)})") for m in missing])
        turbines = tuple(by_id[t] for t in turbine_ids)
    # A climate measured at a position is referred to the free stream at the logger first,
    # as the pipeline does for its other positions (engine.flow.effective.reference_climate).
    climates = {"": flow_effective.reference_climate(assessment)}
    climates.update(zone_climates or {})
    return ScreeningContext(site=assessment.site, climates=climates, turbines=tuple(turbines),
                            losses=assessment.losses, ranking=assessment.ranking,
                            transfer=assessment.transfer, settings=settings or ScreeningSettings())




#: ``st.session_state`` key under which the screening page leaves an Assessment for the
#: detailed pages (documented in docs/screening.md).
SESSION_KEY = "screening_assessment"


def assessment_for_building(row, ctx: ScreeningContext) -> model.Assessment:
    """The detailed assessment of one screened building: that building, one roof position.

    Parameters
    ----------
    row : one row of a screening table (a mapping or a pandas Series)
    ctx : the context it was screened with

    Returns
    -------
    :class:`engine.core.model.Assessment` whose :func:`engine.chain.pipeline.evaluate` gives the
    screening's numbers for that building: the surroundings' roughness and displacement (and
    the area fractions they came from) as the site's, the building alone, a roof position at its
    centre on the screening's mast, the same climate, turbines, losses and settings.
    """
    from_fractions = str(row["surroundings_from"]) in ("neighbours in the table",
                                                       "table: area fractions")
    if str(row["surroundings_from"]) == "neighbours by sector":
        raise InputError([("surroundings_from", "must not be 'neighbours by sector' here, got "
                                                "it: a row screened with per-sector "
                                                "surroundings is assessed in detail with its "
                                                "neighbours (open the footprint file's site) "
                                                "or with transfer.sector_morphometry off")])
    site = replace(
        ctx.site, name=f"{ctx.site.name}: building {row['id']}"[:200],
        terrain_roughness_m=float(row["roughness_m"]), displacement_m=float(row["displacement_m"]),
        plan_area_fraction=float(row["plan_area_fraction"]) if from_fractions else None,
        frontal_area_fraction=float(row["frontal_area_fraction"]) if from_fractions else None,
        mean_building_height_m=float(row["surroundings_height_m"]) if from_fractions else None)
    transfer = ctx.transfer if from_fractions else replace(ctx.transfer, use_morphometry=False)
    zone = str(row["zone"]) if str(row["zone"]) in ctx.climates else ""
    b = model.Building(id=str(row["id"]), x_m=float(row["x_m"]), y_m=float(row["y_m"]),
                       length_m=float(row["length_m"]), width_m=float(row["width_m"]),
                       height_m=float(row["height_m"]),
                       orientation_deg=float(row["orientation_deg"]),
                       roof_type=str(row["roof_type"]),
                       roof_pitch_deg=float(row["roof_pitch_deg"]),
                       parapet_height_m=float(row["parapet_height_m"]))
    pos = model.Position(id=f"{b.id}-roof-centre", kind="roof", x_m=b.x_m, y_m=b.y_m,
                         mast_height_m=float(row["mast_height_m"]), building_id=b.id,
                         note="roof centre, mast chosen by the screening")
    return model.Assessment(site=site, climate=ctx.climates[zone], buildings=(b,),
                            positions=(pos,), turbines=ctx.turbines, losses=ctx.losses,
                            ranking=ctx.ranking, transfer=transfer)


