"""Property-based bad input over the command line (hypothesis, the deterministic profile of tests/conftest.py).

Every rejection is exit code 2 with exactly one stderr line ``error: ...`` naming the field or the
value, and nothing on disk changes: the store (SHA-256 and folder listing) or the campaign folder.
"""

import re
import sqlite3
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from surrogate.cli import main

from .audit import tree_digest

ROOT = Path(__file__).resolve().parents[2]
DEMO_TOML = ROOT / "datasets" / "demo.toml"

# the store fixture is shared by the examples on purpose: it must come out of every one unchanged
PROPERTY = settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def run_cli(capsys, argv):
    """``(exit code, stdout, stderr)`` of the command line; argparse's own errors exit via SystemExit."""
    capsys.readouterr()
    try:
        code = main([str(a) for a in argv])
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def norm(text):
    return text.replace("-", "_").lower()


def assert_one_line_rejection(code, err, *names):
    assert code == 2, err
    assert err.startswith("error: ") and err.count("\n") == 1 and err.endswith("\n"), repr(err)
    assert any(norm(n) in norm(err) for n in names), (names, err)


def bad_number(low, high):
    """Numbers outside [low, high], non-finite values and text, as the user would type them."""
    return st.one_of(
        st.floats(max_value=low, exclude_max=True, allow_nan=False, allow_infinity=False).map(repr),
        st.floats(min_value=high, exclude_min=True, allow_nan=False, allow_infinity=False).map(repr),
        st.sampled_from(["nan", "inf", "-inf", "NaN"]),
        st.text(alphabet="abcxyz,;%", min_size=1, max_size=6),
    )


# -- simulate ---------------------------------------------------------------------------------

@PROPERTY
@given(data=st.data())
def test_simulate_rejects_bad_parameters_in_one_line(tmp_path, capsys, data):
    out_csv = tmp_path / "spectrum.csv"
    before = sorted(p.name for p in tmp_path.iterdir())
    base = {"--param": "diameter_nm=30", "--spacing-nm": "2", "--medium-index": "1.0", "--tol": "1e-5",
            "--max-iter": "100"}
    field = data.draw(st.sampled_from(["diameter_nm", "unknown name", "no equals", "--spacing-nm", "--medium-index",
                                       "--tol", "--max-iter"]))
    named = field
    if field == "diameter_nm":
        value = data.draw(bad_number(2.0, 400.0))
        base["--param"] = f"diameter_nm={value}"
    elif field == "unknown name":
        name = data.draw(st.from_regex(r"[a-z]{1,8}_nm", fullmatch=True).filter(lambda s: s != "diameter_nm"))
        base["--param"], named, value = f"{name}=30", name, name
    elif field == "no equals":
        value = data.draw(st.text(alphabet="abc_0123 ", min_size=0, max_size=8))
        base["--param"], named = value, "--param"
    else:
        low, high = {"--spacing-nm": (0.05, 100.0), "--medium-index": (1.0, 4.0), "--tol": (1e-12, 0.1),
                     "--max-iter": (1, 1_000_000)}[field]
        value = data.draw(bad_number(low, high))
        base[field] = value
    argv = ["simulate", "sphere", "--wavelengths-nm", "700", "--out", out_csv, "--quiet"]
    for k, v in base.items():
        argv += [k, v]
    code, out, err = run_cli(capsys, argv)
    assert_one_line_rejection(code, err, named.lstrip("-"), str(value).strip())
    assert out == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # no CSV, no partial file


# -- generate ---------------------------------------------------------------------------------

