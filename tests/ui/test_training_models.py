"""The Training data and Models pages, headless (AppTest), on small stores made in the test."""

import json

from surrogate.campaign import Status, Store
from surrogate.models import bundles_folder, list_versions
from surrogate.ui._jobs import get_job, wait_for

from .helpers import make_app_store, page_test
from .test_front import table_with


def test_training_page_counts_by_status_and_lists_failures(store):
    with Store.open(store) as s:
        s.add_designs([("broken-1", {"length_nm": 100.0, "width_nm": 30.0, "end_radius_nm": 5.0, "thickness_nm": 30.0})])
        s.mark("broken-1", Status.FAILED, "lattice would need 9 GB; the limit is 4 GB")
        counts = s.counts()
    at = page_test("training_page", store).run()
    assert not at.exception
    shown = table_with(at, "designs").set_index("status")["designs"].to_dict()
    assert shown == counts
    failures = table_with(at, "message")
    assert failures["design_id"].tolist() == ["broken-1"]
    assert failures["message"].tolist() == ["lattice would need 9 GB; the limit is 4 GB"]
    # one histogram per varied parameter and the pair plot
    with Store.open(store, readonly=True) as s:
        n_params = len(s.spec["bounds"])
    assert len(at.get("plotly_chart")) == n_params + 1
    at.radio(key="training_colour").set_value("source").run()
    assert not at.exception


def test_models_page_lists_the_versions_of_the_store(store):
    at = page_test("models_page", store).run()
    assert not at.exception
    table = table_with(at, "created_utc")
    with Store.open(store, readonly=True) as s:
        versions = list_versions(s)
    assert table["version"].tolist() == [v["version"] for v in versions]
    assert "trained without cross-validation plots" in " ".join(c.value for c in at.caption)


def test_retrain_button_makes_a_new_model_version_in_the_background(store):
    at = page_test("models_page", store).run()
    at.number_input(key="train_folds").set_value(2)
    at.number_input(key="train_restarts").set_value(0)
    at.button(key="retrain").click().run()
    assert not at.exception
    job = wait_for("retrain", store, timeout_s=300)
    assert job is not None and job.state == "finished", job and job.message
    at.run()
    assert not at.exception
    folder = bundles_folder(store)
    assert sorted(p.name for p in folder.glob("v[0-9]*")) == ["v0001", "v0002"]
    card = json.loads((folder / "v0002" / "card.json").read_text())
    assert card["model"]["cv_folds"] == 2 and card["model"]["n_restarts"] == 0
    assert table_with(at, "created_utc")["version"].tolist() == [1, 2]
    # the newest version is shown with its cross-validated metrics and plots
    cv = table_with(at, "R² [-]").set_index("target")
    for t, info in card["targets"].items():
        assert cv.loc[t, "R² [-]"] == format(info["cv"]["r2"], ".4g")
    assert len(at.get("image")) == 2  # parity and calibration PNGs of the new version
    assert get_job("retrain", store).message.startswith("Trained model v0002")


def test_models_page_without_models_offers_retrain(tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", model=False, front=False)
    at = page_test("models_page", path).run()
    assert not at.exception
    assert "No trained surrogates yet" in at.info[0].value
    assert at.button(key="retrain").disabled is False
