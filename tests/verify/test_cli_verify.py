"""The queue, verify, refine and export-candidates commands: output and one-line errors with exit code 2."""

import json

import pytest

from surrogate.campaign import Store
from surrogate.cli import main


def test_queue_then_list(store_copy, capsys):
    assert main(["queue", str(store_copy), "--front-top", "2"]) == 0
    out = capsys.readouterr().out
    assert "queued 2 designs (predictions of model v0001); 0 skipped" in out and "surrogate verify" in out
    assert main(["queue", str(store_copy), "--front-top", "2"]) == 0
    assert "queued 0 designs" in capsys.readouterr().out
    assert main(["queue", str(store_copy), "--json"]) == 0
    listed = json.loads(capsys.readouterr().out)
    with Store.open(store_copy, readonly=True) as store:
        assert [e["design_id"] for e in listed] == [e["design_id"] for e in store.queue_entries()]
    assert [e["state"] for e in listed] == ["queued", "queued"]


def test_queue_a_missing_design_is_a_one_line_error(store_copy, capsys):
    assert main(["queue", str(store_copy), "--design", "dmissing"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: design must be a design id") and "'dmissing'" in err and err.count("\n") == 1
    with Store.open(store_copy, readonly=True) as store:
        assert store.queue_entries() == []


def test_verify_with_nothing_queued_says_what_to_do(store_copy, capsys):
    assert main(["verify", str(store_copy), "--workers", "1"]) == 0
    assert "nothing queued" in capsys.readouterr().out


def test_verify_spacing_not_finer_is_refused(store_copy, capsys):
    main(["queue", str(store_copy), "--front-top", "1"])
    capsys.readouterr()
    assert main(["verify", str(store_copy), "--spacing-nm", "5"]) == 2
    assert "spacing_nm must be finer than the campaign's 2 nm; got 5 nm" in capsys.readouterr().err


def test_refine_zero_trials_and_missing_options(store_copy, capsys):
    assert main(["refine", str(store_copy), "--rounds", "1", "--batch", "2", "--trials", "0"]) == 2
    assert "trials must be" in capsys.readouterr().err
    with pytest.raises(SystemExit) as exc:
        main(["refine", str(store_copy), "--rounds", "1"])
    assert exc.value.code == 2 and "--batch" in capsys.readouterr().err


def test_export_candidates_writes_files(store_copy, tmp_path, capsys):
    out = tmp_path / "cand"
    assert main(["export-candidates", str(store_copy), "--top", "2", "--out", str(out), "--mesh-nm", "2"]) == 0
    assert "wrote 2 candidates" in capsys.readouterr().out
    assert len(list(out.glob("*.stl"))) == 2 and len(list(out.glob("*.json"))) == 2
    assert main(["export-candidates", str(store_copy), "--top", "0", "--out", str(out)]) == 2
    assert "top must be" in capsys.readouterr().err


def test_export_skips_front_points_that_are_one_design(store_copy, tmp_path):
    # a front recorded before the search merged points closer than the 0.01 nm design rounding
    from surrogate.verify import export_candidates

    with Store.open(store_copy) as store:
        old = store.front_points(store.fronts()[-1]["front_id"])[:2]
        base = dict(old[0], params={k: round(v, 2) for k, v in old[0]["params"].items()})
        twin = dict(old[0], params={k: round(v, 2) + 0.002 for k, v in old[0]["params"].items()})
        fid = store.record_front(model_version=1, objectives=[], reference=[0.0], hypervolume=0.0, n_trials=3,
                                 n_feasible=3, study={}, settings={}, points=[base, twin, old[1]],
                                 code_version="test")
    rows = export_candidates(store_copy, tmp_path / "c", top=5, front_id=fid, mesh_spacing_nm=2.0)
    assert [r["rank"] for r in rows] == [0, 1] and len({r["design_id"] for r in rows}) == 2
    assert len(list((tmp_path / "c").glob("*.json"))) == 2
