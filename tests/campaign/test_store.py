"""The store contract (written in surrogate/campaign/_store.py), tested on the SQLite backend."""

import sqlite3

import numpy as np
import pytest

from surrogate.campaign import SCHEMA_VERSION, Status, Store, StoreError

SPEC = {"name": "unit", "family": "box"}


def _result(converged=True):
    figures = {"resonance_nm": 850.0, "enhancement_at_laser": 120.0, "converged": converged}
    spectrum = [
        {"wavelength_nm": w, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5, "enhancement": 2.0,
         "converged": converged, "n_iter": 10, "residual": 1e-6}
        for w in (800.0, 830.0)
    ]
    y = np.linspace(-10, 10, 5)
    fmap = (830.0, y, y[:4], np.arange(20.0).reshape(5, 4))
    return dict(figures=figures, solver={"spacing_nm": 2.0}, spectrum=spectrum, field_map=fmap, elapsed_s=1.5)


@pytest.fixture
def store(tmp_path):
    s = Store.create(tmp_path / "c.sqlite", spec=SPEC, code_version="test")
    s.add_designs([("d0", {"a_nm": 1.0}), ("d1", {"a_nm": 2.0}), ("d2", {"a_nm": 3.0})])
    yield s
    s.close()


def test_lifecycle_and_round_trip(store, tmp_path):
    run = store.start_run("generate", "test")
    store.mark("d0", "running", run_id=run)
    assert store.record_result("d0", run_id=run, **_result()) is Status.DONE
    store.mark("d1", "running", run_id=run)
    assert store.record_result("d1", run_id=run, **_result(converged=False)) is Status.NOT_CONVERGED
    store.mark("d2", "failed", message="solver raised")
    assert store.counts() == {"pending": 0, "running": 0, "done": 1, "failed": 1, "not_converged": 1}
    store.close()
    again = Store.open(tmp_path / "c.sqlite")
    assert again.spec == SPEC
    wl, y, z, m = again.field_map("d0")
    assert wl == 830.0 and m.shape == (5, 4)
    np.testing.assert_allclose(m, np.arange(20.0).reshape(5, 4))  # float32 storage is exact for these
    assert [r["wavelength_nm"] for r in again.spectrum("d0")] == [800.0, 830.0]
    assert {r["design_id"] for r in again.results()} == {"d0", "d1"}
    again.close()


def test_running_designs_return_to_pending_on_the_next_run(store):
    run = store.start_run("generate", "test")
    store.mark("d0", "running", run_id=run)
    # the process dies here; the next run finds d0 running and returns it to pending
    store.start_run("generate", "test")
    d0 = store.designs()[0]
    assert d0["status"] is Status.PENDING and "interrupted" in d0["message"]


def test_finished_results_are_never_rewritten_and_ids_never_duplicated(store):
    store.record_result("d0", **_result())
    fp = store.fingerprint()
    with pytest.raises(StoreError, match="already finished"):
        store.record_result("d0", **_result())
    with pytest.raises(StoreError, match="design ids must be new"):
        store.add_designs([("d3", {}), ("d0", {})])
    assert len(store.designs()) == 3  # the failed batch added nothing
    assert store.fingerprint() == fp


def test_fingerprint_changes_exactly_with_finished_data(store):
    empty = store.fingerprint()
    store.mark("d0", "running")
    assert store.fingerprint() == empty
    store.record_result("d0", **_result())
    assert store.fingerprint() != empty


def test_failed_transaction_leaves_nothing(store):
    bad = _result()
    bad["spectrum"] = bad["spectrum"] + [bad["spectrum"][0]]  # duplicate wavelength -> integrity error
    with pytest.raises(StoreError):
        store.record_result("d0", **bad)
    assert store.designs()[0]["status"] is Status.PENDING
    assert store.results() == [] and store.spectrum("d0") == []


def test_newer_schema_foreign_and_corrupt_files_are_refused_untouched(tmp_path):
    path = tmp_path / "newer.sqlite"
    Store.create(path, spec=SPEC, code_version="t").close()
    db = sqlite3.connect(path)
    db.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    db.commit()
    db.close()
    before = path.read_bytes()
    with pytest.raises(StoreError, match="newer than this program"):
        Store.open(path)
    assert path.read_bytes() == before

    foreign = tmp_path / "foreign.sqlite"
    db = sqlite3.connect(foreign)
    db.execute("CREATE TABLE t (x)")
    db.commit()
    db.close()
    with pytest.raises(StoreError, match="not a campaign store"):
        Store.open(foreign)

    junk = tmp_path / "junk.sqlite"
    junk.write_bytes(b"this is not a database" * 100)
    before = junk.read_bytes()
    with pytest.raises(StoreError, match="not a readable campaign store|not a campaign store"):
        Store.open(junk)
    assert junk.read_bytes() == before


def test_create_refuses_an_existing_file(tmp_path):
    path = tmp_path / "c.sqlite"
    Store.create(path, spec=SPEC, code_version="t").close()
    with pytest.raises(StoreError, match="already exists"):
        Store.create(path, spec=SPEC, code_version="t")
