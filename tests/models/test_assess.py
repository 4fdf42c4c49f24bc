"""Cross-validation metrics and recalibration (surrogate/models/_assess.py)."""

import numpy as np
import pytest
from scipy.stats import norm
from sklearn.metrics import r2_score as sklearn_r2

from surrogate.models import (
    Z_95,
    assess_target,
    conformal_scale,
    interval_coverage,
    mean_standardized_log_loss,
    out_of_fold_predictions,
    r2_score,
)

N = 4000
# binomial standard error of a coverage estimate from N draws: sqrt(p (1 - p) / N) <= 0.0079;
# tolerances of 4 standard errors (0.032 at p = 0.68, 0.014 at p = 0.95)
TOL_68 = 4 * np.sqrt(0.6827 * 0.3173 / N)
TOL_95 = 4 * np.sqrt(0.95 * 0.05 / N)


def _normal_oof(scale_true, n=N, seed=0, folds=5):
    """Out-of-fold-like predictions whose true errors have sd ``scale_true`` x the stated sigma."""
    rng = np.random.default_rng(seed)
    mu = rng.normal(0, 3, n)
    sigma = rng.uniform(0.5, 2.0, n)
    y = mu + scale_true * sigma * rng.standard_normal(n)
    return y, {"mu": mu, "sigma": sigma, "fold": np.arange(n) % folds,
               "train_mean": np.zeros(n), "train_var": np.full(n, 9.0)}


def test_coverage_of_exact_gaussian_intervals_is_the_normal_probability():
    # outside reference: P(|Z| <= 1) = 0.6827 and P(|Z| <= 1.960) = 0.95 for a standard normal Z
    y, oof = _normal_oof(1.0)
    assert abs(interval_coverage(y, oof["mu"], oof["sigma"], 1.0) - 0.6827) < TOL_68
    assert abs(interval_coverage(y, oof["mu"], oof["sigma"], Z_95) - 0.95) < TOL_95
    assert Z_95 == pytest.approx(norm.ppf(0.975), rel=1e-12)


def test_msll_is_the_difference_of_gaussian_log_losses():
    # outside reference: scipy.stats.norm.logpdf (Rasmussen & Williams 2006, sec. 2.5 definition)
    y = np.array([1.0, 2.5, -0.3])
    mu, sigma = np.array([1.2, 2.0, 0.0]), np.array([0.5, 1.0, 0.2])
    tm, tv = np.array([0.5, 0.5, 0.5]), np.array([4.0, 4.0, 4.0])
    expect = np.mean(-norm.logpdf(y, mu, sigma) + norm.logpdf(y, tm, np.sqrt(tv)))
    assert mean_standardized_log_loss(y, mu, sigma, tm, tv) == pytest.approx(expect, rel=1e-12)


def test_r2_matches_scikit_learn():
    rng = np.random.default_rng(1)
    y, p = rng.normal(size=50), rng.normal(size=50)
    assert r2_score(y, p) == pytest.approx(sklearn_r2(y, p), rel=1e-12)


@pytest.mark.parametrize("true_scale", [0.5, 2.0])
def test_conformal_scale_recovers_a_misstated_sigma(true_scale):
    # errors of sd true_scale x sigma: the 95 % quantile of |z| is true_scale x 1.960, so the scale is
    # true_scale; the sampling error of a 95 % quantile from 4000 draws is about 1.5 % (measured 0.8-2.2 %
    # over seeds 0-4), so 4 %
    y, oof = _normal_oof(true_scale)
    abs_z = np.abs(y - oof["mu"]) / oof["sigma"]
    assert conformal_scale(abs_z, 0.95) == pytest.approx(true_scale, rel=0.04)


def test_conformal_scale_uses_the_finite_sample_rank():
    # Lei et al. (2018): the ceil((n + 1)(1 - alpha))-th smallest score; n = 19, 95 % -> rank 19 (the largest)
    scores = np.arange(1.0, 20.0)
    assert conformal_scale(scores, 0.95) == pytest.approx(19.0 / Z_95)
    assert conformal_scale(np.arange(1.0, 40.0), 0.95) == pytest.approx(38.0 / Z_95)  # rank ceil(40 x 0.95) = 38


def test_overconfident_intervals_are_recalibrated_and_both_coverages_reported():
    y, oof = _normal_oof(2.0)  # stated sigma half the true one: 95 % intervals cover about 68 %
    m, scale = assess_target(y, oof, "identity")
    # outside reference: the normal probability P(|Z| <= 1.960 / 2) = 0.6729
    assert abs(m["coverage_95"] - (2 * norm.cdf(Z_95 / 2) - 1)) < TOL_68
    assert m["recalibrated"] and scale == pytest.approx(2.0, rel=0.04)
    # cross-fitted coverage after recalibration lands at the nominal rate (same binomial tolerance)
    assert abs(m["coverage_95_recalibrated"] - 0.95) < TOL_95
    assert m["msll_recalibrated"] < m["msll"]


def test_well_calibrated_intervals_are_left_alone():
    y, oof = _normal_oof(1.0)
    m, scale = assess_target(y, oof, "identity")
    assert not m["recalibrated"] and scale == 1.0
    assert m["coverage_95_recalibrated"] == m["coverage_95"]


def test_log_targets_report_errors_in_physical_units():
    y = np.log(np.array([10.0, 20.0, 40.0, 80.0]))
    oof = {"mu": y + 0.1, "sigma": np.full(4, 0.1), "fold": np.array([0, 1, 0, 1]),
           "train_mean": np.full(4, y.mean()), "train_var": np.full(4, y.var())}
    m, _ = assess_target(y, oof, "log", recalibrate=False)
    expect = np.mean(np.abs(np.exp(y + 0.1) - np.exp(y)))
    assert m["mae"] == pytest.approx(expect, rel=1e-12)
    assert m["r2"] == pytest.approx(r2_score(y, y + 0.1))


def test_out_of_fold_predictions_never_see_the_held_out_design():
    X = np.linspace(0, 1, 20)[:, None]
    y = np.arange(20.0)
    seen = []

    def fit(Xtr, ytr, k):
        seen.append(set(ytr))
        return lambda Xte: (np.full(len(Xte), ytr.mean()), np.ones(len(Xte)))

    oof = out_of_fold_predictions(X, y, fit, n_splits=4, random_state=0)
    assert len(seen) == 4
    for k, train in enumerate(seen):
        held = set(y[oof["fold"] == k])
        assert held and not held & train and held | train == set(y)
