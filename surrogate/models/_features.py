"""Model inputs and outputs: parameters scaled to the unit cube, targets in log or linear space.

Inputs
------
Each varied parameter ``p`` with campaign bounds ``[low, high]`` enters the
Gaussian process as ``u = (p - low) / (high - low)``, so a length scale of 1 means
"the whole campaign range" for every parameter and one set of hyperparameter
bounds fits every campaign.

Targets
-------
A target is modelled either as it is (``"identity"``) or through its natural
logarithm (``"log"``).  Positive figures that span orders of magnitude
(enhancements, cross sections, areas, heat per enhancement) vary multiplicatively
with the geometry; in log space their Gaussian-process residuals are closer to
homoscedastic and the back-transformed predictions are positive.  The predictive
distribution of a log target is lognormal: median ``exp(mu)``, central interval
``exp(mu -+ z sigma)``, mean ``exp(mu + sigma^2 / 2)`` and variance
``(exp(sigma^2) - 1) exp(2 mu + sigma^2)`` (Johnson, Kotz & Balakrishnan,
Continuous Univariate Distributions vol. 1, 2nd ed. 1994, ch. 14).
"""

from __future__ import annotations

import numpy as np

from .._validation import check_choice
from ..errors import InvalidParameterError

__all__ = [
    "TRANSFORMS",
    "DEFAULT_TRANSFORMS",
    "WIDE_RANGE_RATIO",
    "choose_transform",
    "to_model_space",
    "median_and_interval",
    "mean_and_std",
    "check_bounds",
    "to_unit_cube",
]

#: The target transforms.
TRANSFORMS = ("identity", "log")

#: Transforms of the figures of merit we know (positive, multiplicative figures in log space).
DEFAULT_TRANSFORMS = {
    "resonance_nm": "identity",
    "far_field_resonance_nm": "identity",
    "enhancement_at_laser": "log",
    "peak_enhancement": "log",
    "heat_per_enhancement_nm2": "log",
    "spot_area_nm2": "log",
    "spot_fwhm_y_nm": "log",
    "spot_fwhm_z_nm": "log",
    "c_abs_at_laser_nm2": "log",
    "c_ext_at_laser_nm2": "log",
    "linewidth_nm": "log",
    "quality_factor": "log",
}

#: Other positive targets go to log space when max / min exceeds this (common practice, no source).
WIDE_RANGE_RATIO = 10.0


def choose_transform(name, values):
    """The transform of target ``name``: the known default, else log for positive wide-ranging data.

    Parameters
    ----------
    name : str
        Target name (e.g. ``"enhancement_at_laser"``).
    values : array-like of float, shape (n,)
        Its finite training values.

    Returns
    -------
    str
        ``"identity"`` or ``"log"``.
    """
    if name in DEFAULT_TRANSFORMS:
        return DEFAULT_TRANSFORMS[name]
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if v.size and v.min() > 0 and v.max() / v.min() > WIDE_RANGE_RATIO:
        return "log"
    return "identity"


def to_model_space(name, values, transform):
    """Values of target ``name`` in the space the Gaussian process models.

    Raises
    ------
    InvalidParameterError
        A log target holds a value <= 0.
    """
    check_choice(f"the transform of {name}", transform, TRANSFORMS)
    v = np.asarray(values, dtype=float)
    if transform == "identity":
        return v
    bad = np.isfinite(v) & (v <= 0)
    if bad.any():
        raise InvalidParameterError(
            f"{name} must be > 0 to be modelled in log space; got {float(v[bad][0])!r}; "
            f"model it with transform 'identity' instead"
        )
    return np.log(v)


def median_and_interval(mu, sigma, transform, z):
    """Median and central interval in physical units from a normal law in model space.

    Parameters
    ----------
    mu, sigma : ndarray of float, shape (n,)
        Predictive mean and standard deviation in model space.
    transform : {"identity", "log"}
    z : float
        Standard-normal quantile of the interval (1.96 for 95 %).

    Returns
    -------
    median, lower, upper : ndarray of float, shape (n,)
        For ``"log"``: ``exp(mu)``, ``exp(mu - z sigma)``, ``exp(mu + z sigma)``
        (quantiles map through the monotone exp exactly).
    """
    lo, hi = mu - z * sigma, mu + z * sigma
    if transform == "log":
        return np.exp(mu), np.exp(lo), np.exp(hi)
    return mu, lo, hi


def mean_and_std(mu, sigma, transform):
    """Mean and standard deviation in physical units (lognormal moments for ``"log"``)."""
    if transform == "log":
        s2 = sigma**2
        mean = np.exp(mu + 0.5 * s2)
        # lognormal variance (exp(s^2) - 1) exp(2 mu + s^2); expm1 keeps small sigma accurate
        std = mean * np.sqrt(np.expm1(s2))
        return mean, std
    return mu, sigma


def check_bounds(bounds):
    """Validate ``{name: (low, high)}`` with finite low < high; return names, lows, highs."""
    if not isinstance(bounds, dict) or not bounds:
        raise InvalidParameterError(f"bounds must be a non-empty dict {{name: (low, high)}}; got {bounds!r}")
    names, lows, highs = [], [], []
    for name, pair in bounds.items():
        try:
            low, high = (float(v) for v in pair)
        except (TypeError, ValueError):
            raise InvalidParameterError(f"bounds[{name!r}] must be a pair (low, high); got {pair!r}") from None
        if not (np.isfinite(low) and np.isfinite(high) and low < high):
            raise InvalidParameterError(f"bounds[{name!r}] must be finite with low < high; got {pair!r}")
        names.append(str(name))
        lows.append(low)
        highs.append(high)
    return names, np.array(lows), np.array(highs)


def to_unit_cube(values, lows, highs):
    """Scale parameter values of shape (n, d) to the unit cube: (p - low) / (high - low)."""
    return (np.asarray(values, dtype=float) - lows) / (highs - lows)
