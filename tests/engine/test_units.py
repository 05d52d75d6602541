"""Display-unit conversions against the exact factors of NIST SP 811."""
import numpy as np
import pandas as pd
import pytest

from engine.core import units
from engine.core.errors import InputError


def test_speed_factors_match_nist():
    """1 mph, 1 knot and 1 km/h in m/s match NIST SP 811 B.8."""
    assert units.speed_to_si(1.0, "mph") == pytest.approx(0.44704, abs=1e-12)  # NIST SP 811 B.8
    assert units.speed_to_si(1.0, "knots") == pytest.approx(0.514444, abs=1e-6)  # NIST SP 811 B.8
    assert units.speed_to_si(36.0, "km/h") == pytest.approx(10.0, abs=1e-12)  # 1 km/h = 1/3.6 m/s


def test_length_factor_matches_international_foot():
    """100 ft is 30.48 m (international foot, NIST SP 811 B.8)."""
    assert units.length_to_si(100.0, "ft") == pytest.approx(30.48, abs=1e-12)
    assert units.length_from_si(0.3048, "ft") == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("unit", list(units.SPEED_UNITS))
def test_speed_round_trip_arrays(unit):
    """Converting out and back returns the same speeds for arrays."""
    v = np.array([0.0, 3.5, 12.0, 25.0])
    np.testing.assert_allclose(units.speed_to_si(units.speed_from_si(v, unit), unit), v)


def test_unknown_unit_is_an_input_error():
    """An unknown unit raises InputError naming the allowed choices."""
    with pytest.raises(InputError) as e:
        units.speed_from_si(1.0, "furlongs/fortnight")
    assert "m/s" in str(e.value)


def test_convert_columns_only_touches_unit_columns():
    """Speed and length columns convert; kWh columns stay as they are."""
    df = pd.DataFrame({"hub_height_m": [10.0], "mean_speed_ms": [10.0], "aep_kwh": [100.0]})
    out = units.convert_columns(df, "km/h", "ft")
    assert out["mean_speed_ms"].iloc[0] == pytest.approx(36.0)  # 1 m/s = 3.6 km/h exactly
    assert out["hub_height_m"].iloc[0] == pytest.approx(10 / 0.3048)  # NIST SP 811 B.8
    assert out["aep_kwh"].iloc[0] == 100.0
    back = units.convert_columns(out, "km/h", "ft", to_si=True)
    np.testing.assert_allclose(back.to_numpy(), df.to_numpy())
    assert units.column_label("hub_height_m", length_unit="ft") == "hub height (ft)"
