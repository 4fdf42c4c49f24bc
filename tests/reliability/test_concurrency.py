"""The app and a running campaign writing one store at once (issue 10).

A real ``surrogate generate`` runs in a subprocess (tests/reliability/generate_driver.py: the
command line itself, with the solve replaced by the synthetic rod stand-in, paced by a short sleep
so that it commits all through the test).  While it commits, the Front page (AppTest) queues
selected points several times and threads of the test process call
:func:`surrogate.verify.enqueue` at the same moments, with overlapping requests.  The store is
then read back: every request landed exactly once (no lost update, no duplicate), every design
the runner finished has exactly one result, ``PRAGMA integrity_check`` is ok, and no
"database is locked" reached the user (the page, the runner's stderr, the callers).
"""

import os
import re
import signal
import sqlite3
import subprocess
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pytest

from surrogate.campaign import Status, Store, design_id
from surrogate.cli import main
from surrogate.models import train_store
from surrogate.search import search_store
from surrogate.verify import enqueue
from tests.search.helpers import rod_designs
from tests.ui.helpers import page_test
from tests.verify.synthetic import rod_task

from .audit import audit, integrity
from .conftest import FAST_TRAINING
from .generate_driver import PACE_ENV, RELEASE_ENV

ROOT = Path(__file__).resolve().parents[2]
N_TRAINED = 30  # finished before the run: the model and the front are made from them
# Seconds per design while the test queues: the runner then commits (a 'running' event, then the result)
# dozens of times a second, so the app's and the threads' writes do meet its transactions (with SQLite's
# busy timeout set to 0 this test fails with "database is locked"). Once released, the rest solve at once.
SLEEP_S = 0.02
N_RUN = 1000  # pending designs for the run: over 20 s of paced commits, several times the queueing's length
N_THREADS = 3
REQUESTS_PER_CALLER = 4
POINTS_PER_REQUEST = 3

# the rod test bed of tests/search/helpers.py as a campaign file, so that `generate` itself runs it
_CAMPAIGN = """
name = "rod-busy"
family = "rod"
designs = 30
seed = 5

[bounds]
length_nm = [60.0, 200.0]
width_nm = [20.0, 60.0]
end_radius_nm = [0.0, 20.0]

[fixed]
thickness_nm = 30.0

[optics]
material = "gold"
medium_index = 1.0
laser_nm = 830.0

[solver]
spacing_nm = 2.0
wavelengths_nm = "800:860:10"
"""


@pytest.fixture()
def campaign(tmp_path, monkeypatch):
    """A campaign store with N_TRAINED finished designs, model v0001, one front and N_RUN pending designs."""
    monkeypatch.delenv("SURROGATE_STORE", raising=False)
    toml = tmp_path / "rod-busy.toml"
    toml.write_text(_CAMPAIGN)
    assert main(["generate", str(toml), "--no-run", "--quiet"]) == 0
    path = tmp_path / "rod-busy.sqlite"
    with Store.open(path) as store:  # the training set, solved in-process (no worker pool: quicker)
        spec = store.spec
        for d in store.designs():
            store.record_result(d["design_id"], **rod_task(spec, d["params"]), elapsed_s=0.0)
    train_store(path, **FAST_TRAINING)
    search_store(path, n_trials=300, seed=0, persist=False)
    with Store.open(path) as store:  # pending designs for the run (`generate --add` would sample them, slowly)
        store.add_designs(rod_designs(N_RUN, seed=7, prefix="run"))
    return toml, path


def _count_results(path):
    db = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=30)
    try:
        return db.execute("SELECT COUNT(*) FROM results").fetchone()[0]
    finally:
        db.close()


