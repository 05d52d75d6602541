"""Noise by wind speed: ISO 9613-1/-2 propagation terms, screening by buildings, criteria."""
import math

import numpy as np
import pytest
from scipy import stats

from engine.core import model
from engine.core.consent import NoiseSettings
from engine.energy import noise_bands as nb
from engine.energy import noise_paths

HARD = NoiseSettings(ground_factor=0.0, air_temperature_c=10.0, relative_humidity_pct=70.0)


def test_air_absorption_matches_iso_9613_2_table_2():
    """α at 10 °C, 70 % RH per octave 63 Hz..8 kHz: 0.1 0.4 1.0 1.9 3.7 9.7 32.8 117 dB/km
    (ISO 9613-2:1996 Table 2, from memory); ISO 9613-1 evaluated at nominal frequencies."""
    table = [0.1, 0.4, 1.0, 1.9, 3.7, 9.7, 32.8, 117.0]
    alpha = nb.air_absorption_db_per_km(nb.FREQ_HZ, 10.0, 70.0)
    for got, want in zip(alpha, table):
        assert got == pytest.approx(want, rel=0.03, abs=0.05)


def test_air_absorption_20c_70pct():
    """At 20 °C, 70 % RH: 0.1 0.3 1.1 2.8 5.0 9.0 22.9 76.6 dB/km (ISO 9613-2 Table 2, from memory)."""
    table = [0.1, 0.3, 1.1, 2.8, 5.0, 9.0, 22.9, 76.6]
    alpha = nb.air_absorption_db_per_km(nb.FREQ_HZ, 20.0, 70.0)
    for got, want in zip(alpha, table):
        assert got == pytest.approx(want, rel=0.03, abs=0.05)


def test_hand_worked_iso_9613_2_example_with_one_barrier():
    """500 Hz octave, source h_s 10 m, receiver h_r 2 m, 100 m apart on the plan, hard ground
    (G = 0), a 12 m high building 10 m deep across the path (double diffraction).

    Worked by hand with ISO 9613-2:1996:
      d = √(100² + 8²) = 100.319 m; A_div = 20 lg d + 11 = 51.028 dB (eq. 7)
      A_atm = α d = 1.9 dB/km x 0.1003 km = 0.191 dB (eq. 8, α from Table 2)
      A_gr (G = 0, d_p < 30 (h_s + h_r) so q = 0) = A_s + A_r + A_m = -1.5 - 1.5 + 0 = -3.0 dB
      d_ss = √(45² + 2²) = 45.044 m, e = 10 m, d_sr = √(45² + 10²) = 46.098 m
      z = d_ss + e + d_sr - d = 0.8227 m; λ = 340/500 = 0.68 m
      C_3 = (1 + (5λ/e)²) / (1/3 + (5λ/e)²) = 2.4850 (eq. 16)
      K_met = exp(-(1/2000) √(d_ss d_sr d / 2z)) = 0.8370 (eq. 18)
      D_z = 10 lg(3 + (20/λ) C_3 z K_met) = 17.269 dB (eq. 14)
      over the top alone: D_z - A_gr = 20.269 dB (eq. 12)
    Round the vertical edges (eq. 13), each side's nearest corner (45, ±20): plan detour
      L = √(45² + 20²) + √(55² + 20²) = 107.768 m, path √(L² + 8²) = 108.064 m,
      z = 7.745 m, d_ss = 49.380 m, d_sr = 58.685 m, K_met = 0.9338,
      D_z = 10 lg(3 + (20/λ) z K_met) = 23.339 dB (uncapped: one of three paths)
    Paths added as energies (common practice, from memory):
      A_bar = -10 lg(10^-2.0269 + 2 x 10^-2.3339) = 17.288 dB
      A = A_div + A_atm + A_gr + A_bar = 51.028 + 0.191 - 3.0 + 17.288 = 65.507 dB
    """
    building = model.Building("B", 50.0, 0.0, length_m=40.0, width_m=10.0, height_m=12.0)
    prop = nb.propagation(np.array([[0.0, 0.0, 10.0]]), np.array([[100.0, 0.0, 2.0]]),
                          (building,), HARD)
    band = 3  # 500 Hz
    assert nb.divergence_db(prop.distance_m[0, 0]) == pytest.approx(51.028, abs=0.01)
    a_gr = nb.ground_db(10.0, 2.0, 100.0, 0.0)
    assert a_gr[band] == pytest.approx(-3.0, abs=1e-9)
    assert prop.screening_db[0, 0, band] == pytest.approx(17.288, abs=0.05)  # A_bar
    assert prop.attenuation_db[0, 0, band] == pytest.approx(65.507, abs=0.05)
    # Without the building the same path loses only A_div + A_atm + A_gr.
    open_ = nb.propagation(np.array([[0.0, 0.0, 10.0]]), np.array([[100.0, 0.0, 2.0]]), (), HARD)
    assert open_.attenuation_db[0, 0, band] == pytest.approx(51.028 + 0.191 - 3.0, abs=0.1)


