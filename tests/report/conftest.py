import shutil

import pytest

from surrogate.campaign import Store
from surrogate.search import search_store

from .helpers import add_verifications, make_store, train_cv


@pytest.fixture(scope="session")
def full_store(tmp_path_factory):
    """Designs of every status, a cross-validated model, a front, three verifications and a refine round."""
    path = tmp_path_factory.mktemp("full") / "rod.sqlite"
    with make_store(path) as store:
        train_cv(store)
    search_store(path, n_trials=300, seed=0, persist=False)
    with Store.open(path) as store:
        add_verifications(store)
    return path


@pytest.fixture(scope="session")
def bare_store(tmp_path_factory):
    """Finished designs only: no models, no front, no verifications."""
    path = tmp_path_factory.mktemp("bare") / "bare.sqlite"
    make_store(path).close()
    return path


@pytest.fixture(scope="session")
def trained_store(tmp_path_factory):
    """A cross-validated model but no search front."""
    path = tmp_path_factory.mktemp("trained") / "trained.sqlite"
    with make_store(path) as store:
        train_cv(store)
    return path


@pytest.fixture()
def copy_store(tmp_path):
    """Copy a store (and its models) into the test's folder; return the copy's path."""

    def copy(src):
        dst = tmp_path / src.name
        shutil.copy(src, dst)
        models = src.with_name(f"{src.stem}.models")
        if models.is_dir():
            shutil.copytree(models, tmp_path / models.name)
        return dst

    return copy
