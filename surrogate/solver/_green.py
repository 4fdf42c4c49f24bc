"""Free-space and filtered dyadic Green's tensors of the dipole interaction.

Both tensors are written as ``G(R) = A(r) I + B(r) n n`` with ``r = |R|`` and
``n = R / r``, in Gaussian-type units where the field of a point dipole ``p``
[nm^3 x field] is ``G p`` and ``G`` is in 1/nm^3.  Time dependence is
``exp(-i omega t)``.

For a radial scalar ``g(r) = u(r) / r`` the dyadic ``(k^2 I + grad grad) g``
has (standard vector calculus)

    A = k^2 u / r + u' / r^2 - u / r^3,
    B = u'' / r - 3 u' / r^2 + 3 u / r^3.

* Point dipole: ``u = exp(i k r)``, which gives the field of an oscillating
  dipole, Jackson, *Classical Electrodynamics*, 3rd ed., eq. (9.18).
* Filtered coupled dipole: ``g`` band-limited to wavenumbers below
  ``k_F = pi / d`` (Piller & Martin, IEEE Trans. Antennas Propag. 46, 1126
  (1998); Yurkin, Min & Hoekstra, Phys. Rev. E 82, 036703 (2010)).  Carrying
  out the radial Fourier integral of ``4 pi / (q^2 - k^2 - i0)`` over
  ``q < k_F`` gives

      u = (1/pi) [cos(kr) (Si(a r) + Si(b r)) + sin(kr) (Ci(a r) - Ci(b r))]
          + i sin(kr),                     a = k_F - k,  b = k_F + k,
      u' = (1/pi) [-k sin(kr) S + k cos(kr) C + 2 sin(k_F r) / r] + i k cos(kr),
      u'' = -k^2 u + (2/pi) (k_F r cos(k_F r) - sin(k_F r)) / r^2,

  with ``S = Si(a r) + Si(b r)`` and ``C = Ci(a r) - Ci(b r)``.  As
  ``k_F -> inf`` this returns ``exp(i k r)``; the imaginary (radiating) part is
  not filtered, so the optical theorem holds unchanged.

  The consistent filtered tensor.  The exact tensor splits into a principal
  value part and the contact term ``-(4 pi/3) delta(r) I``; the lattice keeps
  that contact term exactly through Clausius-Mossotti in the polarizability.
  Differentiating the band-limited scalar, however, also band-limits the
  contact term: since ``(nabla^2 + k^2) g_F = -4 pi delta_F`` (the ``u''``
  above), ``(k^2 I + grad grad) g_F`` carries ``-(4 pi/3) delta_F(r) I`` at
  every ``r != 0``, with the smeared delta

      delta_F(r) = (sin(k_F r) - k_F r cos(k_F r)) / (2 pi^2 r^3),

  the inverse Fourier transform of the ball ``|q| < k_F``.  Sampled on a cubic
  lattice it does not sum to one per cell (its sum over ``r != 0`` tends to
  ``1 - pi/6``), so keeping it adds a spurious, shape-dependent interaction
  near every surface.  The tensor used here therefore adds ``(4 pi/3)
  delta_F(r)`` back to ``A``: only the band-limited principal-value part
  remains (Yurkin, Min & Hoekstra 2010, the FCD interaction term), and the
  polarizability keeps Clausius-Mossotti plus the dynamic self term, which is
  this tensor's own limit at ``r -> 0`` (see ``_polarizability.py``).
"""

from __future__ import annotations

import numpy as np
from scipy.special import sici

__all__ = ["green_coefficients", "green_tensor", "dense_interaction_matrix", "smeared_delta"]


def _ab_from_u(r, k, u, du, d2u):
    # A and B of (k^2 I + grad grad)(u/r): module docstring formula.
    inv_r = 1.0 / r
    a = (k * k * u + du * inv_r - u * inv_r * inv_r) * inv_r
    b = (d2u - 3.0 * du * inv_r + 3.0 * u * inv_r * inv_r) * inv_r
    return a, b