def test_single_edge_roof_screening_and_clear_line_of_sight():
    """A hub 1 m above a 10 m roof screens a garden at 1.5 m beyond the roof edge (one edge,
    C_3 = 1); a receptor above the roof sees the hub (no screening) (ISO 9613-2 7.4)."""
    roof = model.Building("R", 0.0, 0.0, length_m=20.0, width_m=20.0, height_m=10.0)
    hub = np.array([[0.0, 0.0, 11.0]])
    recs = np.array([[40.0, 0.0, 1.5], [40.0, 0.0, 20.0]])
    paths = noise_paths.building_screening_paths(hub, recs, (roof,))
    assert paths.blocked[0, 0, 0] and not paths.double[0, 0, 0]
    assert not paths.blocked[0, 1, 0]
    # Hand: line of sight at the edge x = 10 m is 11 - 9.5/4 = 8.6 m < 10 m, so screened;
    # edge at (10, 10): d_ss = √(10² + 1²), d_sr = √(30² + 8.5²), d = √(40² + 9.5²).
    z = math.hypot(10, 1) + math.hypot(30, 8.5) - math.hypot(40, 9.5)
    assert paths.z_m[0, 0, 0] == pytest.approx(z, abs=1e-9)


def test_receptor_on_its_own_facade_is_not_screened_by_that_building():
    """A window inside a building's footprint is on that building: it does not screen itself."""
    house = model.Building("H", 50.0, 0.0, length_m=10.0, width_m=10.0, height_m=8.0)
    paths = noise_paths.building_screening_paths(np.array([[0.0, 0.0, 6.0]]),
                                                 np.array([[46.0, 0.0, 4.0]]), (house,))
    assert not paths.blocked.any()


def test_dz_caps_and_no_path_difference():
    """D_z is at most 20 dB single / 25 dB double; z = 0 gives 10 lg 3 = 4.77 dB (ISO 9613-2 eq. 14)."""
    big = noise_paths.barrier_dz_db(10.0, 10.0, 5.0, 15.0, 10.0, 0.034, [False, True])
    assert list(big) == [20.0, 25.0]
    assert noise_paths.barrier_dz_db(10.0, 10.0, 0.0, 20.0, 0.0, 0.68, False) == pytest.approx(
        10 * math.log10(3))


def test_ground_general_method_porous_example():
    """G = 1, h_s = h_r = 1.5 m, d_p = 200 m: A_s at 1 kHz = -1.5 + d'(1.5) with
    d' = 1.5 + 5 e^(-0.9 h²)(1 - e^(-d_p/50)); A_m = -3 q (1 - G) = 0 (ISO 9613-2 Table 3)."""
    dprime = 1.5 + 5.0 * math.exp(-0.9 * 1.5 ** 2) * (1 - math.exp(-200 / 50))
    a = nb.ground_db(1.5, 1.5, 200.0, 1.0)
    assert a[4] == pytest.approx(2 * (-1.5 + dprime), abs=1e-9)
    assert a[0] == pytest.approx(-1.5 - 1.5 - 3 * (1 - 30 * 3.0 / 200), abs=1e-9)
    assert a[6] == pytest.approx(0.0, abs=1e-9)


def _turbine(**kw):
    base = dict(id="t", name="t", axis="horizontal", rated_power_w=1000.0,
                curve_speed_ms=(0.0, 3.0, 11.0, 20.0), curve_power_w=(0.0, 0.0, 1000.0, 1000.0),
                cut_in_ms=3.0, rated_speed_ms=11.0, cut_out_ms=20.0, rotor_diameter_m=2.5,
                sound_power_db=80.0)
    base.update(kw)
    return model.Turbine(**base)


