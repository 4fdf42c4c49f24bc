"""User CSV tables: every malformed file is refused with one line naming file, field, value."""

import pytest

from surrogate.catalog import get_material, read_nk_csv
from surrogate.errors import InvalidParameterError, MaterialDataError, WavelengthOutOfRangeError

GOOD = "wavelength_nm,n,k\n600,0.2,3.0\n700,0.13,4.1\n800,0.15,4.9\n"

CASES = {
    "missing column": ("wavelength_nm,n\n600,0.2\n700,0.1\n", "header must be the columns"),
    "non-increasing": ("wavelength_nm,n,k\n600,0.2,3\n600,0.1,4\n", "strictly increasing; got 600 after 600 in line 3"),
    "negative k": ("wavelength_nm,n,k\n600,0.2,3\n700,0.1,-4\n", "k must be >= 0"),
    "nan": ("wavelength_nm,n,k\n600,nan,3\n700,0.1,4\n", "n on line 2 must be finite; got 'nan'"),
    "text": ("wavelength_nm,n,k\n600,0.2,abc\n700,0.1,4\n", "k on line 2 must be a number; got 'abc'"),
    "empty": ("", "is empty"),
    "only header": ("wavelength_nm,n,k\n", "needs at least 2 data rows"),
    "ragged": ("wavelength_nm,n,k\n600,0.2\n700,0.1,4\n", "line 2 must have 3 fields"),
    "zero n": ("wavelength_nm,n,k\n600,0,3\n700,0.1,4\n", "n must be > 0"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_malformed_tables_are_refused_in_one_line(tmp_path, case):
    text, expected = CASES[case]
    path = tmp_path / "table.csv"
    path.write_text(text)
    with pytest.raises(MaterialDataError) as info:
        read_nk_csv(path)
    message = str(info.value)
    assert "\n" not in message
    assert str(path) in message
    assert expected in message


def test_good_table_and_out_of_range_wavelength(tmp_path):
    path = tmp_path / "film.csv"
    path.write_text("# measured film\n" + GOOD)
    material = get_material(str(path))
    assert material.refractive_index(700.0) == pytest.approx(0.13 + 4.1j)
    with pytest.raises(WavelengthOutOfRangeError, match=r"wavelength_nm must be in \[600, 800\] nm .* got 900"):
        material.permittivity([700.0, 900.0])


def test_missing_file_and_unknown_names():
    with pytest.raises(MaterialDataError, match="no such file"):
        get_material("does/not/exist.csv")
    with pytest.raises(InvalidParameterError, match="got 'unobtainium'"):
        get_material("unobtainium")
    with pytest.raises(InvalidParameterError, match="db:Au/NoSuchPage"):
        get_material("db:Au/NoSuchPage")
    with pytest.raises(InvalidParameterError, match=r"refractive index must be in \[1, 10\]"):
        get_material("0.5")
