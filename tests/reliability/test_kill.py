"""kill -9 of `verify` and `refine` at seeded random moments: nothing committed is lost or duplicated,
the store stays intact, and a rerun finishes the job (the store contract, surrogate/campaign/_store.py).

The solve is the synthetic rod task slowed by a sleep (tests/reliability/slow_tasks.py), so the kill
lands while designs are in flight; the moment is the k-th progress event of the run plus a random
delay, both drawn from a seeded generator.
"""

import os
import signal
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from surrogate.campaign import QueueState, Store
from surrogate.verify import enqueue, refine_store, verify_store
from tests.verify.synthetic import rod_task

from .audit import assert_kept, audit
from .conftest import FAST_TRAINING
from .slow_tasks import SLEEP_ENV

ROOT = Path(__file__).resolve().parents[2]
SLEEP_S = 0.4
SEEDS = [11, 16, 7]  # kill after events 1, 3, 5 of verify; 2 (search), 7 (retrain), 12 (round-2 verify) of refine

_VERIFY = """
import sys
from surrogate.verify import verify_store
from tests.reliability.slow_tasks import slow_rod_task
print("started", flush=True)
verify_store(sys.argv[1], task=slow_rod_task, workers=1, progress=lambda ev: print(ev["stage"], flush=True))
print("finished", flush=True)
"""

_REFINE = """
import sys
from surrogate.verify import refine_store
from tests.reliability.slow_tasks import slow_rod_task
print("started", flush=True)
refine_store(sys.argv[1], rounds=3, batch=3, n_trials=100, seed=1, task=slow_rod_task, workers=1,
             train_options={"cv_folds": None, "n_restarts": 0, "plots": False},
             progress=lambda ev: print(ev["stage"], flush=True))
print("finished", flush=True)
"""


def _run_and_kill(driver, store_path, seed, n_events):
    """Start ``driver`` on the store, SIGKILL its process group after a seeded number of events and delay."""
    rng = np.random.default_rng(seed)
    target = int(rng.integers(1, n_events + 1))  # event 1 is "started"
    delay = float(rng.uniform(0.0, 0.75 * SLEEP_S))  # before the next design can finish
    env = dict(os.environ, PYTHONPATH=str(ROOT), **{SLEEP_ENV: str(SLEEP_S)})
    proc = subprocess.Popen([sys.executable, "-c", driver, str(store_path)], cwd=ROOT, env=env, text=True,
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, start_new_session=True)
    seen = []
    try:
        while len(seen) < target:
            line = proc.stdout.readline()
            if not line:
                break
            seen.append(line.strip())
        if proc.poll() is None:
            try:
                proc.wait(timeout=delay)
            except subprocess.TimeoutExpired:
                pass
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        proc.wait()
        proc.stdout.close()
    return proc.returncode, seen


@pytest.mark.parametrize("seed", SEEDS)
def test_kill_minus_9_of_verify_then_rerun(store_copy, seed):
    with Store.open(store_copy) as store:
        n = len(enqueue(store, front_top=5).added)
    assert n == 5
    queued = audit(store_copy)
    code, seen = _run_and_kill(_VERIFY, store_copy, seed, n_events=n)  # started + n-1 finished designs
    assert code == -signal.SIGKILL, f"verify ended before the kill ({seen})"
    after_kill = audit(store_copy)
    assert_kept(queued, after_kill)
    assert set(after_kill["entries"]) == set(queued["entries"])  # no entry lost, none added
    rep = verify_store(store_copy, task=rod_task, workers=1)
    assert not rep.interrupted and rep.failed == []
    final = audit(store_copy)
    assert_kept(after_kill, final)  # what the killed run committed is kept as it was
    assert set(final["entries"]) == set(queued["entries"])
    assert set(final["state"].values()) == {"done"}
    # each design was solved once: the designs verified before the kill were not solved again
    assert sorted(rep.verified) == sorted(set(final["entries"]) - set(after_kill["verifications"]))
    with Store.open(store_copy, readonly=True) as store:
        assert store.counts()["running"] == 0 and store.counts()["pending"] == 0


# the killed run may leave verified designs that no model was trained on yet: the rerun searches a stale model
@pytest.mark.filterwarnings("ignore::surrogate.search.StaleModelWarning")
@pytest.mark.parametrize("seed", SEEDS)
def test_kill_minus_9_of_refine_then_rerun(store_copy, seed):
    before = audit(store_copy)
    # events: started, then per round search, verify, 3 designs, retrain (6 per round); kill within rounds 1-2
    code, seen = _run_and_kill(_REFINE, store_copy, seed, n_events=12)
    assert code == -signal.SIGKILL, f"refine ended before the kill ({seen})"
    after_kill = audit(store_copy)
    assert_kept(before, after_kill)
    rounds = refine_store(store_copy, rounds=1, batch=2, n_trials=100, seed=11, task=rod_task, workers=1,
                          train_options=FAST_TRAINING)
    final = audit(store_copy)
    assert_kept(after_kill, final)
    # every entry the killed run queued is verified now, and the rerun's own batch too
    assert set(after_kill["entries"]) < set(final["entries"])
    assert set(final["state"].values()) == {"done"}
    assert len(final["entries"]) == len(after_kill["entries"]) + rounds[0].queued
    with Store.open(store_copy, readonly=True) as store:
        assert all(e["state"] is QueueState.DONE for e in store.queue_entries())
        assert store.counts()["running"] == 0
