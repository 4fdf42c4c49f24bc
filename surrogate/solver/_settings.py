"""The solver's settings as one frozen, validated object.

A campaign file's ``[solver]`` table, the ``simulate`` command's options and the
library calls all build one :class:`SolverSettings`; it travels unchanged from
there to every solve, so a setting is validated once and named once.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields, replace

import numpy as np

from .._validation import check_choice, check_int, check_real
from ..errors import InvalidParameterError, InvalidTypeError
from ._krylov import METHODS as _KRYLOV
from ._polarizability import POLARIZABILITIES
from ._precondition import auto_may_precondition

__all__ = ["SolverSettings", "PRECISIONS", "PRECONDITIONERS", "SOLVE_METHODS"]

#: Preconditioners of the COCG solve (see ``_precondition.py``).
PRECONDITIONERS = ("none", "circulant", "auto")

#: Floating-point precisions of the FFT interaction and Krylov vectors ("auto": see
#: :attr:`SolverSettings.numpy_dtype`).
PRECISIONS = ("auto", "complex128", "complex64")

#: "auto" uses complex64 from this tolerance up: at tol 1e-4 (the campaigns' setting) its
#: figures of merit differed from complex128 by at most 1.3e-5 relative on the demo's
#: disk-peg at d = 5 and 2.5 nm; at 1e-5 a single-precision solve of a gold bar stagnated
#: above the tolerance (tests/solver/test_solve.py), so tighter tolerances use complex128.
_AUTO_DOUBLE_BELOW_TOL = 1e-4

#: Methods accepted by :func:`solve`: the Krylov methods and a dense LU solve.
SOLVE_METHODS = tuple(_KRYLOV) + ("direct",)


@dataclass(frozen=True)
class SolverSettings:
    """How every coupled-dipole solve of a run is done.

    Parameters
    ----------
    polarizability : {"fcd", "ldr", "rrcm"}, default "fcd"
        Filtered coupled dipole (consistent form, Yurkin, Min & Hoekstra 2010),
        lattice dispersion relation (Draine & Goodman 1993) or Clausius-Mossotti
        with radiative reaction.  FCD is the default: its error falls with the
        spacing for gold and it needs about half LDR's iterations (README).
    method : {"cocg", "bicgstab", "gmres", "direct"}, default "cocg"
        Krylov method on the FFT operator, or a dense LU solve (small lattices).
    tol : float, default 1e-5
        Relative residual ``||E_inc - A P|| / ||E_inc||`` to reach [-].
    max_iter : int, default 5000
        Iteration cap per solve; reaching it gives ``converged=False``.
    dtype : {"auto", "complex128", "complex64"}, default "auto"
        Precision of the FFT interaction and the Krylov vectors; "auto" takes
        complex64 for ``tol >= 1e-4`` (measured: figures within 1.3e-5 of
        complex128, 0.67-0.74x the time) and complex128 for tighter tolerances,
        which single precision does not reach reliably.
    preconditioner : {"auto", "none", "circulant"}, default "auto"
        ``"circulant"``: COCG preconditioned by a lateral Strang circulant,
        exact across the thinnest axis, with a loss shift (``_precondition.py``);
        ``"auto"``: the circulant where the benchmark shows it saves time
        (:func:`surrogate.solver._precondition.circulant_pays`), else none.
        Only ``method="cocg"`` takes ``"circulant"``.
    warm_start : bool, default True
        In a sweep, start each wavelength from the previous wavelength's dipoles.
    memory_limit_bytes : int or None, default None
        Refuse a lattice whose estimate exceeds it; None: 80 % of the physical
        memory for a bare solve (``simulate`` uses half).

    Examples
    --------
    >>> s = SolverSettings(tol=1e-4)
    >>> s.polarizability, s.replace(polarizability="ldr").polarizability
    ('fcd', 'ldr')
    """

    polarizability: str = "fcd"
    method: str = "cocg"
    tol: float = 1e-5
    max_iter: int = 5000
    dtype: str = "auto"
    preconditioner: str = "auto"
    warm_start: bool = True
    memory_limit_bytes: int | None = None

    def __post_init__(self):
        check_choice("polarizability", self.polarizability, POLARIZABILITIES)
        check_choice("method", self.method, SOLVE_METHODS)
        object.__setattr__(self, "tol", check_real("tol", self.tol, low=0.0, high=1.0, low_open=True, high_open=True))
        object.__setattr__(self, "max_iter", check_int("max_iter", self.max_iter, low=1, high=10_000_000))
        object.__setattr__(self, "dtype", _dtype_name(self.dtype))
        check_choice("preconditioner", self.preconditioner, PRECONDITIONERS)
        if self.preconditioner == "circulant" and self.method != "cocg":
            raise InvalidParameterError(
                f"preconditioner must be 'none' or 'auto' with method={self.method!r} (only COCG takes one); got 'circulant'"
            )
        if not isinstance(self.warm_start, (bool, np.bool_)):
            raise InvalidTypeError(f"warm_start must be True or False; got {self.warm_start!r}")
        object.__setattr__(self, "warm_start", bool(self.warm_start))
        if self.memory_limit_bytes is not None:
            object.__setattr__(self, "memory_limit_bytes", check_int("memory_limit_bytes", self.memory_limit_bytes, low=1))

    @property
    def numpy_dtype(self):
        """The numpy complex dtype of the solve (``"auto"`` resolved by the tolerance)."""
        if self.dtype == "auto":
            return np.dtype(np.complex64 if self.tol >= _AUTO_DOUBLE_BELOW_TOL else np.complex128)
        return np.dtype(self.dtype)

    @property
    def may_precondition(self):
        """Whether a solve with these settings can use the circulant on some lattice (for memory bounds)."""
        if self.preconditioner == "none" or self.method != "cocg":
            return False
        return self.preconditioner == "circulant" or auto_may_precondition(self.polarizability)

    def replace(self, **changes):
        """A copy with some settings changed (validated); unknown names are refused."""
        names = {f.name for f in fields(self)}
        unknown = sorted(set(changes) - names)
        if unknown:
            raise InvalidParameterError(f"solver setting must be one of {', '.join(sorted(names))}; got {unknown[0]!r}")
        return replace(self, **changes) if changes else self

    def to_dict(self):
        """Plain JSON-ready data (for stores and reports)."""
        return asdict(self)

    @classmethod
    def from_dict(cls, data):
        """Settings from :meth:`to_dict` output (unknown keys refused)."""
        if not isinstance(data, dict):
            raise InvalidTypeError(f"solver settings must be a mapping; got {type(data).__name__}")
        return cls().replace(**data)


def _dtype_name(value):
    if isinstance(value, str) and value == "auto":
        return value
    try:
        dt = np.dtype(value)
    except TypeError:
        raise InvalidTypeError(f"dtype must be one of {', '.join(PRECISIONS)}; got {value!r}") from None
    if dt.name not in PRECISIONS:
        raise InvalidParameterError(f"dtype must be one of {', '.join(PRECISIONS)}; got {value!r}")
    return dt.name
