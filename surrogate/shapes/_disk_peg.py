"""Disk-peg near-field transducers: a disk with a rectangular peg on its rim pointing along +x."""

from __future__ import annotations

import numpy as np

from ._family import Parameter
from ._film import FilmFamily, FilmFrame, centred_planes
from ._outline import ARC_POINTS, Dimension, circle
from ._rules import minimum_feature_rule, relation_rule
from ._surroundings import planes

__all__ = ["DiskPeg"]


def disk_peg_area_nm2(diameter_nm, peg_length_nm, peg_width_nm):
    """Area of the union of the disk and the peg [nm^2].

    The peg is the rectangle ``0 <= x <= R + P``, ``|y| <= w / 2`` (R the disk radius,
    P the peg length from the rim); its part inside the disk is the band
    ``|y| <= a``, ``0 <= x <= sqrt(R^2 - y^2)`` (a = w / 2), of area
    ``integral_{-a}^{a} sqrt(R^2 - y^2) dy = a sqrt(R^2 - a^2) + R^2 asin(a / R)``
    (elementary calculus: the area under a circle).  So
    A = pi R^2 + w (R + P) - a sqrt(R^2 - a^2) - R^2 asin(a / R).
    """
    r, a = diameter_nm / 2, peg_width_nm / 2
    return np.pi * r**2 + peg_width_nm * (r + peg_length_nm) - a * np.sqrt(r**2 - a**2) - r**2 * np.arcsin(a / r)


class DiskPeg(FilmFamily):
    """A disk centred on the origin with a peg along +x, the classic transducer layout.

    The peg is ``peg_width_nm`` wide, centred on the x axis, and runs from the disk's
    centre to its tip at ``x = disk_diameter_nm / 2 + peg_length_nm`` (so
    ``peg_length_nm`` is measured from the disk's rim on the axis).  Ideal area: see
    :func:`disk_peg_area_nm2`.

    On the lattice the peg holds ``round(peg_width_nm / d)`` rows centred on the
    axis, and the x planes are shifted so that the peg's tip surface (last dipole
    plane + d/2) lies exactly at the ideal tip; the disk is sampled by the centre
    test.  Hotspot: ``hotspot_offset_nm`` beyond the tip surface on the axis.  A
    medium layer, if any, faces the peg tip across x.

    Parameters
    ----------
    min_feature_nm : float
        Minimum feature [nm], default 10.
    min_gap_nm : float
        Minimum gap [nm], default 5 (unused by the disk-peg).

    Examples
    --------
    >>> from surrogate.shapes import get_family
    >>> nft = get_family("disk-peg")
    >>> p = {"disk_diameter_nm": 100, "peg_length_nm": 30, "peg_width_nm": 20, "thickness_nm": 20}
    >>> nft.hotspot_nm(p, 2.0, hotspot_offset_nm=5.0).tolist()  # 50 + 30 + 5 nm along x
    [85.0, 0.0, 0.0]
    >>> nft.bounding_grid_shape(p, 2.0), nft.site_count(p, 2.0)
    ((65, 50, 10), 21260)
    """

    name = "disk-peg"
    description = "a disk with a rectangular peg on its rim pointing along x (the near-field transducer)"
    parameters = (
        Parameter("disk_diameter_nm", "nm", 1.0, 2000.0, "disk diameter [nm]"),
        Parameter("peg_length_nm", "nm", 1.0, 1000.0, "peg length along x, from the disk rim to the tip [nm]"),
        Parameter("peg_width_nm", "nm", 1.0, 500.0, "peg width along y [nm]"),
        Parameter("thickness_nm", "nm", 1.0, 500.0, "film thickness along z [nm]"),
    )
    hotspot_definition = "hotspot_offset_nm beyond the discretised peg tip (last dipole plane + d/2), on the x axis"
    mirror_axes = (1, 2)

    def _make_rules(self):
        return (
            minimum_feature_rule(("disk_diameter_nm", "peg_length_nm", "peg_width_nm", "thickness_nm"), self.min_feature_nm),
            relation_rule(
                "peg-narrower-than-disk",
                "peg_width_nm",
                "peg_width_nm < disk_diameter_nm",
                lambda p: (p["peg_width_nm"] < p["disk_diameter_nm"], f"< disk_diameter_nm = {p['disk_diameter_nm']:g} nm"),
                reads=("disk_diameter_nm",),
            ),
        )

    def ideal_area_nm2(self, params):
        return disk_peg_area_nm2(params["disk_diameter_nm"], params["peg_length_nm"], params["peg_width_nm"])

    def _ideal_box_nm(self, params):
        r = params["disk_diameter_nm"] / 2
        return -r, r + params["peg_length_nm"], r

    def _frame(self, params, d):
        r = params["disk_diameter_nm"] / 2
        x_tip = r + params["peg_length_nm"]
        u = x_tip / d - 0.5
        i_tip = int(np.floor(u + 1e-9))
        cx = max(u - i_tip, 0.0)
        ny = planes(params["peg_width_nm"], d)
        _, _, cy = centred_planes(ny)
        j = int(np.ceil(r / d)) + 1
        z_range, cz = self._z_frame(params, d)
        x_lo = int(np.floor(-r / d - cx)) - 1
        realised = {
            "disk_diameter_nm": params["disk_diameter_nm"],
            "peg_length_nm": (i_tip + cx + 0.5) * d - r,
            "peg_width_nm": ny * d,
            "thickness_nm": (z_range[1] - z_range[0] + 1) * d,
        }
        return FilmFrame((cx, cy, cz), (x_lo, i_tip), (-j - 1, j + 1), z_range, x_tip, realised)

    def _half_width_nm(self, params, frame, x_nm, d):
        r = params["disk_diameter_nm"] / 2
        disk = np.where(np.abs(x_nm) <= r, np.sqrt(np.clip(r**2 - x_nm**2, 0.0, None)), -np.inf)
        peg = np.where((x_nm >= 0) & (x_nm < frame.anchor_x_nm), frame.realised["peg_width_nm"] / 2, -np.inf)
        return np.maximum(disk, peg)

    def _antenna_parts(self, params, frame, x_nm, y_nm):
        # The peg is what stands out of the disk: columns outside the disk's circle.
        r = params["disk_diameter_nm"] / 2
        outside = np.hypot(x_nm, y_nm) > r
        return ("disk", "peg"), outside.astype(np.int64)

    def _top_polygons(self, params):
        r, a = params["disk_diameter_nm"] / 2, params["peg_width_nm"] / 2
        x_tip = r + params["peg_length_nm"]
        phi = np.arctan2(a, np.sqrt(r**2 - a**2))
        arc = circle(0.0, 0.0, r, start_rad=phi, stop_rad=2 * np.pi - phi, n=4 * ARC_POINTS + 1, endpoint=True)
        return (("antenna", np.concatenate([[[x_tip, -a], [x_tip, a]], arc])),)

    def _side_spans(self, params):
        r = params["disk_diameter_nm"] / 2
        return ((-r, r + params["peg_length_nm"]),)

    def _dimensions(self, params):
        r, a, t = params["disk_diameter_nm"] / 2, params["peg_width_nm"] / 2, params["thickness_nm"] / 2
        x_tip = r + params["peg_length_nm"]
        return (
            Dimension("disk_diameter_nm", "top", (-r, 0.0), (r, 0.0)),
            Dimension("peg_length_nm", "top", (r, -a), (x_tip, -a)),
            Dimension("peg_width_nm", "top", (x_tip, -a), (x_tip, a)),
            Dimension("thickness_nm", "side", (-r, -t), (-r, t)),
        )
