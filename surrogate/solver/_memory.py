"""Memory estimate of a solve, made before anything large is allocated."""

from __future__ import annotations

import os

import numpy as np

from ._interaction import padded_shape
from ._precondition import preconditioner_memory_bytes

__all__ = ["memory_estimate_bytes", "default_memory_limit_bytes"]

# Vectors of length 3N held by each iterative method (iterate, residual, search
# directions, products, temporaries); counted from the code in _krylov.py.
_KRYLOV_VECTORS = {"cocg": 9, "bicgstab": 12, "gmres": 8}


def memory_estimate_bytes(lattice, dtype=np.complex128, *, method="cocg", gmres_restart=100, preconditioner="none"):
    """Peak bytes a solve on ``lattice`` will need.

    Parameters
    ----------
    lattice : Lattice
        The dipole lattice.
    dtype : {numpy.complex128, numpy.complex64}
        Precision of the FFT interaction and Krylov vectors.
    method : {"cocg", "bicgstab", "gmres", "direct"}
        Solver; ``"direct"`` needs the dense ``3N x 3N`` matrix twice.
    gmres_restart : int
        Krylov basis size of GMRES.
    preconditioner : {"none", "circulant"}
        Adds :func:`preconditioner_memory_bytes` of the bounding box and one
        Krylov vector for ``"circulant"``.

    Returns
    -------
    int
        Estimated peak [bytes]: the six tensor transforms and three work grids
        of the padded FFT grid, the tensor build temporaries (about fourteen
        complex128 arrays of the unpadded grid), the Krylov vectors and the
        observables' arrays, and the preconditioner if any.
    """
    item = np.dtype(dtype).itemsize
    n = lattice.n_dipoles
    grid = lattice.grid_shape
    if method == "direct":
        return int(2 * (3 * n) ** 2 * 16 + 40 * 3 * n * 16)
    m_pad = int(np.prod(padded_shape(grid), dtype=np.int64))
    m_box = int(np.prod(grid, dtype=np.int64))
    fft_bytes = 9 * m_pad * item + 2 * 2**20 * 2
    build_bytes = 14 * m_box * 16
    vectors = _KRYLOV_VECTORS[method] + (gmres_restart if method == "gmres" else 0)
    pc_bytes = 0
    if preconditioner == "circulant":
        vectors += 1  # z = M r
        pc_bytes = preconditioner_memory_bytes(grid, dtype)
    krylov_bytes = vectors * 3 * n * item + 12 * 3 * n * 16
    return int(fft_bytes + build_bytes + krylov_bytes + pc_bytes)


def default_memory_limit_bytes():
    """80 % of the physical memory of the machine [bytes] (used when no limit is given)."""
    try:
        return int(0.8 * os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):  # platforms without sysconf
        return 16 * 2**30
