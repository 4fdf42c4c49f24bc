"""Lattice construction and boundary validation."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError, InvalidTypeError
from surrogate.solver import Lattice


def test_positions_follow_origin_and_spacing():
    lat = Lattice(np.array([[0, 0, 0], [1, 2, 3]]), 2.0, origin_nm=(1.0, 0.0, -1.0))
    np.testing.assert_allclose(lat.positions_nm, [[1.0, 0.0, -1.0], [3.0, 4.0, 5.0]])
    assert lat.n_dipoles == 2
    assert lat.grid_shape == (2, 3, 4)
    assert lat.n_materials == 1
    assert lat.volume_nm3 == pytest.approx(16.0)


def test_arrays_are_read_only():
    lat = Lattice(np.array([[0, 0, 0]]), 1.0)
    with pytest.raises(ValueError):
        lat.indices[0, 0] = 5


@pytest.mark.parametrize(
    "kwargs, exc, text",
    [
        (dict(indices=np.zeros((2, 3), int), spacing_nm=1.0), InvalidParameterError, "distinct"),
        (dict(indices=np.zeros((0, 3), int), spacing_nm=1.0), InvalidParameterError, "non-empty"),
        (dict(indices=np.zeros((1, 2), int), spacing_nm=1.0), InvalidParameterError, "shape (N, 3)"),
        (dict(indices=np.zeros((1, 3)), spacing_nm=1.0), InvalidTypeError, "integer"),
        (dict(indices=np.zeros((1, 3), int), spacing_nm=-1.0), InvalidParameterError, "spacing_nm must be in (0, inf) nm; got -1.0"),
        (dict(indices=np.zeros((1, 3), int), spacing_nm=1.0, material_index=[-1]), InvalidParameterError, ">= 0"),
        (dict(indices=np.zeros((1, 3), int), spacing_nm=1.0, material_index=[0, 1]), InvalidParameterError, "shape (1,)"),
        (dict(indices=np.zeros((1, 3), int), spacing_nm=1.0, origin_nm=(0, 0)), InvalidParameterError, "origin_nm"),
    ],
)
def test_bad_input_gives_one_line_error(kwargs, exc, text):
    with pytest.raises(exc) as info:
        Lattice(**kwargs)
    msg = str(info.value)
    assert text in msg
    assert "\n" not in msg and "must be" in msg and "got" in msg


def test_transformed_rejects_non_cube_symmetry():
    lat = Lattice(np.array([[0, 0, 0], [1, 0, 0]]), 1.0)
    rot = np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]])
    np.testing.assert_array_equal(lat.transformed(rot).indices, [[0, 0, 0], [0, 1, 0]])
    with pytest.raises(InvalidParameterError):
        lat.transformed(np.eye(3) * 2)
