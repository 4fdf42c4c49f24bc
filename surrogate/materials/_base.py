"""The material interface: complex relative permittivity as a function of wavelength.

Sign convention
---------------
Fields vary in time as ``exp(-i omega t)``.  With it an absorbing medium has
``eps = eps' + i eps''`` with ``eps'' >= 0`` and a complex refractive index
``n + i k`` with ``k >= 0``; ``eps = (n + i k)**2``.
"""

from __future__ import annotations

from abc import ABC, abstractmethod

import numpy as np

from .._validation import check_positive_array
from ..errors import WavelengthOutOfRangeError

__all__ = ["Material"]


class Material(ABC):
    """A medium described by its complex relative permittivity.

    Subclasses implement :meth:`_permittivity` on a validated wavelength array
    and set ``name``, ``source`` (literature reference), ``interpolation`` (how
    values between data points are obtained, or ``"closed form"``) and
    ``wavelength_range_nm`` (the validity range; wavelengths outside it are
    refused).
    """

    name: str
    source: str
    interpolation: str
    wavelength_range_nm: tuple[float, float]

    def permittivity(self, wavelength_nm):
        """Complex relative permittivity eps' + i eps'' [-].

        Parameters
        ----------
        wavelength_nm : float or array_like, shape (W,)
            Vacuum wavelengths [nm], inside ``wavelength_range_nm``.

        Returns
        -------
        complex or ndarray of complex, shape (W,)
            A scalar for a scalar input.
        """
        scalar = np.ndim(wavelength_nm) == 0
        wl = check_positive_array("wavelength_nm", wavelength_nm, unit="nm")
        lo, hi = self.wavelength_range_nm
        outside = (wl < lo * (1 - 1e-12)) | (wl > hi * (1 + 1e-12))
        if outside.any():
            raise WavelengthOutOfRangeError(
                f"wavelength_nm must be in [{lo:g}, {hi:g}] nm for material {self.name!r} "
                f"(the range of its data; nothing is extrapolated); got {wl[outside][0]:g}"
            )
        eps = np.asarray(self._permittivity(wl), dtype=complex)
        return complex(eps[0]) if scalar else eps

    def refractive_index(self, wavelength_nm):
        """Complex refractive index n + i k [-] (principal root, k >= 0)."""
        eps = self.permittivity(wavelength_nm)
        # principal square root keeps Im >= 0 for Im(eps) >= 0 (exp(-i w t) convention)
        return np.sqrt(eps) if np.ndim(eps) else complex(np.sqrt(eps))

    def describe(self) -> dict:
        """A JSON-ready record of what produced the values (stored with every result)."""
        lo, hi = self.wavelength_range_nm
        return {
            "name": self.name,
            "kind": type(self).__name__,
            "source": self.source,
            "interpolation": self.interpolation,
            "wavelength_min_nm": float(lo),
            "wavelength_max_nm": float(hi),
        }

    @abstractmethod
    def _permittivity(self, wavelength_nm: np.ndarray) -> np.ndarray:
        """Permittivity on a validated 1-D wavelength array [nm]."""

    def __repr__(self):
        return f"{type(self).__name__}(name={self.name!r})"
