"""The shape-family contract: named parameters with units, bounds, rules, and a site generator.

A family turns a parameter mapping and a lattice spacing into the occupied sites
of a simple cubic lattice.  It does no physics.
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from .._validation import check_real
from ..errors import InvalidParameterError

__all__ = ["Parameter", "ShapeFamily", "ShapeSites"]


@dataclass(frozen=True)
class Parameter:
    """One geometric parameter of a family.

    Attributes
    ----------
    name : str
        Name with its unit suffix, e.g. ``"diameter_nm"``.
    unit : str
        ``"nm"`` or ``"deg"``.
    low, high : float
        Default bounds (inclusive) in ``unit``.
    description : str
        One line for help texts.
    """

    name: str
    unit: str
    low: float
    high: float
    description: str


@dataclass(frozen=True, eq=False)
class ShapeSites:
    """Occupied lattice sites of one shape.

    Attributes
    ----------
    indices : ndarray of int, shape (N, 3)
        Integer lattice coordinates.
    spacing_nm : float
        Lattice spacing actually used [nm] (may differ from the requested one when the
        family preserves volume).
    origin_nm : ndarray, shape (3,)
        Position of index (0, 0, 0) [nm]; site j is at ``origin_nm + indices[j] * spacing_nm``.
    region : ndarray of int, shape (N,)
        Region of each site, an index into ``region_names``.
    region_names : tuple of str
        E.g. ``("antenna",)`` or ``("core", "shell")``.
    volume_nm3 : float
        Volume of the ideal (continuous) shape [nm^3].
    """

    indices: np.ndarray
    spacing_nm: float
    origin_nm: np.ndarray
    region: np.ndarray
    region_names: tuple
    volume_nm3: float

    @property
    def n_sites(self):
        return int(self.indices.shape[0])

    def positions_nm(self):
        """Site positions [nm], shape (N, 3)."""
        return self.origin_nm + self.indices * self.spacing_nm


class ShapeFamily(ABC):
    """A parametric shape family (subclasses set ``name``, ``parameters``, ``description``)."""

    name: str
    description: str
    parameters: tuple

    @property
    def parameter_names(self):
        return tuple(p.name for p in self.parameters)

    def validate(self, params):
        """Check names, types and bounds, then the family's rules; return a read-only dict.

        Raises
        ------
        InvalidParameterError
            Naming the parameter, the allowed range and the value.
        """
        names = self.parameter_names
        unknown = [k for k in params if k not in names]
        if unknown:
            raise InvalidParameterError(
                f"{self.name} parameter must be one of {', '.join(names)}; got {unknown[0]!r}"
            )
        missing = [k for k in names if k not in params]
        if missing:
            raise InvalidParameterError(f"{self.name} needs parameter {missing[0]} ({self._param(missing[0]).description})")
        clean = {}
        for p in self.parameters:
            clean[p.name] = check_real(p.name, params[p.name], low=p.low, high=p.high, unit=p.unit)
        self._check_rules(clean)
        return MappingProxyType(clean)

    def sites(self, params, spacing_nm):
        """Occupied lattice sites for validated ``params`` at ``spacing_nm`` [nm]."""
        clean = self.validate(params)
        d = check_real("spacing_nm", spacing_nm, low=0.05, high=100.0, unit="nm")
        smallest = min(v for p, v in zip(self.parameters, clean.values()) if p.unit == "nm")
        if smallest < d:
            raise InvalidParameterError(
                f"spacing_nm must be at most the smallest dimension of the {self.name} ({smallest:g} nm); got {d:g}"
            )
        return self._sites(clean, d)

    def _param(self, name):
        return next(p for p in self.parameters if p.name == name)

    def _check_rules(self, params):
        """Family-specific fabrication and consistency rules (default: none)."""

    @abstractmethod
    def _sites(self, params, spacing_nm) -> ShapeSites:
        """Sites for validated parameters."""


def centred_axis(count):
    """Integer indices 0..count-1 and the offset that centres them on 0 (in units of d)."""
    return np.arange(count), -(count - 1) / 2.0
