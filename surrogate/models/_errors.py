"""Errors of the surrogate models (both derive from :class:`surrogate.errors.SurrogateError`)."""

from __future__ import annotations

from ..errors import SurrogateError

__all__ = ["TrainingDataError", "ModelBundleError"]


class TrainingDataError(SurrogateError, ValueError):
    """The training data cannot give a usable surrogate.

    Too few converged designs per varied parameter, NaN targets, a store with no
    converged designs, an unknown target name.
    """


class ModelBundleError(SurrogateError, RuntimeError):
    """A saved model bundle cannot be used.

    Missing, tampered (its SHA-256 differs from the model card's), holding
    types outside the trusted list, or trained on another store's data.
    """
