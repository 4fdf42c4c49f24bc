"""``surrogate search``: the front table with flags, JSON, one-line errors."""

import json

from surrogate.campaign import Store

from .cli_harness import run_cli
from .helpers import add_rod_results, rod_designs


def test_table_lists_the_front_with_flags(fresh_store, capsys):
    code, out, err = run_cli(["search", str(fresh_store), "--trials", "600", "--seed", "1", "--show", "5"], capsys)
    assert code == 0, err
    lines = out.splitlines()
    assert lines[0].startswith("front #1: ") and "feasible of 600 trials" in lines[0]
    assert lines[1].startswith("hypervolume ")
    assert "trust_flags" in lines[3] and "enhancement_at_laser median [95 %]" in lines[3]
    assert len([l for l in lines if l[:4].strip().isdigit()]) == 5
    with Store.open(fresh_store, readonly=True) as store:
        assert len(store.fronts()) == 1


def test_json_holds_every_point_and_flag(fresh_store, capsys):
    code, out, _ = run_cli(["search", str(fresh_store), "--trials", "300", "--seed", "2", "--json"], capsys)
    assert code == 0
    doc = json.loads(out)
    assert doc["front_id"] == 1 and len(doc["points"]) >= 1
    assert {"flags", "length_nm", "resonance_nm_median", "outside_window_fraction"} <= set(doc["points"][0])
    assert doc["settings"]["trust"]["uncertain_fraction"] == 0.5 and doc["settings"]["window_nm"] == 15.0


def test_one_line_errors(fresh_store, capsys):
    for argv, text in [
        (["--objectives", "sparkle"], "objective must be a figure of merit"),
        (["--trials", "0"], "--trials must be an integer in [1"),
        (["--window-nm", "0.001", "--trials", "50"], "front must hold at least one feasible design"),
        (["--sampler", "cmaes"], "invalid choice"),
    ]:
        code, out, err = run_cli(["search", str(fresh_store), *argv], capsys)
        assert code == 2 and text in err and err.count("\n") == 1, (argv, err)


def test_stale_model_warns_and_strict_refuses(fresh_store, capsys):
    with Store.open(fresh_store) as store:
        add_rod_results(store, rod_designs(2, 98, prefix="late"))
    code, out, err = run_cli(["search", str(fresh_store), "--trials", "100", "--seed", "0"], capsys)
    assert code == 0 and err.startswith("warning: model v0001 predates") and "(stale)" in out
    code, out, err = run_cli(["search", str(fresh_store), "--trials", "100", "--strict"], capsys)
    assert code == 2 and "new results since model v0001" in err


def test_progress_is_shown_on_a_terminal(fresh_store, capsys, monkeypatch):
    monkeypatch.setattr("sys.stderr.isatty", lambda: True)
    code, out, err = run_cli(["search", str(fresh_store), "--trials", "200", "--seed", "1"], capsys)
    assert code == 0
    assert "\rsearch: 100/200 trials" in err and "\rsearch: 200/200 trials" in err and err.endswith("\n")
