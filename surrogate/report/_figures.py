"""Matplotlib figures of one design: the voxelised shape, the hotspot field map, the spectrum.

Figures are labelled with units and readable in greyscale (grey levels and
markers carry the meaning, not hue alone).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["draw_sites", "draw_field_map", "draw_spectrum"]


def _pyplot():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


def _save(fig, path, *, dpi=130):
    """Write a PNG atomically (a partial file renamed into place)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(path.name + ".partial")
    fig.savefig(tmp, dpi=dpi, bbox_inches="tight", format="png")
    tmp.replace(path)


def draw_sites(sites, path, *, title="", hotspot_nm=None):
    """Sections of the occupied lattice cells: top (x-y) and side (x-z) through the middle.

    The top view is the layer of cells nearest the hotspot's z (the middle of the
    shape without one), the side view the layer nearest its y, so inner regions
    (a core, a gap) stay visible.

    Parameters
    ----------
    sites : ShapeSites
        Occupied sites (positions, spacing, regions).
    path : str or Path
        PNG file to write.
    title : str
        Figure title.
    hotspot_nm : (3,) float, optional
        The hotspot point, marked with a cross.
    """
    plt = _pyplot()
    pos = sites.positions_nm()
    d = sites.spacing_nm
    greys = ["0.15", "0.55", "0.8", "0.35"]
    fig, axes = plt.subplots(1, 2, figsize=(10, 4.2))
    from matplotlib.patches import Patch

    cells = np.round(pos / d).astype(np.int64)
    centre = np.asarray(hotspot_nm, float) if hotspot_nm is not None else 0.5 * (pos.min(0) + pos.max(0))
    for ax, (a, b), cut in zip(axes, ((0, 1), (0, 2)), (2, 1)):
        lo = cells[:, [a, b]].min(0)
        layer = np.abs(pos[:, cut] - centre[cut])
        in_layer = layer <= layer.min() + 1e-9
        label = f"{'top' if cut == 2 else 'side'} view ({'xyz'[a]}-{'xyz'[b]}), section at {'xyz'[cut]} = {pos[in_layer][0, cut]:.3g} nm"
        shape = cells[:, [a, b]].max(0) - lo + 1
        image = np.full(shape, -1)
        for r in range(len(sites.region_names)):  # later regions drawn over earlier ones
            c = cells[(sites.region == r) & in_layer][:, [a, b]] - lo
            image[c[:, 0], c[:, 1]] = r
        rgb = np.ones(image.shape + (3,))
        for r in range(len(sites.region_names)):
            rgb[image == r] = float(greys[r % len(greys)])
        extent = ((lo[0] - 0.5) * d, (lo[0] + shape[0] - 0.5) * d, (lo[1] - 0.5) * d, (lo[1] + shape[1] - 0.5) * d)
        ax.imshow(np.transpose(rgb, (1, 0, 2)), origin="lower", extent=extent, interpolation="nearest")
        if hotspot_nm is not None:
            ax.plot(hotspot_nm[a], hotspot_nm[b], marker="x", color="k", ms=10, mew=2)
        ax.set_aspect("equal")
        ax.set_xlabel(f"{'xyz'[a]} [nm]")
        ax.set_ylabel(f"{'xyz'[b]} [nm]")
        ax.set_title(label, fontsize=9)
    handles = [Patch(color=greys[r % len(greys)], label=n) for r, n in enumerate(sites.region_names)]
    if hotspot_nm is not None:
        from matplotlib.lines import Line2D

        handles.append(Line2D([], [], marker="x", color="k", ls="", label="hotspot"))
    axes[0].legend(handles=handles, loc="upper right", fontsize=8)
    fig.suptitle(f"{title} — {sites.n_sites} dipoles, d = {d:.3g} nm")
    _save(fig, path)
    plt.close(fig)