# one field of the demo campaign file and values that are not allowed there (TOML literals)
BAD_FIELDS = {
    "name": ['"has space"', '""', '"a/b"', "3"],
    "family": ['"no-such-family"', "1", "true"],
    "designs": ["0", "-5", "100001", "1.5", '"many"'],
    "seed": ["-1", '"x"', "2.5"],
    "disk_diameter_nm": ["[200.0, 100.0]", "[0.0, 10.0]", '"wide"', "[150.0]", "[150.0, 150.0]"],
    "material": ['"unobtainium"', "3", '"0.5"'],
    "medium_index": ["0.5", "4.5", '"air"', "nan"],
    "laser_nm": ["100.0", "5001.0", "1200.0", "inf"],
    "hotspot_offset_nm": ["-1.0", "101.0", '"near"'],
    "spacing_nm": ["0.0", "0.1", "51.0", "-5.0"],
    "wavelengths_nm": ['"1000:600:50"', '"abc"', '"800"', "700"],
    "tol": ["0.0", "1.0", '"tight"'],
    "max_iter": ["0", "100001", "3.5"],
    "polarizability": ['"xyz"', "1"],
}


def _mutate(text, key, literal):
    pattern = re.compile(rf"^{re.escape(key)} = .*$", re.MULTILINE)
    assert len(pattern.findall(text)) == 1, key
    return pattern.sub(lambda _: f"{key} = {literal}", text)


@PROPERTY
@given(data=st.data())
def test_generate_rejects_a_campaign_file_with_one_bad_field(capsys, data):
    key = data.draw(st.sampled_from(sorted(BAD_FIELDS)))
    numeric = {"designs": (1, 100_000), "medium_index": (1.0, 4.0), "spacing_nm": (0.25, 50.0),
               "hotspot_offset_nm": (0.0, 100.0)}
    choices = st.sampled_from(BAD_FIELDS[key])
    if key in numeric:  # and random out-of-range numbers of the right type
        low, high = numeric[key]
        if isinstance(low, int):
            choices = st.one_of(choices, st.integers(max_value=low - 1).map(str), st.integers(min_value=high + 1,
                                                                                             max_value=10**12).map(str))
        else:
            choices = st.one_of(choices, st.floats(max_value=low, exclude_max=True, allow_nan=False,
                                                   allow_infinity=False).map(repr),
                                st.floats(min_value=high, exclude_min=True, allow_nan=False,
                                          allow_infinity=False).map(repr))
    literal = data.draw(choices)
    with tempfile.TemporaryDirectory() as d:
        toml = Path(d) / "demo.toml"
        toml.write_text(_mutate(DEMO_TOML.read_text(), key, literal))
        before = tree_digest(d)
        code, out, err = run_cli(capsys, ["generate", toml, "--no-run", "--quiet"])
        assert_one_line_rejection(code, err, key)
        assert str(toml) in err
        assert tree_digest(d) == before  # no store was created


# -- queue, verify, refine ----------------------------------------------------------------------

@pytest.fixture()
def quiet_store(store_copy):
    """The store copy with its WAL folded in, so that its file alone must stay byte-identical."""
    db = sqlite3.connect(store_copy)
    db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    db.close()
    return store_copy


def _unchanged(folder):
    rows = tree_digest(folder)
    for name, size, _ in rows:
        if name.endswith("-wal"):
            assert size == 0, f"{name} holds {size} bytes: something was written"
    return [r for r in rows if not r[0].endswith(("-wal", "-shm"))]


def _int_text():
    return st.one_of(st.integers(min_value=-10**6, max_value=0).map(str), st.sampled_from(["x", "1.5", "", "1e3"]))


