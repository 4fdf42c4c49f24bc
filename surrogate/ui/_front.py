"""The Front page: the Pareto front of a search, selection, detail panel, queueing for verification."""

from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import streamlit as st

from ..errors import SurrogateError
from ._common import need_designs, note_being_written, page_store
from ._data import front_frame, infeasible_designs, study_location, verified_points
from ._detail import detail_panel

__all__ = ["front_page", "WEBGL_ABOVE"]

#: Above this many points the scatter is drawn with WebGL.
WEBGL_ABOVE = 1000

_FLAG_ORDER = ("trusted", "uncertain", "extrapolated", "near-edge", "sensitive", "several flags")
_FLAG_STYLE = {
    "trusted": ("#1b7837", "circle"),
    "uncertain": ("#e08214", "diamond"),
    "extrapolated": ("#b2182b", "square"),
    "near-edge": ("#5e3c99", "triangle-up"),
    "sensitive": ("#2166ac", "cross"),
    "several flags": ("#762a83", "x"),
}
_PICKED = "front_picked"
_CHART = "front_chart"


def _flag_category(flags):
    names = [f for f in flags.split(",") if f]
    if not names:
        return "trusted"
    return names[0] if len(set(names)) == 1 else "several flags"


def _axis_choices(frame):
    medians = [c for c in frame.columns if c.endswith("_median")]
    robust = [c for c in ("enhancement_p05", "enhancement_p50", "enhancement_p95", "resonance_shift_p05_nm",
                          "resonance_shift_p95_nm", "outside_window_fraction") if c in frame.columns]
    return medians + robust


def _front_label(f):
    return (f"front #{f['front_id']}: {f['n_points']} designs, model v{f['model_version']:04d}, "
            f"{f['created_utc'][:16].replace('T', ' ')} UTC")


def _scatter(frame, x, y, colour_by, verified, infeasible=None):
    """The figure and, per trace, the front rows its points are (for mapping a selection back)."""
    webgl = len(frame) > WEBGL_ABOVE
    Scatter = go.Scattergl if webgl else go.Scatter
    fig = go.Figure()
    rows_of_trace = []
    if infeasible is not None and len(infeasible) and x in infeasible.columns and y in infeasible.columns:
        faint = go.Scattergl if len(infeasible) > WEBGL_ABOVE else go.Scatter
        fig.add_trace(faint(x=infeasible[x].to_numpy(), y=infeasible[y].to_numpy(), mode="markers",
                              name="infeasible (searched)", hoverinfo="skip",
                              marker=dict(color="#9a9a9a", size=4, opacity=0.25)))
        rows_of_trace.append(np.array([], int))  # not selectable: not on the front
    hover = "point %{customdata}<br>" + x + " %{x:.4g}<br>" + y + " %{y:.4g}<extra>%{fullData.name}</extra>"
    if colour_by == "trust flag":
        category = frame["trust_flags"].map(_flag_category).to_numpy()
        for name in _FLAG_ORDER:
            rows = np.flatnonzero(category == name)
            if rows.size == 0:
                continue
            colour, symbol = _FLAG_STYLE[name]
            fig.add_trace(Scatter(x=frame[x].to_numpy()[rows], y=frame[y].to_numpy()[rows], mode="markers", name=name,
                                  customdata=frame["point"].to_numpy()[rows], hovertemplate=hover,
                                  marker=dict(color=colour, symbol="circle" if webgl else symbol, size=8 if not webgl else 6,
                                              opacity=0.85)))
            rows_of_trace.append(rows)
    else:
        target = colour_by.removeprefix("uncertainty of ")
        width = frame[f"{target}_relative_width"].to_numpy(float)
        fig.add_trace(Scatter(x=frame[x], y=frame[y], mode="markers", name="front", customdata=frame["point"],
                              hovertemplate=hover,
                              marker=dict(color=width, colorscale="Viridis", size=8, showscale=True,
                                          colorbar=dict(title=f"{target}<br>interval / median [-]"))))
        rows_of_trace.append(np.arange(len(frame)))
    sx, sy = x.replace("_median", "_simulated"), y.replace("_median", "_simulated")
    if len(verified) and sx in verified.columns and sy in verified.columns:
        pos = {int(p): i for i, p in enumerate(frame["point"])}
        v = verified[verified["point"].map(lambda p: int(p) in pos)]
        rows = np.array([pos[int(p)] for p in v["point"]], int)
        lx, ly = [], []
        for r, (_, row) in zip(rows, v.iterrows()):
            lx += [frame[x].iloc[r], row[sx], None]
            ly += [frame[y].iloc[r], row[sy], None]
        fig.add_trace(go.Scatter(x=lx, y=ly, mode="lines", line=dict(color="black", width=1), hoverinfo="skip",
                                 name="prediction to simulation"))
        rows_of_trace.append(np.array([], int))
        fig.add_trace(go.Scatter(x=v[sx], y=v[sy], mode="markers", name="verified (simulated)",
                                 customdata=v["point"], hovertemplate=hover,
                                 marker=dict(color="white", size=11, symbol="star", line=dict(color="black", width=1.5))))
        rows_of_trace.append(rows)
    fig.update_layout(xaxis_title=x, yaxis_title=y, height=520, legend_title_text=colour_by, showlegend=True,
                      margin=dict(l=50, r=20, t=30, b=50))
    return fig, rows_of_trace


