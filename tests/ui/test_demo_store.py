"""Every page renders on a copy of the shipped demo store (its fronts, models and verifications)."""

from pathlib import Path

import pytest

from surrogate.campaign import Store

from .helpers import copy_store, page_test

DEMO = Path(__file__).resolve().parents[2] / "datasets" / "demo.sqlite"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return copy_store(DEMO, tmp_path_factory.mktemp("demo"))


@pytest.mark.parametrize("page", ["front_page", "training_page", "models_page", "queue_page"])
def test_page_renders_on_the_demo_store(demo, page):
    at = page_test(page, demo).run()
    assert not at.exception
    assert not at.error


def test_demo_front_and_queue_match_the_store(demo):
    with Store.open(demo, readonly=True) as store:
        front = store.fronts()[-1]
        n_verified = len(store.verifications())
    at = page_test("front_page", demo).run()
    assert at.caption[0].value.startswith(f"{front['n_points']} designs on the front")
    at = page_test("queue_page", demo).run()
    assert f"{n_verified} designs verified" in " ".join(c.value for c in at.caption)
