"""Physical constants and unit conversions used across the package.

Lengths are in nanometres throughout; photon energies in electronvolts.
"""

from __future__ import annotations

import numpy as np

__all__ = ["HC_EV_NM", "ev_from_nm", "nm_from_ev", "wavenumber_per_nm"]

#: h c in eV nm (CODATA 2018 exact values of h, c and e: 1239.84198... eV nm).
HC_EV_NM = 1239.8419843320026


def ev_from_nm(wavelength_nm):
    """Photon energy [eV] of a vacuum wavelength [nm]."""
    return HC_EV_NM / np.asarray(wavelength_nm, dtype=float)


def nm_from_ev(energy_ev):
    """Vacuum wavelength [nm] of a photon energy [eV]."""
    return HC_EV_NM / np.asarray(energy_ev, dtype=float)


def wavenumber_per_nm(wavelength_nm, n_host=1.0):
    """Wavenumber k = 2 pi n_host / lambda [1/nm] in a host of real index n_host."""
    return 2.0 * np.pi * n_host / np.asarray(wavelength_nm, dtype=float)
