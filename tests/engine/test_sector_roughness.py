"""Sector-wise roughness from the buildings upwind (engine.flow.sector_roughness), checked
against hand-computed area fractions and the Macdonald et al. (1998) equations written out."""
from __future__ import annotations

import math

import numpy as np
import pytest

from engine.core.model import Building
from engine.flow import sector_roughness as sr


def block(bid, x, y, length, width, height, bearing=0.0):
    return Building(id=bid, x_m=x, y_m=y, length_m=length, width_m=width, height_m=height,
                    orientation_deg=bearing)


def macdonald_by_hand(lp, lf, h, a=4.43, beta=1.0, cd=1.2, kappa=0.4):
    """Macdonald, Griffiths & Hall (1998) eqs. for d and z0, staggered array (A 4.43, β 1.0)."""
    d = h * (1 + a ** (-lp) * (lp - 1))
    z0 = h * (1 - d / h) * math.exp(-(0.5 * beta * cd / kappa ** 2 * (1 - d / h) * lf) ** -0.5)
    return z0, d


def test_a_block_to_the_west_roughens_only_the_west():
    """A 40 x 20 m, 30 m tall block 150 m west (long side north-south) is the only building:
    sector 270° gets λp = 800 / (π 300² / 12), λf = 30 · 40 / the same area; east keeps the
    fallback."""
    tall = block("tall", -150.0, 0.0, 40.0, 20.0, 30.0)
    z0, d, have = sr.sector_roughness([tall], 12, fallback_z0_m=0.3, fallback_d_m=2.0)
    west, east = 9, 3
    assert have[west] and not have[east]
    wedge = math.pi * 300.0 ** 2 / 12  # analytic wedge area [m²]
    lp, lf = 800.0 / wedge, 30.0 * 40.0 / wedge
    z0_ref, d_ref = macdonald_by_hand(lp, lf, 30.0)
    assert z0[west] == pytest.approx(z0_ref, rel=1e-3)
    assert d[west] == pytest.approx(d_ref, rel=1e-3)
    assert (z0[east], d[east]) == (0.3, 2.0)
    assert have.sum() == 1


def test_area_fractions_by_hand_and_partial_overlap():
    """λp counts only the part of a footprint inside the wedge: a block straddling the north
    sector's edge contributes the share of its area inside."""
    north = block("n", 0.0, 100.0, 10.0, 10.0, 10.0)  # wholly inside the north wedge
    lp, lf, h = sr.sector_morphometry([north], 4, fetch_m=200.0)
    wedge = math.pi * 200.0 ** 2 / 4
    assert lp[0] == pytest.approx(100.0 / wedge, rel=1e-3)
    assert lf[0] == pytest.approx(10.0 * 10.0 / wedge, rel=1e-3)
    assert h[0] == 10.0 and np.isnan(h[1:]).all()
    # the 4-sector north wedge spans 315°..45°; a block centred on the 45° edge is half inside
    edge = block("e", 100.0 / math.sqrt(2), 100.0 / math.sqrt(2), 10.0, 10.0, 10.0, bearing=45.0)
    lp2, _, _ = sr.sector_morphometry([edge], 4, fetch_m=200.0)
    assert lp2[0] == pytest.approx(50.0 / wedge, rel=2e-3)
    assert lp2[1] == pytest.approx(50.0 / wedge, rel=2e-3)


def test_excluded_and_distant_buildings_do_not_count():
    far = block("far", 0.0, 500.0, 20.0, 20.0, 20.0)
    own = block("own", 0.0, 10.0, 20.0, 20.0, 20.0)
    lp, _, _ = sr.sector_morphometry([far, own], 8, fetch_m=300.0, exclude_ids=("own",))
    assert np.all(lp == 0.0)


def test_crosswind_width_of_a_rotated_block():
    """A 40 x 10 block bearing 0° is 10 m wide to a north wind and 40 m to a west wind."""
    from engine.flow.buildings import building_corners_m
    xy = building_corners_m(block("b", 0.0, 0.0, 40.0, 10.0, 5.0))
    assert sr.crosswind_width_m(xy, 0.0) == pytest.approx(10.0)
    assert sr.crosswind_width_m(xy, 270.0) == pytest.approx(40.0)


# ---- the array form and the chain with direction-aware surroundings ----------------------

from engine.core import model  # noqa: E402
from engine.flow import buildings as geom  # noqa: E402
from engine.flow import effective as flow  # noqa: E402


