"""SolverSettings: one validated object carries every solve option."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError, InvalidTypeError
from surrogate.solver import SolverSettings, solve

from .helpers import sphere_lattice


def test_defaults_are_the_documented_ones():
    s = SolverSettings()
    assert (s.polarizability, s.method, s.tol, s.max_iter, s.dtype, s.warm_start) == ("fcd", "cocg", 1e-5, 5000, "auto", True)
    assert s.numpy_dtype == np.complex128 and s.replace(tol=1e-4).numpy_dtype == np.complex64
    assert SolverSettings(dtype=np.complex64).dtype == "complex64"
    assert SolverSettings.from_dict(s.replace(tol=1e-3).to_dict()) == s.replace(tol=1e-3)


@pytest.mark.parametrize(
    "field, value, message",
    [
        ("polarizability", "cm", "polarizability must be one of"),
        ("method", "lu", "method must be one of"),
        ("tol", 0.0, "tol must be in"),
        ("max_iter", 0, "max_iter must be"),
        ("dtype", "float32", "dtype must be one of"),
        ("memory_limit_bytes", -1, "memory_limit_bytes must be"),
    ],
)
def test_bad_values_are_refused_in_one_line_naming_the_field(field, value, message):
    with pytest.raises(InvalidParameterError, match=message) as err:
        SolverSettings(**{field: value})
    assert "\n" not in str(err.value) and "got" in str(err.value)


def test_unknown_setting_and_wrong_type_are_refused():
    with pytest.raises(InvalidParameterError, match="solver setting must be one of"):
        SolverSettings().replace(tolerance=1e-3)
    with pytest.raises(InvalidTypeError, match="warm_start"):
        SolverSettings(warm_start="yes")
    with pytest.raises(InvalidTypeError, match="settings must be"):
        solve(sphere_lattice(4.0, 2.0), [2.25], 500.0, settings={"tol": 1e-3})


def test_settings_and_keyword_overrides_reach_the_solve():
    lat = sphere_lattice(6.0, 2.0)
    s = solve(lat, [2.25], 500.0, settings=SolverSettings(polarizability="ldr", tol=1e-3))
    assert s.polarizability == "ldr" and s.tol == 1e-3 and s.settings.tol == 1e-3
    t = solve(lat, [2.25], 500.0, settings=SolverSettings(polarizability="ldr"), tol=1e-7, dtype=np.complex64)
    assert t.tol == 1e-7 and t.dtype == "complex64" and t.polarizability == "ldr"
