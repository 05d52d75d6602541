"""Field spot readings: speed ratio through the origin, confidence interval, calibration."""
import numpy as np
import pytest

from engine.flow import spot
from engine.core.errors import InputError


def test_ratio_and_interval_match_least_squares_through_origin():
    """Slope and its CI agree with numpy lstsq and the matrix OLS covariance s^2 (X'X)^-1."""
    x = np.array([3.1, 4.0, 5.2, 6.3, 7.9])
    y = np.array([2.3, 3.3, 3.9, 5.1, 6.2])
    fit = spot.speed_ratio_through_origin(y, x)
    # Independent reference: numpy's least squares on the one-column design matrix.
    X = x[:, None]
    slope, res, _, _ = np.linalg.lstsq(X, y, rcond=None)
    assert fit["ratio"][0] == pytest.approx(slope[0], rel=1e-12)
    cov = res[0] / (len(x) - 1) * np.linalg.inv(X.T @ X)
    assert fit["standard_error"][0] == pytest.approx(np.sqrt(cov[0, 0]), rel=1e-10)
    # Student t, 4 degrees of freedom, 97.5 %: 2.776 (statistical tables, common practice).
    half = fit["ci_high"][0] - fit["ratio"][0]
    assert half == pytest.approx(2.776 * np.sqrt(cov[0, 0]), rel=1e-3)
    assert fit["ci_low"][0] < fit["ratio"][0] < fit["ci_high"][0]


def test_exact_proportion_gives_zero_width_interval():
    """Readings in exact proportion 1.2 give ratio 1.2 with no spread (by hand)."""
    x = np.array([2.0, 4.0, 6.0])
    fit = spot.speed_ratio_through_origin(1.2 * x, x)
    assert fit["ratio"][0] == pytest.approx(1.2)
    assert fit["ci_high"][0] - fit["ci_low"][0] == pytest.approx(0.0, abs=1e-12)


def test_grouped_fit_equals_separate_fits():
    """Several reading sets in one call give the same as one call each."""
    a_x, a_y = np.array([3.0, 5.0, 7.0, 4.0]), np.array([2.0, 3.6, 5.1, 2.9])
    b_x, b_y = np.array([6.0, 8.0, 5.0]), np.array([7.1, 9.0, 6.2])
    both = spot.speed_ratio_through_origin(np.r_[a_y, b_y], np.r_[a_x, b_x],
                                           group=np.r_[np.zeros(4, int), np.ones(3, int)])
    for i, (x, y) in enumerate(((a_x, a_y), (b_x, b_y))):
        one = spot.speed_ratio_through_origin(y, x)
        assert both["ratio"][i] == pytest.approx(one["ratio"][0])
        assert both["ci_high"][i] == pytest.approx(one["ci_high"][0])


def test_calm_reference_is_an_input_error():
    """All-zero reference readings raise InputError naming the field and the fix."""
    with pytest.raises(InputError) as e:
        spot.speed_ratio_through_origin([1.0, 2.0, 1.5], [0.0, 0.0, 0.0])
    assert "reference_speed_ms" in str(e.value) and "wind blows" in str(e.value)
    # A site file's reading is refused as it is read, naming the field, before any evaluation.
    from engine.core import model
    with pytest.raises(InputError) as e:
        model.SpotReading(position_id="p", direction_deg=90.0,
                          position_speed_ms=(1.0, 2.0, 1.5), reference_speed_ms=(0.0, 0.0, 0.0))
    assert "reference_speed_ms" in str(e.value) and "wind blows" in str(e.value)
    model.SpotReading(position_id="p", direction_deg=90.0, position_speed_ms=(1.0, 2.0, 1.5),
                      reference_speed_ms=(0.0, 0.5, 1.0))  # some wind: accepted


def test_sector_index_wraps_north():
    """Directions map to the nearest sector centre, 355 deg to sector 0 of 12 (definition)."""
    assert spot.sector_index([355.0, 14.0, 16.0, 180.0], 12).tolist() == [0, 0, 1, 6]
