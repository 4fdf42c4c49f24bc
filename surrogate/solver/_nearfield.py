"""Total near field around a solved lattice and far-field scattering.

Thin public wrappers over ``_observables`` that take a :class:`DipoleSolution`
and its :class:`Lattice`, validate once and bound the memory of each block.
"""

from __future__ import annotations

import numpy as np

from ..errors import InvalidParameterError, InvalidTypeError
from ._lattice import Lattice
from ._observables import dipole_field, far_field_c_sca, incident_field, scattering_amplitude
from ._solve import DipoleSolution

__all__ = ["near_field", "far_field_amplitude", "c_sca_far_field_nm2", "NEAR_FIELD_GREENS"]

#: Tensors :func:`near_field` can radiate the dipoles with.
NEAR_FIELD_GREENS = ("auto", "point", "filtered")


def _check_pair(solution, lattice):
    if not isinstance(solution, DipoleSolution):
        raise InvalidTypeError(f"solution must be a DipoleSolution; got {type(solution).__name__}")
    if not isinstance(lattice, Lattice):
        raise InvalidTypeError(f"lattice must be a surrogate.solver.Lattice; got {type(lattice).__name__}")
    if lattice.n_dipoles != solution.polarization.shape[0]:
        raise InvalidParameterError(
            f"lattice must be the one solved ({solution.polarization.shape[0]} dipoles); got {lattice.n_dipoles} dipoles"
        )


def near_field(solution, lattice, points_nm, *, chunk_size=None, green="auto", include_incident=True):
    """Total electric field at points outside the lattice.

    ``E(r) = E_inc(r) + sum_j G(r - r_j) P_j`` with the incident amplitude 1,
    so ``|E|^2`` is the intensity enhancement.

    Parameters
    ----------
    solution : DipoleSolution
    lattice : Lattice
        The lattice that was solved.
    points_nm : array_like of float, shape (K, 3)
        Observation points [nm]; they must not coincide with dipole sites.
        The result is meaningful outside the particle; within 2-3 spacings of
        a metal surface expect errors of order 10 %.
    chunk_size : int, optional
        Points per block; a block holds about ``10 * chunk_size * N`` floats.
        Default: about 2**19 point-dipole pairs per block.
    green : {"auto", "point", "filtered"}, default "auto"
        Tensor radiating the dipoles: the point-dipole tensor, or the
        filtered one of the FCD.  ``"auto"`` uses the point-dipole tensor for
        every polarizability (see the measurements in the solver notes).
    include_incident : bool, default True
        Add the incident plane wave.

    Returns
    -------
    ndarray of complex, shape (K, 3)
        Field [E0].
    """
    _check_pair(solution, lattice)
    if green not in NEAR_FIELD_GREENS:
        raise InvalidParameterError(f"green must be one of {NEAR_FIELD_GREENS}; got {green!r}")
    try:
        pts = np.asarray(points_nm, dtype=float)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"points_nm must be a real array of shape (K, 3); got {type(points_nm).__name__}") from None
    pts = np.atleast_2d(pts)
    if pts.ndim != 2 or pts.shape[1] != 3 or not np.all(np.isfinite(pts)):
        raise InvalidParameterError(f"points_nm must be a finite array of shape (K, 3); got shape {pts.shape}")
    if chunk_size is not None and (isinstance(chunk_size, bool) or not isinstance(chunk_size, (int, np.integer)) or chunk_size < 1):
        raise InvalidParameterError(f"chunk_size must be a positive integer; got {chunk_size!r}")
    pos = lattice.positions_nm
    d = lattice.spacing_nm
    # A point on a site would divide by zero; test against the lattice directly.
    rel = (pts - lattice.origin_nm) / d
    near = np.rint(rel).astype(np.int64)
    on_grid = np.all(np.abs(rel - near) < 1e-9, axis=1)
    if np.any(on_grid):
        sites = {tuple(v) for v in lattice.indices.tolist()}
        hits = [i for i in np.flatnonzero(on_grid) if tuple(near[i].tolist()) in sites]
        if hits:
            raise InvalidParameterError(f"points_nm must not coincide with dipole sites; got point {pts[hits[0]].tolist()}")
    filt = d if (green == "filtered") else None
    e = dipole_field(solution.polarization, pos, pts, solution.k_per_nm, filtered_spacing_nm=filt, chunk_size=chunk_size)
    if include_incident:
        e += incident_field(pts, solution.k_per_nm, solution.k_direction, solution.e_direction)
    return e


def far_field_amplitude(solution, lattice, directions):
    """Far-field scattering amplitude ``F(n)``, ``E_sca -> F exp(ikr)/r`` [E0 nm].

    Parameters
    ----------
    solution : DipoleSolution
    lattice : Lattice
    directions : array_like of float, shape (K, 3)
        Observation directions (normalized here).

    Returns
    -------
    ndarray of complex, shape (K, 3)
    """
    _check_pair(solution, lattice)
    n = np.atleast_2d(np.asarray(directions, dtype=float))
    if n.ndim != 2 or n.shape[1] != 3:
        raise InvalidParameterError(f"directions must have shape (K, 3); got shape {n.shape}")
    norm = np.linalg.norm(n, axis=1, keepdims=True)
    if np.any(norm == 0) or not np.all(np.isfinite(n)):
        raise InvalidParameterError("directions must be finite non-zero vectors; got a zero or non-finite row")
    return scattering_amplitude(solution.polarization, lattice.positions_nm, solution.k_per_nm, n / norm)


def c_sca_far_field_nm2(solution, lattice, *, n_theta=48, n_phi=96):
    """Scattering cross section [nm^2] integrated from the far field.

    Independent of ``c_ext - c_abs``; the two agree by the optical theorem
    when the solve has converged.  ``n_theta`` Gauss-Legendre nodes in
    ``cos(theta)`` and ``n_phi`` equally spaced azimuths.
    """
    _check_pair(solution, lattice)
    for name, v in (("n_theta", n_theta), ("n_phi", n_phi)):
        if isinstance(v, bool) or not isinstance(v, (int, np.integer)) or v < 2:
            raise InvalidParameterError(f"{name} must be an integer >= 2; got {v!r}")
    return far_field_c_sca(solution.polarization, lattice.positions_nm, solution.k_per_nm, n_theta=n_theta, n_phi=n_phi)
