import pytest

from .helpers import make_rod_store, train


@pytest.fixture(scope="module")
def rod_store(tmp_path_factory):
    """A trained rod store (60 analytic designs, model v0001); tests copy it before writing."""
    path = tmp_path_factory.mktemp("rod") / "rod.sqlite"
    store = make_rod_store(path)
    train(store)
    store.close()
    return path


@pytest.fixture()
def fresh_store(rod_store, tmp_path):
    """A private copy of the trained rod store (with its model bundle)."""
    import shutil

    dst = tmp_path / "rod.sqlite"
    shutil.copy(rod_store, dst)
    shutil.copytree(rod_store.with_name("rod.models"), tmp_path / "rod.models")
    return dst