def _wait_for_results(path, n, proc, timeout_s=60.0):
    """Poll until the store holds at least ``n`` results (the runner is committing)."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if _count_results(path) >= n:
            return
        assert proc.poll() is None, "the campaign ended before committing anything"
        time.sleep(0.05)
    raise AssertionError(f"the campaign did not commit a result within {timeout_s:.0f} s")


def _page_text(at):
    """Every element of the page (main area and sidebar) as protobuf text: all it shows to the user."""
    return "\n".join(str(node.proto) for block in (at.main, at.sidebar) for node in block
                     if getattr(node, "proto", None) is not None)


def test_app_and_threads_queue_while_generate_commits(campaign, tmp_path):
    toml, path = campaign
    with Store.open(path, readonly=True) as store:
        fixed = store.spec["fixed"]
        front = store.fronts()[-1]
        points = store.front_points(front["front_id"])
        pending = {d["design_id"] for d in store.designs(status=Status.PENDING)}
        trained = [d["design_id"] for d in store.designs(status=Status.DONE)]
    assert len(pending) == N_RUN and len(trained) == N_TRAINED
    # the queue's content id of each front point (as the Front page test checks it)
    point_ids = [design_id({**p["params"], **fixed}) for p in points]
    assert len(set(point_ids)) == len(points) >= 8, "the test needs distinct front points to queue"

    # overlapping requests, drawn once: the threads' points and one thread's design ids; each app selection
    # holds points the threads also ask for and one point only the app asks for (so each app click writes)
    rng = np.random.default_rng(10)
    draw = lambda pool, k=POINTS_PER_REQUEST: [int(i) for i in rng.choice(pool, k, replace=False)]  # noqa: E731
    shared = len(points) - REQUESTS_PER_CALLER
    app_requests = [sorted(draw(shared, POINTS_PER_REQUEST - 1) + [shared + k]) for k in range(REQUESTS_PER_CALLER)]
    thread_requests = [[("points", draw(shared)) for _ in range(REQUESTS_PER_CALLER)] for _ in range(N_THREADS)]
    thread_requests.append([("design_ids", [trained[j] for j in draw(6)]) for _ in range(REQUESTS_PER_CALLER)])
    wanted = {point_ids[i] for r in app_requests for i in r}
    for requests in thread_requests:
        for kind, items in requests:
            wanted |= {point_ids[i] for i in items} if kind == "points" else set(items)

    release = tmp_path / "release"
    env = dict(os.environ, PYTHONPATH=str(ROOT), **{PACE_ENV: str(SLEEP_S), RELEASE_ENV: str(release)})
    out_path, err_path = tmp_path / "generate.out", tmp_path / "generate.err"
    with open(out_path, "w") as out, open(err_path, "w") as err:
        argv = [sys.executable, "-m", "tests.reliability.generate_driver", str(toml), "--workers", "1"]
        proc = subprocess.Popen(argv, cwd=ROOT, env=env, stdout=out, stderr=err, start_new_session=True)
    try:
        _wait_for_results(path, N_TRAINED + 1, proc)
        committed_before = _count_results(path)

        reports, errors = [], []
        start = threading.Barrier(N_THREADS + 2, timeout=60)  # the threads and the app start queueing together

        def caller(requests):
            start.wait()
            for kind, items in requests:
                try:
                    with Store.open(path) as store:
                        rep = enqueue(store, **{kind: items})
                    ids = [point_ids[i] for i in items] if kind == "points" else list(items)
                    reports.append((ids, rep))
                except Exception as exc:  # recorded, so the assertion shows it
                    errors.append(f"{type(exc).__name__}: {exc}")

        threads = [threading.Thread(target=caller, args=(r,), daemon=True) for r in thread_requests]
        for t in threads:
            t.start()
        at = page_test("front_page", path).run()
        start.wait()
        app_added, pages = 0, []
        for selection in app_requests:
            at.text_input(key="front_picked").set_value(", ".join(map(str, selection))).run()
            at.button(key="queue_selected").click().run()
            assert not at.exception, at.exception
            notes = [e.value for e in (*at.success, *at.warning)]
            assert len(notes) == 1 and not at.error, (notes, [e.value for e in at.error])
            n = int(re.match(r"Queued (\d+) designs? for verification", notes[0]).group(1))
            assert n >= 1, notes[0]  # its own point at least
            app_added += n
            pages.append(_page_text(at))
        for t in threads:
            t.join(timeout=120)
        committed_after = _count_results(path)
        running = proc.poll() is None
    finally:
        release.touch()  # the remaining designs solve at once
        try:
            proc.wait(timeout=120)
        finally:
            if proc.poll() is None:
                os.killpg(proc.pid, signal.SIGKILL)
                proc.wait()
    stderr, stdout = err_path.read_text(), out_path.read_text()

    # nothing reached a user as an error: not the callers, not the page, not the campaign's terminal
    assert errors == []
    assert not any("database is locked" in text for text in pages)
    assert proc.returncode == 0, stderr[-2000:]
    assert "Traceback" not in stderr and "database is locked" not in stderr and "error:" not in stderr, stderr[-2000:]
    assert f"done {N_RUN}, not converged 0, failed 0, pending 0" in stdout, stdout
    # the queueing overlapped the campaign's commits (and the page said a campaign is writing)
    assert running and committed_before < committed_after < N_TRAINED + N_RUN, (committed_before, committed_after)
    assert any("A campaign is writing this store" in text for text in pages)

    # every queue request landed exactly once: each requested design is one entry with one 'queued' event
    snapshot = audit(path)  # integrity_check, unique ids, one result per finished design (tests/reliability/audit.py)
    assert integrity(path) == ["ok"]
    db = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        entries = db.execute("SELECT entry_id, design_id FROM queue").fetchall()
        events = db.execute("SELECT entry_id, state FROM queue_events ORDER BY event_id").fetchall()
        done_events = dict(db.execute("SELECT design_id, COUNT(*) FROM events WHERE status = 'done' "
                                      "GROUP BY design_id"))
        n_results = dict(db.execute("SELECT design_id, COUNT(*) FROM results GROUP BY design_id"))
        open_runs = db.execute("SELECT COUNT(*) FROM runs WHERE finished_utc IS NULL").fetchone()[0]
    finally:
        db.close()
    assert sorted(d for _, d in entries) == sorted(wanted)
    assert sorted(e for e, _ in events) == sorted(e for e, _ in entries) and {s for _, s in events} == {"queued"}
    assert sum(len(rep.added) for _, rep in reports) + app_added == len(entries)
    assert len(reports) == N_THREADS * REQUESTS_PER_CALLER + REQUESTS_PER_CALLER
    for ids, rep in reports:  # the rest of each request was skipped as already queued, never lost
        assert len(rep.added) + len(rep.skipped) == len(ids)
        assert all(why.startswith("already in the queue as entry") for _, why in rep.skipped), rep.skipped
    # every design the runner finished has exactly one result and one 'done' event
    assert set(snapshot["status"].values()) == {"done"}
    assert n_results == done_events == {d: 1 for d in snapshot["status"]}
    assert pending <= set(n_results) and len(n_results) == N_TRAINED + N_RUN
    assert open_runs == 0
