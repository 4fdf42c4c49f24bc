"""`surrogate simulate` and `surrogate families` from the command line."""

import csv
import json

import miepython
import numpy as np
import pytest

from surrogate.catalog import get_material
from surrogate.cli import main


def test_simulate_sphere_table_matches_mie_and_writes_files(tmp_path, capsys):
    # Mie theory via miepython (m = n - ik convention): 30 nm gold sphere in water at 530 nm,
    # d = 1.5 nm. Measured c_ext error with LDR: -3.4%; tolerance 5% (the solver's stated goal).
    out = tmp_path / "s.csv"
    code = main(["simulate", "sphere", "--param", "diameter_nm=30", "--medium-index", "1.33", "--wavelengths-nm", "530",
                 "--spacing-nm", "1.5", "--laser-nm", "530", "--out", str(out), "--quiet",
                 "--field-map", str(tmp_path / "m.png"), "--geometry", str(tmp_path / "g.png")])
    assert code == 0
    rows = list(csv.DictReader(out.open()))
    assert list(rows[0]) == ["wavelength_nm", "c_ext_nm2", "c_abs_nm2", "c_sca_nm2", "enhancement", "converged",
                             "n_iter", "residual"]
    m = np.sqrt(get_material("gold").permittivity(530.0)) / 1.33
    x = np.pi * 30.0 * 1.33 / 530.0
    qext = miepython.efficiencies_mx(m.real - 1j * m.imag, x)[0]
    assert float(rows[0]["c_ext_nm2"]) == pytest.approx(qext * np.pi * 15.0**2, rel=0.05)
    assert (tmp_path / "m.png").stat().st_size > 1000 and (tmp_path / "g.png").stat().st_size > 1000
    text = capsys.readouterr().out
    assert "enhancement_at_laser" in text and "heat_per_enhancement_nm2" in text


def test_simulate_json_and_refine(capsys):
    code = main(["simulate", "sphere", "--param", "diameter_nm=20", "--wavelengths-nm", "520", "--spacing-nm", "2",
                 "--refine", "--json"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    row = data["spectrum"][0]
    assert data["refine_spacings_nm"] and len(data["refine_spacings_nm"]) == 6
    assert row["c_ext_limit_error_nm2"] > 0 and row["converged"] is True
    assert row["c_ext_limit_method"] in ("extrapolated", "bounded")


@pytest.mark.parametrize(
    "argv,fragment",
    [
        (["simulate", "rod", "--param", "length_nm=100", "--param", "width_nm=5", "--param", "thickness_nm=20",
          "--param", "end_radius_nm=0", "--wavelengths-nm", "700", "--spacing-nm", "2"], "rule minimum-feature"),
        (["simulate", "sphere", "--param", "diameter_nm=x", "--wavelengths-nm", "700", "--spacing-nm", "2"],
         "--param diameter_nm must be a number; got 'x'"),
        (["simulate", "sphere", "--param", "diameter_nm=40", "--wavelengths-nm", "700", "--spacing-nm", "2",
          "--field-map", "m.png"], "--field-map needs --laser-nm"),
        (["simulate", "gap-dimer", "--param", "arm_length_nm=40", "--param", "width_nm=20", "--param", "thickness_nm=20",
          "--param", "gap_nm=6", "--wavelengths-nm", "700", "--spacing-nm", "4"], "spacings"),
        (["simulate", "sphere", "--param", "diameter_nm=400", "--wavelengths-nm", "700", "--spacing-nm", "0.1"],
         "GiB"),
    ],
)
def test_simulate_user_errors(capsys, argv, fragment):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and err.count("\n") == 1 and fragment in err


def test_families_lists_rules_and_hotspots(capsys):
    assert main(["families", "--json"]) == 0
    info = {f["name"]: f for f in json.loads(capsys.readouterr().out)}
    assert {"rod", "gap-dimer", "bowtie", "disk-peg", "sphere"} <= set(info)
    assert any(r["name"] == "peg-narrower-than-disk" for r in info["disk-peg"]["rules"])
    assert "gap" in info["gap-dimer"]["hotspot"]
