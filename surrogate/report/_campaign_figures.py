"""Campaign-level figures: design-space coverage, the Pareto front, verification, refine rounds.

Matplotlib PNGs through the shared helpers of :mod:`._figures`; every axis names its
unit, and meaning is carried by markers, fills and line styles, so the figures read
in greyscale.
"""

from __future__ import annotations

import numpy as np

from ._figures import _pyplot, _save
from ._tables import target_unit

__all__ = ["draw_histograms", "draw_pair_plot", "draw_front", "draw_verification", "draw_refine_rounds"]

# status -> (marker, face colour, label): filled, open and crossed markers read without colour
_STATUS_STYLE = {
    "done": ("o", "0.2", "done"),
    "not_converged": ("s", "none", "not converged"),
    "failed": ("X", "0.0", "failed"),
    "pending": ("^", "none", "pending"),
    "running": ("v", "none", "running"),
}


def _label(name):
    return f"{name} [{target_unit(name)}]"


def _grid(n, cols=3):
    cols = min(n, cols)
    return (n + cols - 1) // cols, cols


def draw_histograms(designs, bounds, path, *, bins=10):
    """One histogram per varied parameter over the campaign bounds, all designs.

    Parameters
    ----------
    designs : DataFrame
        One row per design, a column per parameter [parameter units].
    bounds : dict
        ``{name: (low, high)}`` of the varied parameters.
    path : str or Path
        PNG file to write.
    bins : int, default 10
        Equal-width bins across each bound.
    """
    plt = _pyplot()
    names = list(bounds)
    rows, cols = _grid(len(names))
    fig, axes = plt.subplots(rows, cols, figsize=(3.6 * cols, 3.0 * rows), squeeze=False)
    for ax, name in zip(axes.ravel(), names):
        lo, hi = bounds[name]
        ax.hist(designs[name], bins=np.linspace(lo, hi, bins + 1), color="0.7", edgecolor="k", hatch="//")
        ax.set_xlabel(_label(name))
        ax.set_ylabel("designs [-]")
        ax.set_xlim(lo, hi)
    for ax in axes.ravel()[len(names):]:
        ax.axis("off")
    fig.suptitle(f"Coverage of the design space: {len(designs)} designs, {bins} bins across each bound", fontsize=10)
    fig.tight_layout()
    _save(fig, path, dpi=110)
    plt.close(fig)


def draw_pair_plot(designs, bounds, path):
    """Every pair of varied parameters, one marker per design status; histograms on the diagonal."""
    plt = _pyplot()
    names = list(bounds)
    n = len(names)
    fig, axes = plt.subplots(n, n, figsize=(2.3 * n + 1, 2.3 * n + 0.5), squeeze=False)
    status = designs["status"].astype(str)
    for i, yname in enumerate(names):
        for j, xname in enumerate(names):
            ax = axes[i, j]
            if i == j:
                ax.hist(designs[xname], bins=np.linspace(*bounds[xname], 11), color="0.7", edgecolor="k")
            else:
                for s, (mk, face, label) in _STATUS_STYLE.items():
                    sel = status == s
                    if sel.any():
                        ax.scatter(designs.loc[sel, xname], designs.loc[sel, yname], s=10, marker=mk,
                                   facecolors=face, edgecolors="k", linewidths=0.6, label=label)
                ax.set_ylim(*bounds[yname])
            ax.set_xlim(*bounds[xname])
            if i == n - 1:
                ax.set_xlabel(_label(xname), fontsize=8)
            else:
                ax.set_xticklabels([])
            if j == 0:
                ax.set_ylabel(_label(yname) if i else "designs [-]", fontsize=8)
            ax.tick_params(labelsize=7)
    handles, labels = [], []
    for ax in axes.ravel():
        h, lab = ax.get_legend_handles_labels()
        for hh, ll in zip(h, lab):
            if ll not in labels:
                handles.append(hh)
                labels.append(ll)
    if handles:
        fig.legend(handles, labels, loc="upper right", fontsize=8)
    fig.suptitle("Pairs of varied parameters (marker = design status)", fontsize=10)
    _save(fig, path, dpi=100)
    plt.close(fig)


def _errorbars(med, lo, hi):
    return [np.maximum(med - lo, 0.0), np.maximum(hi - med, 0.0)]


