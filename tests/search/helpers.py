"""Synthetic rod stores with analytic figures of merit and quickly trained surrogates (no solver).

The figures are our own smooth closed forms of (length_nm, width_nm, end_radius_nm), shaped
like a rod antenna's trends (resonance red-shifting with length, enhancement peaking where
the resonance meets the laser); they are only a test bed, not physics.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import qmc

from surrogate.campaign import Store
from surrogate.models import GPSurrogate, load_training_set, save_bundle

ROD_BOUNDS = {"length_nm": [60.0, 200.0], "width_nm": [20.0, 60.0], "end_radius_nm": [0.0, 20.0]}
ROD_FIXED = {"thickness_nm": 30.0}
LASER_NM = 830.0


def rod_figures(params):
    L, W, r = params["length_nm"], params["width_nm"], params["end_radius_nm"]
    res = 500.0 + 2.2 * L - 1.5 * W + 0.5 * r
    return {
        "resonance_nm": res,
        "resonance_resolved": True,
        "enhancement_at_laser": float(np.exp(4.0 - 0.02 * W - ((res - LASER_NM) / 60.0) ** 2)),
        "heat_per_enhancement_nm2": float(np.exp(0.5 + 0.004 * L - 0.01 * W)),
        "spot_area_nm2": 80.0 + 3.0 * W + 0.3 * r**2,
        "converged": True,
    }


def _spectrum():
    return [{"wavelength_nm": LASER_NM, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5, "enhancement": 2.0,
             "converged": True, "n_iter": 10, "residual": 1e-6}]


def rod_designs(n, seed, prefix="r"):
    u = qmc.LatinHypercube(d=3, rng=np.random.default_rng(seed)).random(n)
    names = list(ROD_BOUNDS)
    out = []
    for i, row in enumerate(u):
        p = {k: float(ROD_BOUNDS[k][0] + row[j] * (ROD_BOUNDS[k][1] - ROD_BOUNDS[k][0])) for j, k in enumerate(names)}
        p.update(ROD_FIXED)
        out.append((f"{prefix}{seed}-{i:04d}", p))
    return out


def add_rod_results(store, designs, figures=rod_figures):
    store.add_designs(designs)
    for design_id, params in designs:
        store.record_result(design_id, figures=figures(params), solver={"spacing_nm": 2.0}, spectrum=_spectrum(),
                            elapsed_s=0.01)


def make_rod_store(path, n=60, seed=3, figures=rod_figures):
    spec = {"name": "rod-test", "family": "rod", "bounds": ROD_BOUNDS, "fixed": ROD_FIXED, "laser_nm": LASER_NM,
            "seed": seed, "material": "gold", "medium_index": 1.0}
    store = Store.create(path, spec=spec, code_version="test")
    add_rod_results(store, rod_designs(n, seed), figures)
    return store


def train(store, targets=None, seed=0):
    """Fit and save a surrogate version of ``store`` (no CV, no restarts: fast); return its card."""
    data = load_training_set(store, targets)
    model = GPSurrogate(bounds=data.bounds, targets=list(data.Y.columns), cv_folds=None, n_restarts=0, seed=seed)
    model.fit(data.X, data.Y)
    return save_bundle(model, data, store, seed=seed, plots=False)
