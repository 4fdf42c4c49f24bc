"""The streamlit entry point renders headless (streamlit.testing.v1.AppTest)."""

from pathlib import Path

from streamlit.testing.v1 import AppTest

APP = Path(__file__).resolve().parents[1] / "app.py"


def test_app_renders_without_exception():
    at = AppTest.from_file(str(APP), default_timeout=60).run()
    assert not at.exception
    assert at.title[0].value == "Antenna surrogate"
    assert len(at.dataframe) == 1