def _on_select(points_of_rows, frame):
    event = st.session_state.get(_CHART)
    if not event:
        return
    picked = set()
    for p in event["selection"]["points"]:
        rows = points_of_rows[p["curve_number"]] if p["curve_number"] < len(points_of_rows) else []
        idx = p.get("point_index", p.get("point_number"))
        if idx is not None and idx < len(rows):
            picked.add(int(frame["point"].iloc[int(rows[idx])]))
    st.session_state[_PICKED] = ", ".join(str(i) for i in sorted(picked))


def parse_points(text, frame, front_id):
    """Rows of ``frame`` for a comma-separated list of point numbers; raise ValueError with one line."""
    rows_of = {int(p): i for i, p in enumerate(frame["point"])}
    rows = []
    for part in (text or "").replace(";", ",").split(","):
        part = part.strip()
        if not part:
            continue
        if not part.isdigit() or int(part) not in rows_of:
            raise ValueError(f"Selected points must be point numbers of front #{front_id} (0 to {len(frame) - 1}) "
                             f"separated by commas; got {part!r}")
        if rows_of[int(part)] not in rows:
            rows.append(rows_of[int(part)])
    return rows


def _queue(path, front_id, rows, frame):
    from ..campaign import Store
    from ..verify import enqueue

    points = [int(frame["point"].iloc[r]) for r in rows]
    try:
        with Store.open(path) as store:
            out = enqueue(store, points=points, front_id=front_id, reason="app")
    except SurrogateError as exc:
        st.session_state["front_queue_note"] = ("error", f"Nothing was queued: {exc}")
        return
    n = len(out.added)
    msg = f"Queued {n} design{'s' if n != 1 else ''} for verification in the store {path.name}."
    if out.skipped:
        msg += " Skipped: " + "; ".join(f"{d} ({why})" for d, why in out.skipped) + "."
    st.session_state["front_queue_note"] = ("success" if n else "warning", msg)


def _infeasible_layer(view, front):
    """The study's infeasible designs when the user asks for them (a caption says what is shown)."""
    where = study_location(view.path, front)
    if where is None or not where[0].is_file():
        st.caption("The search's study file is not beside the store, so infeasible designs cannot be shown.")
        return None
    if not st.checkbox("Show infeasible searched designs (faint)", value=True, key="front_infeasible"):
        return None
    path, name = where
    stat = path.stat()
    try:
        frame = infeasible_designs(view.path, path, name, (stat.st_size, stat.st_mtime_ns), front["model_version"],
                                   view.fingerprint)
    except (SurrogateError, KeyError, OSError) as exc:  # no such study (KeyError), unreadable file, refused model
        st.warning(f"Infeasible designs cannot be shown: {exc}")
        return None
    st.caption(f"{len(frame)} infeasible searched designs shown faintly (predicted medians of model "
               f"v{front['model_version']:04d}; resonance outside the window or a fabrication rule broken).")
    return frame


