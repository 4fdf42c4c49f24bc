"""``surrogate train`` and ``surrogate predict`` (surrogate/_cli_models.py).

The commands are registered on a parser built the way surrogate/cli.py builds its own, and run
with its error handling (a SurrogateError becomes one line ``error: ...`` and exit code 2).
"""

import csv
import io
import json
import shutil
import sys

import pytest
from scipy.stats import norm

from surrogate import cli
from surrogate._cli_models import add_model_commands
from surrogate.errors import SurrogateError

from .helpers import branin, branin_designs, make_store


def run(capsys, *argv):
    parser = cli._Parser(prog="surrogate")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=cli._Parser)
    add_model_commands(sub, cli._UNITS)
    args = parser.parse_args([str(a) for a in argv])
    try:
        code = int(args.run(args) or 0)
    except SurrogateError as exc:
        print(f"error: {exc}", file=sys.stderr)
        code = cli.EXIT_USER_ERROR
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def trained_store(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cli")
    make_store(folder / "camp.sqlite", branin_designs(30, 5)).close()
    return folder / "camp.sqlite"


@pytest.fixture(scope="module")
def train_output(trained_store):
    import contextlib

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        parser = cli._Parser(prog="surrogate")
        sub = parser.add_subparsers(dest="command", parser_class=cli._Parser)
        add_model_commands(sub, cli._UNITS)
        args = parser.parse_args(["train", str(trained_store), "--restarts", "1", "--folds", "3", "--json"])
        assert args.run(args) == 0
    return json.loads(buf.getvalue())


def test_train_json_reports_the_card_and_versions(train_output):
    card = train_output["card"]
    assert card["version"] == 1 and set(card["targets"]) == {
        "resonance_nm", "enhancement_at_laser", "heat_per_enhancement_nm2", "spot_area_nm2"}
    assert train_output["versions"][0]["current"] is True


def test_train_list_prints_versions_with_metrics(capsys, trained_store, train_output):
    code, out, _ = run(capsys, "train", trained_store, "--list")
    assert code == 0 and "v0001" in out and "resonance_nm" in out and "cov95" in out


def test_predict_one_design_csv_matches_the_branin_function(capsys, trained_store, train_output):
    # outside reference: the Branin function (Dixon & Szego 1978) at an interior design. Measured with
    # this 30-design model: median 623.87 nm against 624.13 nm, 95 % interval +-2.1 nm (the 3-fold CV
    # RMSE over the whole domain is 18 nm, dominated by its steep corners); bound 5 nm
    code, out, _ = run(capsys, "predict", trained_store, "--param", "x1_nm=2.5", "--param", "x2_nm=7.5",
                       "--param", "thickness_nm=40")
    assert code == 0
    row = next(csv.DictReader(io.StringIO(out)))
    truth = 600 + branin(2.5, 7.5)
    assert float(row["resonance_nm_lower"]) <= truth <= float(row["resonance_nm_upper"])
    assert abs(float(row["resonance_nm_median"]) - truth) < 5.0
    for t in ("enhancement_at_laser", "spot_area_nm2"):
        lo, med, hi = (float(row[f"{t}_{p}"]) for p in ("lower", "median", "upper"))
        assert 0 < lo < med < hi


def test_predict_designs_file_json_and_coverage(capsys, tmp_path, trained_store, train_output):
    f = tmp_path / "d.csv"
    f.write_text("design_id,x1_nm,x2_nm\na,0,5\nb,8,2\n")
    code, out, _ = run(capsys, "predict", trained_store, "--designs", f, "--json", "--coverage", "0.68",
                       "--targets", "resonance_nm")
    assert code == 0
    doc = json.loads(out)
    assert [d["design_id"] for d in doc["designs"]] == ["a", "b"] and doc["coverage"] == 0.68
    p = doc["designs"][0]["predictions"]["resonance_nm"]
    # identity target: the 68 % interval is median -+ z(0.84) std (normal quantile, z = 0.9945)
    assert (p["upper"] - p["median"]) == pytest.approx(norm.ppf(0.84) * p["std"], rel=1e-9)


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--param", "x1_nm=1"], "--param must set every varied parameter (x1_nm, x2_nm); missing x2_nm"),
        (["--param", "x1_nm=1", "--param", "x2_nm=abc"], "--param x2_nm must be a number; got 'abc'"),
        (["--param", "x1_nm=1", "--param", "x2_nm=2", "--param", "gap_nm=3"], "--param NAME must be a varied parameter"),
        (["--param", "x1_nm=1", "--param", "x2_nm=2", "--param", "thickness_nm=30"],
         "--param thickness_nm must equal the campaign's fixed value 40; got 30"),
        (["--param", "x1_nm=11", "--param", "x2_nm=2"], "x1_nm must be in [-5, 10] (the campaign bounds); got 11"),
        (["--param", "x1_nm=1", "--param", "x2_nm=2", "--coverage", "1.5"], "--coverage must be in (0, 1); got 1.5"),
        (["--param", "x1_nm=1", "--param", "x2_nm=2", "--version", "9"], "version must be one of 1; got 9"),
    ],
)
def test_predict_errors_are_one_line_with_exit_code_2(capsys, trained_store, train_output, argv, message):
    code, out, err = run(capsys, "predict", trained_store, *argv)
    assert code == 2 and out == ""
    assert err.startswith("error: ") and message in err and err.count("\n") == 1


def test_extrapolation_is_allowed_on_request(capsys, trained_store, train_output):
    code, out, _ = run(capsys, "predict", trained_store, "--param", "x1_nm=11", "--param", "x2_nm=2", "--extrapolate")
    assert code == 0 and "resonance_nm_median" in out


def test_train_errors_leave_no_version(capsys, tmp_path):
    designs = branin_designs(8, 1)
    make_store(tmp_path / "small.sqlite", designs).close()
    code, _, err = run(capsys, "train", tmp_path / "small.sqlite", "--folds", "3")
    assert code == 2 and "must have at least 20 usable designs" in err and err.count("\n") == 1
    assert not any((tmp_path / "small.models").glob("v*"))
    code, _, err = run(capsys, "train", tmp_path / "small.sqlite", "--folds", "1")
    assert code == 2 and "--folds must be an integer in [2, 100]; got 1" in err
    code, _, err = run(capsys, "train", tmp_path / "missing.sqlite")
    assert code == 2 and "does not exist" in err


def test_predict_refuses_a_copied_bundle_from_another_store(capsys, tmp_path, trained_store, train_output):
    make_store(tmp_path / "other.sqlite", branin_designs(30, 6)).close()
    shutil.copytree(trained_store.parent / "camp.models", tmp_path / "other.models")
    code, _, err = run(capsys, "predict", tmp_path / "other.sqlite", "--param", "x1_nm=1", "--param", "x2_nm=2")
    assert code == 2 and "was trained on other data than store" in err
