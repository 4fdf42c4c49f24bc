"""Faults in verify and in the store's disk: a solve that raises, a full disk, a read-only store.

Each write error must surface as one clear StoreError message (CLI: one ``error:`` line, exit 2)
and leave the store consistent: integrity_check ok and every earlier record intact.
"""

import functools
import json
import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from surrogate.campaign import QueueState, Status, Store, StoreError
from surrogate.cli import main
from surrogate.models import load_training_set, train_store
from surrogate.verify import enqueue, verify_store
from tests.verify.synthetic import make_store, rod_task

from .audit import assert_kept, audit, sha256, tree_digest
from tests.campaign.test_generate_cli import TINY

from .conftest import FAST_TRAINING
from .slow_tasks import raise_above_width

ROOT = Path(__file__).resolve().parents[2]


def dump(path):
    """Every row of every table, in order (the store's logical contents)."""
    db = sqlite3.connect(str(path))
    try:
        return list(db.iterdump())
    finally:
        db.close()


# -- a design whose solve raises --------------------------------------------------------------

def test_a_design_whose_solve_raises_fails_its_entry_with_the_reason(store_copy):
    with Store.open(store_copy) as store:
        enqueue(store, front_top=4)
        widths = sorted(e["params"]["width_nm"] for e in store.queue_entries())
    threshold = (widths[1] + widths[2]) / 2  # the two widest designs raise
    rep = verify_store(store_copy, task=functools.partial(raise_above_width, threshold), workers=1)
    assert len(rep.verified) == 2 and len(rep.failed) == 2
    with Store.open(store_copy, readonly=True) as store:
        entries = {e["entry_id"]: e for e in store.queue_entries()}
        designs = {d["design_id"]: d for d in store.designs()}
        results = {r["design_id"] for r in store.results()}
        training = set(load_training_set(store).Y.index)
        verified = {v["entry_id"] for v in store.verifications()}
    for eid, why in rep.failed:
        e = entries[eid]
        assert e["params"]["width_nm"] > threshold and e["state"] is QueueState.FAILED
        # the reason names the error, its message and where it was raised
        assert why == e["message"] and why.startswith("the solve failed: RuntimeError: synthetic solver breakdown "
                                                      f"at width_nm={e['params']['width_nm']:g}")
        assert "slow_tasks.py" in why
        assert designs[e["design_id"]]["status"] is Status.FAILED
        assert e["design_id"] not in results and e["design_id"] not in training and eid not in verified
    audit(store_copy)
    # queued again, a failed entry is solved again (the failed design is retried) and then verified
    with Store.open(store_copy) as store:
        again = enqueue(store, design_ids=[entries[eid]["design_id"] for eid, _ in rep.failed])
    assert sorted(again.added) == sorted(eid for eid, _ in rep.failed) and again.skipped == []
    rep2 = verify_store(store_copy, task=rod_task, workers=1)
    assert sorted(rep2.verified) == sorted(again.added)
    assert set(audit(store_copy)["state"].values()) == {"done"}


# -- a full disk ----------------------------------------------------------------------------
# SQLite's max_page_count caps the file at its present size, so the next write that needs a new
# page fails with SQLITE_FULL ("database or disk is full"), as on a full file system.

@pytest.fixture()
def full_disk(monkeypatch):
    connect = Store._connect

    def capped(path):
        db = connect(path)
        pages = db.execute("PRAGMA page_count").fetchone()[0]
        db.execute(f"PRAGMA max_page_count = {pages}")
        return db

    def apply():
        monkeypatch.setattr(Store, "_connect", staticmethod(capped))

    return apply


def test_full_disk_write_is_one_store_error_and_writes_nothing(store_copy, full_disk):
    before = dump(store_copy)
    full_disk()
    with Store.open(store_copy) as store:
        with pytest.raises(StoreError) as info:
            enqueue(store, front_top=30)
    message = str(info.value)
    assert "\n" not in message and "database or disk is full" in message and str(store_copy) in message
    assert "nothing of this step was written" in message
    assert dump(store_copy) == before
    audit(store_copy)


