"""Parametric shapes -> occupied sites of a simple cubic dipole lattice (no physics).

Geometry convention: an antenna is a film in the x-y plane (thickness along z),
its long axis along x, illuminated by default at normal incidence (along -z)
with the electric field along x.  Film families (rod, gap-dimer, bowtie,
disk-peg) carry fabrication rules, a hotspot, an observation plane and optional
surroundings (substrate and medium-layer slabs as extra regions).
"""

from ._bowtie import Bowtie
from ._box import Box
from ._disk_peg import DiskPeg
from ._family import Parameter, ShapeFamily, ShapeSites
from ._film import FilmFamily
from ._gap_dimer import GapDimer
from ._observation import (
    MIN_CLEARANCE_CELLS,
    Clearance,
    ObservationPlane,
    check_observation_clearance,
    observation_clearance,
)
from ._outline import Dimension, Outline
from ._rod import Rod
from ._rules import FabricationRule
from ._sphere import CoatedSphere, Sphere
from ._surroundings import MediumLayer, SubstrateSlab

#: The families the command line knows, by name (default fabrication limits).
FAMILIES = {f.name: f for f in (Sphere(), CoatedSphere(), Box(), Rod(), GapDimer(), Bowtie(), DiskPeg())}

__all__ = [
    "Parameter",
    "ShapeFamily",
    "ShapeSites",
    "FilmFamily",
    "FabricationRule",
    "Sphere",
    "CoatedSphere",
    "Box",
    "Rod",
    "GapDimer",
    "Bowtie",
    "DiskPeg",
    "SubstrateSlab",
    "MediumLayer",
    "ObservationPlane",
    "Clearance",
    "observation_clearance",
    "check_observation_clearance",
    "MIN_CLEARANCE_CELLS",
    "Outline",
    "Dimension",
    "FAMILIES",
    "get_family",
]


def get_family(name):
    """The shape family called ``name`` (with the default fabrication limits)."""
    from ..errors import InvalidParameterError

    try:
        return FAMILIES[name]
    except KeyError:
        raise InvalidParameterError(f"family must be one of {', '.join(FAMILIES)}; got {name!r}") from None
