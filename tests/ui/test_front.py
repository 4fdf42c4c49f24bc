"""The Front page, headless (AppTest), on a small store made in the test."""

import json

from surrogate.campaign import Store, design_id

from .helpers import make_app_store, page_test


def table_with(at, column):
    """The first dataframe of the page with ``column`` (AppTest keeps no key for a dataframe)."""
    return next(d.value for d in at.dataframe if column in d.value.columns)


def _front(path):
    with Store.open(path, readonly=True) as store:
        front = store.fronts()[-1]
        return front, store.front_points(front["front_id"])


def test_front_page_shows_the_newest_front_of_the_store(store):
    front, points = _front(store)
    at = page_test("front_page", store).run()
    assert not at.exception
    assert at.title[0].value == "Front"
    assert at.caption[0].value.startswith(f"{len(points)} designs on the front")
    n_flagged = sum(1 for p in points if p["flags"])
    assert f"({n_flagged} flagged)" in at.caption[0].value
    assert len(at.get("plotly_chart")) == 1
    # the axes default to the front's first two objectives
    assert at.selectbox(key="front_x").value == f"{front['objectives'][0]['target']}_median"
    assert at.selectbox(key="front_y").value == f"{front['objectives'][1]['target']}_median"


def test_selecting_points_opens_the_detail_panel_with_the_stored_prediction(store):
    _, points = _front(store)
    at = page_test("front_page", store).run()
    at.text_input(key="front_picked").set_value("2").run()
    assert not at.exception
    pred = table_with(at, "median").set_index("target")
    for target, p in points[2]["predictions"].items():
        assert pred.loc[target, "median"] == format(p["median"], ".4g")
        assert pred.loc[target, "lower"] == format(p["lower"], ".4g")
    params = table_with(at, "parameter").set_index("parameter")
    for name, v in points[2]["params"].items():
        assert params.loc[name, "value"] == format(v, ".5g")
    shown_flags = [m.value for m in at.markdown if m.value.startswith("- ")]
    assert shown_flags == [f"- {f['flag']}: {f['reason']}" for f in points[2]["flags"]]
    assert len(at.get("plotly_chart")) == 2  # the front and the shape drawing


def test_queue_button_writes_the_selection_to_the_store_queue(store):
    front, points = _front(store)
    at = page_test("front_page", store).run()
    at.text_input(key="front_picked").set_value("0, 3").run()
    at.button(key="queue_selected").click().run()
    assert not at.exception
    with Store.open(store, readonly=True) as s:
        entries = s.queue_entries()
    assert [(e["front_id"], e["point_index"], e["reason"]) for e in entries] == [
        (front["front_id"], 0, "app"), (front["front_id"], 3, "app")]
    with Store.open(store, readonly=True) as s:
        fixed = s.spec["fixed"]
    for e in entries:  # the entry is the design of that front point (the campaign's content id)
        assert e["design_id"] == design_id({**points[e["point_index"]]["params"], **fixed})
    assert at.success[0].value.startswith("Queued 2 designs for verification")
    # asking again queues nothing and says why
    at.button(key="queue_selected").click().run()
    assert at.warning[0].value.startswith("Queued 0 designs") and "already in the queue" in at.warning[0].value
    with Store.open(store, readonly=True) as s:
        assert len(s.queue_entries()) == 2


def test_colouring_by_uncertainty_and_changing_axes_render(store):
    at = page_test("front_page", store).run()
    at.selectbox(key="front_colour").set_value("uncertainty of spot_area_nm2").run()
    at.selectbox(key="front_y").set_value("resonance_nm_median").run()
    assert not at.exception
    assert len(at.get("plotly_chart")) == 1


def test_download_holds_every_front_point(store):
    from surrogate.ui._data import front_frame

    front, points = _front(store)
    frame = front_frame(store, front["front_id"])
    assert list(frame["point"]) == [p["point_index"] for p in points]
    assert frame["spot_area_nm2_median"].tolist() == [p["predictions"]["spot_area_nm2"]["median"] for p in points]
    at = page_test("front_page", store).run()
    assert len(at.get("download_button")) == 1


def test_store_without_front_says_to_run_the_search(tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", front=False)
    at = page_test("front_page", path).run()
    assert not at.exception
    assert "No front yet" in at.info[0].value and f"surrogate search {path}" in at.info[0].value


def test_store_without_models_says_to_train(tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", model=False, front=False)
    at = page_test("front_page", path).run()
    assert not at.exception
    assert "No trained surrogates yet" in at.info[0].value and f"surrogate train {path}" in at.info[0].value


def test_typed_point_numbers_are_checked_in_one_line(store):
    _, points = _front(store)
    at = page_test("front_page", store).run()
    at.text_input(key="front_picked").set_value("1, x").run()
    assert not at.exception
    assert at.error[0].value == (f"Selected points must be point numbers of front #1 (0 to {len(points) - 1}) "
                                 "separated by commas; got 'x'")
    assert at.button(key="queue_selected").disabled
    at.text_input(key="front_picked").set_value(f"1, {len(points) - 1}").run()
    assert not at.error and at.button(key="queue_selected").label == "Queue 2 selected for verification"


def _infeasible_in_study(path):
    """Infeasible complete trials of the front's study, read with optuna itself."""
    import optuna
    from optuna.storages.journal import JournalFileBackend
    from optuna.trial import TrialState

    front, _ = _front(path)
    storage = optuna.storages.JournalStorage(JournalFileBackend(str(path.with_name("rod.search.journal"))))
    study = optuna.load_study(study_name=front["study"]["name"], storage=storage)
    trials = study.get_trials(states=(TrialState.COMPLETE,))
    return [t for t in trials if any(v > 0 for v in t.constraints.values())]


def test_infeasible_searched_designs_are_shown_faintly(store):
    bad = _infeasible_in_study(store)
    assert bad, "the test search must leave infeasible trials"
    at = page_test("front_page", store).run()
    assert not at.exception
    captions = [c.value for c in at.caption]
    assert f"{len(bad)} infeasible searched designs shown faintly" in " ".join(captions)
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)
    names = [t.get("name") for t in spec["data"]]
    assert names[0] == "infeasible (searched)"
    at.checkbox(key="front_infeasible").uncheck().run()
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)
    assert "infeasible (searched)" not in [t.get("name") for t in spec["data"]]


def test_without_the_study_file_the_page_says_so(store):
    store.with_name("rod.search.journal").unlink()
    at = page_test("front_page", store).run()
    assert not at.exception
    assert "study file is not beside the store" in " ".join(c.value for c in at.caption)
