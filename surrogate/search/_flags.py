"""Trust flags: why a predicted design needs a full re-simulation before anyone relies on it.

Flags (each with a one-line reason naming the value and the threshold):

``uncertain`` (per target)
    The central predictive interval at ``coverage`` is wide: for ``resonance_nm`` when
    it is wider than the full laser window (2 x window_nm: the surrogate cannot tell
    whether the resonance is in the window); for every other target when
    ``(upper - lower) / |median| > uncertain_fraction``.
``extrapolated``
    A parameter lies outside the bounds the training designs were sampled in, or the
    nearest training design is farther, in the unit cube of the sampled bounds, than
    ``extrapolation_factor`` times the typical spacing (the median nearest-neighbour
    distance among the training designs).
``near-edge``
    A parameter lies within ``edge_fraction`` of its range from a bound of the searched
    space (optima on a bound often mean the space is too small).
``sensitive``
    Under the length tolerance (:mod:`._robust`) the resonance leaves the laser window
    in more than ``sensitive_fraction`` of the Monte Carlo samples.

Defaults are our choices, stated in :class:`TrustSettings` (common practice, no source).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from .._validation import check_real

__all__ = ["FLAGS", "TrustSettings", "nearest_distances", "typical_spacing", "trust_flags"]

#: The flag names, in the order they are listed.
FLAGS = ("uncertain", "extrapolated", "near-edge", "sensitive")


@dataclass(frozen=True)
class TrustSettings:
    """Thresholds of the trust flags (see the module docstring).

    Attributes
    ----------
    coverage : float, default 0.95
        Probability of the central predictive interval [-].
    uncertain_fraction : float, default 0.5
        Largest interval width relative to the median [-] (targets other than resonance_nm).
    extrapolation_factor : float, default 2.0
        Largest distance to the nearest training design, in typical spacings [-].
    edge_fraction : float, default 0.01
        Distance to a bound, as a fraction of the parameter's range, that counts as on it [-].
    sensitive_fraction : float, default 0.2
        Largest fraction of Monte Carlo samples with the resonance out of the window [-].
    """

    coverage: float = 0.95
    uncertain_fraction: float = 0.5
    extrapolation_factor: float = 2.0
    edge_fraction: float = 0.01
    sensitive_fraction: float = 0.2

    def __post_init__(self):
        check_real("coverage", self.coverage, low=0.0, high=1.0, low_open=True, high_open=True)
        check_real("uncertain_fraction", self.uncertain_fraction, low=0.0, low_open=True)
        check_real("extrapolation_factor", self.extrapolation_factor, low=0.0, low_open=True)
        check_real("edge_fraction", self.edge_fraction, low=0.0, high=0.5)
        check_real("sensitive_fraction", self.sensitive_fraction, low=0.0, high=1.0)

    def to_dict(self):
        return asdict(self)


def nearest_distances(points, reference, *, exclude_self=False, chunk=4096):
    """Euclidean distance from each row of ``points`` (n, d) to its nearest row of ``reference`` (m, d)."""
    points = np.asarray(points, dtype=float)
    reference = np.asarray(reference, dtype=float)
    out = np.empty(len(points))
    for a in range(0, len(points), chunk):
        p = points[a:a + chunk]
        d2 = ((p[:, None, :] - reference[None, :, :]) ** 2).sum(axis=2)
        if exclude_self:
            rows = np.arange(len(p))
            d2[rows, a + rows] = np.inf
        out[a:a + chunk] = np.sqrt(d2.min(axis=1))
    return out


def typical_spacing(train_unit):
    """Median nearest-neighbour distance among training designs (unit cube) [-]."""
    train_unit = np.asarray(train_unit, dtype=float)
    if len(train_unit) < 2:
        return float("nan")
    return float(np.median(nearest_distances(train_unit, train_unit, exclude_self=True)))


def _g(v):
    return f"{v:.4g}"


def trust_flags(params, names, summary, *, transforms, train_unit, sampled_bounds, space, units=None,
                robust=None, window_nm=None, laser_nm=None, n_mc_samples=None, length_sigma_nm=None,
                settings=TrustSettings()):
    """Flags with reasons for each design.

    Parameters
    ----------
    params : ndarray, shape (n, d)
        Designs, columns ``names`` [their units].
    names : sequence of str
    summary : pandas.DataFrame
        ``<target>_median``, ``_lower``, ``_upper`` per target at ``settings.coverage``.
    transforms : dict
        Target -> transform (the targets checked for ``uncertain``).
    train_unit : ndarray, shape (m, d)
        Training designs in the unit cube of ``sampled_bounds``.
    sampled_bounds, space : dict
        Name -> (low, high): the bounds the training designs were sampled in, and the
        searched space.
    units : dict or None
        Name -> unit for messages (default: none).
    robust : pandas.DataFrame or None
        :func:`surrogate.search.robustness` output (for ``sensitive``).
    window_nm, laser_nm : float or None
    n_mc_samples, length_sigma_nm : for the ``sensitive`` message.
    settings : TrustSettings

    Returns
    -------
    list of list of dict
        Per design, ``{"flag", "target", "reason"}`` dicts (``target`` None when the
        flag concerns the whole design), in :data:`FLAGS` order.
    """
    params = np.asarray(params, dtype=float).reshape(-1, len(names))
    units = units or {}
    n = params.shape[0]
    lows = np.array([sampled_bounds[k][0] for k in names])
    highs = np.array([sampled_bounds[k][1] for k in names])
    unit = (params - lows) / (highs - lows)
    spacing = typical_spacing(train_unit)
    dist = nearest_distances(unit, train_unit) if len(train_unit) else np.full(n, np.inf)
    pct = round(settings.coverage * 100, 3)
    out = []
    for i in range(n):
        flags = []
        for t in transforms:
            med, lo, hi = (float(summary[f"{t}_{p}"].iloc[i]) for p in ("median", "lower", "upper"))
            width = hi - lo
            if t == "resonance_nm" and window_nm is not None:
                if width > 2 * window_nm:
                    flags.append({"flag": "uncertain", "target": t, "reason":
                                  f"resonance_nm {pct:g} % interval is {_g(width)} nm wide, wider than the laser window "
                                  f"({_g(2 * window_nm)} nm)"})
            elif med != 0 and width / abs(med) > settings.uncertain_fraction:
                flags.append({"flag": "uncertain", "target": t, "reason":
                              f"{t} {pct:g} % interval [{_g(lo)}, {_g(hi)}] spans {width / abs(med):.2f} of the median "
                              f"{_g(med)} (threshold {settings.uncertain_fraction:g})"})
        outside = [(k, params[i, j]) for j, k in enumerate(names)
                   if params[i, j] < lows[j] - 1e-9 * (highs[j] - lows[j]) or params[i, j] > highs[j] + 1e-9 * (highs[j] - lows[j])]
        for k, v in outside:
            u = f" {units[k]}" if k in units else ""
            flags.append({"flag": "extrapolated", "target": None, "reason":
                          f"{k} = {_g(v)}{u} is outside the sampled [{_g(sampled_bounds[k][0])}, "
                          f"{_g(sampled_bounds[k][1])}]{u}"})
        if not outside and np.isfinite(spacing) and dist[i] > settings.extrapolation_factor * spacing:
            flags.append({"flag": "extrapolated", "target": None, "reason":
                          f"nearest training design is {dist[i]:.3f} away in the unit cube, {dist[i] / spacing:.1f}x the "
                          f"typical spacing {spacing:.3f} (threshold {settings.extrapolation_factor:g}x)"})
        for j, k in enumerate(names):
            lo, hi = space[k]
            tol = settings.edge_fraction * (hi - lo)
            u = f" {units[k]}" if k in units else ""
            for bound, side in ((lo, "lower"), (hi, "upper")):
                if abs(params[i, j] - bound) <= tol:
                    flags.append({"flag": "near-edge", "target": None, "reason":
                                  f"{k} = {_g(params[i, j])}{u} is within {settings.edge_fraction:.0%} of the range from "
                                  f"the {side} bound {_g(bound)}{u}"})
        if robust is not None and window_nm is not None:
            frac = float(robust["outside_window_fraction"].iloc[i])
            if np.isfinite(frac) and frac > settings.sensitive_fraction:
                tail = f" of {n_mc_samples} Monte Carlo samples" if n_mc_samples else " of the Monte Carlo samples"
                tol_txt = f", sigma {length_sigma_nm:g} nm on every length" if length_sigma_nm is not None else ""
                flags.append({"flag": "sensitive", "target": None, "reason":
                              f"resonance leaves the {_g(laser_nm) + ' nm -+ ' if laser_nm else '-+'}{_g(window_nm)} nm "
                              f"window in {frac:.0%}{tail}{tol_txt} (threshold {settings.sensitive_fraction:.0%})"})
        flags.sort(key=lambda f: FLAGS.index(f["flag"]))
        out.append(flags)
    return out
