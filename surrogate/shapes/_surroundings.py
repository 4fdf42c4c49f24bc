"""Optional surroundings of a film antenna: finite slabs on the same lattice, as separate regions.

A transducer never works alone: it sits on a substrate (or in a cladding) and
faces a recording layer or a sample across a gap of a few nanometres (the
head-to-medium spacing of heat-assisted recording is under 10 nm).  Both are
modelled as finite rectangular slabs of dipoles in the antenna's own site set,
in regions ``"substrate"`` and ``"medium_layer"``.  Their lateral size is a
convergence setting (a real substrate is infinite), to be stated with results.

Placement on the lattice (d the spacing; counts rounded half up, at least one):

- substrate: below the film; its top plane is ``round(gap_nm / d)`` empty planes
  below the film's bottom plane; ``round(thickness_nm / d)`` planes thick;
  laterally a square of side ``lateral_size_nm`` in x and y centred on the
  antenna's bounding box, never smaller than the antenna's footprint.  When a
  medium layer faces the tip along +x, the substrate is cut flush with the tip
  surface (the air-bearing surface of a recording head), so slabs never overlap.
- medium layer: beyond the hotspot gap, ``round(separation_nm / d)`` empty planes
  (at least one) after the antenna's last plane along the family's facing axis
  (+x beyond the tip for tip families, +z above the film for gap families);
  laterally a square of side ``lateral_size_nm`` centred on the antenna's axis.

Realised sizes (whole numbers of planes times d) are reported by the family's
``realised_dimensions_nm``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validation import check_real
from ..errors import InvalidParameterError, InvalidTypeError

__all__ = ["SubstrateSlab", "MediumLayer", "SlabBox", "place_slabs", "planes"]

_AXES = "xyz"


def planes(length_nm, spacing_nm):
    """Number of lattice planes a length holds: ``length / d`` rounded half up [-]."""
    return int(np.floor(length_nm / spacing_nm + 0.5 + 1e-9))


@dataclass(frozen=True)
class SubstrateSlab:
    """A finite slab under the film (region ``"substrate"``).

    Parameters
    ----------
    thickness_nm : float
        Slab thickness along z [nm], in (0, 5000].
    lateral_size_nm : float
        Side of the square footprint in x and y [nm], in (0, 100000]; at least the
        antenna's footprint.  A convergence setting.
    gap_nm : float
        Empty space between the film's bottom surface and the slab's top surface [nm],
        in [0, 1000]; default 0 (the film lies on the slab).
    """

    thickness_nm: float
    lateral_size_nm: float
    gap_nm: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "thickness_nm", check_real("thickness_nm", self.thickness_nm, low=0, low_open=True, high=5000, unit="nm"))
        object.__setattr__(
            self, "lateral_size_nm", check_real("lateral_size_nm", self.lateral_size_nm, low=0, low_open=True, high=1e5, unit="nm")
        )
        object.__setattr__(self, "gap_nm", check_real("gap_nm", self.gap_nm, low=0, high=1000, unit="nm"))


@dataclass(frozen=True)
class MediumLayer:
    """A finite slab facing the hotspot across a gap (region ``"medium_layer"``).

    A stand-in for the recording layer in front of a transducer, or a sample.

    Parameters
    ----------
    thickness_nm : float
        Slab thickness along the facing axis [nm], in (0, 5000].
    lateral_size_nm : float
        Side of the square cross-section [nm], in (0, 100000].  A convergence setting.
    separation_nm : float
        Empty space between the antenna's facing surface and the slab [nm], in (0, 1000]
        (the head-to-medium spacing).
    """

    thickness_nm: float
    lateral_size_nm: float
    separation_nm: float

    def __post_init__(self):
        object.__setattr__(self, "thickness_nm", check_real("thickness_nm", self.thickness_nm, low=0, low_open=True, high=5000, unit="nm"))
        object.__setattr__(
            self, "lateral_size_nm", check_real("lateral_size_nm", self.lateral_size_nm, low=0, low_open=True, high=1e5, unit="nm")
        )
        object.__setattr__(
            self, "separation_nm", check_real("separation_nm", self.separation_nm, low=0, low_open=True, high=1000, unit="nm")
        )


def check_slab_types(substrate, medium_layer):
    """Refuse anything but a SubstrateSlab / MediumLayer / None."""
    if substrate is not None and not isinstance(substrate, SubstrateSlab):
        raise InvalidTypeError(f"substrate must be a SubstrateSlab or None; got {substrate!r}")
    if medium_layer is not None and not isinstance(medium_layer, MediumLayer):
        raise InvalidTypeError(f"medium_layer must be a MediumLayer or None; got {medium_layer!r}")


@dataclass(frozen=True)
class SlabBox:
    """Index box of one slab: sites ``lo <= index <= hi`` (inclusive) on every axis."""

    region: str
    lo: tuple
    hi: tuple

    @property
    def counts(self):
        return tuple(h - l + 1 for l, h in zip(self.lo, self.hi))


def _centred_count(size_nm, spacing_nm, parity, minimum):
    """Nearest plane count to size / d with the given parity (so it centres on the antenna), >= minimum."""
    v = size_nm / spacing_nm
    n = 2 * int(np.floor((v - parity) / 2 + 0.5 + 1e-9)) + parity
    n = max(n, 2 - parity if parity == 0 else 1, minimum)
    return n


def _lateral(lo, hi, axis, size_nm, spacing_nm, *, cover):
    extent = int(hi[axis] - lo[axis] + 1)
    n = _centred_count(size_nm, spacing_nm, extent % 2, extent if cover else 1)
    start = int(lo[axis] - (n - extent) // 2)
    return start, start + n - 1


def place_slabs(antenna_lo, antenna_hi, spacing_nm, *, facing_axis, substrate=None, medium_layer=None):
    """Index boxes of the slabs around an antenna, and their realised sizes.

    Parameters
    ----------
    antenna_lo, antenna_hi : sequence of int, length 3
        Inclusive index extents of the antenna's sites.
    spacing_nm : float
        Lattice spacing d [nm].
    facing_axis : {0, 2}
        Axis along which the medium layer faces the hotspot (0: +x, 2: +z).
    substrate : SubstrateSlab, optional
    medium_layer : MediumLayer, optional

    Returns
    -------
    boxes : tuple of SlabBox
    realised : dict
        Realised slab sizes [nm] (whole planes times d), unit-suffixed keys.

    Raises
    ------
    InvalidParameterError
        When a slab holds no plane, or the medium layer's separation holds no empty plane.
    """
    d = spacing_nm
    lo, hi = [int(v) for v in antenna_lo], [int(v) for v in antenna_hi]
    boxes, realised = [], {}
    if substrate is not None:
        n_t = planes(substrate.thickness_nm, d)
        if n_t < 1:
            raise InvalidParameterError(
                f"substrate thickness_nm must be >= spacing_nm / 2 = {d / 2:g} nm to hold one plane; got {substrate.thickness_nm!r}"
            )
        n_gap = planes(substrate.gap_nm, d)
        top = lo[2] - 1 - n_gap
        sx = _lateral(lo, hi, 0, substrate.lateral_size_nm, d, cover=True)
        if medium_layer is not None and int(facing_axis) == 0:
            # the medium layer faces the tip along +x: the substrate ends flush with the tip
            # surface (the air-bearing surface of a recording head), so the two never overlap
            sx = (sx[0], min(sx[1], hi[0]))
        sy = _lateral(lo, hi, 1, substrate.lateral_size_nm, d, cover=True)
        boxes.append(SlabBox("substrate", (sx[0], sy[0], top - n_t + 1), (sx[1], sy[1], top)))
        realised.update(
            substrate_thickness_nm=n_t * d,
            substrate_gap_nm=n_gap * d,
            substrate_size_x_nm=(sx[1] - sx[0] + 1) * d,
            substrate_size_y_nm=(sy[1] - sy[0] + 1) * d,
        )
    if medium_layer is not None:
        a = int(facing_axis)
        n_t = planes(medium_layer.thickness_nm, d)
        if n_t < 1:
            raise InvalidParameterError(
                f"medium_layer thickness_nm must be >= spacing_nm / 2 = {d / 2:g} nm to hold one plane; got {medium_layer.thickness_nm!r}"
            )
        n_sep = planes(medium_layer.separation_nm, d)
        if n_sep < 1:
            raise InvalidParameterError(
                f"medium_layer separation_nm must be >= spacing_nm / 2 = {d / 2:g} nm to hold one empty plane; "
                f"got {medium_layer.separation_nm!r}"
            )
        box_lo, box_hi = [0, 0, 0], [0, 0, 0]
        box_lo[a] = hi[a] + 1 + n_sep
        box_hi[a] = box_lo[a] + n_t - 1
        for b in range(3):
            if b != a:
                box_lo[b], box_hi[b] = _lateral(lo, hi, b, medium_layer.lateral_size_nm, d, cover=False)
        boxes.append(SlabBox("medium_layer", tuple(box_lo), tuple(box_hi)))
        realised.update(medium_layer_thickness_nm=n_t * d, medium_layer_separation_nm=n_sep * d)
        for b in range(3):
            if b != a:
                realised[f"medium_layer_size_{_AXES[b]}_nm"] = (box_hi[b] - box_lo[b] + 1) * d
    return tuple(boxes), realised


def box_indices(box):
    """Integer indices of every site of a slab box, shape (n, 3)."""
    axes = [np.arange(l, h + 1) for l, h in zip(box.lo, box.hi)]
    grids = np.meshgrid(*axes, indexing="ij")
    return np.stack([g.ravel() for g in grids], axis=1).astype(np.int64)
