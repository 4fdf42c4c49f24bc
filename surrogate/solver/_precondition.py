"""A circulant-Toeplitz preconditioner for the scaled coupled-dipole system.

The coupled-dipole matrix ``A = diag(1/alpha) - G`` on the occupied sites is
the restriction of a matrix on the lattice's bounding box, whose interaction
``G`` is three-level block Toeplitz (one level per axis, 3 x 3 blocks).  The
preconditioner replaces the box matrix by

    P = c I - C,

with one constant diagonal ``c`` and an interaction ``C`` that is circulant
along the two lateral axes (Strang's circulant [1]: the Toeplitz entries of the
offsets nearest zero, wrapped; its multilevel form [2], [3]) and exact Toeplitz
along the normal axis (the axis with the fewest sites).  A lateral 2-D FFT
block-diagonalizes ``P`` into one dense ``3 n_z x 3 n_z`` block per lateral
frequency; the blocks are inverted once per wavelength.  In the scaled space of
``_solve.py`` (``A_s = D A D``, ``D = diag(sqrt(alpha))``) the preconditioner is

    M = D^-1 R P^-1 R^T D^-1  ~  A_s^-1,

with ``R`` the restriction from the box to the occupied sites.

Symmetry.  ``G_pq(m) = G_qp(-m)`` for every lattice offset ``m``; Strang's wrap
keeps it (the half-length offset of an even axis takes the mean of its two
images), so ``P``, ``P^-1`` and ``M`` are complex symmetric and COCG with ``M``
keeps its short recurrence (``_krylov.py``).  The same identity makes the block
of lateral frequency ``-f`` the transpose of the block of ``f``; only one of
each pair is stored.

Constant diagonal and shift.  ``c = (1 - i tau) <1/alpha>``, the mean inverse
polarizability over the occupied sites (the exact diagonal when one material
fills the lattice) with a relative loss ``tau > 0``.  The lateral wrap turns the
particle into an infinite slab whose bound plasmon modes make some blocks of an
unshifted ``P`` nearly singular for a metal (the smallest block eigenvalue of
``alpha P`` is below 0.01 on gold films, bars and disks at 800 nm); the loss
moves the spectrum away from zero by about ``tau``, as the complex shift of the
shifted-Laplace preconditioner does for the Helmholtz equation [4].  ``tau`` is
measured, not derived: see :data:`SHIFTS`.

References
----------
.. [1] G. Strang, "A proposal for Toeplitz matrix calculations", Stud. Appl.
   Math. 74, 171 (1986).
.. [2] R. H. Chan and J. A. Olkin, "Circulant preconditioners for
   Toeplitz-block matrices", Numer. Algorithms 6, 89 (1994).
.. [3] S. P. Groth, A. G. Polimeridis and J. K. White, "Accelerating the
   discrete dipole approximation via circulant preconditioning", JQSRT 240,
   106689 (2020).
.. [4] Y. A. Erlangga, C. W. Oosterlee and C. Vuik, "A novel multigrid based
   preconditioner for heterogeneous Helmholtz problems", SIAM J. Sci. Comput.
   27, 1471 (2006).
"""

from __future__ import annotations

import time

import numpy as np
import scipy.fft

from ._green import green_tensor

__all__ = ["CirculantPreconditioner", "SHIFTS", "normal_axis", "preconditioner_memory_bytes", "circulant_pays", "auto_may_precondition"]

#: Relative loss ``tau`` [-] of the constant diagonal per polarizability: of
#: tau in {0.1, 0.2, 0.3, 0.4, 0.6}, the one with the fewest COCG products summed
#: over a gold film, disk-peg, bar and gap dimer at 5 nm spacing
#: (benchmarks/bench_precondition.py --scan-shift; FCD sums 3,551 / 2,630 /
#: 2,360 / 2,286 / 2,408, LDR 2,544 / 2,156 / 2,213 / 2,476 / 2,566).  Checked on
#: cases not used to choose it: a sphere in water and the 2.5 nm lattices.
#: RRCM takes LDR's value: its diagonal differs from LDR's by O((kd)^2) only
#: (not measured separately).
SHIFTS = {"fcd": 0.4, "ldr": 0.2, "rrcm": 0.2}

# Lateral frequencies inverted per batch during set-up (bounds the temporaries).
_BATCH = 256


def normal_axis(grid_shape):
    """Axis kept exact (Toeplitz): the one with the fewest sites, ties to the last."""
    g = np.asarray(grid_shape)
    return int(np.flatnonzero(g == g.min())[-1])


def _split_axes(grid_shape):
    ax = normal_axis(grid_shape)
    perm = [a for a in range(3) if a != ax] + [ax]
    return perm, tuple(int(grid_shape[a]) for a in perm)


def _frequency_pairs(nx, ny):
    # Lateral frequency f = (i, j) pairs with -f = (-i mod nx, -j mod ny).
    # Returns (paired, partner, single): blocks stored for paired + single,
    # the partners use the transposed block of their pair.
    i, j = np.meshgrid(np.arange(nx), np.arange(ny), indexing="ij")
    f = (i * ny + j).ravel()
    g = (((-i) % nx) * ny + (-j) % ny).ravel()
    paired = f[f < g]
    return paired, g[f < g], f[f == g]


