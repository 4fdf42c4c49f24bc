"""A plane wave's direction and polarization from angles.

Convention (ours, stated once): the film lies in the x-y plane.  The polar angle
``theta`` is measured from the downward normal ``-z`` (``theta = 0``: normal
incidence from above, travelling along ``-z``; ``theta = 90``: grazing, in the film
plane, as a guided mode drives a transducer); the azimuth ``phi`` turns the plane of
incidence from x towards y.  Then

    k = (sin theta cos phi, sin theta sin phi, -cos theta),
    p = (cos theta cos phi, cos theta sin phi, sin theta)   (in the plane of incidence),
    s = (-sin phi, cos phi, 0)                              (perpendicular to it),

and the field is ``e = cos psi p + sin psi s`` with the polarization angle ``psi``
(``psi = 0``: p, transverse magnetic; ``psi = 90``: s, transverse electric).  At
``theta = phi = psi = 0`` this is the default: along ``-z`` with the field along x.
``k``, ``p`` and ``s`` form an orthonormal set for every angle (elementary geometry).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validation import check_real

__all__ = ["Incidence"]


@dataclass(frozen=True)
class Incidence:
    """A linearly polarized plane wave of amplitude ``E0 = 1`` in the host.

    Parameters
    ----------
    polar_deg : float, default 0
        Angle from the downward normal ``-z`` [deg], in [0, 180].
    azimuth_deg : float, default 0
        Azimuth of the plane of incidence from x towards y [deg], in [-360, 360].
    polarization_deg : float, default 0
        Angle of the field from the p direction towards s [deg], in [-180, 180].

    Examples
    --------
    >>> Incidence().k_direction.tolist(), Incidence().e_direction.tolist()
    ([0.0, 0.0, -1.0], [1.0, 0.0, 0.0])
    >>> np.round(Incidence(polar_deg=90).e_direction, 12).tolist()  # grazing along +x, p: field along z
    [0.0, 0.0, 1.0]
    """

    polar_deg: float = 0.0
    azimuth_deg: float = 0.0
    polarization_deg: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "polar_deg", check_real("polar_deg", self.polar_deg, low=0.0, high=180.0, unit="deg"))
        object.__setattr__(self, "azimuth_deg", check_real("azimuth_deg", self.azimuth_deg, low=-360.0, high=360.0, unit="deg"))
        object.__setattr__(
            self, "polarization_deg", check_real("polarization_deg", self.polarization_deg, low=-180.0, high=180.0, unit="deg")
        )

    def _basis(self):
        t, f = np.radians(self.polar_deg), np.radians(self.azimuth_deg)
        k = np.array([np.sin(t) * np.cos(f), np.sin(t) * np.sin(f), -np.cos(t)])
        p = np.array([np.cos(t) * np.cos(f), np.cos(t) * np.sin(f), np.sin(t)])
        s = np.array([-np.sin(f), np.cos(f), 0.0])
        return k, p, s

    @property
    def k_direction(self):
        """Unit propagation direction, shape (3,)."""
        return _clean(self._basis()[0])

    @property
    def e_direction(self):
        """Unit field direction, shape (3,)."""
        _, p, s = self._basis()
        psi = np.radians(self.polarization_deg)
        return _clean(np.cos(psi) * p + np.sin(psi) * s)

    def to_dict(self):
        return {"polar_deg": self.polar_deg, "azimuth_deg": self.azimuth_deg, "polarization_deg": self.polarization_deg}


def _clean(v):
    # Exact zeros where rounding leaves 6e-17 (cos 90 deg), so the defaults print cleanly.
    v = np.where(np.abs(v) < 1e-15, 0.0, v)
    return v / np.linalg.norm(v)
