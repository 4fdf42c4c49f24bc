"""Helpful states instead of tracebacks: no store, a missing or foreign file, an empty store, an older
layout, a store being written by a running campaign."""

import sqlite3

import pytest

from surrogate.campaign import Store
from surrogate.campaign._store import _MIGRATIONS

from ..search.helpers import rod_designs
from .helpers import make_app_store, page_test

PAGES = ["front_page", "training_page", "models_page", "queue_page"]


@pytest.mark.parametrize("page", PAGES)
def test_no_store_chosen(page):
    at = page_test(page, None).run()
    assert not at.exception
    assert at.info[0].value.startswith("No store chosen")


@pytest.mark.parametrize("page", PAGES)
def test_missing_store_file(page, tmp_path):
    at = page_test(page, tmp_path / "nothing.sqlite").run()
    assert not at.exception
    assert "does not exist" in at.error[0].value and "surrogate generate" in at.error[0].value


def test_foreign_file(tmp_path):
    path = tmp_path / "other.sqlite"
    sqlite3.connect(path).execute("CREATE TABLE t (x)").connection.close()
    at = page_test("front_page", path).run()
    assert not at.exception
    assert "not a campaign store of this program" in at.error[0].value


@pytest.mark.parametrize("page", PAGES)
def test_empty_store(page, tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", n=0, model=False, front=False)
    at = page_test(page, path).run()
    assert not at.exception
    assert "holds no designs yet" in at.info[0].value


def _downgrade_to_schema_2(path):
    """Remove the verification-queue layout (schema 3) so the file is what an older program wrote."""
    db = sqlite3.connect(path)
    for stmt in _MIGRATIONS[3].split(";"):
        words = stmt.split()
        if len(words) > 2 and words[0] == "CREATE" and words[1] in ("TABLE", "VIEW", "TRIGGER", "INDEX"):
            db.execute(f"DROP {words[1]} IF EXISTS {words[2]}")
    db.execute("PRAGMA user_version = 2")
    db.execute("UPDATE meta SET value = '2' WHERE key = 'schema_version'")
    db.commit()
    db.close()


def test_older_store_layout_is_upgraded_on_request(tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", model=False, front=False)
    _downgrade_to_schema_2(path)
    at = page_test("queue_page", path).run()
    assert not at.exception
    assert "old schema version 2" in at.warning[0].value
    at.button(key="upgrade_store").click().run()
    assert not at.exception
    assert at.title[0].value == "Queue" and "Nothing is queued" in at.info[0].value
    with Store.open(path, readonly=True) as store:
        assert store.queue_entries() == []


def test_store_being_written_by_a_campaign(store):
    with Store.open(store) as s:
        s.start_run("generate", "test")  # a run without a finish time
        s.add_designs(rod_designs(3, seed=99, prefix="new"))
        s.mark("new99-0000", "running")
        counts = s.counts()
    for page in PAGES:
        at = page_test(page, store).run()
        assert not at.exception
        note = [i.value for i in at.info if i.value.startswith("A campaign is writing this store")]
        assert note == [f"A campaign is writing this store ({counts['running']} running, {counts['pending']} pending). "
                        "The page shows the designs committed so far; reload the page to see newer ones."]


def test_a_typed_store_outside_the_project_folders_is_refused(store, tmp_path, monkeypatch):
    # security rule of the product (no outside source): a path typed into the app stays inside the
    # project's datasets/ or reports/; other stores are opened from the command line
    project = tmp_path / "project"
    (project / "datasets").mkdir(parents=True)
    monkeypatch.chdir(project)
    at = page_test("training_page", store).run()
    elsewhere = make_app_store(tmp_path / "elsewhere" / "rod.sqlite", n=3, model=False, front=False)
    at.sidebar.text_input(key="store_field").set_value(str(elsewhere)).run()
    assert not at.exception
    assert "a store typed here must lie inside the project's datasets/ or reports/" in at.error[0].value
    assert "surrogate app STORE" in at.error[0].value
    # the page stays on the store given at start-up
    assert at.session_state["store_path"] == str(store)


def test_a_typed_store_inside_datasets_is_opened(store, tmp_path, monkeypatch):
    project = tmp_path / "project"
    inside = make_app_store(project / "datasets" / "small.sqlite", n=0, model=False, front=False)
    monkeypatch.chdir(project)
    at = page_test("training_page", store).run()
    at.sidebar.text_input(key="store_field").set_value("datasets/small.sqlite").run()
    assert not at.exception and not at.error
    assert "holds no designs yet" in at.info[0].value
    assert inside.is_file()
