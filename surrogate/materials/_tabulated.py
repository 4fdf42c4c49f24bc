"""Measured optical constants n, k on a wavelength grid, with one fixed interpolation.

Interpolation
-------------
n and k are interpolated separately with the monotone piecewise-cubic Hermite
interpolant (PCHIP; F. N. Fritsch and R. E. Carlson, SIAM J. Numer. Anal. 17,
238 (1980)) as functions of photon energy E = hc / lambda.  The measured
tables are roughly uniform in photon energy, PCHIP passes through every
tabulated point, creates no new extrema between points (so k stays >= 0 and no
spurious ripple appears in the sparse near-infrared part of the tables) and has
a continuous first derivative.  Wavelengths outside the tabulated range are
refused; nothing is extrapolated.
"""

from __future__ import annotations

import numpy as np
from scipy.interpolate import PchipInterpolator

from ..errors import MaterialDataError
from ..units import HC_EV_NM
from ._base import Material

__all__ = ["TabulatedMaterial", "INTERPOLATION"]

#: The one interpolation used for every table (recorded with each result).
INTERPOLATION = "pchip of n and k in photon energy"


class TabulatedMaterial(Material):
    """A material given by a table of n and k.

    Parameters
    ----------
    wavelength_nm : array_like, shape (T,)
        Strictly increasing vacuum wavelengths [nm], T >= 2.
    n, k : array_like, shape (T,)
        Real (n > 0) and imaginary (k >= 0) parts of the refractive index [-].
    name : str
        Material name.
    source : str
        Where the numbers come from (reference or file).
    row_labels : sequence of str, optional
        How to name each row in error messages (e.g. ``"line 5"``).

    Raises
    ------
    MaterialDataError
        If the table is too short, not increasing, not finite, or n <= 0 or k < 0.
    """

    interpolation = INTERPOLATION

    def __init__(self, wavelength_nm, n, k, *, name, source, row_labels=None):
        wl = np.asarray(wavelength_nm, dtype=float).reshape(-1)
        n = np.asarray(n, dtype=float).reshape(-1)
        k = np.asarray(k, dtype=float).reshape(-1)
        where = f"table {name!r} ({source})"
        labels = list(row_labels) if row_labels is not None else [f"row {i + 1}" for i in range(wl.size)]
        if not (wl.shape == n.shape == k.shape):
            raise MaterialDataError(
                f"{where}: wavelength_nm, n and k must have the same length; got {wl.size}, {n.size}, {k.size}"
            )
        if wl.size < 2:
            raise MaterialDataError(f"{where}: needs at least 2 rows; got {wl.size}")
        for field, arr in (("wavelength_nm", wl), ("n", n), ("k", k)):
            bad = ~np.isfinite(arr)
            if bad.any():
                i = int(np.argmax(bad))
                raise MaterialDataError(f"{where}: {field} must be finite; got {arr[i]} in {labels[i]}")
        checks = (
            ("wavelength_nm", wl <= 0, "> 0"),
            ("n", n <= 0, "> 0"),
            ("k", k < 0, ">= 0 (absorbing media have k >= 0 with exp(-i w t))"),
        )
        for field, bad, allowed in checks:
            if bad.any():
                i = int(np.argmax(bad))
                arr = {"wavelength_nm": wl, "n": n, "k": k}[field]
                raise MaterialDataError(f"{where}: {field} must be {allowed}; got {arr[i]:g} in {labels[i]}")
        step = np.diff(wl)
        if (step <= 0).any():
            i = int(np.argmax(step <= 0)) + 1
            raise MaterialDataError(
                f"{where}: wavelength_nm must be strictly increasing; got {wl[i]:g} after {wl[i - 1]:g} in {labels[i]}"
            )
        self.name = name
        self.source = source
        self.wavelength_nm = wl
        self.n = n
        self.k = k
        self.wavelength_range_nm = (float(wl[0]), float(wl[-1]))
        energy = HC_EV_NM / wl[::-1]  # increasing photon energy
        self._n_of_e = PchipInterpolator(energy, n[::-1], extrapolate=False)
        self._k_of_e = PchipInterpolator(energy, k[::-1], extrapolate=False)

    def _permittivity(self, wavelength_nm):
        energy = HC_EV_NM / wavelength_nm
        # clamp to the tabulated energies so the end points survive the 1/lambda round trip
        energy = np.clip(energy, self._n_of_e.x[0], self._n_of_e.x[-1])
        nk = self._n_of_e(energy) + 1j * self._k_of_e(energy)
        return nk**2  # eps = (n + i k)^2

    def describe(self):
        record = super().describe()
        record["n_rows"] = int(self.wavelength_nm.size)
        return record