def draw_field_map(y_nm, z_nm, intensity, path, *, title="", wavelength_nm=None):
    """|E|^2 / |E0|^2 in the observation plane (log scale, greyscale)."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(5.5, 4.5))
    data = np.log10(np.maximum(np.asarray(intensity, float), 1e-3)).T
    im = ax.imshow(data, origin="lower", extent=(y_nm[0], y_nm[-1], z_nm[0], z_nm[-1]), cmap="Greys_r", aspect="equal")
    peak = np.max(intensity)
    ax.contour(y_nm, z_nm, np.asarray(intensity).T, levels=[peak / 2], colors="k", linewidths=1.2, linestyles="--")
    cb = fig.colorbar(im, ax=ax)
    cb.set_label("log10 |E|²/|E0|² [-]")
    ax.set_xlabel("y [nm]")
    ax.set_ylabel("z [nm]")
    wl = f" at {wavelength_nm:g} nm" if wavelength_nm is not None else ""
    ax.set_title(f"{title}{wl}; dashed: half maximum")
    _save(fig, path)
    plt.close(fig)


def draw_spectrum(wavelength_nm, columns, path, *, title="", laser_nm=None):
    """Spectra (cross sections [nm^2], enhancement [-]) against wavelength [nm].

    ``columns`` maps a label (with its unit) to values; at most four, drawn with
    distinct line styles and markers so they read in greyscale.
    """
    plt = _pyplot()
    styles = [("-", "o"), ("--", "s"), (":", "^"), ("-.", "d")]
    fig, ax = plt.subplots(figsize=(6.5, 4))
    for (label, values), (ls, mk) in zip(columns.items(), styles):
        ax.plot(wavelength_nm, values, ls=ls, marker=mk, ms=3, color="k", label=label)
    if laser_nm is not None:
        ax.axvline(laser_nm, color="0.5", lw=1, label=f"laser {laser_nm:g} nm")
    ax.set_xlabel("vacuum wavelength [nm]")
    ax.legend(fontsize=8)
    ax.set_title(title)
    _save(fig, path)
    plt.close(fig)


def draw_outline(outline, path, *, title=""):
    """Top and side views of a family's ideal shape with its parameters labelled.

    Parameters
    ----------
    outline : Outline
        From ``family.drawing_outline(params)``.
    path : str or Path
        PNG file to write.
    title : str
        Figure title (the family and its example parameters).
    """
    plt = _pyplot()
    from matplotlib.patches import Polygon

    fills = {"antenna": "0.78", "core": "0.6", "shell": "0.85", "substrate": "0.93", "medium_layer": "0.88"}
    top = np.vstack([p for _, p in outline.top])
    ratio = float(np.ptp(top[:, 1]) / max(np.ptp(top[:, 0]), 1e-9))
    fig, axes = plt.subplots(1, 2, figsize=(10, 1.4 + 4.4 * min(max(ratio, 0.2), 1.0)),
                             gridspec_kw={"width_ratios": [1.3, 1]})
    for ax, view, polys in ((axes[0], "top", outline.top), (axes[1], "side", outline.side)):
        for region, poly in polys:
            ax.add_patch(Polygon(poly, closed=True, facecolor=fills.get(region, "0.5"), edgecolor="k", lw=0.8))
        for dim in outline.dimensions:
            if dim.view != view:
                continue
            (x0, y0), (x1, y1) = dim.start_nm, dim.end_nm
            ax.annotate("", xy=(x1, y1), xytext=(x0, y0), arrowprops=dict(arrowstyle="<->", lw=0.9, color="k"))
            vertical = abs(x1 - x0) < abs(y1 - y0)
            ax.annotate(dim.parameter, ((x0 + x1) / 2, (y0 + y1) / 2), xytext=(5, 0) if vertical else (0, 3),
                        textcoords="offset points", fontsize=7, ha="left" if vertical else "center",
                        va="center" if vertical else "bottom",
                        bbox=dict(boxstyle="round,pad=0.12", fc="white", ec="none", alpha=0.8))
        hx, hy, hz = outline.hotspot_nm
        hp = (hx, hy) if view == "top" else (hx, hz)
        ax.plot(*hp, marker="x", color="k", ms=9, mew=2)
        ax.annotate("hotspot", hp, xytext=(6, 6), textcoords="offset points", fontsize=8)
        ax.autoscale_view()
        ax.margins(0.12)
        ax.set_aspect("equal")
        ax.set_xlabel("x [nm]")
        ax.set_ylabel("y [nm]" if view == "top" else "z [nm]")
        ax.set_title("top view (x-y)" if view == "top" else "side view (x-z)", fontsize=9)
    fig.suptitle(title, fontsize=10)
    _save(fig, path)
    plt.close(fig)
