"""The streamlit entry point routes to the four pages and renders the Front page first (AppTest)."""

from pathlib import Path

from streamlit.testing.v1 import AppTest

APP = Path(__file__).resolve().parents[1] / "app.py"


def test_app_routes_to_the_front_page_of_the_store(tmp_path, monkeypatch):
    from surrogate.campaign import Store

    from .ui.helpers import make_app_store

    path = make_app_store(tmp_path / "rod.sqlite")
    monkeypatch.setenv("SURROGATE_STORE", str(path))
    at = AppTest.from_file(str(APP), default_timeout=60).run()
    assert not at.exception
    assert at.title[0].value == "Front"
    with Store.open(path, readonly=True) as store:
        n = store.fronts()[-1]["n_points"]
    assert at.caption[0].value.startswith(f"{n} designs on the front")
    assert at.sidebar.text_input(key="store_field").value == str(path)


def test_app_file_only_routes():
    import ast

    tree = ast.parse(APP.read_text())
    defs = [n for n in ast.walk(tree) if isinstance(n, (ast.FunctionDef, ast.ClassDef))]
    assert defs == []
    text = APP.read_text()
    for title in ("Front", "Training data", "Models", "Queue"):
        assert f'title="{title}"' in text
