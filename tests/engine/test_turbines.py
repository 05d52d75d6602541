"""Turbine library, actuator-disc relations, parametric curves and power-curve CSV import."""
import json
import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from engine.core import model
from engine.energy import turbines
from engine.core.errors import InputError


def test_actuator_disc_betz_optimum():
    """a = 1/3 gives C_P = 16/27 and C_T = 8/9 (actuator-disc theory, Burton et al. 2011 §3.2)."""
    cp, ct = turbines.actuator_disc(1.0 / 3.0)
    assert cp == pytest.approx(16.0 / 27.0, rel=1e-15)
    assert ct == pytest.approx(8.0 / 9.0, rel=1e-15)


def test_betz_optimum_found_by_scipy():
    """scipy.optimize maximising 4a(1-a)² lands on a = 1/3, C_P = 16/27 (independent reference)."""
    res = minimize_scalar(lambda a: -turbines.actuator_disc(a)[0], bounds=(0, 0.5),
                          method="bounded", options={"xatol": 1e-10})
    assert res.x == pytest.approx(1.0 / 3.0, abs=1e-6)
    assert -res.fun == pytest.approx(model.BETZ_CP, rel=1e-12)


def test_thrust_coefficient_from_cp():
    """Inverting C_P = 4a(1-a)²: 16/27 -> 8/9; a = 0.1 gives C_P 0.324, C_T 0.36 (hand values)."""
    # C_P is flat at its maximum, so a is found to about 1e-8 there: tolerance 1e-7
    assert turbines.thrust_coefficient_from_cp(16.0 / 27.0) == pytest.approx(8.0 / 9.0, rel=1e-7)
    assert turbines.thrust_coefficient_from_cp(0.324) == pytest.approx(0.36, rel=1e-9)
    assert turbines.thrust_coefficient_from_cp(0.0) == pytest.approx(0.0, abs=1e-15)


def test_library_spans_both_axes_and_sizes():
    """The library has horizontal and vertical axis turbines from 0.5 to 10 kW, all fields set."""
    lib = turbines.load_library()
    assert {t.axis for t in lib} == {"horizontal", "vertical"}
    rated = [t.rated_power_w for t in lib]
    assert min(rated) == pytest.approx(500.0) and max(rated) == pytest.approx(10000.0)
    assert len({t.id for t in lib}) == len(lib)
    for t in lib:
        assert t.area_m2 > 0 and t.mass_kg > 0 and t.installed_cost > 0
        assert t.cut_in_ms < t.rated_speed_ms < t.cut_out_ms
        assert 0 < t.thrust_coefficient <= 8.0 / 9.0 + 1e-4  # actuator-disc optimum (Burton et al.)


def test_library_curves_within_betz_and_rated():
    """Every library curve point has C_P <= 16/27 (Betz) and power <= rated."""
    for t in turbines.load_library():
        cp = turbines.power_coefficient(t.curve_speed_ms, t.curve_power_w, t.area_m2)
        assert np.all(cp <= model.BETZ_CP + 1e-12)
        assert max(t.curve_power_w) <= t.rated_power_w + 1e-9
        assert min(t.curve_power_w) >= 0


