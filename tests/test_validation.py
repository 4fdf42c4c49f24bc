"""Wavelength range strings and boundary checks."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from surrogate._validation import MAX_WAVELENGTHS, check_real, parse_wavelength_range
from surrogate.errors import InvalidParameterError, InvalidTypeError


def test_stop_included_when_on_the_grid():
    assert parse_wavelength_range("500:900:50").tolist() == [500.0 + 50 * i for i in range(9)]
    assert parse_wavelength_range("500:920:50")[-1] == 900.0
    assert parse_wavelength_range("600:700:0.1").size == 1001
    assert parse_wavelength_range("830").tolist() == [830.0]


@pytest.mark.parametrize(
    "text", ["", "a:b:c", "500:400:10", "500:900:-5", "500:900:0", "500:900", "0", "-5", "nan", "1:1e7:0.0001", "5e7"]
)
def test_malformed_ranges_give_one_line_errors(text):
    with pytest.raises(InvalidParameterError) as info:
        parse_wavelength_range(text)
    assert "\n" not in str(info.value) and "wavelengths_nm" in str(info.value)


@given(
    start=st.floats(100, 2000), span=st.floats(0, 1000), step=st.floats(0.5, 100)
)
def test_range_properties(start, span, step):
    # Defining property: increasing, equally spaced by STEP, starts at START, never past STOP.
    text = f"{start!r}:{start + span!r}:{step!r}"
    values = parse_wavelength_range(text)
    assert values[0] == pytest.approx(start)
    assert values.size <= MAX_WAVELENGTHS
    assert values[-1] <= start + span + 1e-6
    assert values[-1] + step > start + span - 1e-6
    if values.size > 1:
        np.testing.assert_allclose(np.diff(values), step, rtol=1e-6, atol=1e-6)


def test_check_real_message_format():
    with pytest.raises(InvalidParameterError, match=r"^gap_nm must be in \[5, 200\] nm; got -3.0$"):
        check_real("gap_nm", -3.0, low=5, high=200, unit="nm")
    with pytest.raises(InvalidTypeError):
        check_real("gap_nm", "3", low=5)
