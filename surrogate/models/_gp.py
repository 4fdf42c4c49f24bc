"""Gaussian-process surrogates of figures of merit: one scikit-learn regressor per target.

Model
-----
For each target, in model space (see :mod:`surrogate.models._features`) and on
inputs scaled to the unit cube, a :class:`sklearn.gaussian_process.GaussianProcessRegressor`
with ``normalize_y=True`` and the kernel

    k(u, u') = s^2 Matern_5/2(r) + n^2 delta(u, u'),   r^2 = sum_j ((u_j - u'_j) / l_j)^2

(anisotropic Matern, nu = 5/2: Rasmussen & Williams, Gaussian Processes for
Machine Learning, 2006, eq. 4.17; the white term is the solver's discretization
noise).  The hyperparameters (s^2, l_1..l_d, n^2) maximise the log marginal
likelihood (ibid. eq. 5.8) from the default start plus ``n_restarts`` random
starts.  The predictive standard deviation includes the noise term, so it
describes what the solver would return for a new design.

Prediction
----------
Predictions are computed here in chunks (same algebra as scikit-learn's
``predict``, ibid. Algorithm 2.1, with the inverse Cholesky factor formed once), so
100,000 designs cost a few matrix products per target.
"""

from __future__ import annotations

import os
import time
import warnings
from concurrent.futures import ThreadPoolExecutor
from numbers import Integral

import numpy as np
import pandas as pd
from scipy.linalg import solve_triangular
from sklearn.base import BaseEstimator
from sklearn.exceptions import ConvergenceWarning
from sklearn.gaussian_process import GaussianProcessRegressor
from sklearn.gaussian_process.kernels import ConstantKernel, Matern, WhiteKernel
from threadpoolctl import threadpool_limits

from .._validation import check_choice, check_int, check_real
from ..errors import InvalidParameterError, InvalidTypeError
from ._assess import COVERAGE_BAND, assess_target, out_of_fold_predictions
from ._errors import TrainingDataError
from ._features import (
    TRANSFORMS,
    check_bounds,
    choose_transform,
    mean_and_std,
    median_and_interval,
    to_model_space,
    to_unit_cube,
)

__all__ = ["GPSurrogate", "make_kernel", "MIN_DESIGNS_PER_PARAMETER"]

#: Fewest training designs per varied parameter: the n = 10 d rule of Loeppky, Sacks & Welch,
#: Technometrics 51, 366 (2009) (cited from memory).
MIN_DESIGNS_PER_PARAMETER = 10

# Hyperparameter bounds on the unit cube and normalised targets (common practice, no source):
# length scales from 1/100 of a campaign range (sharp features) to 1000 ranges (an irrelevant
# parameter); signal variance around the unit variance of normalised targets; noise variance
# from 1e-6 of the target variance (noise-free data) to all of it.
_SIGNAL_BOUNDS = (1e-3, 1e4)
_LENGTH_BOUNDS = (1e-2, 1e3)
_NOISE_BOUNDS = (1e-6, 1.0)
_CHUNK = 8192  # rows per prediction block: 8192 x n_train doubles stay in cache-sized pieces


def make_kernel(n_features, *, nu=2.5):
    """The prior kernel: ConstantKernel x anisotropic Matern(nu) + WhiteKernel, on the unit cube."""
    return ConstantKernel(1.0, _SIGNAL_BOUNDS) * Matern(
        length_scale=np.full(n_features, 0.5), length_scale_bounds=_LENGTH_BOUNDS, nu=nu
    ) + WhiteKernel(1e-2, _NOISE_BOUNDS)


def _fit_gpr(Xu, y, kernel, n_restarts, random_state):
    """Fit one regressor single-threaded (BLAS threads only slow down 200 x 200 problems).

    Returns the fitted regressor and the optimizer's warnings as short strings.
    """
    gpr = GaussianProcessRegressor(
        kernel=kernel, normalize_y=True, n_restarts_optimizer=n_restarts, random_state=random_state
    )
    with warnings.catch_warnings(record=True) as caught, threadpool_limits(limits=1, user_api="blas"):
        warnings.simplefilter("always", ConvergenceWarning)
        gpr.fit(Xu, y)
    notes = sorted({str(w.message).split("\n")[0].split(". ")[0] for w in caught if issubclass(w.category, ConvergenceWarning)})
    return gpr, notes


