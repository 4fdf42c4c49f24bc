"""Extrapolation to zero spacing (Yurkin, Maltsev & Hoekstra, JOSA A 23 (2006))."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError
from surrogate.solver import extrapolate_to_zero_spacing


def test_exact_linear_and_quadratic_data_are_recovered():
    # The model of YMH 2006: Q(d) = Q0 + c1 d + c2 d^2.  Exact data give Q0 to rounding.
    d = np.array([1.0, 1.5, 2.0, 2.5, 3.0])
    v, e = extrapolate_to_zero_spacing(d, 5.0 + 0.3 * d)
    assert v == pytest.approx(5.0, rel=1e-12) and e < 1e-9
    v, e = extrapolate_to_zero_spacing(d[:3], 5.0 + 0.3 * d[:3] - 0.2 * d[:3] ** 2)
    assert v == pytest.approx(5.0, rel=1e-12)


def test_noisy_data_error_bar_covers_the_truth_at_about_95_percent():
    # Student-t interval of the least-squares intercept plus the model-choice
    # spread: nominal 95 % for Gaussian noise (measured 96 % here; without the
    # spread 89.5 %).  400 seeded trials; accept 92-99.5 % (binomial sd ~1 %).
    rng = np.random.default_rng(12345)
    d = np.linspace(1.0, 3.0, 7)
    hits = 0
    for _ in range(400):
        q = 10.0 + 0.8 * d + rng.normal(scale=0.05, size=d.size)
        v, e = extrapolate_to_zero_spacing(d, q)
        hits += abs(v - 10.0) <= e
    assert 0.92 <= hits / 400 <= 0.995


def test_two_points_error_is_the_correction():
    v, e = extrapolate_to_zero_spacing([2.0, 1.0], [12.0, 11.0])
    assert v == pytest.approx(10.0) and e == pytest.approx(1.0)


@pytest.mark.parametrize(
    "d, q, text",
    [([1.0], [1.0], "at least 2"), ([1.0, 1.0], [1.0, 2.0], "distinct"), ([1.0, -2.0], [1, 2], "> 0"), ([1.0, 2.0], [1.0], "one per spacing")],
)
def test_bad_input(d, q, text):
    with pytest.raises(InvalidParameterError, match=text):
        extrapolate_to_zero_spacing(d, q)
