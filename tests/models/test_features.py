"""Target transforms and the lognormal back-transform (surrogate/models/_features.py)."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.stats import lognorm, norm

from surrogate.errors import InvalidParameterError
from surrogate.models import choose_transform, mean_and_std, median_and_interval, to_model_space
from surrogate.models._features import check_bounds, to_unit_cube


def test_known_figures_have_fixed_transforms_and_others_follow_the_range_rule():
    assert choose_transform("resonance_nm", [700, 900]) == "identity"
    assert choose_transform("enhancement_at_laser", [1.0, 2.0]) == "log"  # known name wins over the range
    assert choose_transform("new_area_nm2", [1.0, 50.0]) == "log"  # positive, max/min > 10
    assert choose_transform("new_area_nm2", [5.0, 20.0]) == "identity"
    assert choose_transform("new_shift_nm", [-1.0, 50.0]) == "identity"  # not positive


@given(mu=st.floats(-5, 8), sigma=st.floats(0.01, 2.0), p=st.sampled_from([0.5, 0.6827, 0.9, 0.95, 0.99]))
def test_log_interval_is_the_lognormal_central_interval(mu, sigma, p):
    # outside reference: quantiles of the lognormal law with parameters (mu, sigma),
    # scipy.stats.lognorm(s=sigma, scale=exp(mu)); exact up to rounding
    z = norm.ppf(0.5 + p / 2)
    med, lo, hi = median_and_interval(np.array([mu]), np.array([sigma]), "log", z)
    law = lognorm(s=sigma, scale=np.exp(mu))
    np.testing.assert_allclose([med[0], lo[0], hi[0]], [law.median(), law.ppf(0.5 - p / 2), law.ppf(0.5 + p / 2)],
                               rtol=1e-9)
    assert 0 < lo[0] < med[0] < hi[0]


@given(mu=st.floats(-5, 8), sigma=st.floats(0.01, 2.0))
def test_log_moments_are_the_lognormal_mean_and_std(mu, sigma):
    # outside reference: scipy.stats.lognorm mean and std (closed forms, Johnson, Kotz & Balakrishnan 1994);
    # sigma >= 0.01 because scipy's std loses digits below that (6e-9 relative at sigma = 1e-4, measured)
    mean, std = mean_and_std(np.array([mu]), np.array([sigma]), "log")
    law = lognorm(s=sigma, scale=np.exp(mu))
    np.testing.assert_allclose([mean[0], std[0]], [law.mean(), law.std()], rtol=1e-9)


def test_log_interval_matches_sampling():
    # outside reference: Monte Carlo sampling of exp(N(mu, sigma^2)); with 400k samples the empirical
    # 2.5/50/97.5 % quantiles carry a relative error of about 0.5 % (sigma = 0.8), so 2 % tolerance
    rng = np.random.default_rng(3)
    mu, sigma = 2.0, 0.8
    samples = np.exp(rng.normal(mu, sigma, 400_000))
    med, lo, hi = median_and_interval(np.array([mu]), np.array([sigma]), "log", norm.ppf(0.975))
    np.testing.assert_allclose(np.quantile(samples, [0.025, 0.5, 0.975]), [lo[0], med[0], hi[0]], rtol=0.02)
    mean, std = mean_and_std(np.array([mu]), np.array([sigma]), "log")
    np.testing.assert_allclose([samples.mean(), samples.std()], [mean[0], std[0]], rtol=0.02)
    # a symmetric band in physical space would be wrong: the interval is skewed to the right
    assert hi[0] - med[0] > 1.5 * (med[0] - lo[0])


def test_small_sigma_std_tends_to_mean_times_sigma():
    # first-order expansion of the lognormal std: sqrt(exp(s^2) - 1) exp(mu + s^2/2) = e^mu s (1 + O(s^2))
    mean, std = mean_and_std(np.array([1.0]), np.array([1e-6]), "log")
    np.testing.assert_allclose(std[0], np.e * 1e-6, rtol=1e-9)


def test_identity_interval_is_the_normal_interval():
    med, lo, hi = median_and_interval(np.array([3.0]), np.array([0.5]), "identity", 2.0)
    assert (med[0], lo[0], hi[0]) == (3.0, 2.0, 4.0)


def test_log_space_refuses_non_positive_values():
    with pytest.raises(InvalidParameterError, match="must be > 0 to be modelled in log space; got 0.0"):
        to_model_space("enhancement_at_laser", [1.0, 0.0], "log")


def test_bounds_are_checked_and_scale_to_the_unit_cube():
    names, lo, hi = check_bounds({"a_nm": (10, 20), "b_nm": [0, 5]})
    assert names == ["a_nm", "b_nm"]
    np.testing.assert_allclose(to_unit_cube([[10, 5], [15, 0]], lo, hi), [[0, 1], [0.5, 0]])
    with pytest.raises(InvalidParameterError, match="low < high"):
        check_bounds({"a_nm": (20, 10)})
    with pytest.raises(InvalidParameterError, match="non-empty dict"):
        check_bounds({})
