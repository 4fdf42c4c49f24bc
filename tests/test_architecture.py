"""Dependencies flow one way (house rule, no outside source): core rooms import only the base.

The core rooms (materials, shapes, solver) import only the base modules (errors, units,
_validation), their own room and the numerical libraries; they never import each other, the
I/O edges, streamlit, dask or optuna.
"""

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "surrogate"
BASE = {"surrogate.errors", "surrogate.units", "surrogate._validation"}
CORE = ["materials", "shapes", "solver"]
FORBIDDEN_THIRD_PARTY = {"streamlit", "dask", "distributed", "optuna", "sqlite3", "pandas"}


def _imports(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    module = "surrogate." + ".".join(path.relative_to(PACKAGE).with_suffix("").parts)
    package = module.rsplit(".", 1)[0] if path.name != "__init__.py" else module.removesuffix(".__init__")
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                yield ".".join(base + ([node.module] if node.module else []))
            else:
                yield node.module


@pytest.mark.parametrize("room", CORE)
def test_core_rooms_import_only_the_base(room):
    folder = PACKAGE / room
    files = sorted(folder.rglob("*.py"))
    assert files, f"{room} has no modules"
    for path in files:
        for name in _imports(path):
            top = name.split(".")[0]
            assert top not in FORBIDDEN_THIRD_PARTY, f"{path.name} imports {name}"
            if top == "surrogate":
                ok = name in BASE or name == f"surrogate.{room}" or name.startswith(f"surrogate.{room}.")
                assert ok, f"{path.relative_to(PACKAGE)} imports {name}: core rooms import only the base"
                assert name != "surrogate", f"{path.name} imports the package root"