def test_library_file_is_what_the_script_writes():
    """The library JSON equals a fresh run of its generating script (reproducible demo data)."""
    import importlib.util
    spec = importlib.util.spec_from_file_location("make_library", turbines.LIBRARY_DIR / "make_library.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    on_disk = json.loads(turbines.LIBRARY_FILE.read_text(encoding="utf-8"))
    assert on_disk == json.loads(json.dumps(mod.document(mod.build())))


def test_parametric_curve_follows_its_definition():
    """P = ½ ρ A Cp V³ below rated, rated above, 0 below cut-in; rated speed from the same formula."""
    area, cp, rated = 5.0, 0.3, 1200.0
    v, p, vr = turbines.parametric_curve(area, cp, rated, 3.0, 20.0, step_ms=0.5)
    v, p = np.array(v), np.array(p)
    cubic = 0.5 * 1.225 * area * cp * v ** 3
    run = (v >= 3.0) & (cubic < rated)
    assert p[run] == pytest.approx(np.round(cubic[run], 1), abs=0.051)
    assert np.all(p[v < 3.0] == 0) and np.all(p <= rated)
    assert vr == pytest.approx((rated / (0.5 * 1.225 * area * cp)) ** (1 / 3), abs=0.005)


def test_parametric_curve_rejects_beyond_betz():
    """A power coefficient above 16/27 is refused with the Betz limit named."""
    with pytest.raises(InputError) as e:
        turbines.parametric_curve(3.0, 0.62, 1000.0, 3.0, 20.0)
    assert "Betz" in str(e.value)


def test_parametric_turbine_vertical_area():
    """A vertical-axis rotor's swept area is diameter x height (H-rotor geometry)."""
    t = turbines.parametric_turbine("v", "test", "vertical", 800.0, 0.2, 3.5, 20.0,
                                    rotor_diameter_m=1.5, rotor_height_m=2.0)
    assert t.area_m2 == pytest.approx(3.0)


def test_csv_import_kw_header():
    """A header with kW converts to W; speeds kept in m/s."""
    c = turbines.read_power_curve_csv("speed_ms,power_kw\n0,0\n3,0.02\n6,0.2\n10,1.0\n")
    assert c.power_w == pytest.approx((0.0, 20.0, 200.0, 1000.0))
    assert c.unit == "kW" and "header" in c.unit_note


def test_csv_import_w_header_and_semicolon_decimal_comma():
    """Semicolon-separated with decimal commas, power header in W."""
    c = turbines.read_power_curve_csv(b"wind speed;power (W)\n3;20,5\n5,5;150\n")
    assert c.speed_ms == pytest.approx((3.0, 5.5)) and c.power_w == pytest.approx((20.5, 150.0))


@pytest.mark.parametrize("header, unit", [("power_kw", "kW"), ("Power [kW]", "kW"),
                                          ("power (kilowatts)", "kW"), ("power_w", "W"),
                                          ("P (W)", "W"), ("power in watts", "W")])
def test_csv_header_units(header, unit):
    """Common ways of writing the power unit in a header are understood."""
    c = turbines.read_power_curve_csv(f"speed_ms,{header}\n3,0.2\n6,0.4\n")
    assert c.unit == unit


def test_csv_import_auto_unit_is_reported():
    """Without a header, small numbers are read as kW and the note says so."""
    c = turbines.read_power_curve_csv("3,0.05\n5,0.3\n10,1.5\n")
    assert c.unit == "kW" and c.power_w[-1] == pytest.approx(1500.0)
    assert "choose the unit" in c.unit_note
    c = turbines.read_power_curve_csv("3,50\n5,300\n10,1500\n")
    assert c.unit == "W" and c.power_w[-1] == pytest.approx(1500.0)


def test_csv_import_reports_every_problem_at_once():
    """Non-monotone speed, negative power, Betz excess and a bad cell are all listed by line."""
    text = "speed_ms,power_w\n0,0\n3,20\n6,2500\n5,300\n8,-5\n9,abc\n"
    with pytest.raises(InputError) as e:
        turbines.read_power_curve_csv(text, swept_area_m2=3.0)
    msgs = {}
    for where, msg in e.value.problems:
        msgs[where] = msgs.get(where, "") + msg
    assert "rise strictly" in msgs["line 5"]
    assert "negative" in msgs["line 6"]
    assert "not a number" in msgs["line 7"]
    # 2500 W at 6 m/s on 3 m²: Cp = 2500 / (0.5 * 1.225 * 3 * 216) = 6.3 > 16/27 (Betz)
    assert "Betz" in msgs["line 4"]


def test_csv_import_unit_conflict():
    """Choosing W when the header says kW is a problem, not a silent guess."""
    with pytest.raises(InputError) as e:
        turbines.read_power_curve_csv("speed,power_kw\n3,0.02\n6,0.2\n", unit="W")
    assert "header says" in str(e.value)


def test_csv_import_empty_and_too_short():
    """An empty file and a one-row curve give readable problems."""
    with pytest.raises(InputError):
        turbines.read_power_curve_csv("")
    with pytest.raises(InputError) as e:
        turbines.read_power_curve_csv("3,20\n")
    assert "at least 2" in str(e.value)


def test_imported_curve_on_a_turbine_is_checked_again():
    """with_power_curve sets rated and cut speeds from the curve; Turbine's Betz check still runs."""
    base = turbines.library_by_id()["ha-1k5"]
    c = turbines.read_power_curve_csv("speed_ms,power_w\n2,0\n3,30\n8,700\n11,1400\n25,1400\n")
    t = turbines.with_power_curve(base, c)
    assert t.rated_power_w == pytest.approx(1400.0)
    assert (t.cut_in_ms, t.rated_speed_ms, t.cut_out_ms) == (2.0, 11.0, 25.0)
    small = turbines.read_power_curve_csv("speed_ms,power_w\n2,0\n5,900\n9,1400\n20,1400\n")
    with pytest.raises(InputError) as e:
        turbines.with_power_curve(base, small, rotor_diameter_m=1.0)
    assert "Betz" in str(e.value)


def test_power_coefficient_hand_value():
    """C_P of 1140 W at 10 m/s on a 2 m rotor is 16/27 (derived by hand Betz power)."""
    area = math.pi
    betz_w = 0.5 * 1.225 * area * 1000.0 * 16.0 / 27.0  # = 1140.1 W (derived by hand)
    assert betz_w == pytest.approx(1140.0, abs=0.5)
    assert turbines.power_coefficient([10.0], [betz_w], area)[0] == pytest.approx(16.0 / 27.0)