@PROPERTY
@given(data=st.data())
def test_queue_verify_refine_reject_bad_numbers_and_leave_the_store(quiet_store, capsys, data):
    before = _unchanged(quiet_store.parent)
    cases = {
        "queue --front-top": lambda: (["queue", quiet_store, "--front-top"],
                                      st.one_of(_int_text(), st.integers(min_value=100_001).map(str)), "front_top"),
        "queue --point": lambda: (["queue", quiet_store, "--point"],
                                  st.one_of(st.integers(max_value=-1).map(str), st.integers(34, 10**6).map(str)),
                                  "point"),
        "queue --front": lambda: (["queue", quiet_store, "--front-top", "1", "--front"],
                                  st.integers(min_value=2, max_value=10**6).map(str), "front"),
        "verify --spacing-nm": lambda: (["verify", quiet_store, "--workers", "1", "--spacing-nm"],
                                        st.one_of(st.floats(max_value=0.0, allow_nan=False).map(repr),
                                                  st.sampled_from(["nan", "inf", "x", "0"]),
                                                  st.floats(2.0, 1e6).map(repr)), "spacing_nm"),
        "verify --workers": lambda: (["verify", quiet_store, "--workers"],
                                     st.one_of(_int_text(), st.integers(min_value=1025).map(str)), "workers"),
        "refine --rounds": lambda: (["refine", quiet_store, "--batch", "2", "--rounds"],
                                    st.one_of(_int_text(), st.integers(min_value=101).map(str)), "rounds"),
        "refine --batch": lambda: (["refine", quiet_store, "--rounds", "1", "--batch"],
                                   st.one_of(_int_text(), st.integers(min_value=1001).map(str)), "batch"),
        "refine --trials": lambda: (["refine", quiet_store, "--rounds", "1", "--batch", "2", "--trials"],
                                    _int_text(), "trials"),
        "refine --window-nm": lambda: (["refine", quiet_store, "--rounds", "1", "--batch", "2", "--window-nm"],
                                       bad_number(0.0, 1000.0).filter(lambda s: s not in ("0.0",)), "window_nm"),
    }
    argv, values, field = cases[data.draw(st.sampled_from(sorted(cases)))]()
    value = data.draw(values)
    code, out, err = run_cli(capsys, [*argv, value])
    assert_one_line_rejection(code, err, field, value)
    assert _unchanged(quiet_store.parent) == before


# -- optical-constant tables ------------------------------------------------------------------

GOOD_ROWS = [("600", "0.2", "3.0"), ("700", "0.13", "4.1"), ("800", "0.15", "4.9"), ("900", "0.17", "5.6")]


@st.composite
def bad_table(draw):
    rows = [list(r) for r in GOOD_ROWS]
    i = draw(st.integers(0, len(rows) - 1))
    kind = draw(st.sampled_from(["n", "k", "wavelength_nm", "text", "fields", "order"]))
    if kind == "n":
        rows[i][1] = draw(st.one_of(st.floats(max_value=0.0, allow_nan=False, allow_infinity=False).map(repr),
                                    st.sampled_from(["nan", "inf"])))
    elif kind == "k":
        rows[i][2] = draw(st.one_of(st.floats(max_value=0.0, exclude_max=True, allow_nan=False,
                                              allow_infinity=False).map(repr), st.sampled_from(["-inf", "nan"])))
    elif kind == "wavelength_nm":
        rows[i][0] = draw(st.one_of(st.floats(max_value=0.0, allow_nan=False, allow_infinity=False).map(repr),
                                    st.sampled_from(["nan", "inf"]))) if i == 0 else rows[i - 1][0]
    elif kind == "text":
        rows[i][draw(st.integers(0, 2))] = draw(st.text(alphabet="abcxyz$", min_size=1, max_size=5))
    elif kind == "fields":
        rows[i] = rows[i][: draw(st.integers(1, 2))] if draw(st.booleans()) else rows[i] + ["1.0"]
    else:
        rows[i], rows[-1] = rows[-1], rows[i]
        if i == len(rows) - 1:
            rows[0][0] = "950"
    return "wavelength_nm,n,k\n" + "".join(",".join(r) + "\n" for r in rows), i + 2


@PROPERTY
@given(table=bad_table())
def test_materials_rejects_a_table_with_one_bad_row_in_one_line(tmp_path, capsys, table):
    text, line = table
    path = tmp_path / "film.csv"
    path.write_text(text)
    before = tree_digest(tmp_path)
    code, out, err = run_cli(capsys, ["materials", path, "--wavelengths-nm", "700"])
    assert_one_line_rejection(code, err, str(path))
    assert out == ""
    # the message names the field or the line of the bad value
    assert re.search(r"\b(wavelength_nm|n|k)\b|line \d+", err.removeprefix(f"error: material file {path}")), err
    assert tree_digest(tmp_path) == before
