"""`grower.fit.sensor`: the noise from second differences, the residual's autocorrelation,
the verdict. All series here are made up."""

from __future__ import annotations

import numpy as np
import pytest

from grower.fit import sensor


def test_second_difference_of_white_noise_has_six_times_its_variance():
    # Var(x₊ − 2x + x₋) = (1 + 4 + 1) σ² for independent x (the sum of variances of a
    # linear combination; general statistics, no source needed beyond the algebra)
    x = np.random.default_rng(0).normal(0.0, 0.3, 200_000)
    d2 = sensor.second_differences(x)
    assert np.var(d2) == pytest.approx(6 * 0.3**2, rel=0.02)


def test_noise_of_a_cooling_curve_is_its_noise():
    """A night's exponential cooling (time constant 4 h, 10-minute rows) hardly bends
    from row to row: the estimate is the added noise."""
    rng = np.random.default_rng(1)
    t_h = np.arange(0, 12, 1 / 6)
    segs = [
        (2.0 + 10.0 * np.exp(-t_h / 4.0) + rng.normal(0, 0.1, t_h.size), None) for _ in range(20)
    ]
    assert sensor.noise_from_scatter(segs) == pytest.approx(0.1, rel=0.08)


def test_heater_switching_is_left_out():
    """A heater switching every 30 minutes bends the curve at a third of the rows: given
    the heater the estimate stays at the noise, without it it is far above."""
    rng = np.random.default_rng(2)
    n = 400
    heater = ((np.arange(n) // 3) % 2 == 0).astype(float)
    slope = np.where(heater > 0, 0.4, -0.4)  # K per row
    x = 10.0 + np.concatenate([[0.0], np.cumsum(slope[:-1])]) + rng.normal(0, 0.1, n)
    assert sensor.noise_from_scatter([(x, heater)]) == pytest.approx(0.1, rel=0.2)
    assert sensor.noise_from_scatter([(x, None)]) > 0.15


def test_too_few_rows_give_no_noise():
    assert np.isnan(sensor.noise_from_scatter([(np.arange(6.0), None)]))


def test_lag1_autocorrelation_of_an_ar1_series():
    rng = np.random.default_rng(3)
    e = rng.normal(size=50_000)
    r = np.empty_like(e)
    r[0] = e[0]
    for i in range(1, e.size):
        r[i] = 0.8 * r[i - 1] + e[i]
    assert sensor.lag1_autocorrelation([r]) == pytest.approx(0.8, abs=0.01)
    assert abs(sensor.lag1_autocorrelation([e])) < 0.02
    # pairs are not taken across the gap between two segments
    a, b = np.ones(50), -np.ones(50)
    assert sensor.lag1_autocorrelation([a, b]) == pytest.approx(98 / 100)


@pytest.mark.parametrize(
    ("rms", "noise", "verdict"),
    [
        (0.15, 0.1, "good"),
        (0.25, 0.1, "rough"),
        (0.55, 0.1, "refused"),
        (1.6, 1.0, "refused"),  # over 1.5 K outright, whatever the noise
        (0.09, 0.0, "good"),  # a noiseless record: the noise is floored at 0.05 K
        (0.3, float("nan"), "good"),  # noise unknown: only the absolute limit applies
    ],
)
def test_quality(rms, noise, verdict):
    assert sensor.quality(rms, noise, 1.5) == verdict
