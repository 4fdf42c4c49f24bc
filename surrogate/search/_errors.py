"""Exceptions and warnings of the search."""

from __future__ import annotations

from ..errors import SurrogateError, SurrogateWarning

__all__ = ["EmptyFrontError", "StaleModelWarning"]


class EmptyFrontError(SurrogateError, RuntimeError):
    """No trial of a search satisfied every constraint, so there is no front to report."""


class StaleModelWarning(SurrogateWarning):
    """The surrogate predates the store's newest results (searching it anyway)."""
