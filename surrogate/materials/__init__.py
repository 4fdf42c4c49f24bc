"""Optical constants of antenna metals, dielectrics and user tables.

Convention: time dependence exp(-i omega t), so eps = eps' + i eps'' with
eps'' >= 0 in absorbing media, and the complex index is n + i k with k >= 0.
"""

from ._base import Material
from ._dielectric import NAMED_DIELECTRICS, Dielectric
from ._lorentz_drude import RAKIC_1998, LorentzDrude
from ._tabulated import INTERPOLATION, TabulatedMaterial

__all__ = [
    "Material",
    "Dielectric",
    "NAMED_DIELECTRICS",
    "LorentzDrude",
    "RAKIC_1998",
    "TabulatedMaterial",
    "INTERPOLATION",
]
