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
from ._observation import ObservationPlane, _signed_permutation
from ._surroundings import check_slab_types

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
    role : {"size", "gap", "radius", "angle"}
        What the parameter measures; default ``"size"``.  Every ``"size"`` must hold
        at least one lattice plane, a ``"gap"`` at least one empty plane; radii and
        angles have no lattice requirement of their own.
    """

    name: str
    unit: str
    low: float
    high: float
    description: str
    role: str = "size"


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
    part : ndarray of int, shape (N,), optional
        Part of each site, an index into ``part_names``: the antenna split into the
        pieces an engineer names (``disk``, ``peg``; ``left_arm``, ``right_arm``),
        then the other regions (``substrate``, ``medium_layer``).  Default: the regions.
    part_names : tuple of str, optional
        Names of the parts (default ``region_names``).
    """

    indices: np.ndarray
    spacing_nm: float
    origin_nm: np.ndarray
    region: np.ndarray
    region_names: tuple
    volume_nm3: float
    part: np.ndarray = None
    part_names: tuple = None

    def __post_init__(self):
        if self.part is None:
            object.__setattr__(self, "part", self.region)
            object.__setattr__(self, "part_names", tuple(self.region_names))

    @property
    def n_sites(self):
        return int(self.indices.shape[0])

    def positions_nm(self):
        """Site positions [nm], shape (N, 3)."""
        return self.origin_nm + self.indices * self.spacing_nm

    def region_mask(self, name):
        """Boolean mask of the sites of region ``name``, shape (N,)."""
        if name not in self.region_names:
            raise InvalidParameterError(f"region must be one of {', '.join(self.region_names)}; got {name!r}")
        return self.region == self.region_names.index(name)

    def rotated(self, rotation):
        """The site set mapped by a signed permutation matrix R (a symmetry of the cubic lattice).

        Positions map as ``p -> R p``: indices become ``indices @ R.T`` and the origin ``R origin``,
        so the rotated set lies on the same kind of lattice with the same spacing.
        """
        rot = _signed_permutation(rotation)
        return ShapeSites(
            self.indices @ rot.T,
            self.spacing_nm,
            rot @ np.asarray(self.origin_nm, dtype=float),
            self.region,
            self.region_names,
            self.volume_nm3,
            self.part,
            self.part_names,
        )


