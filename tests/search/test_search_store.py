"""Search of a trained store end to end: the recorded front, feasibility, dominance, resume, bad input."""

import sqlite3
import warnings

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from surrogate.campaign import SCHEMA_VERSION, Store
from surrogate.models import ModelBundleError, load_bundle
from surrogate.errors import InvalidParameterError
from surrogate.search import (
    EmptyFrontError,
    StaleModelWarning,
    front_of,
    search_store,
    study_file,
)
from surrogate.shapes import get_family

from .helpers import LASER_NM, add_rod_results, make_rod_store, rod_designs, rod_figures, train


@given(st.integers(1, 30).flatmap(lambda n: st.tuples(
    arrays(np.float64, (n, 3), elements=st.integers(0, 5).map(float)), arrays(np.bool_, (n,)))))
def test_every_front_point_is_feasible_and_non_dominated(case):
    # Reference: the definition (Deb 2001, sec. 2.4) checked pair by pair among the feasible rows.
    f, feasible = case
    idx = set(front_of(f, feasible).tolist())
    for i in range(len(f)):
        dominated = any(feasible[j] and np.all(f[j] <= f[i]) and np.any(f[j] < f[i]) for j in range(len(f)))
        assert (i in idx) == (bool(feasible[i]) and not dominated)


def test_search_records_a_feasible_non_dominated_front(fresh_store):
    out = search_store(fresh_store, n_trials=1500, seed=1)
    rod = get_family("rod")
    front = out.front
    assert len(front) > 5 and out.front_id == 1
    # feasible: the analytic resonance (helpers.rod_figures, the data the model learnt) within the
    # window up to the surrogate's error (CV-free fit on 60 designs: |error| < 1 nm measured), and no rule broken
    for _, row in front.iterrows():
        p = {"length_nm": row["length_nm"], "width_nm": row["width_nm"], "end_radius_nm": row["end_radius_nm"],
             "thickness_nm": 30.0}
        assert abs(row["resonance_nm_median"] - LASER_NM) <= 15.0 + 1e-9
        assert abs(rod_figures(p)["resonance_nm"] - LASER_NM) <= 16.0
        assert rod.violated_rules(p) == ()
    # non-dominated among themselves (brute force over the recorded objective values)
    v = out.objective_values
    for i in range(len(v)):
        assert not any(np.all(v[j] <= v[i]) and np.any(v[j] < v[i]) for j in range(len(v)))
    with Store.open(fresh_store, readonly=True) as store:
        rec = store.fronts()[0]
        points = store.front_points(1)
    assert rec["hypervolume"] == pytest.approx(out.hypervolume) and rec["n_points"] == len(front) == len(points)
    assert rec["reference"] == list(out.reference) and rec["n_trials"] == 1500
    assert points[0]["params"]["length_nm"] == pytest.approx(front["length_nm"].iloc[0])
    assert set(points[0]["predictions"]) == {"resonance_nm", "enhancement_at_laser", "heat_per_enhancement_nm2",
                                             "spot_area_nm2"}
    assert study_file(fresh_store).is_file()
    # one point per design: no two points share a design id (parameters rounded to 0.01 nm)
    from surrogate.campaign import design_id

    ids = [design_id({**pt["params"], "thickness_nm": 30.0}) for pt in points]
    assert len(set(ids)) == len(ids)
    # best first objective first
    assert np.all(np.diff(v[:, 0]) >= 0)


def test_reference_is_the_worst_training_value(fresh_store):
    # Reference: the training data themselves (helpers.rod_figures on the stored designs), in
    # model space and minimisation form: -min log E, max log heat, max log spot area.
    out = search_store(fresh_store, n_trials=200, seed=2, record=False, persist=False)
    figs = [rod_figures(p) for _, p in rod_designs(60, 3)]
    expect = (-min(np.log(f["enhancement_at_laser"]) for f in figs),
              max(np.log(f["heat_per_enhancement_nm2"]) for f in figs),
              max(np.log(f["spot_area_nm2"]) for f in figs))
    np.testing.assert_allclose(out.reference, expect, rtol=1e-12)


def test_same_seed_reproduces_the_front(fresh_store):
    a = search_store(fresh_store, n_trials=400, seed=7, record=False, persist=False)
    b = search_store(fresh_store, n_trials=400, seed=7, record=False, persist=False)
    assert a.front.equals(b.front) and a.hypervolume == b.hypervolume


def test_resume_adds_trials_to_the_same_study(fresh_store):
    a = search_store(fresh_store, n_trials=300, seed=3)
    b = search_store(fresh_store, n_trials=200, seed=3)
    assert (a.n_trials, b.n_trials) == (300, 500) and a.study_name == b.study_name
    assert b.hypervolume >= a.hypervolume - 1e-12  # more trials never shrink the front's hypervolume
    with Store.open(fresh_store, readonly=True) as store:
        assert [f["front_id"] for f in store.fronts()] == [1, 2]


