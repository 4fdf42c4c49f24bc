"""Film antennas: a footprint in the x-y plane extruded through the film thickness along z.

Every film family describes its footprint column by column: on the lattice
plane at x, the footprint holds the rows with ``|y| <= h(x)`` (all four film
families are mirror-symmetric in y and convex along y).  A site is occupied
when its centre lies inside the ideal footprint (the centre test), so:

- straight edges that are whole numbers of spacings are exact (dipole count =
  volume / d^3);
- curved edges converge as d falls (the error is that of counting lattice
  points in a region, which shrinks with d).

Lattice placement: coordinates along each axis are ``(i + c) d`` with integer
``i``; every family chooses ``c`` so that its straight edges, its gap and its
tip surface fall on cell faces (half-way between planes).  Lengths become
``round(L / d)`` planes, rounded half up.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from .._validation import check_real
from ..errors import InvalidParameterError
from ._family import ShapeFamily, ShapeSites
from ._outline import Outline, rectangle
from ._surroundings import box_indices, place_slabs, planes

__all__ = ["FilmFamily", "FilmFrame", "centred_planes"]

#: Relative tolerance of the centre test (sites exactly on an edge count as inside).
_EDGE_TOL = 1e-9


def centred_planes(count):
    """Index range and offset of ``count`` planes centred on 0.

    Returns
    -------
    lo, hi : int
        Inclusive index range.
    c : float
        Offset in spacings: plane ``i`` lies at ``(i + c) d`` [-].
    """
    if count % 2:
        h = (count - 1) // 2
        return -h, h, 0.0
    return -(count // 2), count // 2 - 1, 0.5


@dataclass(frozen=True)
class FilmFrame:
    """How one film family sits on the lattice for given parameters and spacing.

    Attributes
    ----------
    offset_cells : tuple of float
        ``(cx, cy, cz)``: plane ``i`` along an axis lies at ``(i + c) d`` [-].
    x_range, y_range : tuple of int
        Inclusive candidate index ranges of the footprint (at least its extent).
    z_range : tuple of int
        Inclusive index range of the film's planes.
    anchor_x_nm : float
        The discretised tip surface (tip families) or gap centre (gap families) [nm].
    realised : dict
        Realised antenna dimensions [nm], unit-suffixed keys.
    """

    offset_cells: tuple
    x_range: tuple
    y_range: tuple
    z_range: tuple
    anchor_x_nm: float
    realised: dict = field(default_factory=dict)


@dataclass(frozen=True, eq=False)
class _Layout:
    frame: FilmFrame
    xi: np.ndarray
    yj: np.ndarray
    mask: np.ndarray
    lo: tuple
    hi: tuple
    boxes: tuple
    slabs_realised: dict


class FilmFamily(ShapeFamily):
    """Base of the film families (rod, gap-dimer, bowtie, disk-peg).

    Parameters
    ----------
    min_feature_nm : float
        Minimum feature of the patterning process [nm], default 10.
    min_gap_nm : float
        Minimum gap [nm], default 5.
    """

    supports_surroundings = True
    #: Axis along which a medium layer faces the hotspot (0: beyond the tip along +x, 2: above the film).
    facing_axis = 0

    def __init__(self, *, min_feature_nm=10.0, min_gap_nm=5.0):
        self._min_feature_nm = check_real("min_feature_nm", min_feature_nm, low=0.0, high=1000.0, unit="nm")
        self._min_gap_nm = check_real("min_gap_nm", min_gap_nm, low=0.0, high=1000.0, unit="nm")
        self._rules = tuple(self._make_rules())

    @property
    def min_feature_nm(self):
        return self._min_feature_nm

    @property
    def min_gap_nm(self):
        return self._min_gap_nm

    @property
    def rules(self):
        return self._rules

    # ---- what each family supplies -------------------------------------------------
    def _make_rules(self):
        raise NotImplementedError

    def _frame(self, params, spacing_nm) -> FilmFrame:
        raise NotImplementedError

    def _half_width_nm(self, params, frame, x_nm, spacing_nm):
        """Half-width h(x) of the footprint on each plane [nm]; ``-inf`` where empty."""
        raise NotImplementedError

    def ideal_area_nm2(self, params):
        """Area of the ideal footprint [nm^2]."""
        raise NotImplementedError

    def _ideal_box_nm(self, params):
        """``(x0, x1, half_y)`` of the ideal footprint [nm]."""
        raise NotImplementedError

    def _top_polygons(self, params):
        raise NotImplementedError

    def _side_spans(self, params):
        """x intervals of the film in the side view [nm]."""
        raise NotImplementedError

    def _dimensions(self, params):
        return ()

    # ---- shared machinery -----------------------------------------------------------
    def ideal_volume_nm3(self, params):
        return self.ideal_area_nm2(params) * params["thickness_nm"]

    def _check_spacing(self, clean, spacing_nm):
        d = super()._check_spacing(clean, spacing_nm)
        for p in self.parameters:
            if p.role == "gap" and planes(clean[p.name], d) < 1:
                raise InvalidParameterError(
                    f"spacing_nm must be at most 2 {p.name} = {2 * clean[p.name]:g} nm so the gap holds one empty plane; got {d:g}"
                )
        return d

    def _check_surroundings(self, clean, substrate, medium_layer):
        super()._check_surroundings(clean, substrate, medium_layer)
        if substrate is not None:
            x0, x1, hy = self._ideal_box_nm(clean)
            need = max(x1 - x0, 2 * hy)
            if substrate.lateral_size_nm < need * (1 - 1e-12):
                raise InvalidParameterError(
                    f"substrate lateral_size_nm must be >= the {self.name}'s footprint ({need:g} nm); "
                    f"got {substrate.lateral_size_nm!r}"
                )

    def _z_frame(self, params, spacing_nm):
        lo, hi, c = centred_planes(planes(params["thickness_nm"], spacing_nm))
        return (lo, hi), c

    def _layout(self, params, d, substrate=None, medium_layer=None):
        f = self._frame(params, d)
        xi = np.arange(f.x_range[0], f.x_range[1] + 1)
        yj = np.arange(f.y_range[0], f.y_range[1] + 1)
        x = (xi + f.offset_cells[0]) * d
        y = (yj + f.offset_cells[1]) * d
        h = self._half_width_nm(params, f, x, d)
        mask = np.abs(y)[None, :] <= h[:, None] + _EDGE_TOL * d
        cols = np.flatnonzero(mask.any(axis=1))
        rows = np.flatnonzero(mask.any(axis=0))
        lo = (int(xi[cols[0]]), int(yj[rows[0]]), int(f.z_range[0]))
        hi = (int(xi[cols[-1]]), int(yj[rows[-1]]), int(f.z_range[1]))
        boxes, realised = place_slabs(lo, hi, d, facing_axis=self.facing_axis, substrate=substrate, medium_layer=medium_layer)
        return _Layout(f, xi, yj, mask, lo, hi, boxes, realised)

    def _sites(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        d = spacing_nm
        lay = self._layout(params, d, substrate, medium_layer)
        ii, jj = np.nonzero(lay.mask)
        zk = np.arange(lay.lo[2], lay.hi[2] + 1)
        xy = np.stack([lay.xi[ii], lay.yj[jj]], axis=1)
        idx = np.concatenate([np.repeat(xy, zk.size, axis=0), np.tile(zk, xy.shape[0])[:, None]], axis=1)
        x_nm = (lay.xi[ii] + lay.frame.offset_cells[0]) * d
        y_nm = (lay.yj[jj] + lay.frame.offset_cells[1]) * d
        antenna_parts, column_part = self._antenna_parts(params, lay.frame, x_nm, y_nm)
        blocks, regions = [idx.astype(np.int64)], [np.zeros(idx.shape[0], dtype=np.int64)]
        part = [np.repeat(np.asarray(column_part, dtype=np.int64), zk.size)]
        for k, box in enumerate(lay.boxes, start=1):
            b = box_indices(box)
            blocks.append(b)
            regions.append(np.full(b.shape[0], k, dtype=np.int64))
            part.append(np.full(b.shape[0], len(antenna_parts) + k - 1, dtype=np.int64))
        names = ("antenna",) + tuple(b.region for b in lay.boxes)
        origin = np.asarray(lay.frame.offset_cells, dtype=float) * d
        return ShapeSites(
            np.concatenate(blocks), d, origin, np.concatenate(regions), names, float(self.ideal_volume_nm3(params)),
            np.concatenate(part), tuple(antenna_parts) + names[1:],
        )

    def _antenna_parts(self, params, frame, x_nm, y_nm):
        """Names of the antenna's parts and the part of each footprint column (default: one part)."""
        return ("antenna",), np.zeros(np.shape(x_nm), dtype=np.int64)

    def _bounding_grid_shape(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        lay = self._layout(params, spacing_nm, substrate, medium_layer)
        lo, hi = np.array(lay.lo), np.array(lay.hi)
        for box in lay.boxes:
            lo, hi = np.minimum(lo, box.lo), np.maximum(hi, box.hi)
        return tuple(int(v) for v in hi - lo + 1)

    def bounding_grid_shape(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Counts (nx, ny, nz) of the lattice bounding box of every site (slabs included).

        Computed from the footprint's columns (an nx-by-ny boolean plane at most),
        before any site array is allocated.
        """
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        return self._bounding_grid_shape(clean, d, substrate=substrate, medium_layer=medium_layer)

    def site_count(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Number of sites ``sites(...)`` would return, computed without building them [-]."""
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        lay = self._layout(clean, d, substrate, medium_layer)
        n = int(np.count_nonzero(lay.mask)) * (lay.hi[2] - lay.lo[2] + 1)
        return n + sum(int(np.prod(b.counts)) for b in lay.boxes)

    def realised_dimensions_nm(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        lay = self._layout(clean, d, substrate, medium_layer)
        return MappingProxyType({**lay.frame.realised, **lay.slabs_realised})

    def hotspot_nm(self, params, spacing_nm, *, hotspot_offset_nm=None, substrate=None, medium_layer=None):
        """The hotspot of the discretised shape [nm], shape (3,).

        Tip families: ``hotspot_offset_nm`` (default 5 nm) beyond the discretised tip
        surface (last dipole plane + d/2) on the x axis, at mid-thickness (z = 0);
        with a medium layer it must lie inside the realised separation.  Gap families:
        the centre of the discretised gap, the origin.
        """
        offset = self._hotspot_offset(hotspot_offset_nm)
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        lay = self._layout(clean, d, substrate, medium_layer)
        if self.hotspot_kind == "gap":
            return np.array([lay.frame.anchor_x_nm, 0.0, 0.0])
        x_tip = (lay.hi[0] + lay.frame.offset_cells[0] + 0.5) * d
        if medium_layer is not None:
            sep = lay.slabs_realised["medium_layer_separation_nm"]
            if offset >= sep:
                raise InvalidParameterError(
                    f"hotspot_offset_nm must be < the realised medium-layer separation ({sep:g} nm at spacing_nm={d:g}) "
                    f"so the hotspot lies in the gap; got {offset!r}"
                )
        return np.array([x_tip + offset, 0.0, 0.0])

    def drawing_outline(self, params, *, substrate=None, medium_layer=None):
        """Ideal polygons: top view (x-y) and side view (x-z), slabs first, antenna last [nm]."""
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        hz = clean["thickness_nm"] / 2
        x0, x1, hy = self._ideal_box_nm(clean)
        xc = (x0 + x1) / 2
        top, side = [], []
        if substrate is not None:
            s = substrate.lateral_size_nm / 2
            top.append(("substrate", rectangle(xc - s, xc + s, -s, s)))
            z1 = -hz - substrate.gap_nm
            side.append(("substrate", rectangle(xc - s, xc + s, z1 - substrate.thickness_nm, z1)))
        if self.hotspot_kind == "tip":
            hotspot = (x1 + self.default_hotspot_offset_nm, 0.0, 0.0)
        else:
            hotspot = (0.0, 0.0, 0.0)
        if medium_layer is not None:
            s, t, sep = medium_layer.lateral_size_nm / 2, medium_layer.thickness_nm, medium_layer.separation_nm
            if self.facing_axis == 0:
                top.append(("medium_layer", rectangle(x1 + sep, x1 + sep + t, -s, s)))
                side.append(("medium_layer", rectangle(x1 + sep, x1 + sep + t, -s, s)))
            else:
                top.append(("medium_layer", rectangle(xc - s, xc + s, -s, s)))
                side.append(("medium_layer", rectangle(xc - s, xc + s, hz + sep, hz + sep + t)))
        top.extend(self._top_polygons(clean))
        side.extend(("antenna", rectangle(a, b, -hz, hz)) for a, b in self._side_spans(clean))
        return Outline(top=tuple(top), side=tuple(side), dimensions=tuple(self._dimensions(clean)), hotspot_nm=hotspot)
