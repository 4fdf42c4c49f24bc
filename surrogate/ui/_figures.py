"""Plotly figures of one design for the detail panel: the shape (top and side), the spectrum, the field map."""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

__all__ = ["shape_figure", "spectrum_figure", "field_map_figure"]

_FILLS = {"antenna": "#c9a227", "core": "#9a7b1c", "shell": "#e0c45c", "substrate": "#d9d9d9", "medium_layer": "#bcbcbc"}


def shape_figure(outline, *, title=""):
    """Top (x-y) and side (x-z) views of a family's ideal outline [nm], hotspot marked.

    Parameters
    ----------
    outline : surrogate.shapes.Outline
        From ``family.drawing_outline(params)``.
    title : str
    """
    fig = make_subplots(rows=1, cols=2, subplot_titles=("top view (x-y)", "side view (x-z)"), horizontal_spacing=0.12)
    for col, polys in ((1, outline.top), (2, outline.side)):
        for region, poly in polys:
            p = np.vstack([poly, poly[:1]])
            fig.add_trace(go.Scatter(x=p[:, 0], y=p[:, 1], fill="toself", mode="lines", name=region,
                                     fillcolor=_FILLS.get(region, "#aaaaaa"), line=dict(color="black", width=1),
                                     showlegend=col == 1, hoverinfo="name"), row=1, col=col)
        hx, hy, hz = outline.hotspot_nm
        fig.add_trace(go.Scatter(x=[hx], y=[hy if col == 1 else hz], mode="markers+text", text=["hotspot"],
                                 textposition="top right", marker=dict(symbol="x", size=10, color="black"),
                                 name="hotspot", showlegend=False), row=1, col=col)
    fig.update_xaxes(title_text="x [nm]")
    fig.update_yaxes(title_text="y [nm]", scaleanchor="x", scaleratio=1, row=1, col=1)
    fig.update_yaxes(title_text="z [nm]", scaleanchor="x2", scaleratio=1, row=1, col=2)
    fig.update_layout(title=title, height=340, margin=dict(l=40, r=20, t=60, b=40))
    return fig


def spectrum_figure(rows, *, laser_nm=None, title=""):
    """Hotspot enhancement [-] and cross sections [nm^2] against wavelength [nm] from stored spectrum rows."""
    wl = np.array([r["wavelength_nm"] for r in rows], float)

    def col(name):
        return np.array([np.nan if r[name] is None else r[name] for r in rows], float)

    fig = make_subplots(rows=1, cols=2, subplot_titles=("hotspot enhancement |E|²/|E0|² [-]", "cross sections [nm²]"))
    fig.add_trace(go.Scatter(x=wl, y=col("enhancement"), mode="lines+markers", name="enhancement [-]"), row=1, col=1)
    for name, dash in (("c_ext_nm2", "solid"), ("c_abs_nm2", "dash"), ("c_sca_nm2", "dot")):
        fig.add_trace(go.Scatter(x=wl, y=col(name), mode="lines+markers", name=name, line=dict(dash=dash)), row=1, col=2)
    if laser_nm is not None:
        for c in (1, 2):
            fig.add_vline(x=float(laser_nm), line=dict(color="grey", width=1), row=1, col=c)
    fig.update_xaxes(title_text="vacuum wavelength [nm]")
    fig.update_layout(title=title, height=320, margin=dict(l=40, r=20, t=60, b=40))
    return fig


def field_map_figure(wavelength_nm, y_nm, z_nm, intensity, *, title=""):
    """log10 |E|²/|E0|² in the observation plane through the hotspot."""
    data = np.log10(np.maximum(np.asarray(intensity, float), 1e-3)).T
    fig = go.Figure(go.Heatmap(x=np.asarray(y_nm), y=np.asarray(z_nm), z=data, colorscale="Greys_r",
                               colorbar=dict(title="log10 |E|²/|E0|² [-]")))
    fig.update_xaxes(title_text="y [nm]")
    fig.update_yaxes(title_text="z [nm]", scaleanchor="x", scaleratio=1)
    fig.update_layout(title=f"{title} field map at {wavelength_nm:g} nm", height=360, margin=dict(l=40, r=20, t=60, b=40))
    return fig
