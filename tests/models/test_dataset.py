"""Training sets read from a store (surrogate/models/_dataset.py)."""

import numpy as np
import pytest

from surrogate.campaign import Store
from surrogate.models import DEFAULT_TARGETS, TrainingDataError, load_training_set, training_digest

from .helpers import BRANIN_BOUNDS, branin_designs, make_store


def test_only_converged_designs_and_varied_parameters_are_used(tmp_path):
    designs = branin_designs(12, 1)
    store = make_store(tmp_path / "s.sqlite", designs, not_converged={designs[2][0], designs[5][0]})
    store.add_designs([("pending-1", {"x1_nm": 0.0, "x2_nm": 1.0, "thickness_nm": 40.0})])
    data = load_training_set(store)
    assert list(data.X.columns) == list(BRANIN_BOUNDS)  # thickness_nm is fixed: not an input
    assert len(data.X) == 10 and designs[2][0] not in data.design_ids and "pending-1" not in data.design_ids
    assert list(data.Y.columns) == list(DEFAULT_TARGETS)
    assert data.fingerprint == store.fingerprint()
    done = [r for r in store.results() if r["design_id"] in set(data.design_ids)]
    assert data.digest == training_digest(done)
    assert data.counts["not_converged"] == 2 and data.counts["pending"] == 1
    store.close()


def test_a_store_without_converged_designs_is_refused(tmp_path):
    designs = branin_designs(3, 1)
    store = make_store(tmp_path / "s.sqlite", designs, not_converged={d for d, _ in designs})
    with pytest.raises(TrainingDataError, match=r"must hold converged designs to train on; got none \(.*not_converged 3"):
        load_training_set(store)
    store.close()


def test_unknown_targets_are_refused_with_the_available_ones(tmp_path):
    store = make_store(tmp_path / "s.sqlite", branin_designs(3, 1))
    with pytest.raises(TrainingDataError, match=r"targets must be figures of merit of the store \(.*resonance_nm.*\); got 'gain'"):
        load_training_set(store, ["gain"])
    store.close()


def test_nan_targets_are_refused_unless_dropped_and_censored_resonances_left_out(tmp_path):
    designs = branin_designs(10, 1)
    nan_id, edge_id = designs[4][0], designs[6][0]

    def edit(design_id, fig):
        if design_id == nan_id:
            return dict(fig, spot_area_nm2=float("nan"))
        if design_id == edge_id:
            return dict(fig, resonance_nm=1000.0, resonance_resolved=False)
        return fig

    store = make_store(tmp_path / "s.sqlite", designs, edit=edit)
    with pytest.raises(TrainingDataError, match=rf"spot_area_nm2 must be finite in every converged design; got NaN in 1 designs \(first {nan_id}\)"):
        load_training_set(store)
    data = load_training_set(store, drop_missing=True)
    assert np.isnan(data.Y.loc[nan_id, "spot_area_nm2"]) and np.isnan(data.Y.loc[edge_id, "resonance_nm"])
    assert np.isfinite(data.Y.loc[edge_id, "enhancement_at_laser"])  # censoring touches only the resonance
    assert data.left_out["resonance_nm"] == {"censored": 1, "missing": 0}
    assert data.left_out["spot_area_nm2"] == {"censored": 0, "missing": 1}
    store.close()
    # reading never writes: the store's bytes are unchanged after a read-only load
    before = (tmp_path / "s.sqlite").read_bytes()
    with Store.open(tmp_path / "s.sqlite", readonly=True) as ro:
        load_training_set(ro, drop_missing=True)
    assert (tmp_path / "s.sqlite").read_bytes() == before
