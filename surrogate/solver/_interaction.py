"""The dipole-dipole interaction applied by FFT on a zero-padded grid.

The interaction ``(G p)_j = sum_{k != j} G(r_j - r_k) p_k`` depends only on the
lattice offset ``j - k``, so it is a discrete convolution: embed the tensor in a
grid padded to at least ``2 n - 1`` per axis (no wrap-around), transform its six
independent components once per wavelength, and apply it with three forward and
three inverse transforms per product (Goodman, Draine & Flatau, Opt. Lett. 16,
1198 (1991)).

The transforms are pruned: the dipole grid occupies only the first
``nx x ny x nz`` corner of the padded grid, so the forward transform along z
runs on ``nx * ny`` lines only, along y on ``nx * Nz`` lines, and the inverse
transforms skip the lines whose outputs are discarded.  With padding by about
two per axis this does 7/12 of the work of full 3-D transforms.
"""

from __future__ import annotations

import numpy as np
import scipy.fft

from ..errors import InvalidParameterError
from ._green import green_coefficients

__all__ = ["FFTInteraction", "padded_shape", "set_fft_workers"]


_FFT_WORKERS = [-1]


def set_fft_workers(workers):
    """Set the process-wide number of scipy.fft threads of later solves (-1: all cores).

    A campaign runs one design per core and sets 1 in each worker process so the
    workers do not contend for the cores.  Returns the previous setting.
    """
    if isinstance(workers, bool) or not isinstance(workers, int) or workers == 0 or workers < -1:
        raise InvalidParameterError(f"workers must be -1 or a positive integer; got {workers!r}")
    previous = _FFT_WORKERS[0]
    _FFT_WORKERS[0] = workers
    return previous


def padded_shape(grid_shape):
    """Padded FFT grid ``next_fast_len(2 n - 1)`` per axis (scipy.fft)."""
    return tuple(int(scipy.fft.next_fast_len(2 * n - 1)) for n in grid_shape)


def _axis_parts(n, n_pad):
    # (padded positions, offset magnitudes, sign) of offsets 0..n-1 and -(n-1)..-1.
    parts = [(np.arange(n), np.arange(n), 1.0)]
    if n > 1:
        mag = np.arange(1, n)
        parts.append((n_pad - mag, mag, -1.0))
    return parts


def _inplace(transform, view, workers, **kw):
    # scipy.fft writes into an aligned complex input when overwrite_x=True;
    # copy back in case it ever returns a new array.
    out = transform(view, overwrite_x=True, workers=workers, **kw)
    if out is not view and not np.shares_memory(out, view):
        view[...] = out


