"""The Training data page: designs per status, coverage of each parameter, failures with their messages."""

from __future__ import annotations

import pandas as pd
import plotly.express as px
import streamlit as st

from ._common import need_designs, note_being_written, page_store
from ._data import open_store, training_frame

__all__ = ["training_page"]


def training_page():
    """Render the Training data page (a page function for ``st.navigation``)."""
    st.title("Training data")
    view = page_store()
    if view is None or not need_designs(view):
        return
    note_being_written(view)
    with open_store(view.path) as store:
        spec = store.spec
    counts_key = tuple(sorted(view.counts.items()))
    frame = training_frame(view.path, view.fingerprint, counts_key)
    st.subheader("Designs by status")
    counts = pd.DataFrame({"status": list(view.counts), "designs": list(view.counts.values())})
    st.dataframe(counts, hide_index=True, key="status_counts")
    st.caption(f"Campaign {spec.get('name', '?')}: family {spec.get('family', '?')}, laser {spec.get('laser_nm', '?')} nm.")
    params = [p for p in spec.get("bounds", {}) if p in frame.columns]
    if params:
        st.subheader("Coverage of each parameter")
        colour = st.radio("Colour by", ["status", "source"], horizontal=True, key="training_colour")
        cols = st.columns(min(len(params), 4))
        for i, p in enumerate(params):
            lo, hi = spec["bounds"][p]
            fig = px.histogram(frame, x=p, color=colour, nbins=20, range_x=(lo, hi), height=260)
            fig.update_layout(margin=dict(l=30, r=10, t=30, b=30), showlegend=False, bargap=0.05,
                              title=f"{p} in [{lo:g}, {hi:g}]")
            cols[i % len(cols)].plotly_chart(fig, key=f"hist_{p}")
        if len(params) > 1:
            st.caption(f"Bars stacked by {colour}; the pair plot's legend names the colours.")
            fig = px.scatter_matrix(frame, dimensions=params, color=colour, height=180 * len(params) + 80)
            fig.update_traces(diagonal_visible=False, marker=dict(size=4))
            fig.update_layout(margin=dict(l=40, r=10, t=30, b=40), title="pairs of parameters")
            st.plotly_chart(fig, key="pair_plot")
    st.subheader("Failures")
    failed = frame[frame["status"].isin(["failed", "not_converged"])]
    if failed.empty:
        st.success("No failed or unconverged design.")
    else:
        st.dataframe(failed[["design_id", "status", "message"] + params], hide_index=True, key="failures")
    with st.expander("All designs"):
        st.dataframe(frame, hide_index=True, key="all_designs")
