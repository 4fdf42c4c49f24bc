"""Model bundles: save, verified load, refusal of foreign or tampered bundles, versions
(surrogate/models/_bundle.py and _train.py)."""

import json
import shutil

import numpy as np
import pandas as pd
import pytest
import skops.io as sio

from surrogate.campaign import Store
from surrogate.models import (
    TRUSTED_TYPES,
    GPSurrogate,
    ModelBundleError,
    TrainingDataError,
    bundles_folder,
    list_versions,
    load_bundle,
    train_store,
)

from .helpers import add_results, branin_designs, make_store

FAST = dict(n_restarts=1, cv_folds=3)


@pytest.fixture(scope="module")
def trained(tmp_path_factory):
    """A store of 30 Branin designs (one not converged) and one trained version; never modified."""
    folder = tmp_path_factory.mktemp("trained")
    designs = branin_designs(30, 2)
    make_store(folder / "camp.sqlite", designs, not_converged={designs[0][0]}).close()
    card = train_store(folder / "camp.sqlite", **FAST)
    return folder, card


@pytest.fixture
def copy(trained, tmp_path):
    """A private copy of the trained store and its bundles."""
    shutil.copytree(trained[0], tmp_path / "c")
    return tmp_path / "c" / "camp.sqlite"


def test_bundle_layout_and_card(trained):
    folder, card = trained
    path = bundles_folder(folder / "camp.sqlite") / "v0001"
    assert card["path"] == str(path) and card["version"] == 1
    assert {p.name for p in path.iterdir()} == {"model.skops", "card.json", "card.md", "parity.png", "calibration.png"}
    on_disk = json.loads((path / "card.json").read_text())
    assert on_disk["model_file"]["sha256"] == card["model_file"]["sha256"]
    assert on_disk["training"]["n_designs"] == 29 and len(on_disk["training"]["design_ids"]) == 29
    assert on_disk["model"]["seed"] == 7  # the campaign's seed by default
    t = on_disk["targets"]["enhancement_at_laser"]
    assert t["transform"] == "log" and set(t["hyperparameters"]["length_scales"]) == {"x1_nm", "x2_nm"}
    for key in ("r2", "rmse", "mae", "coverage_68", "coverage_95", "msll", "coverage_95_recalibrated", "interval_scale"):
        assert key in t["cv"]
    assert "| resonance_nm | identity | 29 |" in (path / "card.md").read_text()


def test_loaded_bundle_predicts_like_the_trained_model(trained):
    folder, _ = trained
    with Store.open(folder / "camp.sqlite", readonly=True) as store:
        bundle = load_bundle(store)
        designs = [r for r in store.results() if r["status"].value == "done"]
    assert bundle.version == 1 and not bundle.stale and isinstance(bundle.model, GPSurrogate)
    X = pd.DataFrame([r["params"] for r in designs])[["x1_nm", "x2_nm"]]
    pred = bundle.model.predict_interval(X)
    truth = np.array([r["figures"]["resonance_nm"] for r in designs])
    # at training designs of noise-free data the median reproduces the value (noise std ~1e-3 nm)
    np.testing.assert_allclose(pred["resonance_nm_median"], truth, atol=0.05)


def test_a_tampered_model_file_is_refused(copy):
    model_file = bundles_folder(copy) / "v0001" / "model.skops"
    data = bytearray(model_file.read_bytes())
    data[len(data) // 2] ^= 0x01
    model_file.write_bytes(bytes(data))
    with Store.open(copy, readonly=True) as store, pytest.raises(ModelBundleError, match="was modified after training"):
        load_bundle(store)


def test_untrusted_types_are_refused_even_with_a_matching_checksum(copy):
    # a file re-written with an extra type, its card's SHA-256 updated to match: the type list still refuses it
    path = bundles_folder(copy) / "v0001"
    model = sio.load(path / "model.skops", trusted=list(TRUSTED_TYPES))
    model.extra_ = pd.Timedelta(1)
    sio.dump(model, path / "model.skops")
    card = json.loads((path / "card.json").read_text())
    import hashlib

    card["model_file"]["sha256"] = hashlib.sha256((path / "model.skops").read_bytes()).hexdigest()
    (path / "card.json").write_text(json.dumps(card))
    with Store.open(copy, readonly=True) as store, pytest.raises(ModelBundleError, match="outside the trusted list"):
        load_bundle(store)


def test_a_bundle_from_another_store_is_refused(copy, tmp_path):
    other = make_store(tmp_path / "other.sqlite", branin_designs(30, 3))
    other.close()
    shutil.copytree(bundles_folder(copy), bundles_folder(tmp_path / "other.sqlite"))
    with Store.open(tmp_path / "other.sqlite", readonly=True) as store:
        with pytest.raises(ModelBundleError, match="was trained on other data than store"):
            load_bundle(store)
        with pytest.raises(ModelBundleError, match="was trained on other data"):
            load_bundle(store, allow_stale=True)  # stale is accepted, foreign never


def test_new_results_make_a_bundle_stale_and_retraining_adds_a_version(copy):
    with Store.open(copy) as store:
        add_results(store, branin_designs(12, 4, prefix="new"))
    with Store.open(copy, readonly=True) as store:
        with pytest.raises(ModelBundleError, match="has new results since model v0001 was trained; train a new version"):
            load_bundle(store)
        assert load_bundle(store, allow_stale=True).stale
    card = train_store(copy, **FAST)
    assert card["version"] == 2 and card["training"]["n_designs"] == 41
    with Store.open(copy, readonly=True) as store:
        rows = list_versions(store)
        assert not load_bundle(store).stale and load_bundle(store, 1, allow_stale=True).version == 1
    assert [r["version"] for r in rows] == [1, 2] and [r["current"] for r in rows] == [False, True]
    assert [r["n_designs"] for r in rows] == [29, 41]
    assert set(rows[1]["targets"]["resonance_nm"]) == {"r2", "rmse", "coverage_95_recalibrated", "msll"}
    # version 1 was not touched by version 2
    assert json.loads((bundles_folder(copy) / "v0001" / "card.json").read_text())["training"]["n_designs"] == 29


def test_failed_training_writes_nothing(copy):
    before = sorted(p.name for p in bundles_folder(copy).iterdir())
    with pytest.raises(TrainingDataError, match=r"must have at least 100 usable designs \(50 per varied parameter x 2\); got 29"):
        train_store(copy, min_designs_per_parameter=50, **FAST)
    with pytest.raises(TrainingDataError, match="targets must be figures of merit"):
        train_store(copy, targets=["nothing_nm"], **FAST)
    assert sorted(p.name for p in bundles_folder(copy).iterdir()) == before


def test_missing_bundles_and_versions_are_clear_errors(tmp_path, copy):
    make_store(tmp_path / "fresh.sqlite", branin_designs(3, 1)).close()
    with Store.open(tmp_path / "fresh.sqlite", readonly=True) as store:
        with pytest.raises(ModelBundleError, match="has no trained models; train one with 'surrogate train"):
            load_bundle(store)
    with Store.open(copy, readonly=True) as store, pytest.raises(ModelBundleError, match="version must be one of 1; got 5"):
        load_bundle(store, 5)
