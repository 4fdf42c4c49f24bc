"""Pareto filter and hypervolume against brute force, a hand computation and optuna's routine."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from surrogate.search import hypervolume, pareto_mask

points = st.integers(1, 40).flatmap(
    lambda n: st.integers(2, 3).flatmap(
        lambda m: arrays(np.float64, (n, m), elements=st.integers(0, 6).map(float))
    )
)


@given(points)
def test_pareto_mask_equals_brute_force(f):
    # Definition of dominance (Deb 2001, sec. 2.4), checked pair by pair.
    brute = np.array([
        not any(np.all(f[j] <= f[i]) and np.any(f[j] < f[i]) for j in range(len(f))) for i in range(len(f))
    ])
    np.testing.assert_array_equal(pareto_mask(f), brute)


def test_hypervolume_hand_computed_2d():
    # Staircase of (1,3), (2,2), (3,1) under reference (4,4): 3*1 + 2*1 + 1*1 = 6 (hand computed).
    assert hypervolume([[1, 3], [2, 2], [3, 1], [3.5, 3.5]], [4, 4]) == pytest.approx(6.0)
    assert hypervolume([[5, 5]], [4, 4]) == 0.0


def test_hypervolume_of_a_box_in_3d():
    # One point: the box volume (hand computed); two nested points: the larger box.
    assert hypervolume([[1, 1, 1]], [2, 3, 4]) == pytest.approx(1 * 2 * 3)
    assert hypervolume([[1, 1, 1], [1.5, 1.5, 1.5]], [2, 3, 4]) == pytest.approx(6.0)


@given(arrays(np.float64, (25, 3), elements=st.floats(0, 1)))
def test_hypervolume_matches_optuna(f):
    # Reference: optuna's own exact hypervolume (optuna._hypervolume.compute_hypervolume, a
    # general-purpose library routine; private API, used here only as an outside check).
    from optuna._hypervolume import compute_hypervolume

    ref = np.array([1.1, 1.1, 1.1])
    theirs = compute_hypervolume(f[pareto_mask(f)], ref, assume_pareto=True)
    assert hypervolume(f, ref) == pytest.approx(theirs, rel=1e-10, abs=1e-12)


def test_hypervolume_monte_carlo_4d():
    # 4 objectives, checked against a Monte Carlo estimate (1e6 samples; 3-sigma ~ 0.3%).
    rng = np.random.default_rng(0)
    f = rng.random((12, 4))
    ref = np.ones(4)
    samples = rng.random((1_000_000, 4))
    dominated = np.zeros(len(samples), dtype=bool)
    for p in f:
        dominated |= np.all(samples >= p, axis=1)
    assert hypervolume(f, ref) == pytest.approx(dominated.mean(), rel=0.01)