def green_coefficients(r_nm, k_per_nm, *, filtered_spacing_nm=None):
    """Scalar coefficients ``A(r)``, ``B(r)`` of ``G = A I + B n n``.

    Parameters
    ----------
    r_nm : ndarray of float
        Distances [nm], all > 0.
    k_per_nm : float
        Wavenumber in the host [1/nm].
    filtered_spacing_nm : float or None
        Lattice spacing ``d`` [nm] of the filtered tensor (cut-off
        ``k_F = pi / d``, requires ``k d < pi``); ``None`` for the point-dipole
        tensor.

    Returns
    -------
    a, b : ndarray of complex, same shape as ``r_nm``
        Coefficients [1/nm^3].
    """
    r = np.asarray(r_nm, dtype=float)
    k = float(k_per_nm)
    kr = k * r
    if filtered_spacing_nm is None:
        # Jackson (9.18): u = exp(ikr), u' = ik u, u'' = -k^2 u.
        u = np.exp(1j * kr)
        return _ab_from_u(r, k, u, 1j * k * u, -k * k * u)
    kf = np.pi / float(filtered_spacing_nm)
    si_a, ci_a = sici((kf - k) * r)
    si_b, ci_b = sici((kf + k) * r)
    s_sum = si_a + si_b
    c_dif = ci_a - ci_b
    cos_kr = np.cos(kr)
    sin_kr = np.sin(kr)
    kfr = kf * r
    # Filtered scalar and its derivatives: module docstring formulas.
    u = (cos_kr * s_sum + sin_kr * c_dif) / np.pi + 1j * sin_kr
    du = (-k * sin_kr * s_sum + k * cos_kr * c_dif + 2.0 * np.sin(kfr) / r) / np.pi + 1j * k * cos_kr
    d2u = -k * k * u + (2.0 / np.pi) * (kfr * np.cos(kfr) - np.sin(kfr)) / (r * r)
    a, b = _ab_from_u(r, k, u, du, d2u)
    # Remove the smeared contact term: A += (4 pi/3) delta_F(r) (module docstring).
    return a + (4.0 * np.pi / 3.0) * smeared_delta(r, kf), b


def smeared_delta(r_nm, k_filter_per_nm):
    """Band-limited delta ``(sin(k_F r) - k_F r cos(k_F r)) / (2 pi^2 r^3)`` [1/nm^3].

    The inverse Fourier transform of the indicator of the ball ``|q| < k_F``;
    its integral over all space is 1.  For small ``k_F r`` the series
    ``k_F^3 / (6 pi^2) (1 - (k_F r)^2 / 10)`` avoids cancellation.
    """
    r = np.asarray(r_nm, dtype=float)
    x = float(k_filter_per_nm) * r
    small = x < 1e-2
    with np.errstate(divide="ignore", invalid="ignore"):
        out = (np.sin(x) - x * np.cos(x)) / (2.0 * np.pi**2 * r**3)
    series = float(k_filter_per_nm) ** 3 / (6.0 * np.pi**2) * (1.0 - x * x / 10.0)
    return np.where(small, series, out)


def green_tensor(offsets_nm, k_per_nm, *, filtered_spacing_nm=None):
    """Dyadic Green's tensor for separation vectors.

    Parameters
    ----------
    offsets_nm : ndarray of float, shape (..., 3)
        Separations ``R = r_obs - r_src`` [nm], all non-zero.
    k_per_nm : float
        Wavenumber in the host [1/nm].
    filtered_spacing_nm : float or None
        See :func:`green_coefficients`.

    Returns
    -------
    ndarray of complex, shape (..., 3, 3)
        ``G(R)`` [1/nm^3]; the field of a dipole ``p`` is ``G @ p``.
    """
    off = np.asarray(offsets_nm, dtype=float)
    r = np.sqrt(np.sum(off * off, axis=-1))
    a, b = green_coefficients(r, k_per_nm, filtered_spacing_nm=filtered_spacing_nm)
    n = off / r[..., None]
    out = b[..., None, None] * n[..., :, None] * n[..., None, :]
    out[..., 0, 0] += a
    out[..., 1, 1] += a
    out[..., 2, 2] += a
    return out


def dense_interaction_matrix(positions_nm, k_per_nm, *, filtered_spacing_nm=None, dtype=np.complex128):
    """Dense ``3N x 3N`` matrix of ``G(r_i - r_j)`` with zero diagonal blocks.

    Row/column ``3 j + c`` is component ``c`` of dipole ``j``.  Memory is
    ``9 N^2`` complex numbers: meant for small lattices (tests, the direct
    solver).

    Parameters
    ----------
    positions_nm : ndarray of float, shape (N, 3)
        Dipole positions [nm].
    k_per_nm : float
        Wavenumber in the host [1/nm].
    filtered_spacing_nm : float or None
        See :func:`green_coefficients`.
    dtype : numpy dtype
        Complex dtype of the result.

    Returns
    -------
    ndarray of complex, shape (3N, 3N)
    """
    pos = np.asarray(positions_nm, dtype=float)
    n = pos.shape[0]
    out = np.zeros((n, 3, n, 3), dtype=dtype)
    for j in range(n):
        off = pos[j] - pos
        off[j] = 1.0  # placeholder, overwritten below
        g = green_tensor(off, k_per_nm, filtered_spacing_nm=filtered_spacing_nm)
        g[j] = 0.0
        out[j] = np.transpose(g, (1, 0, 2))
    return out.reshape(3 * n, 3 * n)