def test_point_form_agrees_with_the_footprint_clipping_form():
    """The chain's array form (whole blocks counted in the sector of their centre) against
    the shapely-clipped wedges of :func:`sector_morphometry` (the independent reference) on
    a seeded scatter of 2,000 small blocks well inside the fetch: within 3 % per sector."""
    rng = np.random.default_rng(7)
    n = 2000
    r = rng.uniform(40.0, 250.0, n)
    t = rng.uniform(0.0, 2 * math.pi, n)
    blocks = [block(f"b{i}", r[i] * math.sin(t[i]), r[i] * math.cos(t[i]), 4.0, 3.0,
                    float(rng.uniform(4.0, 15.0)), float(rng.uniform(0, 180)))
              for i in range(n)]
    lp_ref, lf_ref, h_ref = sr.sector_morphometry(blocks, 12, fetch_m=300.0)
    arr = geom.building_arrays(blocks)
    lp, lf, h = sr.sector_morphometry_points([0.0], [0.0], arr, 12, 300.0)
    np.testing.assert_allclose(lp[0], lp_ref, rtol=0.03)
    np.testing.assert_allclose(lf[0], lf_ref, rtol=0.03)
    np.testing.assert_allclose(h[0], h_ref, rtol=0.03)


# A low home block with a roof position, and one tall block 250 m to the west (invented
# layout). 12 sectors of equal climate; the site's own terrain z0 0.5 m, d 4 m.
HOME = model.Building("home", 0.0, 0.0, 20.0, 20.0, 10.0)
TALL = model.Building("tall", -250.0, 0.0, 30.0, 30.0, 25.0)
MAST_M = 8.0  # hub 18 m above ground


def _site_assessment(sector_on: bool, tall=True):
    climate = model.WindClimate(height_m=10.0, roughness_m=0.03, frequency=(1 / 12,) * 12,
                                weibull_k=(2.0,) * 12, weibull_c_ms=(6.0,) * 12)
    turbine = model.Turbine(id="t", name="generic", axis="horizontal", rated_power_w=1000.0,
                            curve_speed_ms=(0.0, 3.0, 11.0, 25.0),
                            curve_power_w=(0.0, 0.0, 1000.0, 1000.0), cut_in_ms=3.0,
                            rated_speed_ms=11.0, cut_out_ms=25.0, rotor_diameter_m=2.0)
    return model.Assessment(
        site=model.Site(name="t", terrain_roughness_m=0.5, displacement_m=4.0),
        climate=climate, buildings=(HOME, TALL) if tall else (HOME,),
        positions=(model.Position("p", "roof", 0.0, 0.0, MAST_M, building_id="home"),),
        turbines=(turbine,),
        transfer=model.TransferSettings(sector_morphometry=sector_on, sector_fetch_m=300.0))


def _cr(z, z0, d):
    """EN 1991-1-4 eq. (4.4)-(4.5): c_r = 0.19 (z0/0.05)^0.07 ln((z - d)/z0), above z_min."""
    return 0.19 * (z0 / 0.05) ** 0.07 * math.log((z - d) / z0)