def test_sound_power_declared_table_and_default_slope():
    """Declared values are interpolated; beyond them, and without them, the default slope
    applies; the stopped rotor makes no turbine noise."""
    s = NoiseSettings(default_slope_db_per_ms=1.5, declared_speed_ms=8.0)
    plain = nb.sound_power_by_speed(_turbine(), [2.0, 6.0, 8.0, 10.0], s)
    assert plain[0] == -np.inf
    assert list(plain[1:]) == pytest.approx([77.0, 80.0, 83.0])
    declared = _turbine(sound_power_speed_ms=(4.0, 6.0, 8.0), sound_power_by_speed_db=(76.0, 80.0, 82.0))
    lw = nb.sound_power_by_speed(declared, [5.0, 8.0, 10.0], s)
    assert list(lw) == pytest.approx([78.0, 82.0, 85.0])


def test_hours_per_bin_against_scipy_weibull():
    """Hours in the 5 m/s bin equal 8760 [F(5.5) - F(4.5)] (scipy.stats.weibull_min)."""
    h = nb.hours_per_bin(np.array([[0.4, 0.6]]), np.array([[2.0, 1.8]]), np.array([[5.0, 7.0]]),
                         np.array([5.0]))
    ref = sum(f * (stats.weibull_min.cdf(5.5, k, scale=c) - stats.weibull_min.cdf(4.5, k, scale=c))
              for f, k, c in ((0.4, 2.0, 5.0), (0.6, 1.8, 7.0)))
    assert h[0, 0] == pytest.approx(8760 * ref, rel=1e-12)


class _Climate:
    frequency = np.array([[1.0]])
    weibull_k = np.array([[2.0]])
    weibull_c_ms = np.array([[6.0]])


def test_background_criterion_and_tolerance():
    """background_plus: the limit is max(limit_db, background + margin); a level above it by
    less than the tolerance is not an exceedance."""
    rec = model.Receptor("w", 60.0, 0.0, 4.0, limit_db=35.0,
                         background_speed_ms=(4.0, 10.0), background_db=(30.0, 42.0))
    s = NoiseSettings(criterion="background_plus", margin_above_background_db=5.0)
    lim = nb.limit_db(rec, [2.0, 4.0, 7.0, 12.0], s)
    assert list(lim) == pytest.approx([35.0, 35.0, 41.0, 47.0])  # flat beyond the table
    hub = np.array([[0.0, 0.0, 12.0]])
    res = nb.receptor_noise(hub, (rec,), (), (_turbine(sound_power_db=95.0),), _Climate(), s)
    cols = nb.noise_columns(res, ["w"])
    worst = -cols["noise_margin_db"][0]
    assert worst > 0 and cols["noise_exceeds_limit"][0]
    assert cols["noise_hours_over_limit"][0] > 0
    assert cols["noise_hours_over_limit"][0] <= res.hours.sum() <= 8760.0
    lenient = NoiseSettings(criterion="background_plus", tolerance_db=worst + 0.01)
    res2 = nb.receptor_noise(hub, (rec,), (), (_turbine(sound_power_db=95.0),), _Climate(), lenient)
    assert not nb.noise_columns(res2, ["w"])["noise_exceeds_limit"][0]


def test_level_falls_with_distance_and_screening_never_adds():
    """Levels fall with distance (divergence); screening by a building only lowers a level."""
    wall = model.Building("B", 50.0, 0.0, length_m=40.0, width_m=5.0, height_m=15.0)
    recs = (model.Receptor("a", 100.0, 0.0, 2.0), model.Receptor("b", 200.0, 0.0, 2.0))
    hub = np.array([[0.0, 0.0, 8.0]])
    res = nb.receptor_noise(hub, recs, (wall,), (_turbine(),), _Climate(), NoiseSettings())
    lv = res.level_db[0, 0, :, 7]
    assert lv[0] > lv[1]
    assert np.all(res.unscreened_db[np.isfinite(res.level_db)]
                  >= res.level_db[np.isfinite(res.level_db)] - 1e-12)
    assert nb.noise_columns(res, ["a", "b"])["noise_screening_db"][0] > 0


