import pytest

from .helpers import copy_store, make_app_store


@pytest.fixture(scope="session")
def app_store(tmp_path_factory):
    """A rod store with 40 designs, model v0001 and one front; tests copy it before writing."""
    return make_app_store(tmp_path_factory.mktemp("app") / "rod.sqlite")


@pytest.fixture()
def store(app_store, tmp_path):
    """A private copy of :func:`app_store`."""
    return copy_store(app_store, tmp_path)


@pytest.fixture(autouse=True)
def _no_store_env(monkeypatch):
    monkeypatch.delenv("SURROGATE_STORE", raising=False)
