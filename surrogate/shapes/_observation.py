"""Observation plane through the hotspot, and the clearance between observation points and dipoles.

Coupled-dipole near fields evaluated closer than about two lattice spacings to
the nearest dipole are not trustworthy: the field there is dominated by the
nearest point dipole's singular 1/r^3 term rather than by the continuum it
stands for (Yurkin & Hoekstra, J. Quant. Spectrosc. Radiat. Transfer 106, 558
(2007), the review of the method).  :func:`observation_clearance` measures that
distance; the caller decides whether to refuse or to warn.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from .._validation import check_real
from ..errors import InvalidParameterError

__all__ = ["ObservationPlane", "Clearance", "observation_clearance", "check_observation_clearance", "MIN_CLEARANCE_CELLS"]

#: Least distance from an observation point to the nearest dipole, in lattice spacings [-].
MIN_CLEARANCE_CELLS = 2.0


def _readonly(values, shape=None):
    arr = np.array(values, dtype=float)
    if shape is not None:
        arr = arr.reshape(shape)
    arr.setflags(write=False)
    return arr


def _signed_permutation(rotation):
    rot = np.asarray(rotation)
    if rot.shape != (3, 3) or not np.all(np.isin(rot, (-1, 0, 1))) or not np.array_equal(rot @ rot.T, np.eye(3)):
        raise InvalidParameterError(f"rotation must be a 3x3 signed permutation matrix; got {rotation!r}")
    return rot.astype(np.int64)


@dataclass(frozen=True, eq=False)
class ObservationPlane:
    """The plane where the hotspot field map is taken.

    It passes through the hotspot, perpendicular to x (the antenna's long axis):
    in-plane coordinates are ``u`` along ``u_axis`` (y) and ``v`` along ``v_axis`` (z).

    Attributes
    ----------
    point_nm : ndarray, shape (3,)
        The hotspot [nm]; ``u = v = 0`` there.
    normal, u_axis, v_axis : ndarray, shape (3,)
        Unit vectors [-]: plane normal (x) and the two in-plane axes (y, z).
    """

    point_nm: np.ndarray
    normal: np.ndarray = (1.0, 0.0, 0.0)
    u_axis: np.ndarray = (0.0, 1.0, 0.0)
    v_axis: np.ndarray = (0.0, 0.0, 1.0)

    def __post_init__(self):
        for name in ("point_nm", "normal", "u_axis", "v_axis"):
            object.__setattr__(self, name, _readonly(getattr(self, name), (3,)))

    def grid_nm(self, *, half_width_nm, step_nm):
        """A square grid of points centred on the hotspot, symmetric about it.

        Parameters
        ----------
        half_width_nm : float
            Half the side of the square [nm]; the grid spans ``[-half_width_nm, half_width_nm]``
            in u and v (rounded down to whole steps).
        step_nm : float
            Grid step [nm].

        Returns
        -------
        u_nm, v_nm : ndarray, shape (M,)
            In-plane coordinates [nm], ``0`` included, symmetric about it.
        points_nm : ndarray, shape (M, M, 3)
            ``points_nm[i, j] = point_nm + u_nm[i] * u_axis + v_nm[j] * v_axis`` [nm].
        """
        h = check_real("half_width_nm", half_width_nm, low=0.0, high=1e5, unit="nm")
        s = check_real("step_nm", step_nm, low=0.0, low_open=True, high=1e4, unit="nm")
        n = int(np.floor(h / s + 1e-9))
        if 2 * n + 1 > 4001:
            raise InvalidParameterError(f"half_width_nm / step_nm must be at most 2000 (grid side 4001); got {h / s:g}")
        u = s * np.arange(-n, n + 1)
        pts = self.point_nm + u[:, None, None] * self.u_axis + u[None, :, None] * self.v_axis
        return u, u.copy(), pts

    def rotated(self, rotation):
        """The plane mapped by a signed permutation matrix (a symmetry of the cubic lattice)."""
        rot = _signed_permutation(rotation)
        return ObservationPlane(rot @ self.point_nm, rot @ self.normal, rot @ self.u_axis, rot @ self.v_axis)


@dataclass(frozen=True, eq=False)
class Clearance:
    """Distances from observation points to the nearest dipole.

    Attributes
    ----------
    distances_nm : ndarray, shape (M,)
        Distance from each point to its nearest dipole centre [nm].
    distance_nm : float
        The smallest of them [nm].
    distance_cells : float
        ``distance_nm`` in lattice spacings [-].
    min_cells : float
        Required clearance in lattice spacings [-].
    required_nm : float
        ``min_cells * spacing`` [nm].
    closest_point_nm : ndarray, shape (3,)
        The observation point nearest a dipole [nm].
    nearest_dipole_nm : ndarray, shape (3,)
        That dipole [nm].
    """

    distances_nm: np.ndarray
    distance_nm: float
    distance_cells: float
    min_cells: float
    required_nm: float
    closest_point_nm: np.ndarray
    nearest_dipole_nm: np.ndarray

    @property
    def ok(self):
        """Whether every point keeps the required clearance."""
        return bool(self.distance_nm >= self.required_nm * (1 - 1e-9))

    @property
    def trusted(self):
        """Per point: whether it keeps the required clearance, shape (M,)."""
        return self.distances_nm >= self.required_nm * (1 - 1e-9)

    def message(self):
        """One line stating the clearance and what is required."""
        p = ", ".join(f"{v:g}" for v in self.closest_point_nm)
        return (
            f"observation point ({p}) nm must be >= {self.min_cells:g} spacings ({self.required_nm:g} nm) "
            f"from the nearest dipole; got {self.distance_nm:.4g} nm ({self.distance_cells:.3g} spacings)"
        )


def observation_clearance(points_nm, sites, *, min_cells=MIN_CLEARANCE_CELLS):
    """Distance from observation points to the nearest dipole of a site set.

    Parameters
    ----------
    points_nm : array_like, shape (..., 3)
        Observation points [nm] (one point, a list, or a grid).
    sites : ShapeSites
        The dipoles (every region counts: antenna, substrate, medium layer).
    min_cells : float
        Required clearance in lattice spacings [-]; default 2 (see the module note).

    Returns
    -------
    Clearance
        ``ok`` is False when some point is closer than ``min_cells * d``.
    """
    k = check_real("min_cells", min_cells, low=0.0, high=100.0)
    pts = np.asarray(points_nm, dtype=float).reshape(-1, 3)
    if pts.shape[0] == 0 or not np.all(np.isfinite(pts)):
        raise InvalidParameterError(f"points_nm must be finite points of shape (..., 3); got shape {np.shape(points_nm)}")
    pos = sites.positions_nm()
    dist, nearest = cKDTree(pos).query(pts)
    worst = int(np.argmin(dist))
    d = float(sites.spacing_nm)
    return Clearance(
        distances_nm=_readonly(dist),
        distance_nm=float(dist[worst]),
        distance_cells=float(dist[worst] / d),
        min_cells=k,
        required_nm=k * d,
        closest_point_nm=_readonly(pts[worst]),
        nearest_dipole_nm=_readonly(pos[nearest[worst]]),
    )


def check_observation_clearance(points_nm, sites, *, min_cells=MIN_CLEARANCE_CELLS):
    """Like :func:`observation_clearance`, but raise when a point is too close.

    Raises
    ------
    InvalidParameterError
        One line with the point, its distance and the required one; the remedy is a
        smaller ``spacing_nm`` or a point farther from the metal.
    """
    c = observation_clearance(points_nm, sites, min_cells=min_cells)
    if not c.ok:
        raise InvalidParameterError(c.message() + "; use a smaller spacing_nm or move the point away from the dipoles")
    return c