def _kernel_parts(kernel):
    """(signal variance, length scales (d,), nu, noise variance) of a fitted kernel of make_kernel's form."""
    matern = kernel.k1.k2
    return (
        float(kernel.k1.k1.constant_value),
        np.atleast_1d(np.asarray(matern.length_scale, dtype=float)),
        float(matern.nu),
        float(kernel.k2.noise_level),
    )


def _matern_inplace(d2, nu):
    """Matern correlation of squared scaled distances ``d2`` (overwritten with the result).

    Rasmussen & Williams (2006) eq. 4.17 (nu = 3/2, 5/2) and the exponential kernel
    (nu = 1/2); in place because these arrays are the bulk of the prediction work.
    """
    np.maximum(d2, 0.0, out=d2)
    if nu == 2.5:
        poly = d2 * (5.0 / 3.0)  # s^2 / 3 with s = sqrt(5) r
        np.sqrt(d2, out=d2)
        d2 *= np.sqrt(5.0)  # s
        poly += d2
        poly += 1.0
        np.negative(d2, out=d2)
        np.exp(d2, out=d2)
        d2 *= poly
    elif nu == 1.5:
        np.sqrt(d2, out=d2)
        d2 *= np.sqrt(3.0)
        poly = d2 + 1.0
        np.negative(d2, out=d2)
        np.exp(d2, out=d2)
        d2 *= poly
    else:
        np.sqrt(d2, out=d2)
        np.negative(d2, out=d2)
        np.exp(d2, out=d2)
    return d2


def _workers():
    try:
        n = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        n = os.cpu_count() or 1
    return max(1, min(n, 8))


class _Posterior:
    """Precomputed posterior of one fitted regressor for fast batched prediction."""

    def __init__(self, gpr):
        self.signal, length, self.nu, self.noise = _kernel_parts(gpr.kernel_)
        self.train = gpr.X_train_ / length
        self.train_sq = np.sum(self.train**2, axis=1)
        self.length = length
        self.alpha = np.asarray(gpr.alpha_).reshape(-1) * self.signal
        # inverse Cholesky factor once: V = L^-1 K(X_train, X*) becomes one matrix product;
        # the signal variance is folded into it and into alpha so K stays a correlation
        l_inv = solve_triangular(gpr.L_, np.eye(gpr.L_.shape[0]), lower=True, check_finite=False)
        self.l_inv_t = np.ascontiguousarray(l_inv.T * self.signal)
        self.y_mean = float(np.asarray(gpr._y_train_mean).reshape(-1)[0])
        self.y_std = float(np.asarray(gpr._y_train_std).reshape(-1)[0])

    def _block(self, Xu, mu, var, with_var):
        a = Xu / self.length
        d2 = a @ self.train.T
        d2 *= -2.0
        d2 += np.sum(a * a, axis=1)[:, None]
        d2 += self.train_sq[None, :]
        k = _matern_inplace(d2, self.nu)  # correlation; K* = signal * k
        mu[:] = k @ self.alpha  # Algorithm 2.1 line 4
        if with_var:
            v = k @ self.l_inv_t  # Algorithm 2.1 line 5 (v transposed)
            var[:] = self.signal + self.noise - np.einsum("ij,ij->i", v, v)  # line 6

    def predict(self, Xu, *, with_var=True):
        """Mean and standard deviation (model space) at unit-cube inputs (n, d)."""
        n = Xu.shape[0]
        mu, var = np.empty(n), np.empty(n)
        blocks = [slice(s, min(s + _CHUNK, n)) for s in range(0, n, _CHUNK)]
        work = lambda b: self._block(Xu[b], mu[b], var[b], with_var)  # noqa: E731
        # blocks run in threads (numpy releases the GIL), each with a single-threaded BLAS:
        # faster on these shapes than one multi-threaded BLAS call
        with threadpool_limits(limits=1, user_api="blas"):
            if len(blocks) > 1 and _workers() > 1:
                with ThreadPoolExecutor(max_workers=_workers()) as pool:
                    list(pool.map(work, blocks))
            else:
                for b in blocks:
                    work(b)
        mu = self.y_std * mu + self.y_mean  # undo the target normalisation of normalize_y=True
        if not with_var:
            return mu, None
        return mu, self.y_std * np.sqrt(np.maximum(var, 0.0))


