"""Assessment of a Gaussian-process surrogate: k-fold cross-validation, accuracy and calibration.

Every metric is computed on out-of-fold predictions (each design predicted by a
model that did not see it).  Accuracy and calibration are always reported
together: a model can be well calibrated and useless, or accurate and
over-confident.

Metrics (per target)
--------------------
r2
    Coefficient of determination 1 - SS_res / SS_tot in the modelled space
    (log space for log targets); ``r2_physical`` the same for the median in
    physical units.
rmse, mae
    Root-mean-square and mean absolute error of the median, in the target's units.
coverage_68, coverage_95
    Fraction of held-out designs inside the central 68.27 % / 95 % predictive
    interval mu -+ z sigma (z = 1 and 1.960); nominal 0.6827 and 0.95.
msll
    Mean standardized log loss (Rasmussen & Williams, Gaussian Processes for
    Machine Learning, 2006, sec. 2.5): the mean over held-out designs of
    -log p(y | model) + log p(y | N(training mean, training variance)); < 0 means
    better than predicting the training mean, lower is better.

Recalibration
-------------
When the out-of-fold 95 % coverage falls outside ``band`` (default [0.90, 0.98]),
every standard deviation of the target is multiplied by one scale ``s``: the
split-conformal quantile of the standardized absolute residuals
``|y - mu| / sigma``, the ceil((n + 1) 0.95)-th smallest of them (Lei, G'Sell,
Rinaldo, Tibshirani & Wasserman, J. Am. Stat. Assoc. 113, 1094 (2018),
normalized residual scores), divided by 1.960.  The recalibrated coverages
are cross-fitted: the designs of fold k are judged with the scale computed from
the other folds only, so they are not optimistic by construction.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.stats import norm
from sklearn.model_selection import KFold

__all__ = [
    "interval_coverage",
    "mean_standardized_log_loss",
    "r2_score",
    "conformal_scale",
    "out_of_fold_predictions",
    "assess_target",
    "COVERAGE_BAND",
    "Z_68",
    "Z_95",
]

#: Recalibrate when the 95 % coverage falls outside this band.
COVERAGE_BAND = (0.90, 0.98)
#: Standard-normal quantiles of the central 68.27 % (one sigma) and 95 % intervals.
Z_68 = 1.0
Z_95 = float(norm.ppf(0.975))


def interval_coverage(y, mu, sigma, z):
    """Fraction of ``y`` inside ``mu -+ z sigma`` [-]; all arrays of shape (n,)."""
    return float(np.mean(np.abs(np.asarray(y) - mu) <= z * sigma))


def mean_standardized_log_loss(y, mu, sigma, train_mean, train_var):
    """Mean standardized log loss (Rasmussen & Williams 2006, eq. 2.34 and the text after it).

    Parameters
    ----------
    y, mu, sigma : ndarray of float, shape (n,)
        Held-out values, predictive means and standard deviations (model space).
    train_mean, train_var : ndarray of float, shape (n,)
        Mean and variance of the training targets of the model that predicted each point.

    Returns
    -------
    float
        Mean of ``-log N(y; mu, sigma^2) + log N(y; train_mean, train_var)``.
    """
    var = np.maximum(sigma, 1e-300) ** 2
    loss = 0.5 * np.log(2 * np.pi * var) + (y - mu) ** 2 / (2 * var)
    trivial = 0.5 * np.log(2 * np.pi * train_var) + (y - train_mean) ** 2 / (2 * train_var)
    return float(np.mean(loss - trivial))


def r2_score(y, pred):
    """1 - sum (y - pred)^2 / sum (y - mean y)^2 [-]."""
    y = np.asarray(y, dtype=float)
    ss_tot = float(np.sum((y - y.mean()) ** 2))
    ss_res = float(np.sum((y - pred) ** 2))
    return 1.0 - ss_res / ss_tot if ss_tot > 0 else float("nan")


def conformal_scale(abs_z, coverage=0.95):
    """Scale of the standard deviations that gives ``coverage`` (split-conformal quantile / z).

    Parameters
    ----------
    abs_z : ndarray of float, shape (n,)
        Standardized absolute residuals ``|y - mu| / sigma`` of calibration designs.
    coverage : float
        Target coverage of the central interval, default 0.95.

    Returns
    -------
    float
        ``q / z`` with q the ceil((n + 1) coverage)-th smallest ``abs_z`` (the largest
        when that rank exceeds n) and z the normal quantile of ``coverage``.
    """
    s = np.sort(np.asarray(abs_z, dtype=float))
    k = min(math.ceil((s.size + 1) * coverage), s.size)
    return float(s[k - 1] / norm.ppf(0.5 + coverage / 2))


def out_of_fold_predictions(Xu, y, fit, *, n_splits, random_state):
    """k-fold out-of-fold predictive means and standard deviations.

    Parameters
    ----------
    Xu : ndarray of float, shape (n, d)
        Inputs in the unit cube.
    y : ndarray of float, shape (n,)
        Targets in model space.
    fit : callable
        ``fit(X_train, y_train, fold) -> (mu, sigma)`` callable on the held-out inputs;
        see :func:`surrogate.models._gp` for the one used.
    n_splits : int
        Number of folds (at most n).
    random_state : int
        Seed of the shuffled :class:`sklearn.model_selection.KFold`.

    Returns
    -------
    dict of ndarray, each of shape (n,)
        ``fold`` (int), ``mu``, ``sigma``, ``train_mean``, ``train_var``.
    """
    n = y.shape[0]
    out = {k: np.empty(n) for k in ("mu", "sigma", "train_mean", "train_var")}
    out["fold"] = np.empty(n, dtype=int)
    folds = KFold(n_splits=min(n_splits, n), shuffle=True, random_state=random_state)
    for k, (train, test) in enumerate(folds.split(Xu)):
        predict = fit(Xu[train], y[train], k)
        mu, sigma = predict(Xu[test])
        out["mu"][test], out["sigma"][test] = mu, sigma
        out["train_mean"][test] = y[train].mean()
        out["train_var"][test] = max(y[train].var(), 1e-300)
        out["fold"][test] = k
    return out


def _back(values, transform):
    return np.exp(values) if transform == "log" else values


def assess_target(y, oof, transform, *, band=COVERAGE_BAND, recalibrate=True):
    """Metrics of one target from its out-of-fold predictions; the recalibration scale.

    Parameters
    ----------
    y : ndarray of float, shape (n,)
        Targets in model space.
    oof : dict
        From :func:`out_of_fold_predictions`.
    transform : {"identity", "log"}
    band : (float, float)
        Allowed 95 % coverage; outside it the intervals are recalibrated.
    recalibrate : bool
        Whether to recalibrate at all.

    Returns
    -------
    metrics : dict
        JSON-ready floats (see the module docstring); RMSE and MAE in the target's units.
    scale : float
        Multiplier of the predictive standard deviation (1.0 when not recalibrated).
    """
    mu, sigma, fold = oof["mu"], oof["sigma"], oof["fold"]
    y_phys, med_phys = _back(y, transform), _back(mu, transform)
    err = med_phys - y_phys
    m = {
        "n_designs": int(y.size),
        "n_folds": int(fold.max() + 1),
        "r2": r2_score(y, mu),
        "r2_physical": r2_score(y_phys, med_phys),
        "rmse": float(np.sqrt(np.mean(err**2))),
        "mae": float(np.mean(np.abs(err))),
        "coverage_68": interval_coverage(y, mu, sigma, Z_68),
        "coverage_95": interval_coverage(y, mu, sigma, Z_95),
        "msll": mean_standardized_log_loss(y, mu, sigma, oof["train_mean"], oof["train_var"]),
    }
    outside = not band[0] <= m["coverage_95"] <= band[1]
    scale = 1.0
    if recalibrate and outside:
        abs_z = np.abs(y - mu) / np.maximum(sigma, 1e-300)
        scale = conformal_scale(abs_z, 0.95)
        # cross-fitted: fold k judged with the scale of the other folds
        s_fold = np.empty_like(sigma)
        for k in range(m["n_folds"]):
            here = fold == k
            s_fold[here] = conformal_scale(abs_z[~here], 0.95) if (~here).any() else scale
        sig_r = sigma * s_fold
        m.update(
            recalibrated=True,
            interval_scale=scale,
            coverage_68_recalibrated=interval_coverage(y, mu, sig_r, Z_68),
            coverage_95_recalibrated=interval_coverage(y, mu, sig_r, Z_95),
            msll_recalibrated=mean_standardized_log_loss(y, mu, sig_r, oof["train_mean"], oof["train_var"]),
        )
    else:
        m.update(
            recalibrated=False,
            interval_scale=1.0,
            coverage_68_recalibrated=m["coverage_68"],
            coverage_95_recalibrated=m["coverage_95"],
            msll_recalibrated=m["msll"],
        )
    return m, scale
