"""Station-to-site transfer (engine.flow.transfer) and its settings on the assessment."""
import dataclasses
import math

import numpy as np
import pytest

from engine.flow import effective as flow
from engine.io import sitefile
from engine.flow import transfer
from engine.core.errors import InputError
from engine.core.model import Site, TransferSettings, WindClimate

DEMO = "demo_sites/larkspur_yard.json"


def _clim(h=10.0, z0=0.05, k=2.0, c=6.0):
    return WindClimate(height_m=h, roughness_m=z0, frequency=(0.5, 0.5), weibull_k=(k, k),
                       weibull_c_ms=(c, c))


def test_macdonald_derived_values():
    """Staggered arrays: λ 0.2 → d/H 0.4060, z0/H 0.1328; λ 0.5 → 0.7624, 0.0531."""
    # Macdonald, Griffiths & Hall 1998 eqs. with A 4.43, β 1.0, C_D 1.2 (derived by hand)
    z0, d = transfer.macdonald_roughness(0.2, 0.2, 1.0)
    assert d == pytest.approx(0.4060, abs=1e-4) and z0 == pytest.approx(0.1328, abs=1e-4)
    z0, d = transfer.macdonald_roughness(0.5, 0.5, 10.0)
    assert d == pytest.approx(7.624, abs=1e-3) and z0 == pytest.approx(0.531, abs=1e-3)
    # Square layout, recomputed by hand from the same equations (A 3.59, β 0.55)
    dh = 1 + 3.59 ** -0.3 * (0.3 - 1)
    z0h = (1 - dh) * math.exp(-(0.5 * 0.55 * 1.2 / 0.16 * (1 - dh) * 0.15) ** -0.5)
    z0, d = transfer.macdonald_roughness(0.3, 0.15, 1.0, "square")
    assert d == pytest.approx(dh) and z0 == pytest.approx(z0h)


def test_log_law_transfer_between_categories():
    """Station II at 10 m to site IV at 20 m: c ratio 0.697 (EN 1991-1-4, derived)."""
    site = Site(name="s", terrain_roughness_m=1.0)
    k, c = transfer.free_stream_weibull(_clim(), site, [20.0], TransferSettings())
    assert c.shape == (1, 2) and c[0, 0] / 6.0 == pytest.approx(0.697, abs=5e-4)
    assert np.all(k == 2.0)


def test_power_law_user_exponent_and_ashrae():
    """User α: (z2/z1)^α; α = 0: ASHRAE station transfer (δ_met/H_met)^a_met (H/δ)^a."""
    site = Site(name="s", terrain_roughness_m=0.5)
    k, c = transfer.free_stream_weibull(_clim(), site, [30.0],
                                        TransferSettings(method="power_law",
                                                         power_law_exponent=0.2))
    assert c[0, 0] == pytest.approx(6.0 * 3 ** 0.2)  # power law, hand value
    k, c = transfer.free_stream_weibull(_clim(), site, [30.0],
                                        TransferSettings(method="power_law"))
    # ASHRAE Fundamentals Table 1: open scattered a 0.14, δ 270 m; urban/suburban a 0.22, δ 370 m
    hand = (270 / 10.0) ** 0.14 * (30.0 / 370) ** 0.22
    assert c[0, 0] == pytest.approx(6.0 * hand)


def test_justus_mikhail_height_adjustment():
    """c 6, k 2 at 10 m → at 30 m: k 2.214, c 7.576 (Justus & Mikhail 1976, derived)."""
    assert transfer.shape_justus_mikhail(2.0, 10.0, 30.0) == pytest.approx(2.214, abs=1e-3)
    assert transfer.scale_justus_mikhail(6.0, 10.0, 30.0) == pytest.approx(7.576, abs=1e-3)
    site = Site(name="s", terrain_roughness_m=0.05)
    k, _ = transfer.free_stream_weibull(_clim(), site, [30.0],
                                        TransferSettings(adjust_shape_with_height=True))
    assert k[0, 0] == pytest.approx(2.214, abs=1e-3)


def test_morphometry_sets_site_roughness():
    """use_morphometry takes z0 and d from Macdonald et al. (1998) instead of the site's z0."""
    site = Site(name="s", terrain_roughness_m=0.05, plan_area_fraction=0.3,
                frontal_area_fraction=0.2, mean_building_height_m=10.0)
    z0, d, origin = transfer.site_roughness(site, TransferSettings(use_morphometry=True))
    z0_ref, d_ref = transfer.macdonald_roughness(0.3, 0.2, 10.0)
    assert (z0, d) == pytest.approx((z0_ref, d_ref)) and "Macdonald" in origin
    with pytest.raises(InputError) as e:
        transfer.site_roughness(Site(name="s"), TransferSettings(use_morphometry=True))
    assert len(e.value.problems) == 3


def test_settings_validated_and_round_trip():
    """Bad settings are listed together; the site file keeps them."""
    with pytest.raises(InputError) as e:
        TransferSettings(method="cubic", power_law_exponent=2.0, morphometry_layout="hex")
    assert len(e.value.problems) == 3
    a = sitefile.load(DEMO)
    b = dataclasses.replace(a, transfer=TransferSettings(method="power_law",
                                                         power_law_exponent=0.25))
    assert sitefile.loads(sitefile.dumps(b)).transfer == b.transfer


def test_flow_uses_transfer_settings():
    """free_stream_at_hub follows the assessment's transfer settings, shape (P, S)."""
    a = sitefile.load(DEMO)
    hub = np.array([a.hub_height_m(p) for p in a.positions])
    k, c = flow.free_stream_at_hub(a, hub)
    assert c.shape == (len(a.positions), a.climate.n_sectors) and np.all(c > 0)
    k2, c2 = transfer.free_stream_weibull(a.climate, a.site, hub, a.transfer)
    np.testing.assert_array_equal(c, c2)
    b = dataclasses.replace(a, transfer=TransferSettings(method="power_law",
                                                         power_law_exponent=0.3))
    assert not np.allclose(flow.free_stream_at_hub(b, hub)[1], c)


def test_transfer_speed_grows_with_height():
    """Transferred scale grows with hub height and stays positive (physics)."""
    site = Site(name="s", terrain_roughness_m=0.5, displacement_m=3.0)
    for s in (TransferSettings(), TransferSettings(method="power_law")):
        _, c = transfer.free_stream_weibull(_clim(), site, np.linspace(2, 60, 30), s)
        assert np.all(np.diff(c[:, 0]) >= 0) and np.all(c > 0)
    t = transfer.transfer_climate(_clim(), site, 15.0, TransferSettings())
    assert t.height_m == 15.0 and t.roughness_m == 0.5


def test_assessment_checks_morphometry_inputs():
    """Morphometry on a site without λp, λf, H is refused by the assessment, all three named."""
    a = sitefile.load(DEMO)
    bare = dataclasses.replace(a.site, plan_area_fraction=None, frontal_area_fraction=None,
                               mean_building_height_m=None)
    with pytest.raises(InputError) as e:
        dataclasses.replace(a, site=bare, transfer=TransferSettings(use_morphometry=True))
    assert {w for w, _ in e.value.problems} == {"site.plan_area_fraction",
                                                "site.frontal_area_fraction",
                                                "site.mean_building_height_m"}
    ok = dataclasses.replace(a, transfer=TransferSettings(use_morphometry=True))
    hub = np.array([ok.hub_height_m(p) for p in ok.positions])
    _, c = flow.free_stream_at_hub(ok, hub)
    assert np.all(np.isfinite(c)) and np.all(c > 0)
