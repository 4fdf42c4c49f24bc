"""Non-dispersive, lossless dielectrics given by a real refractive index."""

from __future__ import annotations

import numpy as np

from .._validation import check_real
from ._base import Material

__all__ = ["Dielectric", "NAMED_DIELECTRICS"]


class Dielectric(Material):
    """A medium of constant real refractive index n (eps = n^2, eps'' = 0).

    Parameters
    ----------
    index : float
        Refractive index n [-], in [1, 10].
    name : str, optional
        Defaults to ``"n=<index>"``.
    """

    interpolation = "constant"
    wavelength_range_nm = (1e-3, 1e9)

    def __init__(self, index, *, name=None, source="constant refractive index"):
        self.index = check_real("refractive index", index, low=1.0, high=10.0)
        self.name = name or f"n={self.index:g}"
        self.source = source

    def _permittivity(self, wavelength_nm):
        return np.full(wavelength_nm.shape, self.index**2, dtype=complex)

    def describe(self):
        record = super().describe()
        record["index"] = self.index
        return record


# Handbook values near 800 nm, from memory: fused silica n = 1.453 at 800 nm
# (Malitson, JOSA 55, 1205 (1965)), water n = 1.329 at 800 nm (Hale & Querry,
# Appl. Opt. 12, 555 (1973)); rounded as engineers usually quote them.
NAMED_DIELECTRICS = {
    "air": (1.0, "vacuum / air, n = 1"),
    "water": (1.33, "water, n = 1.33 (Hale & Querry 1973, visible-near-infrared, rounded)"),
    "glass": (1.45, "fused silica, n = 1.45 (Malitson 1965 near 800 nm, rounded)"),
}
