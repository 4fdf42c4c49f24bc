"""Rods: a bar with optionally rounded ends, the simplest dipole antenna."""

from __future__ import annotations

import numpy as np

from ._film import FilmFamily, FilmFrame, centred_planes
from ._family import Parameter
from ._outline import Dimension, rounded_rectangle
from ._rules import minimum_feature_rule, relation_rule
from ._surroundings import planes

__all__ = ["Rod"]


class Rod(FilmFamily):
    """A bar along x with rounded corners in the x-y plane, centred on the origin.

    The footprint is a rectangle ``length_nm`` by ``width_nm`` whose four corners
    are rounded with radius ``end_radius_nm``; ``end_radius_nm = width_nm / 2``
    gives semicircular ends (a stadium), ``0`` a square bar.  Ideal area (elementary
    geometry: each rounded corner removes a square r^2 less a quarter disc pi r^2 / 4)::

        A = L W - (4 - pi) r^2

    On the lattice the bar holds ``round(L / d)`` by ``round(W / d)`` by
    ``round(T / d)`` planes (rounded half up), centred on the origin; the corner
    arcs are cut from that realised rectangle (radius capped at its half width).
    Hotspot: ``hotspot_offset_nm`` beyond the discretised +x end, on the axis.

    Parameters
    ----------
    min_feature_nm : float
        Minimum feature [nm], default 10.
    min_gap_nm : float
        Minimum gap [nm], default 5 (unused by the rod).

    Examples
    --------
    >>> from surrogate.shapes import get_family
    >>> rod = get_family("rod")
    >>> for rule, message in rod.violated_rules({"length_nm": 80, "width_nm": 30, "thickness_nm": 8, "end_radius_nm": 20}):
    ...     print(message)
    thickness_nm must be >= 10 nm (rule minimum-feature); got 8.0
    end_radius_nm must be <= width_nm / 2 = 15 nm (rule end-radius-fits-width); got 20.0
    """

    name = "rod"
    description = "a bar along x with optionally rounded ends (the dipole antenna)"
    parameters = (
        Parameter("length_nm", "nm", 1.0, 2000.0, "length along x, end to end [nm]"),
        Parameter("width_nm", "nm", 1.0, 500.0, "width along y [nm]"),
        Parameter("thickness_nm", "nm", 1.0, 500.0, "film thickness along z [nm]"),
        Parameter("end_radius_nm", "nm", 0.0, 250.0, "radius of the rounded corners in x-y; 0 = square bar [nm]", "radius"),
    )
    mirror_axes = (0, 1, 2)

    def _make_rules(self):
        return (
            minimum_feature_rule(("length_nm", "width_nm", "thickness_nm"), self.min_feature_nm),
            relation_rule(
                "long-axis-along-x",
                "length_nm",
                "length_nm >= width_nm (the long axis is x)",
                lambda p: (p["length_nm"] >= p["width_nm"], f">= width_nm = {p['width_nm']:g} nm"),
                reads=("width_nm",),
            ),
            relation_rule(
                "end-radius-fits-width",
                "end_radius_nm",
                "end_radius_nm <= width_nm / 2 (semicircular ends at most)",
                lambda p: (p["end_radius_nm"] <= p["width_nm"] / 2, f"<= width_nm / 2 = {p['width_nm'] / 2:g} nm"),
                reads=("width_nm",),
            ),
        )

    def ideal_area_nm2(self, params):
        r = params["end_radius_nm"]
        return params["length_nm"] * params["width_nm"] - (4 - np.pi) * r**2

    def _ideal_box_nm(self, params):
        return -params["length_nm"] / 2, params["length_nm"] / 2, params["width_nm"] / 2

    def _frame(self, params, d):
        nx, ny = planes(params["length_nm"], d), planes(params["width_nm"], d)
        x_lo, x_hi, cx = centred_planes(nx)
        y_lo, y_hi, cy = centred_planes(ny)
        z_range, cz = self._z_frame(params, d)
        a, b = nx * d / 2, ny * d / 2
        realised = {
            "length_nm": nx * d,
            "width_nm": ny * d,
            "thickness_nm": (z_range[1] - z_range[0] + 1) * d,
            "end_radius_nm": min(params["end_radius_nm"], a, b),
        }
        return FilmFrame((cx, cy, cz), (x_lo, x_hi), (y_lo, y_hi), z_range, a, realised)

    def _half_width_nm(self, params, frame, x_nm, d):
        a, b = frame.realised["length_nm"] / 2, frame.realised["width_nm"] / 2
        r = frame.realised["end_radius_nm"]
        u = np.abs(x_nm) - (a - r)  # distance past the start of the corner arcs
        h = np.full(x_nm.shape, b, dtype=float)
        arc = u > 0
        h[arc] = b - r + np.sqrt(np.clip(r**2 - u[arc] ** 2, 0.0, None))
        h[u > r * (1 + 1e-12) + 1e-12 * d] = -np.inf
        return h

    def _top_polygons(self, params):
        return (("antenna", rounded_rectangle(params["length_nm"] / 2, params["width_nm"] / 2, params["end_radius_nm"])),)

    def _side_spans(self, params):
        return ((-params["length_nm"] / 2, params["length_nm"] / 2),)

    def _dimensions(self, params):
        a, b, t = params["length_nm"] / 2, params["width_nm"] / 2, params["thickness_nm"] / 2
        r = params["end_radius_nm"]
        return (
            Dimension("length_nm", "top", (-a, -b), (a, -b)),
            Dimension("width_nm", "top", (0.0, -b), (0.0, b)),
            Dimension("end_radius_nm", "top", (a - r, b - r), (a - r + r / np.sqrt(2), b - r + r / np.sqrt(2))),
            Dimension("thickness_nm", "side", (-a, -t), (-a, t)),
        )