def draw_front(points, objectives, path, *, training=None):
    """Pairs of objectives: predicted medians with 95 % intervals; open markers for flagged points.

    Parameters
    ----------
    points : DataFrame
        From :func:`front_points_table` (``<target>_median|lower|upper``, ``n_flags``).
    objectives : list of dict
        ``{"target", "direction"}`` in order.
    path : str or Path
    training : DataFrame, optional
        Finished training designs (a column per target), drawn as small grey dots.
    """
    plt = _pyplot()
    targets = [o["target"] for o in objectives]
    pairs = [(a, b) for k, a in enumerate(targets) for b in targets[k + 1:]] or [(targets[0], targets[0])]
    rows, cols = _grid(len(pairs))
    fig, axes = plt.subplots(rows, cols, figsize=(4.4 * cols, 4.0 * rows), squeeze=False)
    flagged = points["n_flags"].to_numpy() > 0
    for ax, (a, b) in zip(axes.ravel(), pairs):
        if training is not None and len(training):
            ax.scatter(training[a], training[b], s=6, color="0.75", marker=".", label="training designs (solver)")
        for sel, face, label in ((~flagged, "k", "front, no flag"), (flagged, "white", "front, flagged")):
            if not sel.any():
                continue
            p = points[sel]
            xm, ym = p[f"{a}_median"].to_numpy(), p[f"{b}_median"].to_numpy()
            ax.errorbar(xm, ym, xerr=_errorbars(xm, p[f"{a}_lower"].to_numpy(), p[f"{a}_upper"].to_numpy()),
                        yerr=_errorbars(ym, p[f"{b}_lower"].to_numpy(), p[f"{b}_upper"].to_numpy()),
                        fmt="o", ms=5, mfc=face, mec="k", ecolor="0.55", elinewidth=0.7, label=label)
        for t, setter in ((a, ax.set_xscale), (b, ax.set_yscale)):
            if target_unit(t) != "nm" and (points[f"{t}_lower"] > 0).all():
                setter("log")
        ax.set_xlabel(_label(a) + f" ({dict((o['target'], o['direction']) for o in objectives)[a]})", fontsize=8)
        ax.set_ylabel(_label(b) + f" ({dict((o['target'], o['direction']) for o in objectives)[b]})", fontsize=8)
    for ax in axes.ravel()[len(pairs):]:
        ax.axis("off")
    axes.ravel()[0].legend(fontsize=7)
    fig.suptitle("Pareto front: surrogate medians with 95 % intervals", fontsize=10)
    fig.tight_layout()
    _save(fig, path, dpi=110)
    plt.close(fig)


def draw_verification(table, targets, path):
    """Predicted median with 95 % interval against the simulated value, per target; parity dashed."""
    plt = _pyplot()
    targets = [t for t in targets if f"{t}_simulated" in table.columns]
    rows, cols = _grid(len(targets), cols=2)
    fig, axes = plt.subplots(rows, cols, figsize=(4.4 * cols, 4.0 * rows), squeeze=False)
    for ax, t in zip(axes.ravel(), targets):
        sub = table.dropna(subset=[f"{t}_simulated", f"{t}_median"])
        sim, med = sub[f"{t}_simulated"].to_numpy(float), sub[f"{t}_median"].to_numpy(float)
        inside = sub[f"{t}_inside"].astype(bool).to_numpy()
        err = _errorbars(med, sub[f"{t}_lower"].to_numpy(float), sub[f"{t}_upper"].to_numpy(float))
        for sel, mk, face, label in ((inside, "o", "k", "inside 95 % interval"),
                                     (~inside, "^", "white", "outside 95 % interval")):
            if sel.any():
                ax.errorbar(sim[sel], med[sel], yerr=[e[sel] for e in err], fmt=mk, ms=5, mfc=face, mec="k",
                            ecolor="0.55", elinewidth=0.8, label=label)
        if len(sim):
            span = [min(sim.min(), (med - err[0]).min()), max(sim.max(), (med + err[1]).max())]
            ax.plot(span, span, "k--", lw=1, label="parity")
        ax.set_xlabel(f"simulated {_label(t)}", fontsize=8)
        ax.set_ylabel(f"predicted {_label(t)}", fontsize=8)
        ax.legend(fontsize=7)
    for ax in axes.ravel()[len(targets):]:
        ax.axis("off")
    fig.suptitle("Verification: surrogate prediction against full simulation", fontsize=10)
    fig.tight_layout()
    _save(fig, path, dpi=110)
    plt.close(fig)


def draw_refine_rounds(table, targets, path):
    """Per refine round: the simulated front's hypervolume, and each target's mean |z| [sigma]."""
    plt = _pyplot()
    styles = [("-", "o"), ("--", "s"), (":", "^"), ("-.", "d"), ("-", "v")]
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(10, 3.8))
    a1.plot(table["round"], table["hypervolume_simulated"], "k-o")
    a1.set_xlabel("refine round [-]")
    a1.set_ylabel("hypervolume of the simulated front [-] (model space)")
    for t, (ls, mk) in zip(targets, styles):
        col = f"{t}_mean_abs_z_sigma"
        if col in table.columns:
            a2.plot(table["round"], table[col], ls=ls, marker=mk, color="k", label=t)
    a2.axhline(0.8, color="0.6", lw=1, label="ideal for a normal error (0.8)")
    a2.set_xlabel("refine round [-]")
    a2.set_ylabel("mean |simulated - predicted| / sigma [-]")
    a2.legend(fontsize=7)
    from matplotlib.ticker import MaxNLocator

    for ax in (a1, a2):
        ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    fig.suptitle("Refine rounds", fontsize=10)
    fig.tight_layout()
    _save(fig, path, dpi=110)
    plt.close(fig)
