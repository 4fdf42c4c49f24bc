"""The cubic dipole lattice a solve runs on.

A lattice is a set of occupied sites of a simple cubic grid of spacing ``d``
[nm]; each site carries one point dipole of volume ``d**3`` and an index into a
per-solve permittivity array, so one lattice may mix materials (an antenna on a
patch of substrate, a core-shell particle).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .._validation import check_real
from ..errors import InvalidParameterError, InvalidTypeError

__all__ = ["Lattice"]


def _readonly(arr):
    arr = np.ascontiguousarray(arr)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class Lattice:
    """Occupied sites of a simple cubic lattice.

    Parameters
    ----------
    indices : array_like of int, shape (N, 3)
        Integer lattice coordinates of the occupied sites [-]; all distinct.
    spacing_nm : float
        Lattice spacing ``d`` [nm], > 0.
    material_index : array_like of int, shape (N,), optional
        Index of each site into the permittivity array passed to a solve [-];
        default all zeros (one material).
    origin_nm : array_like of float, shape (3,), optional
        Position of lattice index (0, 0, 0) [nm]; default the origin.  Site
        ``j`` lies at ``origin_nm + indices[j] * spacing_nm``.

    Notes
    -----
    Arrays are stored read-only.  Validation happens once, here.
    """

    indices: np.ndarray
    spacing_nm: float
    material_index: np.ndarray = None
    origin_nm: np.ndarray = field(default=(0.0, 0.0, 0.0))

    def __post_init__(self):
        try:
            idx = np.asarray(self.indices)
        except (TypeError, ValueError):
            raise InvalidTypeError(f"indices must be an integer array of shape (N, 3); got {self.indices!r}") from None
        if idx.ndim != 2 or idx.shape[1] != 3 or idx.shape[0] == 0:
            raise InvalidParameterError(f"indices must be a non-empty integer array of shape (N, 3); got shape {idx.shape}")
        if not np.issubdtype(idx.dtype, np.integer):
            raise InvalidTypeError(f"indices must be an integer array of shape (N, 3); got dtype {idx.dtype}")
        idx = idx.astype(np.int64)
        n = idx.shape[0]
        if np.unique(idx, axis=0).shape[0] != n:
            raise InvalidParameterError(f"indices must be distinct lattice sites; got {n - np.unique(idx, axis=0).shape[0]} duplicates")
        d = check_real("spacing_nm", self.spacing_nm, low=0.0, low_open=True, unit="nm")
        if self.material_index is None:
            mat = np.zeros(n, dtype=np.int64)
        else:
            mat = np.asarray(self.material_index)
            if mat.shape != (n,):
                raise InvalidParameterError(f"material_index must be an integer array of shape ({n},); got shape {mat.shape}")
            if not np.issubdtype(mat.dtype, np.integer):
                raise InvalidTypeError(f"material_index must be an integer array; got dtype {mat.dtype}")
            mat = mat.astype(np.int64)
            if mat.min() < 0:
                raise InvalidParameterError(f"material_index must be >= 0; got {int(mat.min())}")
        try:
            origin = np.asarray(self.origin_nm, dtype=float).reshape(-1)
        except (TypeError, ValueError):
            raise InvalidTypeError(f"origin_nm must be 3 real numbers; got {self.origin_nm!r}") from None
        if origin.shape != (3,) or not np.all(np.isfinite(origin)):
            raise InvalidParameterError(f"origin_nm must be 3 finite real numbers in nm; got {self.origin_nm!r}")
        object.__setattr__(self, "indices", _readonly(idx))
        object.__setattr__(self, "spacing_nm", d)
        object.__setattr__(self, "material_index", _readonly(mat))
        object.__setattr__(self, "origin_nm", _readonly(origin))

    @property
    def n_dipoles(self) -> int:
        """Number of occupied sites N [-]."""
        return int(self.indices.shape[0])

    @property
    def n_materials(self) -> int:
        """Length the permittivity array of a solve must have at least [-]."""
        return int(self.material_index.max()) + 1

    @property
    def positions_nm(self) -> np.ndarray:
        """Site positions [nm], shape (N, 3)."""
        return self.origin_nm + self.indices * self.spacing_nm

    @property
    def grid_shape(self) -> tuple[int, int, int]:
        """Extent of the bounding box of the sites in lattice units [-]."""
        ext = self.indices.max(axis=0) - self.indices.min(axis=0) + 1
        return tuple(int(e) for e in ext)

    @property
    def volume_nm3(self) -> float:
        """Total dipole volume N d**3 [nm^3]."""
        return self.n_dipoles * self.spacing_nm**3

    @property
    def equivalent_radius_nm(self) -> float:
        """Radius of the sphere of the same volume [nm]."""
        return float((3.0 * self.volume_nm3 / (4.0 * np.pi)) ** (1.0 / 3.0))

    def transformed(self, rotation) -> "Lattice":
        """Return the lattice with indices mapped by an integer rotation matrix.

        Parameters
        ----------
        rotation : array_like of int, shape (3, 3)
            Orthogonal matrix with entries in {-1, 0, 1} (a symmetry of the
            cube); sites map as ``indices @ rotation.T``.
        """
        rot = np.asarray(rotation)
        if rot.shape != (3, 3) or not np.array_equal(rot @ rot.T, np.eye(3)) or not np.all(np.isin(rot, (-1, 0, 1))):
            raise InvalidParameterError(f"rotation must be a 3x3 signed permutation matrix; got {rotation!r}")
        return Lattice(self.indices @ rot.T.astype(np.int64), self.spacing_nm, self.material_index, self.origin_nm)