class ShapeFamily(ABC):
    """A parametric shape family (subclasses set ``name``, ``parameters``, ``description``).

    Class attributes every family states
    ------------------------------------
    hotspot_kind : {"tip", "gap"}
        ``"tip"``: the hotspot is ``hotspot_offset_nm`` beyond the discretised +x end
        on the x axis; ``"gap"``: the hotspot is the centre of the gap.
    hotspot_definition : str
        One line for listings.
    default_hotspot_offset_nm : float
        Offset used when none is given [nm] (tip families).
    default_e_direction, default_k_direction : tuple of float
        Default illumination: field along x (the long axis), normal incidence along -z.
    mirror_axes : tuple of int
        Axes whose mirror reflection (through the origin) maps the site set onto itself.
    supports_surroundings : bool
        Whether substrate / medium-layer slabs may be added.
    """

    name: str
    description: str
    parameters: tuple

    hotspot_kind = "tip"
    hotspot_definition = "hotspot_offset_nm beyond the discretised +x surface (last dipole plane + d/2), on the x axis"
    default_hotspot_offset_nm = 5.0
    default_e_direction = (1.0, 0.0, 0.0)
    default_k_direction = (0.0, 0.0, -1.0)
    mirror_axes = (0, 1, 2)
    supports_surroundings = False

    @property
    def parameter_names(self):
        return tuple(p.name for p in self.parameters)

    @property
    def rules(self):
        """The family's fabrication and consistency rules (tuple of FabricationRule)."""
        return ()

    def validate(self, params):
        """Check names, types and bounds, then the family's rules; return a read-only dict.

        Raises
        ------
        InvalidParameterError
            Naming the parameter, the allowed range and the value (and the rule, for a
            fabrication rule).
        """
        clean = self._check_bounds(params)
        self._check_rules(clean)
        return MappingProxyType(clean)

    def violated_rules(self, params):
        """Every rule ``params`` violates, as ``(rule name, message)`` pairs (bounds checked first)."""
        clean = self._check_bounds(params)
        out = []
        for rule in self.rules:
            msg = rule.violation(clean)
            if msg is not None:
                out.append((rule.name, msg))
        return tuple(out)

    def describe(self):
        """Everything a listing shows about the family, as plain data (no I/O).

        Returns
        -------
        dict
            ``name``, ``description``, ``parameters`` (dicts: name, unit, low, high,
            description, role), ``rules`` (dicts: name, description), ``hotspot``
            (kind, definition, default_offset_nm), ``observation_plane``,
            ``default_e_direction``, ``default_k_direction``, ``mirror_axes`` and
            ``supports_surroundings``.
        """
        return {
            "name": self.name,
            "description": self.description,
            "parameters": [
                {"name": p.name, "unit": p.unit, "low": p.low, "high": p.high, "description": p.description, "role": p.role}
                for p in self.parameters
            ],
            "rules": [{"name": r.name, "description": r.description} for r in self.rules],
            "hotspot": {
                "kind": self.hotspot_kind,
                "definition": self.hotspot_definition,
                "default_offset_nm": self.default_hotspot_offset_nm if self.hotspot_kind == "tip" else None,
            },
            "observation_plane": "through the hotspot, perpendicular to x (in-plane axes y and z)",
            "default_e_direction": self.default_e_direction,
            "default_k_direction": self.default_k_direction,
            "mirror_axes": self.mirror_axes,
            "supports_surroundings": self.supports_surroundings,
        }

    def site_count(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Number of sites ``sites(...)`` returns [-] (film families compute it without building them)."""
        return self.sites(params, spacing_nm, substrate=substrate, medium_layer=medium_layer).n_sites

    def _check_bounds(self, params):
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
        return clean

    def _check_spacing(self, clean, spacing_nm):
        d = check_real("spacing_nm", spacing_nm, low=0.05, high=100.0, unit="nm")
        sizes = [v for p, v in zip(self.parameters, clean.values()) if p.unit == "nm" and p.role == "size"]
        smallest = min(sizes)
        if smallest < d:
            raise InvalidParameterError(
                f"spacing_nm must be at most the smallest dimension of the {self.name} ({smallest:g} nm); got {d:g}"
            )
        return d

    def _check_surroundings(self, clean, substrate, medium_layer):
        check_slab_types(substrate, medium_layer)
        if (substrate is not None or medium_layer is not None) and not self.supports_surroundings:
            raise InvalidParameterError(
                f"surroundings (substrate, medium_layer) must be used with a film family; got them for {self.name}"
            )

    def sites(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Occupied lattice sites for validated ``params`` at ``spacing_nm`` [nm].

        Parameters
        ----------
        params : mapping
            Geometric parameters, unit-suffixed names.
        spacing_nm : float
            Lattice spacing d [nm].
        substrate : SubstrateSlab, optional
            A slab under the film (film families only), region ``"substrate"``.
        medium_layer : MediumLayer, optional
            A slab facing the hotspot (film families only), region ``"medium_layer"``.

        Returns
        -------
        ShapeSites
        """
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        if substrate is None and medium_layer is None:
            return self._sites(clean, d)
        return self._sites(clean, d, substrate=substrate, medium_layer=medium_layer)

    def hotspot_nm(self, params, spacing_nm, *, hotspot_offset_nm=None, substrate=None, medium_layer=None):
        """The hotspot point of the discretised shape [nm], shape (3,).

        For ``hotspot_kind == "tip"``: ``hotspot_offset_nm`` (default
        ``default_hotspot_offset_nm``) beyond the discretised +x surface (the last
        dipole plane + d/2), on the x axis.  For ``"gap"``: the gap centre; an offset
        is refused there.
        """
        offset = self._hotspot_offset(hotspot_offset_nm)
        sites = self.sites(params, spacing_nm, substrate=substrate, medium_layer=medium_layer)
        x_tip = float(sites.positions_nm()[:, 0].max() + sites.spacing_nm / 2)
        return np.array([x_tip + offset, 0.0, 0.0])

    def _hotspot_offset(self, hotspot_offset_nm):
        if self.hotspot_kind == "gap":
            if hotspot_offset_nm is not None:
                raise InvalidParameterError(
                    f"hotspot_offset_nm must be omitted for {self.name} (its hotspot is the gap centre); got {hotspot_offset_nm!r}"
                )
            return 0.0
        if hotspot_offset_nm is None:
            return float(self.default_hotspot_offset_nm)
        return check_real("hotspot_offset_nm", hotspot_offset_nm, low=0.0, high=1000.0, unit="nm")

    def observation_plane(self, params, spacing_nm, *, hotspot_offset_nm=None, substrate=None, medium_layer=None):
        """The plane through the hotspot perpendicular to x (see :class:`ObservationPlane`)."""
        point = self.hotspot_nm(
            params, spacing_nm, hotspot_offset_nm=hotspot_offset_nm, substrate=substrate, medium_layer=medium_layer
        )
        return ObservationPlane(point)

    def bounding_grid_shape(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Counts (nx, ny, nz) of the lattice bounding box of the sites, computed without building them."""
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        return self._bounding_grid_shape(clean, d)

    def realised_dimensions_nm(self, params, spacing_nm, *, substrate=None, medium_layer=None):
        """Dimensions of the discretised shape [nm] (whole numbers of planes times d), read-only dict."""
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        d = self._check_spacing(clean, spacing_nm)
        return MappingProxyType(self._realised(clean, d))

    def _realised(self, params, spacing_nm):
        return {}

    @abstractmethod
    def ideal_volume_nm3(self, params):
        """Volume of the ideal (continuous) shape [nm^3]."""

    @abstractmethod
    def drawing_outline(self, params, *, substrate=None, medium_layer=None):
        """Polygons of the ideal shape in top and side views (see :class:`Outline`)."""

    def _bounding_grid_shape(self, params, spacing_nm):
        raise NotImplementedError

    def _param(self, name):
        return next(p for p in self.parameters if p.name == name)

    def _check_rules(self, params):
        """Run every rule; raise on the first one violated."""
        for rule in self.rules:
            msg = rule.violation(params)
            if msg is not None:
                raise InvalidParameterError(msg)

    @abstractmethod
    def _sites(self, params, spacing_nm) -> ShapeSites:
        """Sites for validated parameters."""


def centred_axis(count):
    """Integer indices 0..count-1 and the offset that centres them on 0 (in units of d)."""
    return np.arange(count), -(count - 1) / 2.0