def test_tall_block_to_the_west_roughens_and_shelters_only_the_west():
    eff_on = flow.effective_climate(_site_assessment(True), 1.225)
    eff_off = flow.effective_climate(_site_assessment(False), 1.225)
    west = 9  # 270°
    z0s = eff_on.diagnostics["sector_roughness_m"][0]
    ds = eff_on.diagnostics["sector_displacement_m"][0]
    # Macdonald et al. (1998), Atmos. Environ. 32(11):1857-1864, written out by hand: the
    # tall block's 900 m² plan and 25 m x 30 m face over the wedge π 300² / 12.
    wedge = math.pi * 300.0 ** 2 / 12
    z0_w, d_w = macdonald_by_hand(900.0 / wedge, 25.0 * 30.0 / wedge, 25.0)
    assert z0s[west] == pytest.approx(z0_w, rel=1e-9)
    assert ds[west] == pytest.approx(d_w, rel=1e-9)
    others = np.arange(12) != west
    assert np.all(z0s[others] == 0.5) and np.all(ds[others] == 4.0)
    assert z0_w > 0.5  # the tall block is rougher than the site's own terrain
    # Log law with the EN 1991-1-4 terrain factor by hand, hub 18 m above ground, both hubs
    # above z_t = d + z_min (z_min 10 m for z0 ≥ 1 m, 5-10 m between, Table 4.1), so no
    # in-canopy factor: c_site / c_station = c_r(18; z0_s, d_s) / c_r(10; 0.03, 0).
    hub = 10.0 + MAST_M
    assert hub > d_w + 10.0 and hub > 4.0 + 10.0
    ratio_w = _cr(hub, z0_w, d_w) / _cr(10.0, 0.03, 0.0)
    ratio_site = _cr(hub, 0.5, 4.0) / _cr(10.0, 0.03, 0.0)
    assert eff_on.free_c_ms[0, west] == pytest.approx(6.0 * ratio_w, rel=1e-9)
    assert eff_off.free_c_ms[0, west] == pytest.approx(6.0 * ratio_site, rel=1e-9)
    np.testing.assert_allclose(eff_on.free_c_ms[0, others], 6.0 * ratio_site, rtol=1e-12)
    # The shelter model's own formula (engine.flow.shelter): x = 250 − 15 m to the tall
    # block's leeward face, δ = 0.1·10^1.5 (25/235)^1.5, f_z = f_y = f_x = 1 (hub under H,
    # on the centreline, x < 15 H).
    delta = 0.1 * 10 ** 1.5 * (25.0 / 235.0) ** 1.5
    shel = eff_on.diagnostics["shelter_speed_factor"][0]
    assert shel[west] == pytest.approx(1.0 - delta, rel=1e-9)
    assert shel[3] == 1.0  # east: nothing upwind
    # The sheltered sector's rotor speed drops by both, and only there.
    drop = eff_on.weibull_c_ms[0] / eff_off.weibull_c_ms[0]
    assert drop[west] == pytest.approx(ratio_w / ratio_site, rel=1e-9)
    assert drop[west] < 1.0
    np.testing.assert_allclose(drop[others], 1.0, rtol=1e-12)


def test_no_building_upwind_gives_the_site_terrain_exactly():
    """With only the position's own roof (left out of its surroundings) every sector falls
    back to the site's terrain: the same numbers as the setting off."""
    on = flow.effective_climate(_site_assessment(True, tall=False), 1.225)
    off = flow.effective_climate(_site_assessment(False, tall=False), 1.225)
    assert not on.diagnostics["sector_roughness_from_buildings"].any()
    np.testing.assert_array_equal(on.free_c_ms, off.free_c_ms)
    np.testing.assert_array_equal(on.turbulence_intensity, off.turbulence_intensity)


def test_fetch_setting_is_checked():
    with pytest.raises(model.InputError) as e:
        model.TransferSettings(sector_fetch_m=10.0)
    assert "sector_fetch_m" in str(e.value)


from hypothesis import given, settings as hsettings, strategies as st  # noqa: E402


@hsettings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(-400, 400), st.floats(-400, 400), st.floats(2, 60),
                          st.floats(2, 60), st.floats(2, 80), st.floats(0, 180)),
                min_size=0, max_size=30),
       st.floats(50, 400))
def test_sector_terrain_stays_physical(blocks, fetch):
    """Any layout: z0 within the chain's [1e-4, 5] m, 0 ≤ d < H̄ where buildings count, a
    sector takes the buildings' terrain exactly when a block's centre lies in its wedge, and
    the carried speeds are finite and positive (common practice bounds)."""
    arr = geom.building_arrays([block(f"b{i}", *b) for i, b in enumerate(blocks)])
    lp, lf, h = sr.sector_morphometry_points([0.0], [0.0], arr, 12, fetch)
    t = sr.sector_terrain(lp, lf, h, {"roughness_m": 0.5, "displacement_m": 4.0,
                                      "frontal_area_fraction": None, "canopy_height_m": None})
    z0, d, have = t["roughness_m"], t["displacement_m"], t["from_buildings"]
    assert np.all((z0 >= 1e-4) & (z0 <= 5.0))
    assert np.all(d[have] >= 0) and np.all(d[have] < h[have])
    near = [b for b in blocks if math.hypot(b[0], b[1]) <= fetch]
    assert have.any() == bool(near)
    climate = model.WindClimate(height_m=10.0, roughness_m=0.03, frequency=(1 / 12,) * 12,
                                weibull_k=(2.0,) * 12, weibull_c_ms=(6.0,) * 12)
    _, _, c, ti = flow.ambient_climate(climate, t, [12.0, 30.0], model.TransferSettings())
    assert np.all(np.isfinite(c)) and np.all(c > 0) and np.all(np.isfinite(ti)) and np.all(ti > 0)
