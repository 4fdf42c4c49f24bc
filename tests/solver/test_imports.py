"""The solver stays a pure numerical core (house style habits 1 and 4)."""

import ast
import pathlib

import surrogate.solver

SOLVER_DIR = pathlib.Path(surrogate.solver.__file__).parent
FORBIDDEN = ("surrogate.materials", "surrogate.shapes", "surrogate.simulate", "streamlit", "dask", "optuna")


def _modules():
    return sorted(SOLVER_DIR.glob("*.py"))


def test_no_upward_or_sideways_imports():
    for path in _modules():
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                mod = node.module or ""
                if node.level == 2:  # from ..x import y
                    mod = "surrogate." + mod
                names = [mod] + [f"{mod}.{a.name}" for a in node.names]
            for n in names:
                assert not n.startswith(FORBIDDEN), f"{path.name} imports {n}"


def test_no_printing_or_file_io():
    for path in _modules():
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
                assert node.func.id not in ("print", "open", "input"), f"{path.name} calls {node.func.id}"


def test_public_names_are_exported():
    for name in surrogate.solver.__all__:
        assert hasattr(surrogate.solver, name)
