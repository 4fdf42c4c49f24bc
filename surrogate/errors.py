"""Exceptions and warnings of the package.

Every error the package raises derives from :class:`SurrogateError` and also
from the matching builtin, so callers may catch either ``SurrogateError`` or
``ValueError`` / ``TypeError`` / ``MemoryError``.  The command line turns a
``SurrogateError`` into a one-line message and exit code 2.
"""

from __future__ import annotations

__all__ = [
    "SurrogateError",
    "InvalidParameterError",
    "InvalidTypeError",
    "MaterialDataError",
    "WavelengthOutOfRangeError",
    "LatticeTooLargeError",
    "StoreError",
    "SurrogateWarning",
    "NotConvergedWarning",
]


class SurrogateError(Exception):
    """Base class of every error raised on purpose by the package."""


class InvalidParameterError(SurrogateError, ValueError):
    """A value is outside what is allowed (message: field, value, allowed)."""


class InvalidTypeError(SurrogateError, TypeError):
    """A value has the wrong type."""


class MaterialDataError(SurrogateError, ValueError):
    """An optical-constant table or material specification cannot be used."""


class WavelengthOutOfRangeError(InvalidParameterError):
    """A wavelength lies outside the range a material table covers."""


class LatticeTooLargeError(SurrogateError, MemoryError):
    """A dipole lattice would need more memory than the stated limit."""


class StoreError(SurrogateError, RuntimeError):
    """A campaign store cannot be used: corrupt, from a newer schema, read-only, disk full."""


class SurrogateWarning(UserWarning):
    """Base class of the package's warnings."""


class NotConvergedWarning(SurrogateWarning):
    """An iterative solve stopped at its iteration cap before its tolerance."""
