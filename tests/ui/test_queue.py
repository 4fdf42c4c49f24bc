"""The Queue page, headless (AppTest): real verifications (the coupled-dipole solver on a coarse lattice)."""

import json

from surrogate.campaign import Store
from surrogate.ui._jobs import get_job, wait_for
from surrogate.verify import enqueue

from .helpers import page_test
from .test_front import table_with


def _queue_points(path, points):
    with Store.open(path) as store:
        return enqueue(store, points=points, reason="app")


def test_empty_queue_says_how_to_fill_it(store):
    at = page_test("queue_page", store).run()
    assert not at.exception
    assert "Nothing is queued" in at.info[0].value
    assert at.button(key="start_verify").disabled


def test_queued_entries_are_listed_with_their_state(store):
    rep = _queue_points(store, [1, 4])
    at = page_test("queue_page", store).run()
    assert not at.exception
    waiting = table_with(at, "state")
    assert waiting["entry"].tolist() == rep.added
    assert waiting["state"].tolist() == ["queued", "queued"]
    assert at.caption[0].value == "2 queued, 0 running, 0 done, 0 failed"


def test_start_verification_simulates_the_queue_in_the_background(store):
    rep = _queue_points(store, [0, 2])
    at = page_test("queue_page", store).run()
    at.button(key="start_verify").click().run()
    assert not at.exception
    job = wait_for("verify", store, timeout_s=300)
    assert job.state == "finished", job.message
    at.run()
    assert not at.exception
    with Store.open(store, readonly=True) as s:
        verifications = s.verifications()
        entries = s.queue_entries()
    assert sorted(v["entry_id"] for v in verifications) == sorted(rep.added)
    assert all(e["state"].value == "done" for e in entries)
    table = table_with(at, "z_sigma")
    assert sorted(set(table["entry"])) == sorted(rep.added)
    first = verifications[0]
    row = table[(table["entry"] == first["entry_id"]) & (table["target"] == "enhancement_at_laser")].iloc[0]
    assert row["simulated"] == format(first["comparison"]["enhancement_at_laser"]["simulated"], ".4g")
    assert len(at.get("plotly_chart")) == 1
    # the Front page now shows the verified points and, for a verified design, its simulated spectrum and field map
    front = page_test("front_page", store).run()
    front.text_input(key="front_picked").set_value("0").run()
    assert not front.exception
    assert f"{len(verifications)} verified" in front.caption[0].value
    assert len(front.get("plotly_chart")) == 4  # front, shape, spectrum, field map
    traces = [t.get("name") for t in json.loads(front.get("plotly_chart")[0].proto.spec)["data"]]
    assert "verified (simulated)" in traces and "prediction to simulation" in traces


def test_cancel_stops_after_the_designs_in_flight(store):
    rep = _queue_points(store, list(range(20)))
    at = page_test("queue_page", store).run()
    at.button(key="start_verify").click().run()
    at.button(key="cancel_verify").click().run()
    assert not at.exception
    job = wait_for("verify", store, timeout_s=300)
    assert job.state == "stopped", job.message
    assert get_job("verify", store).message.startswith("Verification stopped")
    with Store.open(store, readonly=True) as s:
        states = [e["state"].value for e in s.queue_entries()]
        n_verified = len(s.verifications())
    assert len(states) == len(rep.added)
    assert n_verified < len(rep.added) and "queued" in states and "running" not in states
