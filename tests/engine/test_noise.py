"""Sound pressure at receptors: ISO 9613-2 simplified (hemispherical spreading, air absorption)."""
import math

import numpy as np
import pytest

from engine.core import model
from engine.energy import noise


def test_hand_value_at_50_m():
    """L_w 90 dB(A), r 50 m, α 0.005 dB/m: 90 - 10 log10(2π 2500) - 0.25 = 47.79 (ISO 9613-2, hand)."""
    expected = 90.0 - 10.0 * math.log10(2.0 * math.pi * 50.0 ** 2) - 0.005 * 50.0
    assert expected == pytest.approx(47.79, abs=0.005)  # worked by hand
    assert noise.sound_pressure_db(90.0, 50.0) == pytest.approx(expected, abs=1e-12)


def test_doubling_distance_loses_six_db_plus_absorption():
    """Geometric divergence: 20 log10(2) = 6.02 dB per doubling, plus α r (ISO 9613-2)."""
    a = noise.sound_pressure_db(85.0, 40.0, 0.0) - noise.sound_pressure_db(85.0, 80.0, 0.0)
    assert a == pytest.approx(20 * math.log10(2), abs=1e-12)
    b = noise.sound_pressure_db(85.0, 40.0) - noise.sound_pressure_db(85.0, 80.0)
    assert b == pytest.approx(20 * math.log10(2) + 0.005 * 40.0, abs=1e-12)


def test_slant_distance_is_3d():
    """Hub (0, 0, 20 m) to receptor (30, 40, 20 m) is 50 m; to (0, 0, 0) it is 20 m (Pythagoras)."""
    d = noise.slant_distance_m(np.array([[0.0, 0.0, 20.0]]), np.array([[30.0, 40.0, 20.0],
                                                                     [0.0, 0.0, 0.0]]))
    assert d[0] == pytest.approx([50.0, 20.0])


def test_receptor_levels_and_limit():
    """Levels per position x turbine x receptor; exceedance when any level is above its limit."""
    recs = (model.Receptor("near", 30.0, 40.0, 20.0, 45.0), model.Receptor("far", 300.0, 400.0, 20.0, 45.0))
    hubs = np.array([[0.0, 0.0, 20.0]])
    levels, exceeds, margin, worst = noise.receptor_levels_db(hubs, recs, [90.0, 80.0])
    near = 90.0 - 10 * math.log10(2 * math.pi * 2500) - 0.25  # 47.79 dB(A), hand value
    assert levels[0, 0, 0] == pytest.approx(near)
    assert list(exceeds[0]) == [True, False]  # 47.8 > 45; the 80 dB(A) turbine gives 37.8
    assert margin[0, 0] == pytest.approx(45.0 - near)
    assert worst[0, 0] == 0


def test_no_receptors_means_no_exceedance():
    """Without receptors nothing is flagged and the margin is unbounded."""
    levels, exceeds, margin, worst = noise.receptor_levels_db(np.zeros((2, 3)), (), [90.0])
    assert levels.shape == (2, 1, 0) and not exceeds.any() and np.isinf(margin).all()


def test_caution_defers_to_local_limits():
    """The noise caution points to local limits and a qualified acoustician."""
    assert "local authority" in noise.CAUTION and "acoustician" in noise.CAUTION
