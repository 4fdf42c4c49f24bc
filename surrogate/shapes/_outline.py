"""Outlines of the ideal (continuous) shapes, for drawings made elsewhere.

A family's outline is a set of closed polygons in a top view (x-y plane,
looking down -z) and a side view (x-z plane, looking along +y), plus the
dimension lines that label its parameters.  Nothing here draws.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Outline", "Dimension", "rectangle", "circle", "rounded_rectangle"]

#: Points per quarter circle in outline polygons.
ARC_POINTS = 16


def _frozen(arr):
    a = np.array(arr, dtype=float)
    a.setflags(write=False)
    return a


@dataclass(frozen=True)
class Dimension:
    """A dimension line for one parameter.

    Attributes
    ----------
    parameter : str
        Parameter name, e.g. ``"gap_nm"``.
    view : {"top", "side"}
    start_nm, end_nm : tuple of float
        End points in the view's coordinates [nm] ((x, y) for top, (x, z) for side).
    """

    parameter: str
    view: str
    start_nm: tuple
    end_nm: tuple


@dataclass(frozen=True, eq=False)
class Outline:
    """Polygons of a family's ideal shape.

    Attributes
    ----------
    top : tuple of (str, ndarray of shape (K, 2))
        Region name and closed polygon (last point not repeated) in the x-y plane [nm].
    side : tuple of (str, ndarray of shape (K, 2))
        Region name and polygon in the x-z plane [nm].
    dimensions : tuple of Dimension
        Where to label each parameter.
    hotspot_nm : tuple of float
        The ideal hotspot point (x, y, z) [nm] for the default offset.
    """

    top: tuple
    side: tuple
    dimensions: tuple
    hotspot_nm: tuple

    def __post_init__(self):
        object.__setattr__(self, "top", tuple((r, _frozen(p)) for r, p in self.top))
        object.__setattr__(self, "side", tuple((r, _frozen(p)) for r, p in self.side))
        object.__setattr__(self, "dimensions", tuple(self.dimensions))
        object.__setattr__(self, "hotspot_nm", tuple(float(v) for v in self.hotspot_nm))


def rectangle(x0, x1, y0, y1):
    """Corners of an axis-aligned rectangle, counter-clockwise, shape (4, 2)."""
    return np.array([[x0, y0], [x1, y0], [x1, y1], [x0, y1]], dtype=float)


def circle(cx, cy, radius, *, start_rad=0.0, stop_rad=2 * np.pi, n=4 * ARC_POINTS, endpoint=False):
    """Points on a circular arc, counter-clockwise from ``start_rad`` to ``stop_rad``, shape (n, 2)."""
    t = np.linspace(start_rad, stop_rad, n, endpoint=endpoint)
    return np.stack([cx + radius * np.cos(t), cy + radius * np.sin(t)], axis=1)


def rounded_rectangle(half_x, half_y, radius):
    """A rectangle centred on the origin with corners rounded by ``radius``, counter-clockwise."""
    if radius <= 0:
        return rectangle(-half_x, half_x, -half_y, half_y)
    pts = []
    for k, (sx, sy) in enumerate(((1, 1), (-1, 1), (-1, -1), (1, -1))):
        cx, cy = sx * (half_x - radius), sy * (half_y - radius)
        a0 = k * np.pi / 2
        pts.append(circle(cx, cy, radius, start_rad=a0, stop_rad=a0 + np.pi / 2, n=ARC_POINTS + 1, endpoint=True))
    return np.concatenate(pts)