def _fit_target(Xu, y, kernel, n_restarts, random_state, cv_folds, cv_seed):
    """Fit one target on all its designs and, when cv_folds, its out-of-fold predictions.

    Returns ``(regressor, optimizer notes, out-of-fold dict or None, wall time [s])``.
    """
    t0 = time.perf_counter()
    gpr, notes = _fit_gpr(Xu, y, kernel, n_restarts, random_state)
    if not cv_folds:
        return gpr, notes, None, time.perf_counter() - t0
    fold_seeds = np.random.default_rng(random_state).integers(0, 2**31 - 1, size=cv_folds)

    def fit(X_train, y_train, k):
        # each fold re-optimises the hyperparameters, starting from the full-data optimum
        g, _ = _fit_gpr(X_train, y_train, gpr.kernel_, n_restarts, int(fold_seeds[k]))
        return _Posterior(g).predict

    oof = out_of_fold_predictions(Xu, y, fit, n_splits=cv_folds, random_state=cv_seed)
    return gpr, notes, oof, time.perf_counter() - t0


class GPSurrogate(BaseEstimator):
    """Gaussian-process surrogates of figures of merit, one per target, with calibrated intervals.

    Parameters
    ----------
    bounds : dict or None, default None
        Varied parameter -> ``(low, high)`` in its unit (nm, deg); inputs are scaled
        to the unit cube with them and their order is the feature order.  ``None``
        takes every column of ``X`` and its observed minimum and maximum.
    targets : sequence of str or None, default None
        Targets to model (columns of ``Y``); ``None`` models every column.
    transforms : "auto" or dict, default "auto"
        Target -> ``"identity"`` or ``"log"``; ``"auto"`` (or a target missing from
        the dict) uses :func:`surrogate.models.choose_transform`.
    nu : {0.5, 1.5, 2.5}, default 2.5
        Smoothness of the Matern kernel.
    n_restarts : int, default 4
        Random restarts of the hyperparameter optimizer (besides the default start).
    cv_folds : int or None, default 5
        Folds of the cross-validation run by :meth:`fit` (>= 2); ``None`` skips the
        assessment and the recalibration.
    recalibrate : bool, default True
        Rescale the intervals of a target whose cross-validated 95 % coverage falls
        outside ``coverage_band`` (see :mod:`surrogate.models._assess`).
    coverage_band : (float, float), default (0.90, 0.98)
        Accepted 95 % coverage [-].
    missing : {"error", "drop"}, default "error"
        A NaN target value is an error, or leaves that design out of that target.
    min_designs_per_parameter : int, default 10
        Fewest designs per varied parameter each target needs.
    n_jobs : int or None, default None
        Processes fitting targets in parallel (joblib); ``None`` is one.
    seed : int, numpy.random.Generator or None, default None
        Randomness of the optimizer restarts and the folds, converted once with
        :func:`numpy.random.default_rng`.

    Attributes
    ----------
    feature_names_in_ : ndarray of str, shape (d,)
    n_features_in_ : int
    bounds_ : dict
        Parameter -> (low, high) used for scaling.
    targets_ : tuple of str
    transforms_ : dict
        Target -> "identity" or "log".
    estimators_ : dict
        Target -> fitted GaussianProcessRegressor (unit-cube inputs, model-space targets).
    train_mask_ : dict
        Target -> bool ndarray (n,) over the rows of ``X`` it was trained on.
    interval_scale_ : dict
        Target -> multiplier of its predictive standard deviation (1.0 unless recalibrated).
    cv_metrics_ : dict
        Target -> metrics of :func:`surrogate.models.assess_target` (empty without CV).
    cv_predictions_ : dict
        Target -> dict of out-of-fold arrays (``y``, ``mu``, ``sigma``, ``fold``) in model space.
    optimizer_notes_ : dict
        Target -> the optimizer's convergence warnings (e.g. a length scale at its bound).
    fit_time_s_ : dict
        Target -> wall time of its fit and cross-validation [s].

    Examples
    --------
    >>> import numpy as np, pandas as pd
    >>> x = np.linspace(0.0, 1.0, 12)
    >>> X = pd.DataFrame({"x_nm": x})
    >>> Y = pd.DataFrame({"y_nm": np.sin(6 * x)})
    >>> model = GPSurrogate(bounds={"x_nm": (0, 1)}, cv_folds=None, n_restarts=0, seed=0).fit(X, Y)
    >>> mean = model.predict(pd.DataFrame({"x_nm": [0.5]}))
    >>> round(float(mean["y_nm"].iloc[0]), 2), round(float(np.sin(3.0)), 2)
    (0.14, 0.14)
    """

    def __init__(
        self,
        *,
        bounds=None,
        targets=None,
        transforms="auto",
        nu=2.5,
        n_restarts=4,
        cv_folds=5,
        recalibrate=True,
        coverage_band=COVERAGE_BAND,
        missing="error",
        min_designs_per_parameter=MIN_DESIGNS_PER_PARAMETER,
        n_jobs=None,
        seed=None,
    ):
        self.bounds = bounds
        self.targets = targets
        self.transforms = transforms
        self.nu = nu
        self.n_restarts = n_restarts
        self.cv_folds = cv_folds
        self.recalibrate = recalibrate
        self.coverage_band = coverage_band
        self.missing = missing
        self.min_designs_per_parameter = min_designs_per_parameter
        self.n_jobs = n_jobs
        self.seed = seed

    # -- validation ----------------------------------------------------------------------
    def _check_params(self):
        check_choice("nu", self.nu, (0.5, 1.5, 2.5))
        check_int("n_restarts", self.n_restarts, low=0, high=100)
        if self.cv_folds is not None:
            check_int("cv_folds", self.cv_folds, low=2, high=100)
        check_choice("missing", self.missing, ("error", "drop"))
        check_int("min_designs_per_parameter", self.min_designs_per_parameter, low=1, high=1000)
        if self.n_jobs is not None:
            check_int("n_jobs", self.n_jobs, low=1, high=256)
        try:
            low, high = (float(v) for v in self.coverage_band)
        except (TypeError, ValueError):
            raise InvalidParameterError(f"coverage_band must be a pair (low, high); got {self.coverage_band!r}") from None
        if not 0 < low < 0.95 < high < 1:
            raise InvalidParameterError(f"coverage_band must satisfy 0 < low < 0.95 < high < 1; got {self.coverage_band!r}")
        if not (self.transforms == "auto" or isinstance(self.transforms, dict)):
            raise InvalidParameterError(f"transforms must be 'auto' or a dict {{target: transform}}; got {self.transforms!r}")
        if isinstance(self.transforms, dict):
            for name, t in self.transforms.items():
                check_choice(f"transforms[{name!r}]", t, TRANSFORMS)
        if self.seed is not None and not isinstance(self.seed, (Integral, np.random.Generator)):
            raise InvalidTypeError(f"seed must be an int, a numpy Generator or None; got {self.seed!r}")

    @staticmethod
    def _numeric(frame, columns, what):
        missing = [c for c in columns if c not in frame.columns]
        if missing:
            raise TrainingDataError(f"{what} must have the columns {', '.join(columns)}; missing {', '.join(missing)}")
        try:
            return frame[list(columns)].to_numpy(dtype=float)
        except (TypeError, ValueError):
            raise TrainingDataError(f"{what} columns {', '.join(columns)} must be numeric") from None

    def _inputs(self, X):
        """Unit-cube inputs (n, d) from a frame with the feature columns or an (n, d) array."""
        names = list(self.feature_names_in_)
        if isinstance(X, pd.DataFrame):
            values = self._numeric(X, names, "X")
        else:
            values = np.asarray(X, dtype=float)
            if values.ndim != 2 or values.shape[1] != len(names):
                raise InvalidParameterError(f"X must have shape (n, {len(names)}) ({', '.join(names)}); got {values.shape}")
        bad = ~np.isfinite(values)
        if bad.any():
            row, col = np.argwhere(bad)[0]
            raise InvalidParameterError(f"{names[col]} must be a finite number; got {float(values[row, col])!r} in row {row}")
        lows = np.array([self.bounds_[n][0] for n in names])
        highs = np.array([self.bounds_[n][1] for n in names])
        return to_unit_cube(values, lows, highs)

    # -- fitting -------------------------------------------------------------------------
    def fit(self, X, Y):
        """Fit one Gaussian process per target; cross-validate and recalibrate when ``cv_folds``.

        Parameters
        ----------
        X : pandas.DataFrame, shape (n, >= d)
            Design parameters, one column per varied parameter (units as in ``bounds``).
        Y : pandas.DataFrame, shape (n, >= 1)
            Figures of merit in physical units, one column per target.

        Returns
        -------
        self : GPSurrogate

        Raises
        ------
        TrainingDataError
            Missing columns, NaN targets with ``missing="error"``, or fewer than
            ``min_designs_per_parameter * d`` usable designs for a target.
        """
        self._check_params()
        if not isinstance(X, pd.DataFrame) or not isinstance(Y, pd.DataFrame):
            raise InvalidTypeError(f"X and Y must be pandas DataFrames; got {type(X).__name__} and {type(Y).__name__}")
        if len(X) != len(Y):
            raise TrainingDataError(f"X and Y must have the same number of rows; got {len(X)} and {len(Y)}")
        if self.bounds is None:
            raw = self._numeric(X, list(X.columns), "X")
            bounds = {c: (float(np.nanmin(raw[:, j])), float(np.nanmax(raw[:, j]))) for j, c in enumerate(X.columns)}
        else:
            bounds = self.bounds
        names, lows, highs = check_bounds(bounds)
        self.bounds_ = {n: (float(lo), float(hi)) for n, lo, hi in zip(names, lows, highs)}
        self.feature_names_in_ = np.array(names, dtype=object)
        self.n_features_in_ = len(names)
        Xu = self._inputs(X)
        targets = list(Y.columns) if self.targets is None else list(self.targets)
        if not targets:
            raise TrainingDataError("targets must name at least one column of Y; got none")
        values = self._numeric(Y, targets, "Y")
        need = self.min_designs_per_parameter * self.n_features_in_

        rng = np.random.default_rng(self.seed)  # the one conversion of seed
        seeds = rng.integers(0, 2**31 - 1, size=len(targets) + 1)
        cv_seed = int(seeds[-1])
        kernel = make_kernel(self.n_features_in_, nu=self.nu)
        jobs, masks, transforms, model_y = [], {}, {}, {}
        for j, name in enumerate(targets):
            col = values[:, j]
            mask = np.isfinite(col)
            if not mask.all() and self.missing == "error":
                row = int(np.argmin(mask))
                raise TrainingDataError(
                    f"{name} must be finite in every training design; got {float(col[row])!r} in row {row} "
                    f"({int((~mask).sum())} such rows); drop them with missing='drop'"
                )
            if mask.sum() < need:
                raise TrainingDataError(
                    f"{name} must have at least {need} usable designs ({self.min_designs_per_parameter} per varied "
                    f"parameter x {self.n_features_in_}); got {int(mask.sum())}; add designs and train again"
                )
            given = self.transforms.get(name) if isinstance(self.transforms, dict) else None
            transforms[name] = given or choose_transform(name, col[mask])
            y = to_model_space(name, col[mask], transforms[name])
            masks[name] = mask
            model_y[name] = y
            jobs.append((Xu[mask], y, kernel, self.n_restarts, int(seeds[j]), self.cv_folds, cv_seed))

        if self.n_jobs and self.n_jobs > 1 and len(jobs) > 1:
            from joblib import Parallel, delayed

            results = Parallel(n_jobs=self.n_jobs)(delayed(_fit_target)(*job) for job in jobs)
        else:
            results = [_fit_target(*job) for job in jobs]

        self.targets_ = tuple(targets)
        self.transforms_ = transforms
        self.train_mask_ = masks
        self.estimators_, self.optimizer_notes_, self.fit_time_s_ = {}, {}, {}
        self.interval_scale_, self.cv_metrics_, self.cv_predictions_ = {}, {}, {}
        band = tuple(float(v) for v in self.coverage_band)
        for name, (gpr, notes, oof, elapsed_s) in zip(targets, results):
            self.estimators_[name] = gpr
            self.optimizer_notes_[name] = notes
            self.fit_time_s_[name] = float(elapsed_s)
            self.interval_scale_[name] = 1.0
            if oof is not None:
                y = model_y[name]
                metrics, scale = assess_target(y, oof, transforms[name], band=band, recalibrate=bool(self.recalibrate))
                self.cv_metrics_[name] = metrics
                self.interval_scale_[name] = scale
                self.cv_predictions_[name] = {"y": y, "mu": oof["mu"], "sigma": oof["sigma"], "fold": oof["fold"]}
        self._posteriors = {}
        return self

    def __getstate__(self):
        state = super().__getstate__()
        state.pop("_posteriors", None)  # a cache rebuilt on demand; never persisted
        return state

    # -- prediction ----------------------------------------------------------------------
    def _check_fitted(self):
        if not hasattr(self, "estimators_"):
            raise InvalidParameterError("this GPSurrogate must be fitted before predicting; got an unfitted model (call fit first)")

    def _check_targets(self, targets):
        if targets is None:
            return list(self.targets_)
        targets = [targets] if isinstance(targets, str) else list(targets)
        for t in targets:
            check_choice("target", t, self.targets_)
        return targets

    def predict_model_space(self, X, *, targets=None):
        """Predictive mean and (recalibrated) standard deviation in model space.

        Parameters
        ----------
        X : pandas.DataFrame or ndarray, shape (n, d)
        targets : sequence of str or None
            Default: every fitted target.

        Returns
        -------
        dict
            Target -> ``(mu, sigma)``, ndarrays of shape (n,): in log space for log targets.
        """
        self._check_fitted()
        targets = self._check_targets(targets)
        Xu = self._inputs(X)
        if not hasattr(self, "_posteriors"):
            self._posteriors = {}
        out = {}
        for t in targets:
            if t not in self._posteriors:
                self._posteriors[t] = _Posterior(self.estimators_[t])
            mu, sigma = self._posteriors[t].predict(Xu)
            out[t] = (mu, sigma * self.interval_scale_[t])
        return out

    def _index(self, X):
        return X.index if isinstance(X, pd.DataFrame) else None

    def predict(self, X, *, return_std=False, targets=None):
        """Predictive mean (and standard deviation) in physical units.

        For a log target these are the moments of the lognormal predictive
        distribution, ``exp(mu + sigma^2 / 2)`` and its standard deviation; use
        :meth:`predict_interval` for the median and a central interval.

        Parameters
        ----------
        X : pandas.DataFrame or ndarray, shape (n, d)
            Design parameters (units as in ``bounds``).
        return_std : bool, default False
        targets : sequence of str or None

        Returns
        -------
        mean : pandas.DataFrame, shape (n, n_targets)
        std : pandas.DataFrame, shape (n, n_targets)
            Only with ``return_std``.
        """
        latent = self.predict_model_space(X, targets=targets)
        means, stds = {}, {}
        for t, (mu, sigma) in latent.items():
            means[t], stds[t] = mean_and_std(mu, sigma, self.transforms_[t])
        index = self._index(X)
        mean = pd.DataFrame(means, index=index)
        return (mean, pd.DataFrame(stds, index=index)) if return_std else mean

    def predict_interval(self, X, *, coverage=0.95, targets=None):
        """Median and central predictive interval in physical units.

        Parameters
        ----------
        X : pandas.DataFrame or ndarray, shape (n, d)
        coverage : float, default 0.95
            Probability of the central interval, in (0, 1).
        targets : sequence of str or None

        Returns
        -------
        pandas.DataFrame, shape (n, 3 n_targets)
            Columns ``<target>_median``, ``<target>_lower``, ``<target>_upper``; for log
            targets ``exp(mu)`` and ``exp(mu -+ z sigma)``.
        """
        from scipy.stats import norm

        coverage = check_real("coverage", coverage, low=0, high=1, low_open=True, high_open=True)
        z = float(norm.ppf(0.5 + coverage / 2))
        cols = {}
        for t, (mu, sigma) in self.predict_model_space(X, targets=targets).items():
            med, lo, hi = median_and_interval(mu, sigma, self.transforms_[t], z)
            cols[f"{t}_median"], cols[f"{t}_lower"], cols[f"{t}_upper"] = med, lo, hi
        return pd.DataFrame(cols, index=self._index(X))

    def predict_summary(self, X, *, coverage=0.95, targets=None):
        """Median, central interval, mean and standard deviation in one pass (physical units).

        Same values as :meth:`predict_interval` and :meth:`predict` together, at
        half the cost (the posterior is evaluated once).

        Returns
        -------
        pandas.DataFrame, shape (n, 5 n_targets)
            Columns ``<target>_median``, ``_lower``, ``_upper``, ``_mean``, ``_std``.
        """
        from scipy.stats import norm

        coverage = check_real("coverage", coverage, low=0, high=1, low_open=True, high_open=True)
        z = float(norm.ppf(0.5 + coverage / 2))
        cols = {}
        for t, (mu, sigma) in self.predict_model_space(X, targets=targets).items():
            med, lo, hi = median_and_interval(mu, sigma, self.transforms_[t], z)
            mean, std = mean_and_std(mu, sigma, self.transforms_[t])
            for part, v in (("median", med), ("lower", lo), ("upper", hi), ("mean", mean), ("std", std)):
                cols[f"{t}_{part}"] = v
        return pd.DataFrame(cols, index=self._index(X))

    # -- description ---------------------------------------------------------------------
    def hyperparameters(self):
        """Fitted hyperparameters per target (JSON-ready).

        Returns
        -------
        dict
            Target -> ``kernel`` (text), ``signal_variance`` and ``noise_variance`` (in
            normalised model-space units [-]), ``noise_std`` (model-space units of the
            target), ``length_scales`` (parameter -> length in the parameter's unit),
            ``length_scales_unit_cube`` (parameter -> [-]), ``log_marginal_likelihood``.
        """
        self._check_fitted()
        out = {}
        for t, gpr in self.estimators_.items():
            signal, length, nu, noise = _kernel_parts(gpr.kernel_)
            names = list(self.feature_names_in_)
            spans = [self.bounds_[n][1] - self.bounds_[n][0] for n in names]
            y_std = float(np.asarray(gpr._y_train_std).reshape(-1)[0])
            out[t] = {
                "kernel": str(gpr.kernel_),
                "nu": nu,
                "signal_variance": signal,
                "noise_variance": noise,
                "noise_std": float(np.sqrt(noise) * y_std),
                "length_scales_unit_cube": {n: float(v) for n, v in zip(names, length)},
                "length_scales": {n: float(v * s) for n, v, s in zip(names, length, spans)},
                "log_marginal_likelihood": float(gpr.log_marginal_likelihood_value_),
            }
        return out