def preconditioner_memory_bytes(grid_shape, dtype=np.complex128):
    """Bytes the preconditioner will hold for a bounding box of ``grid_shape`` sites.

    Parameters
    ----------
    grid_shape : tuple of 3 int
        Sites of the bounding box per axis.
    dtype : {numpy.complex128, numpy.complex64}
        Precision of the stored blocks.

    Returns
    -------
    int
        Peak [bytes]: the stored blocks (half the lateral frequencies, each
        ``(3 n_z)^2`` numbers), one set-up batch of complex128 blocks with its
        inverse, the transformed kernel, and two work grids of the box.
    """
    item = np.dtype(dtype).itemsize
    _, (nx, ny, nz) = _split_axes(grid_shape)
    paired, _, single = _frequency_pairs(nx, ny)
    per_block = (3 * nz) ** 2
    stored = (paired.size + single.size) * per_block * item
    batch = 2 * min(_BATCH, paired.size + single.size) * per_block * 16
    kernel = nx * ny * (2 * nz - 1) * 15 * 16
    work = 2 * nx * ny * 3 * nz * max(item, 16)
    return int(stored + batch + kernel + work)


class CirculantPreconditioner:
    """Apply ``M ~ A_s^-1`` of the module docstring to scaled residuals.

    Built once per lattice and wavelength.

    Parameters
    ----------
    indices, spacing_nm, k_per_nm : ndarray of int (N, 3), float, float
        The occupied sites, the lattice spacing ``d`` [nm] and the host
        wavenumber [1/nm], as for the FFT interaction.
    alpha_site : ndarray of complex, shape (N,)
        Polarizability of each site [nm^3].
    filtered : bool
        Whether the interaction is the filtered (FCD) tensor.
    shift : float
        Relative loss ``tau`` [-] of the constant diagonal (see :data:`SHIFTS`).
    dtype : {numpy.complex128, numpy.complex64}, default complex128
        Precision of the stored blocks and of the application.

    Attributes
    ----------
    grid_shape_ : tuple of 3 int
        Box sites along (lateral 1, lateral 2, normal).
    normal_axis_ : int
        Lattice axis treated exactly.
    diagonal_ : complex
        Constant diagonal ``c`` [1/nm^3].
    setup_s_ : float
        Wall time of the set-up [s].
    nbytes : int
        Bytes held.
    """

    def __init__(self, indices, spacing_nm, k_per_nm, alpha_site, *, filtered, shift, dtype=np.complex128):
        t0 = time.perf_counter()
        idx = np.asarray(indices, dtype=np.int64)
        idx = idx - idx.min(axis=0)
        grid = tuple(int(v) for v in idx.max(axis=0) + 1)
        self._perm, self.grid_shape_ = _split_axes(grid)
        self.normal_axis_ = self._perm[2]
        self.dtype = np.dtype(dtype)
        p = idx[:, self._perm]
        self._ix, self._iy, self._iz = p[:, 0], p[:, 1], p[:, 2]
        alpha = np.asarray(alpha_site, dtype=complex)
        self._inv_sqrt_alpha = np.repeat(1.0 / np.sqrt(alpha), 3).astype(self.dtype)
        # c = (1 - i tau) <1/alpha> (module docstring).
        self.diagonal_ = complex(np.mean(1.0 / alpha) * (1.0 - 1j * float(shift)))
        nx, ny, _ = self.grid_shape_
        self._paired, self._partner, self._single = _frequency_pairs(nx, ny)
        self._stored = np.concatenate([self._paired, self._single])
        kernel = self._kernel_transform(float(spacing_nm), float(k_per_nm), filtered)
        self._inv_blocks = self._invert_blocks(kernel)
        self.setup_s_ = time.perf_counter() - t0

    def _kernel_transform(self, d, k, filtered):
        # C on offsets (wrapped x, wrapped y, dz = -(nz-1)..nz-1), the 6 components of
        # the symmetric 3x3 tensor in the permuted frame (G = A I + B n n is
        # covariant under the axis permutation), transformed over x and y.
        nx, ny, nz = self.grid_shape_
        ox, tx, wx = _wrap_offsets(nx)
        oy, ty, wy = _wrap_offsets(ny)
        oz = np.arange(-(nz - 1), nz)
        off = np.zeros((ox.size, oy.size, oz.size, 3))
        off[..., 0] = ox[:, None, None] * d
        off[..., 1] = oy[None, :, None] * d
        off[..., 2] = oz[None, None, :] * d
        zero = np.all(off == 0, axis=-1)
        off[zero] = (d, 0.0, 0.0)  # placeholder; the self term is not part of G
        g = green_tensor(off, k, filtered_spacing_nm=d if filtered else None)
        g[zero] = 0.0
        weight = (wx[:, None] * wy[None, :])[..., None]
        ker = np.zeros((nx, ny, oz.size, 6), dtype=complex)
        for c, (pp, qq) in enumerate(((0, 0), (0, 1), (0, 2), (1, 1), (1, 2), (2, 2))):
            np.add.at(ker[..., c], (tx[:, None], ty[None, :]), g[..., pp, qq] * weight)
        return scipy.fft.fft2(ker, axes=(0, 1)).reshape(nx * ny, oz.size, 6)

    def _invert_blocks(self, ker_hat):
        # Block of lateral frequency f: B[(zi, p), (zj, q)] = c delta - C^_pq(f, zi - zj).
        nz = self.grid_shape_[2]
        comp = np.array(((0, 1, 2), (1, 3, 4), (2, 4, 5)))
        zi = np.arange(nz)
        dz = (zi[:, None] - zi[None, :]) + (nz - 1)
        diag = np.arange(3 * nz)
        out = np.empty((self._stored.size, 3 * nz, 3 * nz), dtype=self.dtype)
        for start in range(0, self._stored.size, _BATCH):
            f = self._stored[start:start + _BATCH]
            # (batch, zi, zj, p, q) -> (batch, zi, p, zj, q)
            blk = -ker_hat[f][:, dz][..., comp]
            blk = blk.transpose(0, 1, 3, 2, 4).reshape(f.size, 3 * nz, 3 * nz)
            blk[:, diag, diag] += self.diagonal_
            out[start:start + f.size] = np.linalg.inv(blk)
        return out

    def apply(self, r):
        """Return ``M r`` for a scaled residual ``r`` of shape (3N,), in the preconditioner's dtype."""
        nx, ny, nz = self.grid_shape_
        u = (r * self._inv_sqrt_alpha).reshape(-1, 3)
        buf = np.zeros((nx, ny, nz, 3), dtype=self.dtype)
        buf[self._ix, self._iy, self._iz] = u[:, self._perm]
        x = scipy.fft.fft2(buf, axes=(0, 1), overwrite_x=True).reshape(nx * ny, 3 * nz)
        y = np.empty_like(x)
        n_pair = self._paired.size
        inv = self._inv_blocks
        y[self._stored] = np.einsum("fij,fj->fi", inv, x[self._stored])
        # Frequency -f uses the transposed block of f (module docstring).
        # (x^T B, a row times the block, reads the block row by row.)
        y[self._partner] = np.matmul(x[self._partner][:, None, :], inv[:n_pair])[:, 0, :]
        buf = scipy.fft.ifft2(y.reshape(nx, ny, nz, 3), axes=(0, 1), overwrite_x=True)
        out = np.empty_like(u)
        out[:, self._perm] = buf[self._ix, self._iy, self._iz]
        return out.reshape(-1) * self._inv_sqrt_alpha

    def __call__(self, r):
        return self.apply(r)

    @property
    def nbytes(self):
        """Bytes held: the stored blocks, the scaling and the index arrays."""
        arrays = (self._inv_blocks, self._inv_sqrt_alpha, self._ix, self._iy, self._iz, self._paired, self._partner, self._single, self._stored)
        return int(sum(a.nbytes for a in arrays))


