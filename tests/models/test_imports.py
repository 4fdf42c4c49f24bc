"""The models room imports neither streamlit, optuna nor dask (house rule, no outside source)."""

import ast
from pathlib import Path

import pytest

MODELS = Path(__file__).resolve().parents[2] / "surrogate" / "models"
FORBIDDEN = {"streamlit", "optuna", "dask", "distributed"}


@pytest.mark.parametrize("path", sorted(MODELS.glob("*.py")), ids=lambda p: p.name)
def test_models_import_no_app_search_or_cluster_library(path):
    tree = ast.parse(path.read_text())
    names = [a.name for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names]
    names += [n.module for n in ast.walk(tree) if isinstance(n, ast.ImportFrom) and n.module and not n.level]
    assert not {n.split(".")[0] for n in names} & FORBIDDEN


def test_every_public_name_is_exported():
    import surrogate.models as m

    assert sorted(m.__all__) == sorted(set(m.__all__))
    for name in m.__all__:
        assert hasattr(m, name), name
