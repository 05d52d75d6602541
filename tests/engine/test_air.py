"""Air density (engine.climate.air): ISA barometric formula and measured pressure/temperature."""
import numpy as np
import pytest

from engine.climate import air
from engine.core.model import Site


def test_isa_sea_level_15c():
    """ISA sea level, 15 °C: ρ = 1.225 kg/m³ (ISO 2533)."""
    assert air.air_density_kgm3(0.0, 15.0) == pytest.approx(1.225, abs=5e-4)
    assert air.isa_pressure_pa(0.0) == pytest.approx(101325.0)  # ISO 2533 sea-level pressure


def test_isa_1000_m():
    """ISA at 1000 m: p = 89875 Pa, T = 8.5 °C, ρ = 1.1117 kg/m³ (ISO 2533 table, from memory)."""
    assert air.isa_pressure_pa(1000.0) == pytest.approx(89875.0, rel=2e-4)
    assert air.air_density_kgm3(1000.0, 8.5) == pytest.approx(1.1117, abs=5e-4)


def test_barometric_formula_other_altitude():
    """500 m, 10 °C against the barometric formula by hand (ISO 2533 troposphere)."""
    p = 101325.0 * (1 - 0.0065 * 500 / 288.15) ** 5.2559  # ISO 2533 eq., hand evaluation
    rho = p / (287.05 * 283.15)
    assert air.air_density_kgm3(500.0, 10.0) == pytest.approx(rho, rel=1e-12)
    assert rho == pytest.approx(1.1745, abs=5e-4)  # ISO 2533 barometric formula, derived by hand


def test_measured_pressure_overrides_isa():
    """With measured pressure the ideal-gas law ρ = p/(R T) is used as is (common practice)."""
    rho = air.air_density_kgm3(2000.0, 20.0, pressure_pa=np.array([100000.0, 95000.0]))
    np.testing.assert_allclose(rho, np.array([100000.0, 95000.0]) / (287.05 * 293.15))
    s = Site(name="x", altitude_m=300.0, air_temperature_c=5.0, air_pressure_pa=98000.0)
    assert air.site_air_density_kgm3(s) == pytest.approx(98000.0 / (287.05 * 278.15))


def test_density_falls_with_altitude_and_temperature():
    """Density falls with altitude and with temperature (physics)."""
    h = np.array([0.0, 500.0, 1500.0, 3000.0])
    assert np.all(np.diff(air.air_density_kgm3(h, 10.0)) < 0)
    assert air.air_density_kgm3(0, 30.0) < air.air_density_kgm3(0, 0.0)