def test_full_disk_in_the_cli_queue_is_exit_2_and_one_line(store_copy, full_disk, capsys):
    before = dump(store_copy)
    full_disk()
    assert main(["queue", str(store_copy), "--front-top", "30"]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err.count("\n") == 1
    assert err.startswith(f"error: store {store_copy} could not be written (database or disk is full)")
    assert dump(store_copy) == before and audit(store_copy)["entries"] == {}


@pytest.mark.parametrize("output", ["--json", "progress"])
def test_full_disk_during_verify_keeps_every_committed_record_and_resumes(store_copy, full_disk, capsys, monkeypatch,
                                                                          output):
    assert main(["queue", str(store_copy), "--front-top", "6"]) == 0
    queued = audit(store_copy)
    # the CLI's solve is the campaign's; here the synthetic one (picklable by reference)
    monkeypatch.setattr("surrogate.campaign._task.evaluate_design", rod_task)
    capsys.readouterr()
    full_disk()
    assert main(["verify", str(store_copy), "--workers", "1", *(["--json"] if output == "--json" else [])]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    expected = f"error: store {store_copy} could not be written (database or disk is full)"
    if output == "--json":
        assert err.count("\n") == 1 and err.startswith(expected)
    else:  # after the progress lines, the error has a line of its own, the last one
        lines = err.splitlines()
        assert lines[-1].startswith(expected) and sum("error:" in line for line in lines) == 1, err
    monkeypatch.undo()  # space again
    after = audit(store_copy)
    assert_kept(queued, after)
    rep = verify_store(store_copy, task=rod_task, workers=1)
    assert rep.failed == []
    final = audit(store_copy)
    assert_kept(after, final)
    assert set(final["state"].values()) == {"done"} and len(final["verifications"]) == 6


# -- a read-only store -----------------------------------------------------------------------

def test_writing_through_a_read_only_connection_is_one_store_error(store_copy):
    digest = sha256(store_copy)
    with Store.open(store_copy, readonly=True) as store:
        with pytest.raises(StoreError) as info:
            store.enqueue([{"design_id": "x", "params": {}, "reason": "design"}])
        assert store.queue_entries() == []
    assert "\n" not in str(info.value) and "be written (attempt to write a readonly database)" in str(info.value)
    assert sha256(store_copy) == digest


def test_chmod_read_only_store_is_refused_in_one_line(store_copy, capsys):
    folder = store_copy.parent
    os.chmod(store_copy, 0o444)
    os.chmod(folder, 0o555)
    try:
        if os.access(store_copy, os.W_OK):
            pytest.skip("running as root: file permissions do not stop root's writes "
                        "(test_read_only_file_system_* covers a read-only store for root)")
        digest = tree_digest(folder)
        assert main(["queue", str(store_copy), "--front-top", "2"]) == 2
        err = capsys.readouterr().err
        assert err == (f"error: store {store_copy} is read-only (its file or folder cannot be written); nothing was "
                       "written; copy the store and its .models folder to a writable folder\n")
        assert tree_digest(folder) == digest
    finally:
        os.chmod(folder, 0o755)
        os.chmod(store_copy, 0o644)


_IN_NAMESPACE = """
import contextlib, io, json, sys
from surrogate.cli import main
out = []
for argv in json.loads(sys.argv[1]):
    o, e = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(o), contextlib.redirect_stderr(e):
        code = main(argv)
    out.append([argv[0], code, o.getvalue(), e.getvalue()])
print(json.dumps(out))
"""

# a complete campaign spec, so that `status` can print it (the synthetic store has no optics/solver keys)
_FULL_SPEC = {"hotspot_offset_nm": 8.0, "wavelengths_nm": "800:860:10", "polarizability": "ldr", "tol": 1e-4,
              "max_iter": 3000}


def test_read_only_file_system_reads_work_and_writes_are_refused_in_one_line(tmp_path):
    # A read-only bind mount in a private mount namespace (unshare -m): read-only even for root,
    # invisible outside the test's own process.
    if shutil.which("unshare") is None:
        pytest.skip("unshare(1) is not installed: cannot make a read-only file system without root tricks")
    folder = tmp_path / "ro"
    make_store(folder / "rod.sqlite", **_FULL_SPEC).close()
    train_store(folder / "rod.sqlite", **FAST_TRAINING)
    store = folder / "rod.sqlite"
    design = audit(store)["status"].popitem()[0]
    digest = tree_digest(folder)
    argvs = [["status", str(store)], ["export", str(store), "--format", "csv", "--out", str(tmp_path / "exp")],
             ["queue", str(store), "--design", design], ["verify", str(store), "--workers", "1"],
             ["train", str(store), "--no-plots"], ["search", str(store), "--trials", "20"]]
    script = (f"mount --bind {folder} {folder} && mount -o remount,ro,bind {folder} && "
              f"exec {sys.executable} -c \"$0\" \"$1\"")
    proc = subprocess.run(["unshare", "-m", "sh", "-c", script, _IN_NAMESPACE, json.dumps(argvs)], cwd=ROOT,
                          capture_output=True, text=True, timeout=300, env=dict(os.environ, PYTHONPATH=str(ROOT)))
    if proc.returncode != 0 and "mount" in proc.stderr + proc.stdout and not proc.stdout.strip():
        pytest.skip(f"cannot make a private read-only mount here: {proc.stderr.strip()[:200]}")
    assert proc.returncode == 0, proc.stderr
    runs = {r[0]: r[1:] for r in json.loads(proc.stdout.strip().splitlines()[-1])}
    # reading works on a read-only store
    assert runs["status"][0] == 0 and "designs: pending 0, running 0, done 30" in runs["status"][1]
    assert runs["export"][0] == 0 and (tmp_path / "exp" / "designs.csv").is_file()
    # every write is refused up front, in one line naming the store and the remedy
    for cmd in ("queue", "verify", "search"):
        code, out, err = runs[cmd]
        assert code == 2 and err.count("\n") == 1, (cmd, err)
        assert err == (f"error: store {store} is read-only (its file or folder cannot be written); nothing was "
                       "written; copy the store and its .models folder to a writable folder\n"), cmd
    code, _, err = runs["train"]
    assert code == 2 and err.count("\n") == 1
    assert err.startswith(f"error: model folder {folder / 'rod.models'} cannot be written (Read-only file system")
    assert err.rstrip().endswith("no model version was added")
    assert tree_digest(folder) == digest  # nothing in the folder changed, nothing was added
    audit(store)


# the tiny box campaign of the generate tests, with 60 designs
_BOX_CAMPAIGN = TINY.format(designs=60).replace('name = "tiny"', 'name = "box-full"')


def test_full_disk_during_generate_is_one_line_after_the_bar_and_resumes(tmp_path, full_disk, capsys, monkeypatch):
    from tests.campaign import fake_tasks

    toml = tmp_path / "box.toml"
    toml.write_text(_BOX_CAMPAIGN)
    assert main(["generate", str(toml), "--no-run"]) == 0
    store = tmp_path / "box-full.sqlite"
    created = audit(store)
    # the solve: the runner tests' instant stand-in (tests/campaign/fake_tasks.py), picklable by reference
    monkeypatch.setattr("surrogate.campaign._task.evaluate_design", fake_tasks.quick)
    capsys.readouterr()
    uncapped = Store.__dict__["_connect"]
    full_disk()
    assert main(["generate", str(toml), "--workers", "1"]) == 2
    err = capsys.readouterr().err
    lines = err.splitlines()
    assert lines[-1].startswith(f"error: store {store} could not be written (database or disk is full)"), err
    assert sum("error:" in line for line in lines) == 1, err
    monkeypatch.setattr(Store, "_connect", uncapped)  # space again; the stand-in solve stays
    partial = audit(store)
    assert_kept(created, partial)
    assert 0 < len(partial["results"]) < 60  # the disk filled up part-way
    assert main(["generate", str(toml), "--workers", "1", "--quiet"]) == 0
    final = audit(store)
    assert_kept(partial, final)
    assert len(final["results"]) == 60 and set(final["status"].values()) == {"done"}
