"""Robustness to process variation: Monte Carlo on the surrogate with a length tolerance.

Every length parameter (unit nm) of a design is perturbed independently by a normal
error of standard deviation ``length_sigma_nm`` (default 2 nm, a setting: a typical
electron-beam lithography tolerance, from memory, no source); angles and fixed
parameters are left alone.  Each perturbed design is predicted by the surrogate's
median (exp(mu) for a log target), so the spread reflects the geometry tolerance
propagated through the fitted response, not the surrogate's own uncertainty (that is
the ``uncertain`` flag).  Reported per design: the 5th, 50th and 95th percentiles of
the enhancement and of the resonance shift (perturbed minus nominal median
resonance), and the fraction of samples whose resonance leaves the laser window.
Perturbed designs may fall outside the sampled bounds; the surrogate extrapolates
there (Monte Carlo method: N. Metropolis and S. Ulam, J. Am. Stat. Assoc. 44, 335
(1949); percentiles by linear interpolation, numpy's default).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .._validation import check_int, check_real

__all__ = ["DEFAULT_LENGTH_SIGMA_NM", "DEFAULT_MC_SAMPLES", "ROBUSTNESS_COLUMNS", "length_parameters", "robustness"]

#: Standard deviation of every length parameter [nm] (a setting; see the module docstring).
DEFAULT_LENGTH_SIGMA_NM = 2.0

#: Monte Carlo samples per design (the 5th percentile then has a standard error of about
#: 0.1 sigma of the propagated spread, measured against the analytic case in the tests).
DEFAULT_MC_SAMPLES = 512

#: Columns of :func:`robustness` ([-] for enhancement and the fraction).
ROBUSTNESS_COLUMNS = (
    "enhancement_p05", "enhancement_p50", "enhancement_p95",
    "resonance_shift_p05_nm", "resonance_shift_p50_nm", "resonance_shift_p95_nm",
    "outside_window_fraction",
)


def length_parameters(names, family=None):
    """The names among ``names`` that are lengths: unit nm in ``family``, else a ``_nm`` suffix."""
    if family is not None:
        units = {p.name: p.unit for p in family.parameters}
        return tuple(n for n in names if units.get(n) == "nm")
    return tuple(n for n in names if n.endswith("_nm"))


def _median(model, target, mu):
    return np.exp(mu) if model.transforms_[target] == "log" else mu


def robustness(model, X, *, length_names=None, length_sigma_nm=DEFAULT_LENGTH_SIGMA_NM, n_samples=DEFAULT_MC_SAMPLES,
               laser_nm=None, window_nm=None, seed=None, enhancement="enhancement_at_laser"):
    """Monte Carlo percentiles of enhancement and resonance shift under a length tolerance.

    Parameters
    ----------
    model : GPSurrogate
        Anything with ``feature_names_in_``, ``targets_``, ``transforms_`` and
        ``predict_model_space(X, targets=...)``.
    X : ndarray, shape (n, d)
        Designs, columns in ``model.feature_names_in_`` order [their units].
    length_names : sequence of str or None
        Parameters to perturb; default those ending in ``_nm``.
    length_sigma_nm : float, default 2
        Standard deviation of each length [nm].
    n_samples : int, default 512
        Samples per design.
    laser_nm, window_nm : float or None
        The window ``|resonance - laser_nm| <= window_nm`` [nm]; None: no fraction.
    seed : int, numpy.random.Generator or None
        Converted once with ``numpy.random.default_rng``.
    enhancement : str, default "enhancement_at_laser"

    Returns
    -------
    pandas.DataFrame, shape (n, 7)
        :data:`ROBUSTNESS_COLUMNS`; NaN where the model lacks the target (or the window).
    """
    names = list(model.feature_names_in_)
    X = np.asarray(X, dtype=float).reshape(-1, len(names))
    sigma = check_real("length_sigma_nm", length_sigma_nm, low=0.0, high=1000.0, unit="nm")
    s = check_int("n_samples", n_samples, low=2, high=1_000_000)
    rng = np.random.default_rng(seed)
    lengths = length_parameters(names) if length_names is None else tuple(length_names)
    cols = [names.index(n) for n in lengths]
    n = X.shape[0]
    out = pd.DataFrame(np.nan, index=range(n), columns=list(ROBUSTNESS_COLUMNS))
    if n == 0:
        return out
    samples = np.repeat(X, s, axis=0)  # (n * s, d), design i in rows i*s .. i*s + s - 1
    if cols:
        samples[:, cols] += rng.normal(0.0, sigma, size=(n * s, len(cols)))
    targets = [t for t in (enhancement, "resonance_nm") if t in model.targets_]
    if not targets:
        return out
    pred = model.predict_model_space(samples, targets=targets)
    q = [5, 50, 95]
    if enhancement in pred:
        e = _median(model, enhancement, pred[enhancement][0]).reshape(n, s)
        out[["enhancement_p05", "enhancement_p50", "enhancement_p95"]] = np.percentile(e, q, axis=1).T
    if "resonance_nm" in pred:
        nominal = _median(model, "resonance_nm", model.predict_model_space(X, targets=["resonance_nm"])["resonance_nm"][0])
        r = _median(model, "resonance_nm", pred["resonance_nm"][0]).reshape(n, s)
        shift = r - nominal[:, None]
        out[["resonance_shift_p05_nm", "resonance_shift_p50_nm", "resonance_shift_p95_nm"]] = np.percentile(shift, q, axis=1).T
        if laser_nm is not None and window_nm is not None:
            out["outside_window_fraction"] = np.mean(np.abs(r - float(laser_nm)) > float(window_nm), axis=1)
    return out
