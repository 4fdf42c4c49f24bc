"""Cross sections, far-field amplitudes and near fields from solved dipoles.

Units: the incident field has amplitude 1 (``E0 = 1``), dipole moments are in
nm^3 x E0, fields in units of E0 and cross sections in nm^2 of the host.

References
----------
.. [1] B. T. Draine, ApJ 333, 848 (1988): extinction and absorption cross
   sections of a dipole array, as restated in B. T. Draine and P. J. Flatau,
   J. Opt. Soc. Am. A 11, 1491 (1994).
.. [2] J. D. Jackson, Classical Electrodynamics, 3rd ed., eq. (9.18): the field
   of an oscillating dipole, whose far zone gives the scattering amplitude.
"""

from __future__ import annotations

import numpy as np

from ._green import green_coefficients

__all__ = [
    "incident_field",
    "cross_sections",
    "absorption_by_site",
    "scattering_amplitude",
    "far_field_c_sca",
    "dipole_field",
]


def incident_field(positions_nm, k_per_nm, k_direction, e_direction):
    """Plane wave ``e exp(i k khat . r)`` [E0] at ``positions_nm`` (N, 3)."""
    phase = np.exp(1j * k_per_nm * (positions_nm @ k_direction))
    return phase[:, None] * e_direction[None, :]


def absorption_by_site(polarization, alpha_site_nm3, k_per_nm):
    """Absorption cross section of each site [nm^2], shape (N,); their sum is ``C_abs``.

    ``C_abs,j = 4 pi k [-Im(1/alpha_j) - (2/3) k^3] |P_j|^2`` ([1], with ``|E0| = 1``):
    the power the dipole draws from its exciting field, ``(omega/2) Im(P_j . E_exc,j^*)``
    with ``E_exc,j = P_j / alpha_j``, minus what it radiates, per unit incident
    irradiance.  For a site of real permittivity it is zero (LDR: to order (kd)^3;
    FCD and RRCM: exactly, as their radiative term is ``(2/3) i k^3`` itself).
    """
    p2 = np.sum(np.abs(np.asarray(polarization, dtype=np.complex128)) ** 2, axis=1)
    k = float(k_per_nm)
    return 4.0 * np.pi * k * (-np.imag(1.0 / alpha_site_nm3) - (2.0 / 3.0) * k**3) * p2


def cross_sections(polarization, e_inc, alpha_site_nm3, k_per_nm):
    """Extinction and absorption cross sections [nm^2], and the absorption by site.

    ``C_ext = 4 pi k sum_j Im(E_inc,j^* . P_j)`` and
    ``C_abs = sum_j C_abs,j`` (:func:`absorption_by_site`) ([1], with ``|E0| = 1``).

    Returns
    -------
    c_ext_nm2, c_abs_nm2 : float
    c_abs_site_nm2 : ndarray, shape (N,)
    """
    p = np.asarray(polarization, dtype=np.complex128)
    k = float(k_per_nm)
    # [1] C_ext = (4 pi k / |E0|^2) sum_j Im(E_inc,j^* . P_j)
    c_ext = 4.0 * np.pi * k * float(np.sum(np.imag(np.conj(e_inc) * p)))
    # [1] C_abs = (4 pi k / |E0|^2) sum_j {Im[P_j . (alpha_j^-1)^* P_j^*] - (2/3) k^3 |P_j|^2}
    by_site = absorption_by_site(p, alpha_site_nm3, k)
    return c_ext, float(np.sum(by_site)), by_site


def scattering_amplitude(polarization, positions_nm, k_per_nm, directions, *, chunk_size=256):
    """Far-field amplitude ``F(n)``: ``E_sca -> F exp(i k r) / r`` as ``r -> inf``.

    ``F(n) = k^2 (I - n n) sum_j P_j exp(-i k n . r_j)`` (far zone of [2]).

    Parameters
    ----------
    polarization : ndarray of complex, shape (N, 3)
    positions_nm : ndarray of float, shape (N, 3)
    k_per_nm : float
    directions : ndarray of float, shape (K, 3)
        Unit vectors of observation.
    chunk_size : int
        Directions per block (memory ``N * chunk_size`` complex numbers).

    Returns
    -------
    ndarray of complex, shape (K, 3)
        Amplitude [E0 nm].
    """
    p = np.asarray(polarization, dtype=np.complex128)
    n = np.asarray(directions, dtype=float)
    out = np.empty((n.shape[0], 3), dtype=np.complex128)
    k = float(k_per_nm)
    for start in range(0, n.shape[0], chunk_size):
        nn = n[start : start + chunk_size]
        phase = np.exp(-1j * k * (nn @ positions_nm.T))  # (K, N)
        s = phase @ p  # sum_j P_j exp(-ik n.r_j)
        s -= nn * np.sum(nn * s, axis=1, keepdims=True)  # (I - n n)
        out[start : start + chunk_size] = k * k * s
    return out


def far_field_c_sca(polarization, positions_nm, k_per_nm, *, n_theta=48, n_phi=96):
    """Scattering cross section [nm^2] by integrating ``|F|^2`` over directions.

    Gauss-Legendre in ``cos(theta)`` times the periodic trapezoid rule in ``phi``;
    exact for band-limited angular patterns up to degree ``2 n_theta - 1`` in
    ``cos(theta)`` and ``n_phi - 1`` in ``phi``.
    """
    mu, w_mu = np.polynomial.legendre.leggauss(n_theta)
    phi = 2.0 * np.pi * np.arange(n_phi) / n_phi
    st = np.sqrt(1.0 - mu * mu)
    dirs = np.stack(
        [
            (st[:, None] * np.cos(phi)[None, :]).ravel(),
            (st[:, None] * np.sin(phi)[None, :]).ravel(),
            np.repeat(mu, n_phi),
        ],
        axis=1,
    )
    f = scattering_amplitude(polarization, positions_nm, k_per_nm, dirs)
    weights = np.repeat(w_mu, n_phi) * (2.0 * np.pi / n_phi)
    # C_sca = integral |F|^2 dOmega for |E0| = 1.
    return float(np.sum(weights * np.sum(np.abs(f) ** 2, axis=1)))


def dipole_field(polarization, positions_nm, points_nm, k_per_nm, *, filtered_spacing_nm=None, chunk_size=None):
    """Scattered field ``sum_j G(r - r_j) P_j`` [E0] at points (K, 3).

    Blocks of points keep memory near ``10 * chunk_size * N`` floats (default
    chosen so a block holds about 2**19 point-dipole pairs).
    """
    p = np.asarray(polarization, dtype=np.complex128)
    pts = np.asarray(points_nm, dtype=float)
    n = p.shape[0]
    if chunk_size is None:
        chunk_size = max(1, 2**19 // n)
    out = np.empty((pts.shape[0], 3), dtype=np.complex128)
    for start in range(0, pts.shape[0], chunk_size):
        q = pts[start : start + chunk_size]
        off = q[:, None, :] - positions_nm[None, :, :]  # (C, N, 3): R = r_obs - r_src
        r = np.sqrt(np.einsum("cnk,cnk->cn", off, off))
        a, b = green_coefficients(r, k_per_nm, filtered_spacing_nm=filtered_spacing_nm)
        off /= r[..., None]  # unit vectors n
        # G p = A p + B n (n . p), with G = A I + B n n (see _green.py).
        ndp = np.einsum("cnk,nk->cn", off, p) * b
        out[start : start + chunk_size] = a @ p + np.einsum("cn,cnk->ck", ndp, off)
    return out