def _wrap_offsets(n):
    # Strang [1]: wrapped index j in [0, n) takes the offset of smallest magnitude;
    # for even n, index n/2 takes the mean of offsets +n/2 and -n/2.
    offs, target, weight = [], [], []
    for j in range(n):
        if 2 * j < n:
            offs.append(j)
            target.append(j)
            weight.append(1.0)
        elif 2 * j > n:
            offs.append(j - n)
            target.append(j)
            weight.append(1.0)
        else:
            offs += [j, -j]
            target += [j, j]
            weight += [0.5, 0.5]
    return np.array(offs), np.array(target), np.array(weight)


def circulant_pays(grid_shape, n_dipoles, kind):
    """Whether ``preconditioner="auto"`` turns the circulant on (a measured rule).

    Parameters
    ----------
    grid_shape : tuple of 3 int
        Sites of the bounding box per axis.
    n_dipoles : int
        Occupied sites.
    kind : {"fcd", "ldr", "rrcm"}
        Polarizability prescription.

    Returns
    -------
    bool
    """
    if not auto_may_precondition(kind):
        return False
    g = np.asarray(grid_shape, dtype=float)
    fill = n_dipoles / float(np.prod(g))
    flatness = g.min() / np.sort(g)[1]  # normal extent over the shorter lateral one
    return bool(fill <= 0.8 or flatness <= 0.5)


def auto_may_precondition(kind):
    """Whether ``preconditioner="auto"`` can turn the circulant on for this polarizability.

    Never for FCD: measured in one run (disk-peg at 830 nm, d = 5 and 2.5 nm; gold film
    300 x 150 x 50 nm at 800 nm, d = 5 nm; tol 1e-4 and 1e-5), the circulant cut FCD's
    products to 0.58-0.89x but its wall time was 0.90-1.50x (below 1 only for the disk-peg
    at d = 5 nm, tol 1e-5): FCD is already well conditioned and one application costs
    about one interaction product.
    """
    return kind != "fcd"