def test_short_building_screens_little_long_one_as_over_the_top():
    """Sound bends round a short building: a 2 m long block of the example above screens
    under 3 dB at 500 Hz; a 400 m long one screens within 0.2 dB of the over-the-top value
    20.269 dB worked by hand above (ISO 9613-2 eqs. 12-14). Never more than over the top."""
    hub, rec = np.array([[0.0, 0.0, 10.0]]), np.array([[100.0, 0.0, 2.0]])
    got = {}
    for length in (2.0, 40.0, 400.0):
        b = model.Building("B", 50.0, 0.0, length_m=length, width_m=10.0, height_m=12.0)
        got[length] = nb.propagation(hub, rec, (b,), HARD).screening_db[0, 0, 3]
    assert got[2.0] < 3.0
    assert got[2.0] < got[40.0] < got[400.0] <= 20.269 + 1e-6
    assert got[400.0] == pytest.approx(20.269, abs=0.2)


def test_lateral_path_is_a_lower_bound_of_the_taut_detour():
    """Round a 10 m x 40 m box between S (0, 0) and R (100, 0), the taut path on one side is
    S - (45, 20) - (55, 20) - R: √(45² + 20²) + 10 + √(45² + 20²) = 108.489 m on the plan
    (hand geometry); the one-corner path used is shorter, so its z never over-credits."""
    b = model.Building("B", 50.0, 0.0, length_m=40.0, width_m=10.0, height_m=12.0)
    lat = noise_paths.lateral_paths(np.array([[0.0, 0.0, 2.0]]), np.array([[100.0, 0.0, 2.0]]),
                                    (b,))
    taut_z = 2 * math.hypot(45, 20) + 10 - 100.0
    assert lat.z_m.shape == (2, 1, 1, 1)
    assert np.all(lat.z_m <= taut_z + 1e-9)
    assert lat.z_m[0, 0, 0, 0] == pytest.approx(math.hypot(45, 20) + math.hypot(55, 20) - 100)


def test_building_out_of_the_way_changes_nothing():
    """A building beside the path screens nothing: the attenuation stays A_div + A_atm + A_gr
    in every band, ground gain included (ISO 9613-2 eq. 4 with A_bar = 0), on porous
    ground where A_gr is negative in some bands."""
    soft = NoiseSettings(ground_factor=1.0)
    hub, rec = np.array([[0.0, 0.0, 10.0]]), np.array([[100.0, 0.0, 2.0]])
    aside = model.Building("B", 50.0, 80.0, length_m=20.0, width_m=10.0, height_m=30.0)
    with_b = nb.propagation(hub, rec, (aside,), soft)
    without = nb.propagation(hub, rec, (), soft)
    assert (nb.ground_db(10.0, 2.0, 100.0, 1.0) < 0).any()  # a gain the test could lose
    assert np.all(with_b.screening_db == 0.0)
    assert with_b.attenuation_db == pytest.approx(without.attenuation_db, abs=1e-12)


def _receptor_problems(speeds, levels):
    from engine.core.errors import InputError
    with pytest.raises(InputError) as e:
        model.Receptor("w", 60.0, 0.0, 4.0, background_speed_ms=speeds, background_db=levels)
    return dict(e.value.problems)


def test_measured_background_speeds_must_increase_and_levels_be_plausible():
    """A measured background is a curve over increasing wind speeds (np.interp, which the
    criterion uses, needs increasing x); each entry out of order is named with the speed
    before it, in the form "<field> must be <rule>, got <value> <unit>"."""
    bad = _receptor_problems((3.0, 5.0, 5.0, 4.0), (30.0, 32.0, 33.0, 34.0))
    assert bad == {
        "background_speed_ms[2]": "must be above the speed before it (5 m/s), got 5 m/s",
        "background_speed_ms[3]": "must be above the speed before it (5 m/s), got 4 m/s"}
    # A sound power (95 dB(A)) typed in place of a background level, and 5 dB(A), under the
    # self-noise of survey sound level meters: both outside the plausible 10-80 dB(A) of an
    # L90 at a dwelling (plausibility bounds, from memory).
    bad = _receptor_problems((4.0, 8.0), (95.0, 5.0))
    assert bad == {"background_db[0]": "must be >= 10 and <= 80, got 95 dB(A)",
                   "background_db[1]": "must be >= 10 and <= 80, got 5 dB(A)"}
    bad = _receptor_problems((4.0, 8.0), (30.0,))
    assert "background_db" in bad and "one value per speed" in bad["background_db"]
    ok = model.Receptor("w", 60.0, 0.0, 4.0, background_speed_ms=(4.0, 8.0),
                        background_db=(10.0, 80.0))
    assert ok.background_db == (10.0, 80.0)
