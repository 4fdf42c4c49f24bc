"""Rectangular boxes (bars) on a cubic lattice."""

from __future__ import annotations

import numpy as np

from ._family import Parameter, ShapeFamily, ShapeSites, centred_axis
from ._outline import Dimension, Outline, rectangle

__all__ = ["Box"]


class Box(ShapeFamily):
    """A rectangular box centred on the origin, long axis along x, thickness along z.

    Each side of length L holds ``max(1, round(L / d))`` lattice planes, so the
    discretised box measures a whole number of spacings; the realised sides
    are ``counts * d`` (reported by :meth:`realised_sides_nm`).  The spacing is
    not rescaled.
    """

    name = "box"
    description = "a rectangular bar (length along x, width along y, thickness along z)"
    parameters = (
        Parameter("length_nm", "nm", 2.0, 1000.0, "length along x [nm]"),
        Parameter("width_nm", "nm", 2.0, 1000.0, "width along y [nm]"),
        Parameter("thickness_nm", "nm", 2.0, 500.0, "thickness along z [nm]"),
    )

    @staticmethod
    def counts(params, spacing_nm):
        sides = (params["length_nm"], params["width_nm"], params["thickness_nm"])
        return tuple(max(1, int(round(s / spacing_nm))) for s in sides)

    def realised_sides_nm(self, params, spacing_nm):
        """Sides of the discretised box [nm]: whole numbers of spacings."""
        return tuple(c * spacing_nm for c in self.counts(self.validate(params), spacing_nm))

    def ideal_volume_nm3(self, params):
        return params["length_nm"] * params["width_nm"] * params["thickness_nm"]

    def _bounding_grid_shape(self, params, spacing_nm):
        return self.counts(params, spacing_nm)

    def _realised(self, params, spacing_nm):
        c = self.counts(params, spacing_nm)
        return {"length_nm": c[0] * spacing_nm, "width_nm": c[1] * spacing_nm, "thickness_nm": c[2] * spacing_nm}

    def drawing_outline(self, params, *, substrate=None, medium_layer=None):
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        hx, hy, hz = clean["length_nm"] / 2, clean["width_nm"] / 2, clean["thickness_nm"] / 2
        dims = (
            Dimension("length_nm", "top", (-hx, -hy), (hx, -hy)),
            Dimension("width_nm", "top", (-hx, -hy), (-hx, hy)),
            Dimension("thickness_nm", "side", (-hx, -hz), (-hx, hz)),
        )
        return Outline(
            top=(("antenna", rectangle(-hx, hx, -hy, hy)),),
            side=(("antenna", rectangle(-hx, hx, -hz, hz)),),
            dimensions=dims,
            hotspot_nm=(hx + self.default_hotspot_offset_nm, 0.0, 0.0),
        )

    def _sites(self, params, spacing_nm):
        counts = self.counts(params, spacing_nm)
        axes = [centred_axis(c) for c in counts]
        grids = np.meshgrid(*(a for a, _ in axes), indexing="ij")
        idx = np.stack([g.ravel() for g in grids], axis=1)
        origin = np.array([off for _, off in axes]) * spacing_nm
        volume = params["length_nm"] * params["width_nm"] * params["thickness_nm"]
        return ShapeSites(idx, spacing_nm, origin, np.zeros(idx.shape[0], dtype=np.int64), ("antenna",), volume)
