"""The Queue page: queued, running and finished verifications, predicted vs simulated; start and cancel."""

from __future__ import annotations

import pandas as pd
import plotly.graph_objects as go
import streamlit as st

from ._common import fmt, need_designs, note_being_written, page_store
from ._data import open_store
from ._jobs import get_job, start_job

__all__ = ["queue_page"]


def _verify_work(path):
    def work(job):
        from ..verify import verify_store

        def progress(report):
            job.progress = dict(report)

        from .. import __version__

        out = verify_store(path, progress=progress, should_stop=job.stop.is_set, code_version=__version__)
        job.message = _summary(out, job)
        return out

    return work


def _summary(out, job):
    done = job.progress.get("finished")
    total = job.progress.get("total")
    head = "Verification stopped" if job.stop.is_set() else "Verification finished"
    if done is not None and total is not None:
        return f"{head}: {done} of {total} designs simulated in {job.elapsed_s:.0f} s."
    return f"{head} in {job.elapsed_s:.0f} s."


@st.fragment(run_every=1.0)
def _verify_status(path):
    job = get_job("verify", path)
    if job is None:
        return
    if job.running:
        done, total = job.progress.get("finished", 0), job.progress.get("total", 0)
        frac = done / total if total else 0.0
        stopping = " (stopping after the designs in flight)" if job.stop.is_set() else ""
        st.progress(frac, text=f"Verifying in the background: {done} of {total or '?'} designs simulated, "
                               f"{job.elapsed_s:.0f} s so far{stopping}")
        st.button("Cancel", key="cancel_verify", on_click=job.stop.set,
                  help="Stop after the designs being simulated now; the rest stay queued.")
        return
    if job.state == "failed":
        st.error(f"Verification failed: {job.message}")
    else:
        st.success(job.message)
    if st.session_state.get("verify_seen") != id(job):
        st.session_state["verify_seen"] = id(job)
        st.rerun(scope="app")


def _comparison_rows(entries, verifications):
    by_entry = {e["entry_id"]: e for e in entries}
    rows = []
    for v in verifications:
        e = by_entry.get(v["entry_id"], {})
        for t, c in (v.get("comparison") or {}).items():
            rows.append({"entry": v["entry_id"], "design_id": v["design_id"], "front": e.get("front_id"),
                         "point": e.get("point_index"), "target": t, "predicted_median": c.get("median"),
                         "predicted_lower": c.get("lower"), "predicted_upper": c.get("upper"),
                         "simulated": c.get("simulated"), "z_sigma": c.get("z_sigma"),
                         "inside_interval": c.get("inside"), "spacing_nm": v["spacing_nm"]})
    return pd.DataFrame(rows)


def _comparison_figure(frame, target):
    f = frame[frame["target"] == target]
    err_hi = f["predicted_upper"] - f["predicted_median"]
    err_lo = f["predicted_median"] - f["predicted_lower"]
    fig = go.Figure(go.Scatter(x=f["simulated"], y=f["predicted_median"], mode="markers", name="designs",
                               error_y=dict(type="data", array=err_hi, arrayminus=err_lo),
                               customdata=f["entry"], hovertemplate="entry %{customdata}<extra></extra>"))
    both = pd.concat([f["simulated"], f["predicted_lower"], f["predicted_upper"]]).dropna()
    if len(both):
        lo, hi = float(both.min()), float(both.max())
        fig.add_trace(go.Scatter(x=[lo, hi], y=[lo, hi], mode="lines", line=dict(color="grey", dash="dash"),
                                 name="predicted = simulated"))
    fig.update_layout(xaxis_title=f"{target} simulated", yaxis_title=f"{target} predicted (median, interval)",
                      height=400, margin=dict(l=50, r=20, t=30, b=50))
    return fig


def queue_page():
    """Render the Queue page (a page function for ``st.navigation``)."""
    st.title("Queue")
    view = page_store()
    if view is None or not need_designs(view):
        return
    note_being_written(view)
    with open_store(view.path) as store:
        entries = store.queue_entries()
        verifications = store.verifications()
    counts = {s: 0 for s in ("queued", "running", "done", "failed")}
    for e in entries:
        counts[e["state"].value] += 1
    st.caption(", ".join(f"{n} {s}" for s, n in counts.items()))
    job = get_job("verify", view.path)
    busy = job is not None and job.running
    if st.button("Start verification", key="start_verify", type="primary", disabled=busy or counts["queued"] == 0,
                 help="Simulate the queued designs in the background with the campaign's solver settings."):
        start_job("verify", view.path, _verify_work(view.path))
    _verify_status(view.path)
    if not entries:
        st.info("Nothing is queued. Select points on the Front page and press the queue button, "
                f"or queue from the command line with `surrogate verify {view.path}`.")
        return
    waiting = [e for e in entries if e["state"].value != "done"]
    st.subheader("Queued, running and failed")
    if waiting:
        st.dataframe(pd.DataFrame([{"entry": e["entry_id"], "design_id": e["design_id"], "state": e["state"].value,
                                    "reason": e["reason"], "front": e["front_id"], "point": e["point_index"],
                                    "model_version": e["model_version"], "queued_utc": e["created_utc"],
                                    "message": e["message"]} for e in waiting]),
                     hide_index=True, key="waiting_table")
    else:
        st.caption("Every queued design has been verified.")
    st.subheader("Finished: predicted vs simulated")
    table = _comparison_rows(entries, verifications)
    if table.empty:
        st.caption("No verification has finished yet.")
        return
    inside = table["inside_interval"].dropna()
    st.caption(f"{len(verifications)} designs verified; {int(inside.sum())} of {len(inside)} simulated values fall "
               "inside their predicted interval.")
    target = st.selectbox("Target", list(dict.fromkeys(table["target"])), key="queue_target")
    st.plotly_chart(_comparison_figure(table, target), key="comparison_chart")
    shown = table.copy()
    for c in ("predicted_median", "predicted_lower", "predicted_upper", "simulated", "z_sigma"):
        shown[c] = shown[c].map(fmt)
    st.dataframe(shown, hide_index=True, key="comparison_table")
