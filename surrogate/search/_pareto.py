"""Non-dominated filtering and the hypervolume indicator (every objective minimised).

References
----------
K. Deb, Multi-Objective Optimization using Evolutionary Algorithms (Wiley, 2001),
sec. 2.4 (dominance).  E. Zitzler and L. Thiele, IEEE Trans. Evol. Comput. 3, 257
(1999) (the hypervolume, "size of the space covered").  The exact computation slices
the space along the last objective (hypervolume by slicing objectives: L. While,
P. Hingston, L. Barone and S. Huband, IEEE Trans. Evol. Comput. 10, 29 (2006)).
"""

from __future__ import annotations

import numpy as np

from ..errors import InvalidParameterError

__all__ = ["pareto_mask", "hypervolume"]


def pareto_mask(values):
    """Mask of the non-dominated rows of ``values`` (all objectives minimised).

    Parameters
    ----------
    values : array_like, shape (n, m)
        Objective values; a row dominates another when it is no worse in every
        objective and better in at least one.  Duplicated rows are all kept.

    Returns
    -------
    ndarray of bool, shape (n,)

    Examples
    --------
    >>> pareto_mask([[1, 2], [2, 1], [2, 2]]).tolist()
    [True, True, False]
    """
    f = np.asarray(values, dtype=float)
    if f.ndim != 2:
        raise InvalidParameterError(f"values must be a 2-D array (points x objectives); got shape {f.shape}")
    n = f.shape[0]
    keep = np.ones(n, dtype=bool)
    order = np.lexsort(f.T[::-1])  # sorted by the first objective, ties by the next
    for pos, i in enumerate(order):
        if not keep[i]:
            continue
        rest = order[pos + 1 :]
        rest = rest[keep[rest]]
        if rest.size == 0:
            continue
        dominated = np.all(f[rest] >= f[i], axis=1) & np.any(f[rest] > f[i], axis=1)
        keep[rest[dominated]] = False
    return keep


def _hv2d(points, ref):
    pts = points[np.argsort(points[:, 0])]
    area, best_y = 0.0, ref[1]
    for x, y in pts:
        if y < best_y:
            area += (ref[0] - x) * (best_y - y)
            best_y = y
    return area


def _hv(points, ref):
    m = points.shape[1]
    if points.shape[0] == 0:
        return 0.0
    if m == 1:
        return float(ref[0] - points[:, 0].min())
    if m == 2:
        return _hv2d(points, ref)
    pts = points[np.argsort(points[:, -1])]
    total = 0.0
    for i in range(pts.shape[0]):
        upper = pts[i + 1, -1] if i + 1 < pts.shape[0] else ref[-1]
        depth = upper - pts[i, -1]
        if depth > 0:
            front = pts[: i + 1, :-1]
            front = front[pareto_mask(front)]
            total += depth * _hv(front, ref[:-1])
    return total


def hypervolume(values, reference):
    """Hypervolume dominated by ``values`` and bounded by ``reference`` (minimisation).

    Parameters
    ----------
    values : array_like, shape (n, m)
    reference : array_like, shape (m,)
        The reference point; points not strictly better than it in every
        objective contribute nothing.

    Returns
    -------
    float

    Examples
    --------
    >>> hypervolume([[1, 2], [2, 1]], [3, 3])
    3.0
    """
    f = np.asarray(values, dtype=float).reshape(-1, np.size(reference))
    ref = np.asarray(reference, dtype=float)
    if not np.all(np.isfinite(ref)):
        raise InvalidParameterError(f"reference must be finite; got {ref.tolist()}")
    f = f[np.all(f < ref, axis=1) & np.all(np.isfinite(f), axis=1)]
    if f.shape[0] == 0:
        return 0.0
    f = f[pareto_mask(f)]
    return float(_hv(f, ref))
