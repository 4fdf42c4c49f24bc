"""Verification re-simulates queued designs, records predicted vs simulated, and feeds training."""

import math

import pytest

from surrogate.campaign import QueueState, Source, Status, Store
from surrogate.errors import InvalidParameterError
from surrogate.models import load_bundle, load_training_set
from surrogate.verify import discretization, enqueue, verify_store

from .synthetic import LATTICE_SLOPE_PER_NM, noisy_figures, rod_task


def test_verify_records_comparison_and_adds_training_data(store_copy):
    with Store.open(store_copy) as store:
        n_before = len(load_training_set(store).Y)
        enqueue(store, front_top=3)
    rep = verify_store(store_copy, task=rod_task, workers=1)
    assert len(rep.verified) == 3 and rep.failed == [] and rep.requeued == [] and not rep.interrupted
    with Store.open(store_copy) as store:
        entries = store.queue_entries()
        assert all(e["state"] is QueueState.DONE for e in entries)
        rows = {v["entry_id"]: v for v in store.verifications()}
        # the simulated values are the solve's (recomputed here), the z scores follow from them
        for e in entries:
            v = rows[e["entry_id"]]
            sim = noisy_figures(e["params"], 2.0)
            for t, c in v["comparison"].items():
                assert c["simulated"] == pytest.approx(sim[t], rel=1e-12)
                p = e["predicted"][t]
                value = math.log(sim[t]) if p["transform"] == "log" else sim[t]
                assert c["z_sigma"] == pytest.approx((value - p["mu"]) / p["sigma"], rel=1e-9)
                assert c["inside"] == (p["lower"] <= sim[t] <= p["upper"])
        # results are training data of source "verification"; the model is now stale
        sources = {d["design_id"]: d["source"] for d in store.designs()}
        assert all(sources[e["design_id"]] == Source.VERIFICATION.value for e in entries)
        assert len(load_training_set(store).Y) == n_before + 3
        assert load_bundle(store, allow_stale=True).stale


def test_finer_spacing_estimates_the_discretization_error(store_copy):
    # the synthetic figures carry an error exactly linear in d, so the d -> 0 estimate is exact
    with Store.open(store_copy) as store:
        enqueue(store, front_top=1)
    rep = verify_store(store_copy, task=rod_task, workers=1, spacing_nm=1.0)
    with Store.open(store_copy) as store:
        (v,) = store.verifications()
        entry = store.queue_entries()[0]
    assert rep.fine_spacing_nm == 1.0 and v["fine_spacing_nm"] == 1.0
    est = v["fine"]["discretization"]["spot_area_nm2"]
    exact = noisy_figures(entry["params"], 0.0)["spot_area_nm2"]
    assert est["extrapolated"] == pytest.approx(exact, rel=1e-9)
    assert est["relative_change"] == pytest.approx(-LATTICE_SLOPE_PER_NM / (1 + LATTICE_SLOPE_PER_NM), rel=1e-9)


def test_discretization_formula_on_a_linear_law():
    # f(d) = 10 + 3 d: from d = 2 and d = 1 the linear extrapolation gives f(0) = 10 exactly
    out = discretization({"x": 16.0, "flag": True}, {"x": 13.0, "flag": True}, 2.0, 1.0)
    assert out == {"x": {"campaign": 16.0, "fine": 13.0, "relative_change": -3.0 / 13.0, "extrapolated": 10.0}}


def test_not_converged_design_fails_its_entry_and_stays_out_of_training(store_copy):
    with Store.open(store_copy) as store:
        enqueue(store, front_top=2)
        widths = [e["params"]["width_nm"] for e in store.queue_entries()]
        # the solve of the wider design does not converge
        spec = dict(store.spec, diverge_above_width_nm=(min(widths) + max(widths)) / 2)
    assert min(widths) < max(widths)
    rep = verify_store(store_copy, task=_with_spec_override(spec), workers=1)
    assert len(rep.verified) == 1 and len(rep.failed) == 1
    assert "did not converge" in rep.failed[0][1]
    with Store.open(store_copy) as store:
        states = {e["entry_id"]: e["state"] for e in store.queue_entries()}
        assert sorted(s.value for s in states.values()) == ["done", "failed"]
        assert store.counts()[Status.NOT_CONVERGED.value] == 1
        ids = set(load_training_set(store).Y.index)
        failed_design = next(e["design_id"] for e in store.queue_entries() if e["state"] is QueueState.FAILED)
        assert failed_design not in ids


def _with_spec_override(spec):
    import functools

    return functools.partial(_override_task, spec)


def _override_task(spec, _spec, params):
    return rod_task(spec, params)


def test_nothing_queued_is_a_no_op(store_copy):
    rep = verify_store(store_copy, task=rod_task, workers=1)
    assert rep.verified == [] and rep.failed == [] and rep.requeued == []


def test_entries_left_running_by_a_dead_process_are_verified_next_time(store_copy):
    with Store.open(store_copy) as store:
        (eid,) = enqueue(store, front_top=1).added
        store.mark_entries([eid], QueueState.RUNNING)  # as a killed verify leaves it
    rep = verify_store(store_copy, task=rod_task, workers=1)
    assert rep.verified == [eid]


def test_stop_request_returns_entries_to_the_queue(store_copy):
    with Store.open(store_copy) as store:
        enqueue(store, front_top=3)
    rep = verify_store(store_copy, task=rod_task, workers=1, should_stop=lambda: True)
    assert rep.verified == [] and len(rep.requeued) == 3
    with Store.open(store_copy) as store:
        assert all(e["state"] is QueueState.QUEUED for e in store.queue_entries())
        assert store.counts()["pending"] == 3  # the designs wait, unsolved, as pending


def test_spacing_must_be_finer_than_the_campaign(store_copy):
    with Store.open(store_copy) as store:
        enqueue(store, front_top=1)
    with pytest.raises(InvalidParameterError, match="spacing_nm must be finer than the campaign's 2 nm; got 3 nm"):
        verify_store(store_copy, task=rod_task, spacing_nm=3.0)
    with Store.open(store_copy) as store:
        assert store.queue_entries()[0]["state"] is QueueState.QUEUED
