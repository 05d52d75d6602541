"""Rotor thrust, IEC 61400-2 class speeds and mast-base moment (screening, not design)."""
import math

import numpy as np
import pytest

from engine.energy import loads
from engine.core import model
from engine.energy import turbines
from engine.core.errors import InputError


def test_thrust_worked_case():
    """D 2 m, V 10 m/s, C_T 8/9, ρ 1.225: T = ½ρAC_TV² = 171.0 N (actuator disc, Burton et al. 2011 §3.2; derived)."""
    t = loads.rotor_thrust_n(1.225, math.pi * 2.0 ** 2 / 4, 8.0 / 9.0, 10.0)
    assert t == pytest.approx(171.0, abs=0.05)


def test_thrust_scales_with_speed_squared_and_density():
    """Momentum theory: doubling V quadruples T; T proportional to ρ (Burton et al. 2011 §3.2)."""
    base = loads.rotor_thrust_n(1.2, 3.0, 0.8, 5.0)
    assert loads.rotor_thrust_n(1.2, 3.0, 0.8, 10.0) == pytest.approx(4 * base)
    assert loads.rotor_thrust_n(0.6, 3.0, 0.8, 5.0) == pytest.approx(base / 2)


@pytest.mark.parametrize("cls, v_ref, v_ave", [("I", 50.0, 10.0), ("II", 42.5, 8.5),
                                                ("III", 37.5, 7.5), ("IV", 30.0, 6.0)])
def test_iec_61400_2_classes(cls, v_ref, v_ave):
    """IEC 61400-2 classes: V_ref 50/42.5/37.5/30 m/s; V_ave (from memory); V_e50 = 1.4 V_ref."""
    s = loads.iec_class_speeds(cls)
    assert s["v_ref_ms"] == v_ref  # IEC 61400-2 Table 1
    assert s["v_ave_ms"] == v_ave  # from memory
    assert s["v_e50_ms"] == pytest.approx(1.4 * v_ref)  # from memory
    assert s["v_e1_ms"] == pytest.approx(0.75 * 1.4 * v_ref)  # from memory


def test_class_s_needs_its_reference_speed():
    """Class S uses the designer's V_ref; without it the input is refused."""
    assert loads.iec_class_speeds("S", 40.0)["v_e50_ms"] == pytest.approx(56.0)
    with pytest.raises(InputError):
        loads.iec_class_speeds("S", 0.0)


def test_mast_moment_is_thrust_times_height():
    """M = T h for the rotor thrust at hub height (statics)."""
    assert loads.mast_base_moment_nm(171.0, 6.0) == pytest.approx(1026.0)


def test_turbine_loads_use_rated_and_parked_rotor():
    """Rated thrust from C_T at V_rated and site ρ; extreme from the parked rotor at 1.4 V_ref.

    IEC 61400-2 simplified load model (from memory): parked blades, C_d 1.5 on the projected
    blade area at V_e50 and at least 1.225 kg/m³; moment = larger thrust × mast height.
    """
    t = turbines.library_by_id()["ha-1k5"]  # class II, no blade area given
    out = loads.turbine_loads([t], np.array([4.0, 10.0]), 1.1)
    rated = 0.5 * 1.1 * t.area_m2 * t.thrust_coefficient * t.rated_speed_ms ** 2
    a_proj = loads.PARKED_SOLIDITY["horizontal"] * t.area_m2
    parked = 0.5 * 1.225 * 1.5 * a_proj * (1.4 * 42.5) ** 2
    assert out["thrust_rated_n"][:, 0] == pytest.approx([rated, rated])
    assert out["thrust_extreme_n"][:, 0] == pytest.approx([parked, parked])
    big = max(rated, parked)
    assert out["mast_base_moment_nm"][:, 0] == pytest.approx([4 * big, 10 * big])
    assert "IEC 61400-2" in out["extreme_load_method"][0]
    # A parked rotor presents far less than its swept area with C_T (the old, over-cautious
    # figure): the drag of a flat plate of 8 % of the disc at C_d 1.5 is 0.12/C_T of it.
    whole_disc = 0.5 * 1.225 * t.area_m2 * t.thrust_coefficient * (1.4 * 42.5) ** 2
    assert out["thrust_extreme_n"][0, 0] < 0.2 * whole_disc


def test_declared_parked_load_and_blade_area_are_used():
    """A maker's declared parked load replaces the estimate; a given blade area is used as is."""
    import dataclasses
    t = turbines.library_by_id()["ha-5k"]
    declared = dataclasses.replace(t, parked_thrust_n=2500.0)
    given = dataclasses.replace(t, blade_projected_area_m2=1.2)
    out = loads.turbine_loads([declared, given], np.array([6.0]), 1.225)
    assert out["thrust_extreme_n"][0, 0] == 2500.0
    assert "declared" in out["extreme_load_method"][0]
    assert out["thrust_extreme_n"][0, 1] == pytest.approx(0.5 * 1.225 * 1.5 * 1.2 * 59.5 ** 2)


def test_demo_5kw_extreme_thrust_is_a_parked_rotor_figure():
    """The 5 kW demo machine's extreme thrust is the parked rotor's, with its method named.

    D 5 m, class II: V_e50 = 59.5 m/s; 8 % of 19.6 m² at C_d 1.5 gives about 5.1 kN
    (derived), against 32 kN for C_T over the whole disc.
    """
    t = turbines.library_by_id()["ha-5k"]
    out = loads.turbine_loads([t], np.array([6.0]), 1.24)
    assert out["thrust_extreme_n"][0, 0] == pytest.approx(
        0.5 * 1.24 * 1.5 * 0.08 * math.pi * 25 / 4 * 59.5 ** 2, rel=1e-9)
    assert 4000 < out["thrust_extreme_n"][0, 0] < 6000
    assert out["design_ti"][0] == 0.18  # IEC 61400-2 I15 (from memory)


def test_caution_defers_to_engineer_and_codes():
    """The loads caution names a structural engineer, local codes and licensed installers."""
    text = loads.CAUTION.lower()
    assert "structural engineer" in text and "local codes" in text and "licensed" in text
