import shutil

import pytest

from surrogate.models import train_store
from surrogate.search import search_store
from tests.verify.synthetic import make_store

FAST_TRAINING = {"cv_folds": None, "n_restarts": 0, "plots": False}


@pytest.fixture(scope="session")
def searched_store(tmp_path_factory):
    """A trained synthetic rod store with one front (model v0001); tests copy it before writing."""
    path = tmp_path_factory.mktemp("reliability") / "rod.sqlite"
    make_store(path).close()
    train_store(path, **FAST_TRAINING)
    search_store(path, n_trials=400, seed=0, persist=False)
    return path


@pytest.fixture()
def store_copy(searched_store, tmp_path):
    dst = tmp_path / "rod.sqlite"
    shutil.copy(searched_store, dst)
    shutil.copytree(searched_store.with_name("rod.models"), tmp_path / "rod.models")
    return dst
