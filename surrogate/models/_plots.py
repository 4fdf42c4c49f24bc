"""Parity and calibration plots (PNG) of a cross-validated :class:`GPSurrogate`.

Readable in greyscale: markers and line styles carry the meaning.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import norm

from ..report._figures import _pyplot
from ..report._figures import _save as _save_png

__all__ = ["draw_parity", "draw_calibration", "calibration_curve"]


def _save(fig, path):
    _save_png(fig, path, dpi=110)


def _grid(n):
    cols = min(n, 3)
    rows = (n + cols - 1) // cols
    return rows, cols


def calibration_curve(y, mu, sigma, levels):
    """Observed fraction of ``y`` inside each central interval ``mu -+ z(level) sigma`` [-].

    Parameters
    ----------
    y, mu, sigma : ndarray of float, shape (n,)
    levels : ndarray of float, shape (m,)
        Nominal coverages in (0, 1).

    Returns
    -------
    ndarray of float, shape (m,)
    """
    z = norm.ppf(0.5 + np.asarray(levels) / 2)
    abs_z = np.abs(y - mu) / np.maximum(sigma, 1e-300)
    return np.mean(abs_z[None, :] <= z[:, None], axis=1)


def draw_parity(model, path):
    """Out-of-fold median against the solver value, with 95 % intervals, one panel per target."""
    plt = _pyplot()
    targets = [t for t in model.targets_ if t in model.cv_predictions_]
    rows, cols = _grid(len(targets))
    fig, axes = plt.subplots(rows, cols, figsize=(4.2 * cols, 4.0 * rows), squeeze=False)
    for ax, t in zip(axes.ravel(), targets):
        p, m = model.cv_predictions_[t], model.cv_metrics_[t]
        s = p["sigma"] * model.interval_scale_[t]
        lo, hi = p["mu"] - 1.959964 * s, p["mu"] + 1.959964 * s
        y, med = p["y"], p["mu"]
        if model.transforms_[t] == "log":
            y, med, lo, hi = np.exp(y), np.exp(med), np.exp(lo), np.exp(hi)
            ax.set_xscale("log")
            ax.set_yscale("log")
        ax.errorbar(y, med, yerr=[med - lo, hi - med], fmt="o", ms=3, color="0.15", ecolor="0.65", elinewidth=0.8)
        span = [min(y.min(), lo.min()), max(y.max(), hi.max())]
        ax.plot(span, span, "k--", lw=1, label="parity")
        space = "log " if model.transforms_[t] == "log" else ""
        ax.set_title(f"{t}\n{space}R$^2$ = {m['r2']:.3f}, 95 % coverage {m['coverage_95_recalibrated']:.2f}", fontsize=9)
        ax.set_xlabel(f"solver {t}")
        ax.set_ylabel(f"surrogate {t} (median, 95 % interval)")
    for ax in axes.ravel()[len(targets):]:
        ax.axis("off")
    fig.suptitle("Cross-validated parity (each design predicted by a model that did not see it)", fontsize=10)
    _save(fig, path)
    plt.close(fig)


def draw_calibration(model, path):
    """Observed against nominal coverage of central intervals, before and after recalibration."""
    plt = _pyplot()
    levels = np.linspace(0.05, 0.99, 40)
    targets = [t for t in model.targets_ if t in model.cv_predictions_]
    rows, cols = _grid(len(targets))
    fig, axes = plt.subplots(rows, cols, figsize=(4.0 * cols, 3.8 * rows), squeeze=False)
    for ax, t in zip(axes.ravel(), targets):
        p = model.cv_predictions_[t]
        raw = calibration_curve(p["y"], p["mu"], p["sigma"], levels)
        ax.plot(levels, raw, "k-", lw=1.5, label="as fitted")
        scale = model.interval_scale_[t]
        if scale != 1.0:
            rec = calibration_curve(p["y"], p["mu"], p["sigma"] * scale, levels)
            ax.plot(levels, rec, "k:", lw=1.8, label=f"recalibrated (x{scale:.2f})")
        ax.plot([0, 1], [0, 1], color="0.6", lw=1, ls="--", label="ideal")
        ax.set_title(t, fontsize=9)
        ax.set_xlabel("nominal coverage [-]")
        ax.set_ylabel("observed coverage [-]")
        ax.set_xlim(0, 1)
        ax.set_ylim(0, 1)
        ax.legend(fontsize=7, loc="upper left")
    for ax in axes.ravel()[len(targets):]:
        ax.axis("off")
    fig.suptitle("Calibration of cross-validated central intervals", fontsize=10)
    _save(fig, path)
    plt.close(fig)