class FFTInteraction:
    """FFT application of the interaction tensor on one lattice at one wavenumber.

    Parameters
    ----------
    indices : ndarray of int, shape (N, 3)
        Occupied lattice sites.
    spacing_nm : float
        Lattice spacing ``d`` [nm].
    k_per_nm : float
        Host wavenumber [1/nm].
    filtered : bool
        Use the filtered (FCD) tensor instead of the point-dipole one.
    dtype : numpy complex dtype
        Precision of the transforms and of the stored tensor transform.
    workers : int or None
        Threads for scipy.fft (-1: all cores); None (default) takes the process-wide
        setting of :func:`set_fft_workers` (initially -1).
    """

    def __init__(self, indices, spacing_nm, k_per_nm, *, filtered, dtype=np.complex128, workers=None):
        idx = np.asarray(indices, dtype=np.int64)
        idx = idx - idx.min(axis=0)
        self.grid_shape = tuple(int(v) for v in idx.max(axis=0) + 1)
        self.padded_shape = padded_shape(self.grid_shape)
        self.dtype = np.dtype(dtype)
        self.workers = _FFT_WORKERS[0] if workers is None else workers
        self.n_dipoles = idx.shape[0]
        self._ix, self._iy, self._iz = idx[:, 0], idx[:, 1], idx[:, 2]
        self._ghat = self._tensor_transform(float(spacing_nm), float(k_per_nm), filtered)
        npx, npy, npz = self.padded_shape
        self._buf = np.empty((npx, 3, npy, npz), dtype=self.dtype)
        # x-planes per multiply block: about 1 MiB of the work buffer at a time.
        plane = 3 * npy * npz * self.dtype.itemsize
        self._block = max(1, int(2**20 // plane))
        self._tmp = np.empty((self._block, 3, npy, npz), dtype=self.dtype)
        self._tmp2 = np.empty((self._block, npy, npz), dtype=self.dtype)

    # -- tensor ---------------------------------------------------------------
    def _tensor_transform(self, d, k, filtered):
        nx, ny, nz = self.grid_shape
        npx, npy, npz = self.padded_shape
        ox = (np.arange(nx) * d)[:, None, None]
        oy = (np.arange(ny) * d)[None, :, None]
        oz = (np.arange(nz) * d)[None, None, :]
        r = np.sqrt(ox * ox + oy * oy + oz * oz)
        r[0, 0, 0] = d  # placeholder; the self term is not part of G
        a, b = green_coefficients(r, k, filtered_spacing_nm=d if filtered else None)
        inv_r = 1.0 / r
        nvec = (ox * inv_r, oy * inv_r, oz * inv_r)
        pairs = ((0, 0), (0, 1), (0, 2), (1, 1), (1, 2), (2, 2))
        parts = [_axis_parts(nx, npx), _axis_parts(ny, npy), _axis_parts(nz, npz)]
        ghat = np.zeros((npx, 6, npy, npz), dtype=self.dtype)
        for c, (p, q) in enumerate(pairs):
            # G_pq = A delta_pq + B n_p n_q (see _green.py), on the non-negative octant.
            comp = b * nvec[p] * nvec[q]
            if p == q:
                comp += a
            comp[0, 0, 0] = 0.0
            view = ghat[:, c]
            # Mirror to negative offsets octant by octant: n_p changes sign with
            # offset p, so the component pq is odd in offsets p and q (p != q).
            for px, mx, sx in parts[0]:
                for py, my, sy in parts[1]:
                    for pz, mz, sz in parts[2]:
                        sgn = (sx, sy, sz)
                        factor = 1.0 if p == q else sgn[p] * sgn[q]
                        block = comp[np.ix_(mx, my, mz)]
                        view[np.ix_(px, py, pz)] = block if factor == 1.0 else -block
            _inplace(scipy.fft.fftn, view, self.workers)
        return ghat

    # -- product --------------------------------------------------------------
    def apply(self, p):
        """Return ``G p`` for dipoles ``p`` of shape (N, 3) (same dtype as the operator)."""
        nx, ny, nz = self.grid_shape
        buf = self._buf
        w = self.workers
        fft, ifft = scipy.fft.fft, scipy.fft.ifft
        # Forward, pruned: z on the nx*ny corner, then y on nx planes, then x.
        head = buf[:nx, :, :ny, :]
        head.fill(0)
        buf[self._ix, :, self._iy, self._iz] = p
        _inplace(fft, head, w, axis=3)
        buf[:nx, :, ny:, :] = 0
        _inplace(fft, buf[:nx], w, axis=2)
        buf[nx:] = 0
        _inplace(fft, buf, w, axis=0)
        self._multiply()
        # Inverse, pruned: x everywhere, then y on the nx planes kept, then z.
        _inplace(ifft, buf, w, axis=0)
        _inplace(ifft, buf[:nx], w, axis=2)
        _inplace(ifft, head, w, axis=3)
        return buf[self._ix, :, self._iy, self._iz]

    def _multiply(self):
        # Convolution theorem: (G p)^ = G^ p^, with G^ symmetric 3x3 from its 6 components.
        buf, gh, t, w = self._buf, self._ghat, self._tmp, self._tmp2
        rows = ((0, 1, 2), (1, 3, 4), (2, 4, 5))
        npx = buf.shape[0]
        for start in range(0, npx, self._block):
            stop = min(npx, start + self._block)
            nb = stop - start
            b = buf[start:stop]
            g = gh[start:stop]
            tt, ww = t[:nb], w[:nb]
            for a, (c0, c1, c2) in enumerate(rows):
                out = tt[:, a]
                np.multiply(g[:, c0], b[:, 0], out=out)
                np.multiply(g[:, c1], b[:, 1], out=ww)
                out += ww
                np.multiply(g[:, c2], b[:, 2], out=ww)
                out += ww
            b[...] = tt

    @property
    def nbytes(self):
        """Bytes held by the tensor transform and work buffers."""
        return self._ghat.nbytes + self._buf.nbytes + self._tmp.nbytes + self._tmp2.nbytes
