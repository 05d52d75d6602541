"""Suggested roof positions (engine.flow.roof_suggestions): where they stand, their masts
against the detailed chain's own zone clearance, names and bad buildings."""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from engine.core.errors import InputError
from engine.core.model import Position
from engine.flow import effective
from engine.flow import roof_suggestions as rs
from engine.flow.roof_candidates import roof_candidate_points
from engine.io import sitefile

from pathlib import Path

DEMO = Path(__file__).resolve().parents[2] / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def site():
    return sitefile.load(DEMO)


def _with(site, frame):
    extra = tuple(Position(id=r.id, kind="roof", x_m=r.x_m, y_m=r.y_m,
                           mast_height_m=r.mast_height_m, building_id="tower")
                  for r in frame.itertuples())
    return dataclasses.replace(site, positions=site.positions + extra)


def test_points_are_the_candidate_generators_and_set_back(site):
    """The points are roof_candidate_points' (centre first), each at least the set-back
    from every edge; the centre of a 20 m x 20 m roof is 10 m from its edges (hand
    calculation: half the side)."""
    b = next(x for x in site.buildings if x.id == "tower")
    got = rs.suggest_roof_positions(site, "tower", spacing_m=6.0, setback_m=2.0)
    ref = roof_candidate_points(b, 6.0, 2.0)
    assert np.allclose(got[["x_m", "y_m"]].to_numpy(), ref, atol=5e-4)
    assert got["edge_distance_m"].iloc[0] == pytest.approx(b.width_m / 2)
    assert (got["edge_distance_m"] >= 2.0 - 1e-9).all()
    assert got["why"].iloc[0].startswith("roof centre")


def test_mast_is_the_chains_clearance_plus_the_largest_rotor(site):
    """mast = ceil((z_clear + r) / 0.1 m) · 0.1 m (hand calculation of the rule), z_clear the
    chain's own min_clear_mast_m at the suggested mast, r the largest chosen rotor; the
    rotor then clears the zone (its lowest tip at or above the zone's top) and 0.1 m less
    would not."""
    got = rs.suggest_roof_positions(site, "tower")
    r = max(t.rotor_radius_m for t in site.turbines)
    assert (got["rotor_radius_m"] == r).all()
    a = _with(site, got)
    eff = effective.effective_climate(a, 1.225)
    n = len(site.positions)
    need = np.asarray(eff.diagnostics["min_clear_mast_m"])[n:]
    assert np.allclose(got["min_clear_mast_m"], need, rtol=1e-9)
    expect = np.ceil(np.round((need + r) / 0.1, 9)) * 0.1
    assert np.allclose(got["mast_height_m"], np.clip(expect, 0.5, 60.0), atol=1e-9)
    tip = got["mast_height_m"].to_numpy() - r
    assert (tip >= need - 1e-9).all()          # the rotor clears the zone
    assert (tip - 0.1 < need + 1e-9).all()     # and it is the shortest such mast
    masts = np.array([p.mast_height_m for p in a.positions])
    inside = effective.rotor_in_turbulence_zone(eff, masts, [r])
    assert not inside[n:].any()
    assert (got["mast_height_m"] > 0).all()


def test_names_avoid_every_position_and_each_other(site):
    got = rs.suggest_roof_positions(site, "mill", taken_ids=["mill-s1", "mill-s2"])
    ids = list(got["id"])
    assert len(set(ids)) == len(ids)
    assert not set(ids) & ({p.id for p in site.positions} | {"mill-s1", "mill-s2"})
    assert rs.free_ids(["a", "a", "b"], ["a"]) == ["a-2", "a-3", "b"]


def test_centre_only_without_a_spacing(site):
    got = rs.suggest_roof_positions(site, "mill", spacing_m=None)
    assert len(got) == 1 and got["x_m"].iloc[0] == pytest.approx(0.0)


@pytest.mark.parametrize("kw, where, text", [
    ({"building_id": "barn"}, "building", "must be one of the site's buildings"),
    ({"building_id": "mill", "setback_m": 7.5}, "building mill: width_m",
     "must be at least 15 m"),
    ({"building_id": "mill", "spacing_m": -1.0}, "spacing", "must be more than 0 m"),
    ({"building_id": "mill", "setback_m": -1.0}, "set-back", "must be 0 m or more"),
])
def test_bad_requests_named(site, kw, where, text):
    with pytest.raises(InputError) as e:
        rs.suggest_roof_positions(site, **kw)
    (w, m), = e.value.problems
    assert w == where and text in m


def test_a_roof_exactly_twice_the_setback_gets_its_centre(site):
    """14 m wide with 7 m kept: the centre line is exactly 7 m from both long edges."""
    got = rs.suggest_roof_positions(site, "mill", setback_m=7.0)
    assert len(got) >= 1 and math.isclose(got["edge_distance_m"].min(), 7.0, abs_tol=1e-9)


def test_measured_points_repeat_the_suggestions_and_refuse_off_the_roof(site):
    """At the suggested points, the measure gives the suggestions' own masts; a point 3 m
    beyond the 14 m wide roof's long edge (y = 7 + 3) is named with how far out it is."""
    got = rs.suggest_roof_positions(site, "mill")
    again = rs.measure_roof_points(site, "mill", got["x_m"], got["y_m"])
    assert np.array_equal(again["mast_height_m"], got["mast_height_m"].to_numpy())
    with pytest.raises(InputError) as e:
        rs.measure_roof_points(site, "mill", [0.0, 0.0, float("nan")], [0.0, 10.0, 0.0])
    where = dict(e.value.problems)
    assert set(where) == {"point 2", "point 3"}
    assert "3.0 m outside its edge" in where["point 2"]
    assert "must be numbers" in where["point 3"]


@pytest.mark.parametrize("spacing_m", [1e-9, 1e-3])
def test_a_spacing_too_fine_for_the_roof_is_named_before_any_grid_is_made(site, spacing_m):
    """A grid of millions of points (a spacing typed as 0.001) is refused by name, with the
    finest spacing that roof allows, instead of filling the memory."""
    with pytest.raises(InputError) as e:
        rs.suggest_roof_positions(site, "mill", spacing_m=spacing_m)
    (w, m), = e.value.problems
    assert w == "spacing" and m.startswith("must be at least") and "candidates" in m
    with pytest.raises(InputError):
        roof_candidate_points(site.buildings[0], spacing_m, 2.0)


def test_the_finest_spacing_named_is_accepted(site):
    b = next(x for x in site.buildings if x.id == "mill")
    fine = rs.finest_spacing_m(b, 2.0)
    pts = roof_candidate_points(b, fine, 2.0)
    assert 1 < len(pts) <= rs.MAX_ROOF_CANDIDATES
