"""Coupled-dipole (discrete dipole approximation) solver on cubic lattices.

Pure numerics: receives site arrays and permittivities, returns dipoles,
cross sections and fields.  It imports neither the materials nor the shapes.

Main entry points: :class:`Lattice`, :func:`solve`, :func:`solve_sweep`,
:func:`solve_polarizations`, :func:`near_field`, :func:`c_sca_far_field_nm2`,
:func:`memory_estimate_bytes`, :func:`estimate_zero_spacing`.
"""

from __future__ import annotations

from ._extrapolate import ZERO_SPACING_METHODS, ZeroSpacingEstimate, estimate_zero_spacing, extrapolate_to_zero_spacing
from ._green import dense_interaction_matrix, green_tensor
from ._interaction import FFTInteraction, set_fft_workers
from ._krylov import METHODS as KRYLOV_METHODS
from ._lattice import Lattice
from ._memory import memory_estimate_bytes
from ._nearfield import NEAR_FIELD_GREENS, c_sca_far_field_nm2, far_field_amplitude, near_field
from ._polarizability import POLARIZABILITIES, ldr_coefficients, polarizability
from ._solve import SOLVE_METHODS, DipoleSolution, solve, solve_polarizations, solve_sweep
from ._settings import PRECISIONS, PRECONDITIONERS, SolverSettings
from ._incidence import Incidence

__all__ = [
    "Lattice",
    "DipoleSolution",
    "SolverSettings",
    "Incidence",
    "PRECISIONS",
    "PRECONDITIONERS",
    "solve",
    "solve_sweep",
    "solve_polarizations",
    "near_field",
    "far_field_amplitude",
    "c_sca_far_field_nm2",
    "memory_estimate_bytes",
    "extrapolate_to_zero_spacing",
    "estimate_zero_spacing",
    "ZeroSpacingEstimate",
    "ZERO_SPACING_METHODS",
    "polarizability",
    "ldr_coefficients",
    "green_tensor",
    "dense_interaction_matrix",
    "FFTInteraction",
    "set_fft_workers",
    "POLARIZABILITIES",
    "SOLVE_METHODS",
    "KRYLOV_METHODS",
    "NEAR_FIELD_GREENS",
]
