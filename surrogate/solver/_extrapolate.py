"""Estimate of a lattice observable at zero spacing, with a bar meant to bracket it.

Yurkin, Maltsev & Hoekstra showed that the error of coupled-dipole observables
is, for fine enough lattices, a linear plus quadratic function of the spacing,
``Q(d) = Q0 + c1 d + c2 d^2 + O(d^3)`` (J. Opt. Soc. Am. A 23, 2578 (2006)),
and extrapolated ``Q0`` from results at several spacings (J. Opt. Soc. Am. A
23, 2592 (2006)).  At practical spacings that regime is often not reached:
lattice spheres carry an erratic shape error of a few per cent that changes
with every spacing, and particular spacings excite spurious lattice modes.
Extrapolating such values gives a confident wrong answer, so the estimate first
checks the regime, as grid-convergence studies do (Richardson extrapolation
with an observed order of convergence; Roache, J. Fluids Eng. 116, 405 (1994);
Eca & Hoekstra, J. Comput. Phys. 262, 104 (2014); both from memory):

1. Outlier screen (five or more spacings): the value whose externally
   studentized residual from the straight line through the others is the
   largest is excluded when that residual lies beyond the two-sided 99.73 %
   Student-t quantile (the "three sigma" level of a regression prediction
   interval; Belsley, Kuh & Welsch, Regression Diagnostics (1980), from memory).
   At most one spacing is excluded.  With four spacings the line through the
   other three has one degree of freedom and cannot tell an outlier from
   scatter, so nothing is screened.
2. Observed order: least squares of ``Q0 + c d^p`` over ``p`` (three spacings:
   the Richardson solution through all three).  The values are *asymptotic*
   when ``0.5 <= p <= 2.1`` (the range Eca & Hoekstra accept for a
   second-order model, here YMH's linear plus quadratic one) and the trend
   ``c d^p`` is resolved above the residual scatter (``|c|`` beyond the Student-t
   quantile times its standard error; with three spacings: monotone values).
3. Asymptotic -> ``method = "extrapolated"``: ``value = Q0`` of that fit;
   ``error`` = Student-t half-width of ``Q0`` + the difference from the
   straight-line (first-order) intercept (model choice) + a quarter of the
   correction ``|Q0 - Q(d_min)|`` (Roache's grid-convergence-index safety factor
   1.25 applied to the correction).
4. Otherwise -> ``method = "bounded"``: ``value`` = the straight-line fit at
   the finest spacing (a centre that averages the scatter); ``error`` = the
   change of that line over a halving of the spacing ``|c1| d_min`` (for
   convergence of order >= 1 the remaining error at ``d_min`` is at most the
   change from ``d_min`` to ``2 d_min``; common practice, no source) plus the
   Student-t half-width of the line's intercept.  A wide bar here says the
   spacings do not resolve the limit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize_scalar
from scipy.stats import t as student_t

from ..errors import InvalidParameterError

__all__ = ["ZeroSpacingEstimate", "estimate_zero_spacing", "extrapolate_to_zero_spacing", "ZERO_SPACING_METHODS"]

#: Values of :attr:`ZeroSpacingEstimate.method`.
ZERO_SPACING_METHODS = ("extrapolated", "bounded")

_ORDER_RANGE = (0.5, 2.1)  # accepted observed orders (Eca & Hoekstra 2014, from memory)
_ORDER_SEARCH = (0.05, 8.0)  # where the observed order is looked for
_OUTLIER_LEVEL = 0.9973  # two-sided "three sigma" prediction level
_GCI_SAFETY = 1.25  # Roache's factor of safety for an observed order


@dataclass(frozen=True)
class ZeroSpacingEstimate:
    """Estimate of an observable at zero lattice spacing.

    Attributes
    ----------
    value : float
        Estimate of the converged value (unit of the input values).
    error : float
        Half-width of a bar meant to bracket the converged value (same unit).
    method : str
        ``"extrapolated"`` (values in the asymptotic regime, extrapolated with
        the observed order) or ``"bounded"`` (not asymptotic: the trend at the
        finest spacing with a bound on the remaining error).
    asymptotic : bool
        Whether the values passed the asymptotic-regime check.
    observed_order : float
        Fitted order ``p`` of ``Q0 + c d^p`` [-]; NaN with two spacings.  A
        value at the search bounds (0.05 or 8) means the values follow no
        power law in ``d``.
    finest_value : float
        Value computed at the finest spacing kept.
    spacings_nm : tuple of float
        Spacings used [nm], ascending (outliers removed).
    outlier_spacings_nm : tuple of float
        Spacings whose values were excluded as off the trend of the others [nm].
    confidence : float
        Confidence level of the Student-t half-widths in ``error`` [-].
    """

    value: float
    error: float
    method: str
    asymptotic: bool
    observed_order: float
    finest_value: float
    spacings_nm: tuple
    outlier_spacings_nm: tuple
    confidence: float

    @property
    def relative_error(self):
        """``error / |value|`` [-] (inf when ``value`` is 0)."""
        return self.error / abs(self.value) if self.value != 0 else float("inf")


def _tq(level, dof):
    # Two-sided Student-t quantile; 0 where no degrees of freedom are left (exact fit).
    return float(student_t.ppf(0.5 + level / 2.0, dof)) if dof > 0 else 0.0


def _line(d, q):
    # Least squares q = a + b d; returns a, b, se(a), se(b), dof.
    v = np.column_stack([np.ones_like(d), d])
    coef, *_ = np.linalg.lstsq(v, q, rcond=None)
    resid = q - v @ coef
    dof = d.size - 2
    if dof <= 0:
        return float(coef[0]), float(coef[1]), 0.0, 0.0, 0
    cov = float(resid @ resid) / dof * np.linalg.inv(v.T @ v)
    return float(coef[0]), float(coef[1]), float(np.sqrt(cov[0, 0])), float(np.sqrt(cov[1, 1])), dof


def _power_fit(d, q):
    # Least squares q = q0 + c d^p, p searched in _ORDER_SEARCH; at fixed p the
    # model is linear in (q0, c).  Returns p, q0, c, se(q0), se(c), dof.
    x = d / d[0]  # scale for conditioning; c is then per (d / d_min)^p

    def solve(p):
        v = np.column_stack([np.ones_like(x), x**p])
        coef, *_ = np.linalg.lstsq(v, q, rcond=None)
        r = q - v @ coef
        return coef, float(r @ r), v

    p = float(minimize_scalar(lambda p: solve(p)[1], bounds=_ORDER_SEARCH, method="bounded", options={"xatol": 1e-6}).x)
    coef, rss, v = solve(p)
    dof = d.size - 3  # q0, c and p fitted
    if dof <= 0:
        return p, float(coef[0]), float(coef[1]), 0.0, 0.0, 0
    cov = rss / dof * np.linalg.inv(v.T @ v)
    return p, float(coef[0]), float(coef[1]), float(np.sqrt(cov[0, 0])), float(np.sqrt(cov[1, 1])), dof


def _outlier(d, q, floor):
    # Index of the one value off the line through the others beyond the
    # three-sigma prediction interval, or None (needs >= 4 others).
    if d.size < 5:
        return None
    best, where = 0.0, None
    for k in range(d.size):
        m = np.arange(d.size) != k
        dm, qm = d[m], q[m]
        a, b, _, _, dof = _line(dm, qm)
        r = q[k] - (a + b * d[k])
        s = float(np.sqrt(np.sum((qm - a - b * dm) ** 2) / dof))
        sxx = float(np.sum((dm - dm.mean()) ** 2))
        scale = max(s, floor) * np.sqrt(1.0 + 1.0 / dm.size + (d[k] - dm.mean()) ** 2 / sxx)
        z = abs(r) / scale if abs(r) > floor else 0.0
        if z > _tq(_OUTLIER_LEVEL, dof) and z > best:
            best, where = z, k
    return where


def estimate_zero_spacing(spacings_nm, values, *, confidence=0.95):
    """Estimate an observable at ``d -> 0`` after checking the asymptotic regime.

    Parameters
    ----------
    spacings_nm : array_like of float, shape (S,)
        Lattice spacings [nm], ``S >= 2``, distinct and > 0.
    values : array_like of float, shape (S,)
        The observable at each spacing (any unit, e.g. ``c_ext_nm2``).
    confidence : float, default 0.95
        Level of the Student-t half-widths that enter the bar [-].

    Returns
    -------
    ZeroSpacingEstimate
        Value, bar, method, the regime check and the spacings used or excluded;
        the decision rule is in the module notes.

    References
    ----------
    Yurkin, Maltsev & Hoekstra, J. Opt. Soc. Am. A 23, 2578 and 2592 (2006);
    Roache, J. Fluids Eng. 116, 405 (1994); Eca & Hoekstra, J. Comput. Phys.
    262, 104 (2014).

    Examples
    --------
    >>> est = estimate_zero_spacing([1.0, 1.25, 1.5, 2.0], [10.3, 10.375, 10.45, 10.6])
    >>> est.method, round(est.value, 6), round(est.observed_order, 3)
    ('extrapolated', 10.0, 1.0)
    """
    d = np.asarray(spacings_nm, dtype=float).reshape(-1)
    q = np.asarray(values, dtype=float).reshape(-1)
    if d.size != q.size:
        raise InvalidParameterError(f"values must be one per spacing ({d.size}); got {q.size}")
    if d.size < 2:
        raise InvalidParameterError(f"spacings_nm must hold at least 2 spacings; got {d.size}")
    if not (np.all(np.isfinite(d)) and np.all(d > 0)):
        raise InvalidParameterError(f"spacings_nm must be finite and > 0 nm; got {d.tolist()}")
    if np.unique(d).size != d.size:
        raise InvalidParameterError(f"spacings_nm must be distinct; got {d.tolist()}")
    if not np.all(np.isfinite(q)):
        raise InvalidParameterError(f"values must be finite; got {q.tolist()}")
    if not 0.0 < confidence < 1.0:
        raise InvalidParameterError(f"confidence must be in (0, 1); got {confidence!r}")
    order = np.argsort(d)
    d, q = d[order], q[order]
    floor = 1e-12 * float(np.max(np.abs(q))) + 1e-300  # rounding level of the values

    # Step 1: outlier screen.
    k = _outlier(d, q, floor)
    outliers = () if k is None else (float(d[k]),)
    if k is not None:
        d, q = np.delete(d, k), np.delete(q, k)

    # Straight line (YMH's first-order term): centre and bound when not asymptotic.
    a_lin, b_lin, se_a_lin, _, dof_lin = _line(d, q)
    p, q0, c, se_q0, se_c, dof_p = float("nan"), float("nan"), 0.0, 0.0, 0.0, 0
    asymptotic = False
    if d.size >= 3:
        # Step 2: observed order and whether the trend stands above the scatter.
        p, q0, c, se_q0, se_c, dof_p = _power_fit(d, q)
        steps = np.diff(q)
        resolved = bool(np.all(steps > 0) or np.all(steps < 0)) if dof_p == 0 else abs(c) > _tq(confidence, dof_p) * se_c
        asymptotic = resolved and _ORDER_RANGE[0] <= p <= _ORDER_RANGE[1]
    common = dict(
        asymptotic=asymptotic, observed_order=p, finest_value=float(q[0]),
        spacings_nm=tuple(float(x) for x in d), outlier_spacings_nm=outliers, confidence=float(confidence),
    )
    if asymptotic:
        # Step 3: fit uncertainty + model choice + Roache's margin on the correction.
        error = _tq(confidence, dof_p) * se_q0 + abs(q0 - a_lin) + (_GCI_SAFETY - 1.0) * abs(c)  # |c| = |Q0 - Q(d_min)| (x scaled)
        return ZeroSpacingEstimate(value=q0, error=float(error), method="extrapolated", **common)
    # Step 4: the line at the finest spacing; its change over a halving bounds the rest.
    centre = a_lin + b_lin * d[0]
    error = abs(b_lin) * d[0] + _tq(confidence, dof_lin) * se_a_lin
    return ZeroSpacingEstimate(value=float(centre), error=float(error), method="bounded", **common)


def extrapolate_to_zero_spacing(spacings_nm, values, *, confidence=0.95):
    """``(value, error)`` of :func:`estimate_zero_spacing` (kept for its callers).

    Parameters
    ----------
    spacings_nm, values, confidence
        As for :func:`estimate_zero_spacing`.

    Returns
    -------
    value, error : float
        :attr:`ZeroSpacingEstimate.value` and :attr:`ZeroSpacingEstimate.error`.

    Examples
    --------
    >>> v, e = extrapolate_to_zero_spacing([1.0, 2.0], [11.0, 12.0])
    >>> round(v, 6), round(e, 6)
    (11.0, 1.0)
    """
    est = estimate_zero_spacing(spacings_nm, values, confidence=confidence)
    return est.value, est.error
