"""Boundary checks with the package's one message format.

Messages read ``"<field> must be <allowed>; got <value>"``, e.g.
``"gap_nm must be in [5, 200] nm; got -3.0"``.  Internal kernels trust their
inputs; these helpers run once, where user input enters.
"""

from __future__ import annotations

import math
from numbers import Real

import numpy as np

from .errors import InvalidParameterError, InvalidTypeError

__all__ = ["check_real", "check_int", "check_choice", "check_positive_array"]


def _fmt(value):
    if isinstance(value, float):
        return repr(value)
    return str(value)


def check_real(name, value, *, low=None, high=None, low_open=False, high_open=False, unit=""):
    """Return ``value`` as float after checking it is a finite real in the interval.

    Parameters
    ----------
    name : str
        Field name used in the message (with its unit suffix, e.g. ``"gap_nm"``).
    value : object
        Value to check; bools and strings are refused.
    low, high : float or None
        Interval ends; ``None`` means unbounded.
    low_open, high_open : bool
        Whether the ends are excluded.
    unit : str
        Unit printed after the interval, e.g. ``"nm"``.
    """
    if isinstance(value, bool) or not isinstance(value, (Real, np.floating, np.integer)):
        raise InvalidTypeError(f"{name} must be a real number; got {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise InvalidParameterError(f"{name} must be a finite number; got {_fmt(v)}")
    bad = (low is not None and (v < low or (low_open and v == low))) or (
        high is not None and (v > high or (high_open and v == high))
    )
    if bad:
        lo = "-inf" if low is None else f"{low:g}"
        hi = "inf" if high is None else f"{high:g}"
        left = "(" if (low_open or low is None) else "["
        right = ")" if (high_open or high is None) else "]"
        suffix = f" {unit}" if unit else ""
        raise InvalidParameterError(f"{name} must be in {left}{lo}, {hi}{right}{suffix}; got {_fmt(value)}")
    return v


def check_int(name, value, *, low=None, high=None):
    """Return ``value`` as int after checking it is an integer in [low, high]."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        raise InvalidTypeError(f"{name} must be an integer; got {value!r}")
    v = int(value)
    if (low is not None and v < low) or (high is not None and v > high):
        lo = "-inf" if low is None else str(low)
        hi = "inf" if high is None else str(high)
        raise InvalidParameterError(f"{name} must be an integer in [{lo}, {hi}]; got {v}")
    return v


def check_choice(name, value, choices):
    """Return ``value`` after checking it is one of ``choices``."""
    if value not in choices:
        allowed = ", ".join(repr(c) for c in choices)
        raise InvalidParameterError(f"{name} must be one of {allowed}; got {value!r}")
    return value


def check_positive_array(name, values, *, unit=""):
    """Return a 1-D float array of finite, strictly positive values."""
    try:
        arr = np.asarray(values, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"{name} must be an array of real numbers; got {values!r}") from None
    if arr.size == 0:
        raise InvalidParameterError(f"{name} must hold at least one value; got an empty array")
    bad = ~np.isfinite(arr) | (arr <= 0)
    if bad.any():
        suffix = f" {unit}" if unit else ""
        raise InvalidParameterError(
            f"{name} must be finite and > 0{suffix}; got {arr[bad][0]!r} at position {int(np.argmax(bad))}"
        )
    return arr


#: Largest number of wavelengths a range may expand to.
MAX_WAVELENGTHS = 10_000


def parse_wavelength_range(text, *, name="wavelengths_nm", low_nm=1.0, high_nm=1e6):
    """Expand ``"START:STOP:STEP"`` (nm, STOP included when on the grid) or ``"W"``.

    Parameters
    ----------
    text : str
        The range string, e.g. ``"500:900:50"`` or ``"830"``.
    name : str
        Field name for messages.
    low_nm, high_nm : float
        Allowed wavelength interval [nm].

    Returns
    -------
    ndarray of float, shape (W,)
        Increasing wavelengths [nm], at most ``MAX_WAVELENGTHS`` of them.

    Examples
    --------
    >>> parse_wavelength_range("500:600:50").tolist()
    [500.0, 550.0, 600.0]
    >>> parse_wavelength_range("830").tolist()
    [830.0]
    """
    allowed = f"START:STOP:STEP in nm (e.g. 500:900:50) or one wavelength, within [{low_nm:g}, {high_nm:g}] nm"
    if not isinstance(text, str) or not text.strip():
        raise InvalidParameterError(f"{name} must be {allowed}; got {text!r}")
    parts = text.strip().split(":")
    try:
        nums = [float(p) for p in parts]
    except ValueError:
        raise InvalidParameterError(f"{name} must be {allowed}; got {text!r}") from None
    if len(nums) not in (1, 3) or not all(math.isfinite(v) for v in nums):
        raise InvalidParameterError(f"{name} must be {allowed}; got {text!r}")
    if len(nums) == 1:
        values = np.array(nums)
    else:
        start, stop, step = nums
        if step <= 0:
            raise InvalidParameterError(f"{name} STEP must be > 0 nm; got {step:g} in {text!r}")
        if stop < start:
            raise InvalidParameterError(f"{name} STOP must be >= START; got {text!r}")
        count = math.floor((stop - start) / step * (1 + 1e-12) + 1e-9) + 1
        if count > MAX_WAVELENGTHS:
            raise InvalidParameterError(
                f"{name} must expand to at most {MAX_WAVELENGTHS} wavelengths; got {count} from {text!r}"
            )
        values = start + step * np.arange(count)
        values = np.round(values, 9)
    if values.min() < low_nm or values.max() > high_nm:
        raise InvalidParameterError(f"{name} must be {allowed}; got {text!r}")
    return values
