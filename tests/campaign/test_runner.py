"""Runners: local processes and Dask commit every result once, record failures, survive dead workers."""

import pytest

from surrogate.campaign import Status, Store
from surrogate.campaign._runner import run_campaign
from tests.campaign import fake_tasks

DESIGNS = [(f"d{i}", {"a_nm": float(i)}) for i in range(6)] + [("dneg", {"a_nm": -1.0}), ("dbig", {"a_nm": 5000.0})]


@pytest.fixture
def store(tmp_path):
    s = Store.create(tmp_path / "c.sqlite", spec={"name": "t"}, code_version="t")
    s.add_designs(DESIGNS)
    yield s
    s.close()


def _snapshot(store):
    return sorted((r["design_id"], r["status"].value, r["figures"]["resonance_nm"]) for r in store.results())


def test_local_runner_records_done_failed_and_not_converged(store):
    summary = run_campaign(store, {}, fake_tasks.quick, workers=2)
    assert (summary.done, summary.not_converged, summary.failed, summary.remaining) == (6, 1, 1, 0)
    failed = store.designs(status=Status.FAILED)
    assert [d["design_id"] for d in failed] == ["dneg"]
    assert "ValueError: negative design -1.0" in failed[0]["message"]
    # rerun: nothing left; failed retried only when asked
    again = run_campaign(store, {}, fake_tasks.quick, workers=2)
    assert (again.done, again.failed) == (0, 0)
    retry = run_campaign(store, {}, fake_tasks.quick, workers=2, retry_failed=True)
    assert retry.failed == 1 and len(store.results()) == 7


def test_dask_local_cluster_gives_the_same_results(store, tmp_path):
    run_campaign(store, {}, fake_tasks.quick, workers=2)
    other = Store.create(tmp_path / "d.sqlite", spec={"name": "t"}, code_version="t")
    other.add_designs(DESIGNS)
    summary = run_campaign(other, {}, fake_tasks.quick, dask_workers=2)
    assert (summary.done, summary.not_converged, summary.failed) == (6, 1, 1)
    assert _snapshot(other) == _snapshot(store)
    assert other.fingerprint() == store.fingerprint()
    other.close()


def test_a_worker_that_dies_loses_nothing(store, tmp_path, monkeypatch):
    # Local pool: the dying worker breaks the pool; a fresh pool is started and the designs
    # that were in flight are tried once more, so every design still finishes.
    monkeypatch.setenv("FAKE_TASK_DIE_MARKER", str(tmp_path / "died"))
    summary = run_campaign(store, {}, fake_tasks.die_once, workers=2)
    assert (tmp_path / "died").exists()  # the worker really died
    assert (summary.done, summary.not_converged, summary.failed) == (6, 1, 1)
    assert [d["design_id"] for d in store.designs(status=Status.FAILED)] == ["dneg"]


def test_a_design_that_always_kills_its_worker_is_marked_failed(store, monkeypatch):
    store.add_designs([("killer", {"a_nm": 3.0})])
    monkeypatch.setenv("FAKE_TASK_DIE_MARKER", "")
    summary = run_campaign(store, {}, fake_tasks.always_die_on_three, workers=2)
    failed = {d["design_id"]: d["message"] for d in store.designs(status=Status.FAILED)}
    assert "worker process died" in failed["killer"] and "worker process died" in failed["d3"]
    assert summary.done == 5  # the other designs were not lost


def test_dask_worker_killed_mid_design_is_retried_elsewhere(store, tmp_path, monkeypatch):
    monkeypatch.setenv("FAKE_TASK_DIE_MARKER", str(tmp_path / "died-dask"))
    summary = run_campaign(store, {}, fake_tasks.die_once, dask_workers=2)
    assert (tmp_path / "died-dask").exists()  # the worker really died
    assert (summary.done, summary.not_converged, summary.failed) == (6, 1, 1)