def test_cautious_objective_is_mean_minus_k_sigma(fresh_store):
    k = 2.0
    out = search_store(fresh_store, n_trials=300, seed=4, cautious_k=k, record=False, persist=False)
    with Store.open(fresh_store, readonly=True) as store:
        model = load_bundle(store).model
    names = list(model.feature_names_in_)
    pred = model.predict_model_space(out.front[names].to_numpy())
    mu, s = pred["enhancement_at_laser"]
    # minimisation form: -(mu - k sigma) for the maximised enhancement, mu + k sigma for the others;
    # rtol 1e-7: predicting a batch or the front alone differs by up to 1.0e-9 relative (measured; BLAS blocking)
    np.testing.assert_allclose(out.objective_values[:, 0], -(mu - k * s), rtol=1e-7)
    mu, s = pred["spot_area_nm2"]
    np.testing.assert_allclose(out.objective_values[:, 2], mu + k * s, rtol=1e-7)


def test_searching_beyond_the_sampled_bounds_flags_extrapolation(fresh_store):
    # longer rods resonate further to the red: maximising the resonance pushes the front past 200 nm
    out = search_store(fresh_store, objectives=["resonance_nm:max", "spot_area_nm2:min"], n_trials=600, seed=5,
                       record=False, persist=False, window_nm=None, bounds={"length_nm": (60.0, 400.0)})
    beyond = out.front["length_nm"] > 200.0
    assert beyond.any()
    for i in np.flatnonzero(beyond.to_numpy()):
        assert "extrapolated" in out.front["trust_flags"].iloc[i]


def test_stale_model_warns_and_strict_refuses(fresh_store):
    with Store.open(fresh_store) as store:
        add_rod_results(store, rod_designs(3, 99, prefix="new"))
    with pytest.warns(StaleModelWarning, match="predates the store's newest results"):
        out = search_store(fresh_store, n_trials=100, seed=0, record=False, persist=False)
    assert out.stale
    with pytest.raises(ModelBundleError, match="new results since model v0001"):
        search_store(fresh_store, n_trials=100, seed=0, strict=True, record=False, persist=False)


def test_bad_input(fresh_store):
    with pytest.raises(InvalidParameterError, match="trials must be an integer in \\[1"):
        search_store(fresh_store, n_trials=0)
    with pytest.raises(InvalidParameterError, match="objective must be a figure of merit"):
        search_store(fresh_store, objectives=["sparkle"], n_trials=10)
    with pytest.raises(InvalidParameterError, match="direction must be max or min"):
        search_store(fresh_store, objectives=["spot_area_nm2:up"], n_trials=10)
    with pytest.raises(InvalidParameterError, match="bounds\\['length_nm'\\] must lie in the family limits"):
        search_store(fresh_store, bounds={"length_nm": (0.5, 300.0)}, n_trials=10)
    with pytest.raises(InvalidParameterError, match="cautious_k must be in"):
        search_store(fresh_store, cautious_k=-1.0, n_trials=10)


def test_objective_with_no_trained_model(tmp_path):
    store = make_rod_store(tmp_path / "partial.sqlite", n=30)
    train(store, targets=["resonance_nm", "enhancement_at_laser", "heat_per_enhancement_nm2"])
    store.close()
    with pytest.raises(InvalidParameterError, match="objective spot_area_nm2 has no trained model"):
        search_store(tmp_path / "partial.sqlite", n_trials=10)
    # the remaining objectives search fine
    out = search_store(tmp_path / "partial.sqlite", objectives=["enhancement_at_laser", "heat_per_enhancement_nm2"],
                       n_trials=200, seed=0, record=False, persist=False)
    assert out.front.shape[0] >= 1


def test_empty_front_is_an_error_and_records_nothing(fresh_store):
    # A 0.001 nm window: the continuous resonance hits it with probability ~0 in 100 trials.
    with pytest.raises(EmptyFrontError, match="front must hold at least one feasible design; got none among 100"):
        search_store(fresh_store, n_trials=100, seed=0, window_nm=0.001)
    with Store.open(fresh_store, readonly=True) as store:
        assert store.fronts() == []


def test_fronts_are_append_only_and_old_stores_migrate(fresh_store, tmp_path):
    search_store(fresh_store, n_trials=100, seed=0, persist=False)
    db = sqlite3.connect(fresh_store)
    with pytest.raises(sqlite3.DatabaseError, match="append-only"):
        db.execute("UPDATE fronts SET hypervolume = 0")
    with pytest.raises(sqlite3.DatabaseError, match="append-only"):
        db.execute("DELETE FROM front_points")
    db.close()
    # a schema-1 file (as written before fronts existed) is migrated forward on opening
    old = tmp_path / "old.sqlite"
    Store.create(old, spec={"family": "rod"}, code_version="t").close()
    db = sqlite3.connect(old)
    # drop what schemas 2 and 3 added (every trigger, the queue's view and tables, the fronts)
    triggers = [r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")]
    db.executescript("".join(f"DROP TRIGGER {t};" for t in triggers) +
                     "DROP VIEW queue_status; DROP TABLE refine_rounds; DROP TABLE verifications; "
                     "DROP TABLE queue_events; DROP TABLE queue;")
    db.executescript("DROP TABLE front_points; DROP TABLE fronts;"
                     "PRAGMA user_version = 1; UPDATE meta SET value = '1' WHERE key = 'schema_version';")
    db.close()
    with Store.open(old) as store:
        assert store.fronts() == [] and store.meta("schema_version") == str(SCHEMA_VERSION) == "3"
        assert store.queue_entries() == [] and store.verifications() == [] and store.refine_rounds() == []
    with pytest.raises(Exception, match="front 5 does not exist"):
        with Store.open(old) as store:
            store.front_points(5)