def _no_front_state(view):
    from ..models import bundles_folder

    has_model = bundles_folder(view.path).is_dir() and any(bundles_folder(view.path).glob("v[0-9]*"))
    if not has_model:
        st.info(f"No trained surrogates yet, so no front. Train them with `surrogate train {view.path}` "
                "(or the Retrain button on the Models page), then run `surrogate search STORE`.")
    else:
        st.info(f"No front yet: the store has trained surrogates but no search. Run `surrogate search {view.path}` "
                "to find the trade-off front.")


def front_page():
    """Render the Front page (a page function for ``st.navigation``)."""
    st.title("Front")
    view = page_store()
    if view is None or not need_designs(view):
        return
    note_being_written(view)
    if not view.fronts:
        _no_front_state(view)
        return
    fronts = {f["front_id"]: f for f in view.fronts}
    ids = list(fronts)[::-1]
    front_id = st.sidebar.selectbox("Front", ids, format_func=lambda i: _front_label(fronts[i]), key="front_id")
    front = fronts[front_id]
    frame = front_frame(view.path, front_id)
    if st.session_state.get("front_shown") != (str(view.path), front_id):
        st.session_state["front_shown"] = (str(view.path), front_id)
        st.session_state[_PICKED] = ""
    coverage = front["settings"].get("trust", {}).get("coverage", 0.95)
    choices = _axis_choices(frame)
    objectives = [f"{o['target']}_median" for o in front["objectives"] if f"{o['target']}_median" in choices]
    default_x = objectives[0] if objectives else choices[0]
    default_y = objectives[1] if len(objectives) > 1 else choices[min(1, len(choices) - 1)]
    c1, c2, c3 = st.columns(3)
    x = c1.selectbox("Horizontal axis", choices, index=choices.index(default_x), key="front_x")
    y = c2.selectbox("Vertical axis", choices, index=choices.index(default_y), key="front_y")
    targets = [c.removesuffix("_median") for c in choices if c.endswith("_median")]
    colour_by = c3.selectbox("Colour by", ["trust flag"] + [f"uncertainty of {t}" for t in targets], key="front_colour")
    verified = verified_points(view.path, front_id) if view.has_queue else pd.DataFrame(columns=["point"])
    n_flagged = int((frame["trust_flags"] != "").sum())
    st.caption(f"{len(frame)} designs on the front ({n_flagged} flagged), predicted medians with {coverage:.0%} intervals; "
               f"{len(verified)} verified. Click a point, or drag a box or lasso, to see its details.")
    infeasible = _infeasible_layer(view, front)
    fig, rows_of_trace = _scatter(frame, x, y, colour_by, verified, infeasible)
    st.plotly_chart(fig, key=_CHART, on_select=lambda: _on_select(rows_of_trace, frame),
                    selection_mode=("points", "box", "lasso"), config={"displaylogo": False})
    st.text_input("Selected points", key=_PICKED, placeholder="click, box or lasso on the chart, or type 3, 17, 42",
                  help="Point numbers of this front, separated by commas; filled by selecting on the chart.")
    try:
        rows = parse_points(st.session_state.get(_PICKED), frame, front_id)
    except ValueError as exc:
        st.error(str(exc))
        rows = []
    b1, b2 = st.columns([1, 1])
    b1.button(f"Queue {len(rows)} selected for verification", key="queue_selected", disabled=not rows or not view.has_queue,
              on_click=_queue, args=(view.path, front_id, rows, frame), type="primary")
    b2.download_button("Download the front (CSV)", lambda: frame.to_csv(index=False).encode(), key="download_front",
                       file_name=f"{view.path.stem}-front-{front_id}.csv", mime="text/csv")
    note = st.session_state.pop("front_queue_note", None)
    if note:
        getattr(st, note[0])(note[1])
    if rows:
        detail_panel(view, front, frame, rows, coverage=coverage)
