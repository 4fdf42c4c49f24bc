"""The detail panel of selected front points: parameters, predictions, robustness, flags, drawings."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from ..campaign import design_id
from ..errors import SurrogateError
from ._common import fmt
from ._data import open_store
from ._figures import field_map_figure, shape_figure, spectrum_figure

__all__ = ["detail_panel"]

_ROBUST_LABELS = {
    "enhancement_p05": "enhancement, 5th percentile [-]",
    "enhancement_p50": "enhancement, median [-]",
    "enhancement_p95": "enhancement, 95th percentile [-]",
    "resonance_shift_p05_nm": "resonance shift, 5th percentile [nm]",
    "resonance_shift_p50_nm": "resonance shift, median [nm]",
    "resonance_shift_p95_nm": "resonance shift, 95th percentile [nm]",
    "outside_window_fraction": "share of samples outside the laser window [-]",
}


def _params_of(frame, row, spec):
    names = list(spec.get("bounds", {}))
    params = {n: float(frame[n].iloc[row]) for n in names if n in frame.columns}
    return params, {**params, **{k: float(v) for k, v in spec.get("fixed", {}).items()}}


def _selection_table(frame, rows, targets):
    cols = ["point"] + [c for c in frame.columns if c in targets] + ["trust_flags"]
    return frame.iloc[rows][cols].reset_index(drop=True)


def _simulated(path, did):
    with open_store(path) as store:
        rows = store.spectrum(did)
        fmap = store.field_map(did) if rows else None
    return rows, fmap


def detail_panel(view, front, frame, rows, *, coverage):
    """Render the details of the selected rows of ``frame`` (one design in full)."""
    with open_store(view.path) as store:
        spec = store.spec
    st.subheader("Selected designs")
    medians = [c for c in frame.columns if c.endswith("_median")]
    if len(rows) > 1:
        st.dataframe(_selection_table(frame, rows, medians), hide_index=True, key="selection_table")
    shown = rows[0]
    if len(rows) > 1:
        shown = st.selectbox("Design in detail", rows, format_func=lambda r: f"point {int(frame['point'].iloc[r])}",
                             key="detail_row")
    point = int(frame["point"].iloc[shown])
    params, full = _params_of(frame, shown, spec)
    did = design_id(full)
    st.markdown(f"**Point {point}** of front #{front['front_id']} (design id `{did}`)")
    left, right = st.columns(2)
    with left:
        st.markdown("Parameters")
        st.dataframe(pd.DataFrame({"parameter": list(full), "value": [fmt(v, ".5g") for v in full.values()]}),
                     hide_index=True, key="detail_params")
        st.markdown(f"Predicted (median and central {coverage:.0%} interval)")
        pred = pd.DataFrame({
            "target": [c.removesuffix("_median") for c in medians],
            "median": [fmt(frame[c].iloc[shown]) for c in medians],
            "lower": [fmt(frame[c.replace('_median', '_lower')].iloc[shown]) for c in medians],
            "upper": [fmt(frame[c.replace('_median', '_upper')].iloc[shown]) for c in medians],
        })
        st.dataframe(pred, hide_index=True, key="detail_predictions")
    with right:
        st.markdown("Robustness under the length tolerance (Monte Carlo on the surrogate)")
        rob = [(label, fmt(frame[c].iloc[shown])) for c, label in _ROBUST_LABELS.items() if c in frame.columns]
        st.dataframe(pd.DataFrame(rob, columns=["quantity", "value"]), hide_index=True, key="detail_robustness")
        st.markdown("Trust flags")
        reasons = frame["flag_reasons"].iloc[shown]
        if reasons:
            for line in reasons.split("\n"):
                st.markdown(f"- {line}")
        else:
            st.markdown("None: every interval is narrow, inside the sampled space and robust.")
    from ..shapes import get_family

    try:
        outline = get_family(spec["family"]).drawing_outline(full)
        st.plotly_chart(shape_figure(outline, title=f"{spec['family']} (ideal shape)"), key="detail_shape")
    except SurrogateError as exc:  # a fabrication rule the drawing refuses is shown, not raised
        st.warning(f"The shape cannot be drawn: {exc}")
    spectrum, fmap = _simulated(view.path, did)
    if spectrum:
        st.plotly_chart(spectrum_figure(spectrum, laser_nm=spec.get("laser_nm"), title="simulated spectrum"),
                        key="detail_spectrum")
        if fmap is not None:
            st.plotly_chart(field_map_figure(*fmap, title="simulated"), key="detail_field_map")
    else:
        st.caption("Not simulated yet: queue it for verification to see its spectrum and field map.")
