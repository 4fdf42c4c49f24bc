"""The command line: output tables and one-line errors with exit code 2."""

import csv
import io
import subprocess
import sys

import pytest

from surrogate.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_version(capsys):
    with pytest.raises(SystemExit) as info:
        main(["--version"])
    assert info.value.code == 0
    assert capsys.readouterr().out.startswith("surrogate ")


def test_materials_lists_the_metals(capsys):
    code, out, _ = run(capsys, "materials")
    assert code == 0
    for name in ("gold-jc", "gold-ld", "silver-jc", "copper-jc", "aluminium-mcpeak", "water"):
        assert name in out


def test_materials_csv_matches_the_library(capsys):
    from surrogate.catalog import get_material

    code, out, _ = run(capsys, "materials", "gold", "--wavelengths-nm", "500:900:50", "--csv")
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    assert [float(r["wavelength_nm"]) for r in rows] == [500.0 + 50 * i for i in range(9)]
    eps = get_material("gold").permittivity(800.0)
    row = rows[6]
    assert float(row["eps_real"]) == pytest.approx(eps.real) and float(row["eps_imag"]) == pytest.approx(eps.imag)
    assert float(row["n"]) ** 2 - float(row["k"]) ** 2 == pytest.approx(eps.real)


def test_bare_number_is_a_dielectric(capsys):
    code, out, _ = run(capsys, "materials", "1.5", "--wavelengths-nm", "633", "--csv")
    assert code == 0
    row = next(csv.DictReader(io.StringIO(out)))
    assert float(row["eps_real"]) == pytest.approx(2.25) and float(row["k"]) == 0.0


@pytest.mark.parametrize(
    "argv,fragment",
    [
        (["materials", "gold", "--wavelengths-nm", "100:200:10"], "wavelength_nm must be in [187.9, 1937] nm"),
        (["materials", "gold", "--wavelengths-nm", "900:500:10"], "STOP must be >= START"),
        (["materials", "unobtainium"], "got 'unobtainium'"),
        (["materials", "--bogus"], "unrecognized arguments: --bogus"),
    ],
)
def test_user_errors_are_one_line_and_exit_2(capsys, argv, fragment):
    with pytest.raises(SystemExit) if "--bogus" in argv else _nullcontext() as info:
        code = main(argv)
    if info is not None and hasattr(info, "value"):
        code = info.value.code
    _, err = capsys.readouterr()
    assert code == 2
    assert err.startswith("error: ") and err.count("\n") == 1
    assert fragment in err


class _nullcontext:
    def __enter__(self):
        return None

    def __exit__(self, *exc):
        return False


def test_python_dash_m_runs_without_traceback():
    proc = subprocess.run(
        [sys.executable, "-m", "surrogate", "materials", "gold", "--wavelengths-nm", "x"],
        capture_output=True, text=True, check=False,
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and proc.stderr.startswith("error: --wavelengths-nm")


def test_every_subcommand_help_explains_units(capsys):
    from surrogate.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    for name, subparser in sub.choices.items():
        text = subparser.format_help()
        assert "nm" in text, name


def test_ci_runs_exactly_the_readme_test_command():
    # .ci/run must run the README's test command verbatim (house rule, no outside source).
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    readme = (root / "README.md").read_text()
    block = readme.split("<!-- test-command -->", 1)[1].split("```bash", 1)[1].split("```", 1)[0].strip()
    ci = [line.strip() for line in (root / ".ci" / "run").read_text().splitlines()]
    assert block in ci
