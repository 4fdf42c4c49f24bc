"""Lorentz-Drude permittivity of metals with the parameters of Rakic et al. (1998).

References
----------
A. D. Rakic, A. B. Djurisic, J. M. Elazar and M. L. Majewski, "Optical
properties of metallic films for vertical-cavity optoelectronic devices",
Applied Optics 37, 5271-5283 (1998), Eqs. (1)-(3) and Table 1 (Lorentz-Drude
parameters, in eV).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..units import HC_EV_NM
from ._base import Material

__all__ = ["LorentzDrude", "RAKIC_1998"]

_RAKIC = (
    "Rakic, Djurisic, Elazar & Majewski, Appl. Opt. 37, 5271 (1998), Lorentz-Drude model"
)


@dataclass(frozen=True, repr=False)
class LorentzDrude(Material):
    """Drude term plus damped Lorentz oscillators, in photon energy.

    eps(w) = 1 - f0 wp^2 / (w (w + i G0)) + sum_j f_j wp^2 / (w_j^2 - w^2 - i w G_j)

    (Rakic et al. 1998, Eqs. (2)-(3), written for exp(-i w t) so Im eps >= 0).

    Parameters
    ----------
    name : str
        Material name.
    plasma_ev : float
        Plasma energy h-bar w_p [eV].
    f0 : float
        Oscillator strength of the free-electron (Drude) term [-].
    gamma0_ev : float
        Damping of the Drude term [eV].
    oscillators : tuple of (f_j [-], gamma_j [eV], energy_j [eV])
        The bound-electron (Lorentz) terms.
    wavelength_range_nm : (float, float)
        Range of the fit in the paper [nm].
    """

    name: str
    plasma_ev: float
    f0: float
    gamma0_ev: float
    oscillators: tuple[tuple[float, float, float], ...]
    wavelength_range_nm: tuple[float, float]
    source: str = _RAKIC
    interpolation: str = "closed form"

    def _permittivity(self, wavelength_nm):
        w = HC_EV_NM / wavelength_nm  # photon energy [eV]
        wp2 = self.plasma_ev**2
        eps = 1.0 - self.f0 * wp2 / (w * (w + 1j * self.gamma0_ev))  # Eq. (2), intraband
        for f, gamma, wj in self.oscillators:  # Eq. (3), interband
            eps = eps + f * wp2 / (wj**2 - w**2 - 1j * w * gamma)
        return eps

    def describe(self):
        record = super().describe()
        record["parameters_ev"] = {
            "plasma_ev": self.plasma_ev,
            "f0": self.f0,
            "gamma0_ev": self.gamma0_ev,
            "oscillators_f_gamma_ev_energy_ev": [list(o) for o in self.oscillators],
        }
        return record


# Table 1 of Rakic et al. (1998), Lorentz-Drude columns: (f_j, Gamma_j [eV], omega_j [eV]).
# Validity ranges: the fit ranges of the paper as stated in the open refractive-index
# database's tabulation of the same model (0.2-5 eV for Au, 0.1-5 eV for Ag, 0.1-6 eV
# for Cu, 0.005-20 eV for Al).
RAKIC_1998 = {
    "gold": LorentzDrude(
        name="gold-ld",
        plasma_ev=9.03,
        f0=0.760,
        gamma0_ev=0.053,
        oscillators=(
            (0.024, 0.241, 0.415),
            (0.010, 0.345, 0.830),
            (0.071, 0.870, 2.969),
            (0.601, 2.494, 4.304),
            (4.384, 2.214, 13.32),
        ),
        wavelength_range_nm=(247.97, 6199.2),
    ),
    "silver": LorentzDrude(
        name="silver-ld",
        plasma_ev=9.01,
        f0=0.845,
        gamma0_ev=0.048,
        oscillators=(
            (0.065, 3.886, 0.816),
            (0.124, 0.452, 4.481),
            (0.011, 0.065, 8.185),
            (0.840, 0.916, 9.083),
            (5.646, 2.419, 20.29),
        ),
        wavelength_range_nm=(247.97, 12398.4),
    ),
    "copper": LorentzDrude(
        name="copper-ld",
        plasma_ev=10.83,
        f0=0.575,
        gamma0_ev=0.030,
        oscillators=(
            (0.061, 0.378, 0.291),
            (0.104, 1.056, 2.957),
            (0.723, 3.213, 5.300),
            (0.638, 4.305, 11.18),
        ),
        wavelength_range_nm=(206.64, 12398.4),
    ),
    "aluminium": LorentzDrude(
        name="aluminium-ld",
        plasma_ev=14.98,
        f0=0.523,
        gamma0_ev=0.047,
        oscillators=(
            (0.227, 0.333, 0.162),
            (0.050, 0.312, 1.544),
            (0.166, 1.351, 1.808),
            (0.030, 3.382, 3.473),
        ),
        wavelength_range_nm=(61.992, 247968.0),
    ),
}
