"""The verification queue keeps one entry per design, never loses one, and records what was predicted."""

import sqlite3

import pytest

from surrogate.campaign import QueueState, Store, StoreError, design_id
from surrogate.errors import InvalidParameterError
from surrogate.verify import enqueue

def test_front_top_queues_the_best_points_with_their_predictions(store_copy):
    with Store.open(store_copy) as store:
        points = store.front_points(store.fronts()[-1]["front_id"])
        rep = enqueue(store, front_top=3)
        entries = store.queue_entries()
    assert len(rep.added) == 3 and rep.skipped == [] and rep.model_version == 1
    assert [e["point_index"] for e in entries] == [0, 1, 2]
    for e, p in zip(entries, points):
        assert e["state"] is QueueState.QUEUED and e["reason"] == "front-top"
        assert e["design_id"] == design_id(e["params"])
        # the stored median is the front's (same model, parameters rounded to 0.01 nm)
        for t, pred in e["predicted"].items():
            assert pred["median"] == pytest.approx(p["predictions"][t]["median"], rel=1e-3)
            assert pred["lower"] < pred["median"] < pred["upper"] and pred["sigma"] > 0

def test_asking_again_never_duplicates(store_copy):
    with Store.open(store_copy) as store:
        first = enqueue(store, front_top=2)
        again = enqueue(store, front_top=3, points=[0])
        entries = store.queue_entries()
    assert len(first.added) == 2
    assert len(again.added) == 1  # only point 2 is new
    assert len(again.skipped) == 3  # points 0 and 1 already queued, point 0 listed twice
    ids = [e["design_id"] for e in entries]
    assert len(ids) == len(set(ids)) == 3

def test_failed_entry_is_queued_again_on_the_same_entry(store_copy):
    with Store.open(store_copy) as store:
        (eid,) = enqueue(store, front_top=1).added
        store.mark_entries([eid], QueueState.FAILED, "solver crashed")
        rep = enqueue(store, front_top=1)
        entries = store.queue_entries()
    assert rep.added == [eid] and len(entries) == 1 and entries[0]["state"] is QueueState.QUEUED

def test_queue_rows_are_append_only(store_copy):
    with Store.open(store_copy) as store:
        enqueue(store, front_top=1)
    db = sqlite3.connect(store_copy)
    for sql in ("UPDATE queue SET reason = 'x'", "DELETE FROM queue", "DELETE FROM queue_events"):
        with pytest.raises(sqlite3.DatabaseError, match="append-only"):
            db.execute(sql)
    db.close()

def test_done_is_recorded_once_with_its_data(store_copy):
    with Store.open(store_copy) as store:
        (eid,) = enqueue(store, front_top=1).added
        with pytest.raises(StoreError, match="record_verification"):
            store.mark_entries([eid], QueueState.DONE)
        store.record_verification(eid, design_id="x", spacing_nm=2.0, simulated={}, comparison={})
        with pytest.raises(StoreError, match="already verified"):
            store.record_verification(eid, design_id="x", spacing_nm=2.0, simulated={}, comparison={})
        assert len(store.verifications()) == 1

def test_existing_design_and_flagged_points(store_copy):
    with Store.open(store_copy) as store:
        did = store.designs()[0]["design_id"]
        rep = enqueue(store, design_ids=[did])
        fpoints = store.front_points(store.fronts()[-1]["front_id"])
        flagged = enqueue(store, flagged=True)
        entries = store.queue_entries()
    assert entries[0]["design_id"] == did and entries[0]["reason"] == "design" and len(rep.added) == 1
    n_flagged = sum(1 for p in fpoints if p["flags"])
    assert len(flagged.added) + len(flagged.skipped) == n_flagged

@pytest.mark.parametrize(("kwargs", "match"), [
    ({}, "must name candidates"),
    ({"design_ids": ["dnothere"]}, "design must be a design id.*'dnothere'"),
    ({"points": [10_000]}, r"point must be a point index of front 1 \(0\.\."),
    ({"front_top": 0}, "front_top must be"),
    ({"front_top": 1, "reason": "because"}, "reason must be one of"),
])
def test_bad_requests_are_refused_and_write_nothing(store_copy, kwargs, match):
    with Store.open(store_copy) as store:
        with pytest.raises(InvalidParameterError, match=match):
            enqueue(store, **kwargs)
        assert store.queue_entries() == []

def test_a_store_without_a_front_is_refused(tmp_path):
    from .synthetic import make_store

    with make_store(tmp_path / "s.sqlite") as store:
        with pytest.raises(InvalidParameterError, match="no search front.*surrogate search"):
            enqueue(store, front_top=1)

def test_queue_without_a_model_stores_no_prediction(tmp_path):
    from .synthetic import make_store

    with make_store(tmp_path / "s.sqlite") as store:
        rep = enqueue(store, design_ids=[store.designs()[0]["design_id"]])
        assert rep.model_version is None and store.queue_entries()[0]["predicted"] is None
