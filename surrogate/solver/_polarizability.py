"""Polarizability prescriptions of the coupled dipole approximation.

All return the polarizability ``alpha`` [nm^3] of one lattice cell of volume
``d^3`` for a relative permittivity ``eps_rel`` (permittivity of the material
over that of the host, ``eps'' >= 0`` with ``exp(-i omega t)``) and host
wavenumber ``k`` [1/nm].

References
----------
.. [1] B. T. Draine, "The discrete-dipole approximation and its application to
   interstellar graphite grains", ApJ 333, 848 (1988): Clausius-Mossotti with
   radiative reaction, eqs. (2.1), (2.3).
.. [2] B. T. Draine and J. Goodman, "Beyond Clausius-Mossotti: wave propagation
   on a polarizable point lattice and the discrete dipole approximation",
   ApJ 405, 685 (1993): lattice dispersion relation.
.. [3] M. A. Yurkin, M. Min and A. G. Hoekstra, "Application of the discrete
   dipole approximation to very large refractive indices: filtered coupled
   dipoles revived", Phys. Rev. E 82, 036703 (2010); N. B. Piller and
   O. J. F. Martin, IEEE Trans. Antennas Propag. 46, 1126 (1998).
"""

from __future__ import annotations

import numpy as np

__all__ = ["POLARIZABILITIES", "polarizability", "ldr_coefficients", "fcd_self_term"]

#: Names accepted by :func:`polarizability`.
POLARIZABILITIES = ("fcd", "ldr", "rrcm")

# Draine & Goodman (1993) [2], lattice dispersion relation coefficients
# b1, b2, b3 (values as printed there; recalled from the paper).
_B1 = -1.8915316
_B2 = 0.1648469
_B3 = -1.7700004


def ldr_coefficients():
    """Return the lattice-dispersion-relation coefficients ``(b1, b2, b3)`` [-]."""
    return _B1, _B2, _B3


def _clausius_mossotti(eps_rel, spacing_nm):
    # Clausius-Mossotti: alpha = (3 d^3 / 4 pi) (eps - 1) / (eps + 2), [1] eq. (2.1).
    return (3.0 * spacing_nm**3 / (4.0 * np.pi)) * (eps_rel - 1.0) / (eps_rel + 2.0)


def fcd_self_term(kd):
    """Dynamic self term ``M`` [-] of the filtered coupled dipole for ``k d < pi``.

    ``M = (4/3)(kd)^2 + (2/(3 pi)) ln((pi - kd)/(pi + kd)) (kd)^3 + (2/3) i (kd)^3``
    (Yurkin, Min & Hoekstra 2010 [3]); ``M / d^3`` is the ``r -> 0`` limit of the
    consistent filtered tensor (see :func:`polarizability`).
    """
    kd = float(kd)
    return (
        (4.0 / 3.0) * kd**2
        + (2.0 / (3.0 * np.pi)) * np.log((np.pi - kd) / (np.pi + kd)) * kd**3
        + (2.0 / 3.0) * 1j * kd**3
    )


def polarizability(eps_rel, spacing_nm, k_per_nm, *, kind="fcd", s_factor=0.0):
    """Cell polarizability for one of the published prescriptions.

    Parameters
    ----------
    eps_rel : complex or ndarray of complex
        Permittivity relative to the host [-], ``Im >= 0``.
    spacing_nm : float
        Lattice spacing ``d`` [nm].
    k_per_nm : float
        Wavenumber in the host ``2 pi n_host / lambda`` [1/nm].
    kind : {"fcd", "ldr", "rrcm"}
        ``"rrcm"``: Clausius-Mossotti with radiative reaction [1];
        ``"ldr"``: lattice dispersion relation [2];
        ``"fcd"``: filtered coupled dipole [3].
    s_factor : float
        ``S = sum_j (a_j e_j)^2`` of the LDR, with ``a`` the propagation and
        ``e`` the polarization unit vectors [-]; used only by ``"ldr"``.

    Returns
    -------
    complex or ndarray of complex
        Polarizability [nm^3].
    """
    eps = np.asarray(eps_rel, dtype=complex)
    d = float(spacing_nm)
    kd = float(k_per_nm) * d
    a_cm = _clausius_mossotti(eps, d)
    if kind == "rrcm":
        # Radiative reaction: alpha = alpha_CM / (1 - (2/3) i k^3 alpha_CM), [1] eq. (2.3).
        corr = (2.0 / 3.0) * 1j * kd**3
    elif kind == "ldr":
        # LDR: alpha = alpha_CM / (1 + (alpha_CM/d^3)[(b1 + m^2 b2 + m^2 b3 S)(kd)^2
        #                                             - (2/3) i (kd)^3]),  [2], with m^2 = eps.
        corr = -((_B1 + eps * _B2 + eps * _B3 * s_factor) * kd**2 - (2.0 / 3.0) * 1j * kd**3)
    elif kind == "fcd":
        # FCD: alpha^-1 = alpha_CM^-1 - M / d^3 with the dynamic self term [3]
        #   M = (4/3)(kd)^2 + (2/(3 pi)) ln((pi - kd)/(pi + kd)) (kd)^3 + (2/3) i (kd)^3.
        # Derivation: M / d^3 is the r -> 0 limit of the consistent filtered tensor of
        # _green.py (the contact term stays in alpha_CM, exactly).  That tensor is
        # isotropic at 0 with value (1/3) trace = (2/3) k^2 g_F(0), because the
        # traceless static principal-value part filters to zero at r = 0; and
        #   g_F(0) = u'(0) = (1/pi) [2 k_F + k ln((k_F - k)/(k_F + k))] + i k,
        # which with k_F = pi/d gives M term by term.
        corr = fcd_self_term(kd)
    else:  # validated at the boundary; kept for internal misuse
        raise ValueError(f"kind must be one of {POLARIZABILITIES}; got {kind!r}")
    return a_cm / (1.0 - (a_cm / d**3) * corr)
