"""Parametric shapes -> occupied sites of a simple cubic dipole lattice (no physics).

Geometry convention: an antenna is a film in the x-y plane (thickness along z),
its long axis along x.
"""

from ._box import Box
from ._family import Parameter, ShapeFamily, ShapeSites
from ._sphere import CoatedSphere, Sphere

#: The families the command line knows, by name.
FAMILIES = {f.name: f for f in (Sphere(), CoatedSphere(), Box())}

__all__ = ["Parameter", "ShapeFamily", "ShapeSites", "Sphere", "CoatedSphere", "Box", "FAMILIES", "get_family"]


def get_family(name):
    """The shape family called ``name``."""
    from ..errors import InvalidParameterError

    try:
        return FAMILIES[name]
    except KeyError:
        raise InvalidParameterError(f"family must be one of {', '.join(FAMILIES)}; got {name!r}") from None
