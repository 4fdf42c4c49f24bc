"""Small stores for the app tests: analytic rod designs (no solver) with solver settings for verification.

The training figures come from ``tests.search.helpers.rod_figures`` (our own smooth closed forms);
the solver settings are real and coarse (10 nm lattice, three wavelengths) so that a verification
started from the app runs the real coupled-dipole solver in a second or two per design.
"""

from __future__ import annotations

import shutil
from pathlib import Path

from streamlit.testing.v1 import AppTest

from surrogate.campaign import Store
from surrogate.models import train_store
from surrogate.search import search_store

from ..search.helpers import LASER_NM, ROD_BOUNDS, ROD_FIXED, add_rod_results, rod_designs

SOLVER = {"spacing_nm": 10.0, "wavelengths_nm": "750:910:80", "hotspot_offset_nm": 20.0, "polarizability": "ldr",
          "tol": 1e-3, "max_iter": 500}
FAST_TRAINING = {"cv_folds": None, "n_restarts": 0, "plots": False}


def make_app_store(path, *, n=40, seed=3, model=True, front=True):
    """A rod store with ``n`` finished designs, optionally a model v0001 and one front; return its path."""
    spec = {"name": "rod-app", "family": "rod", "bounds": ROD_BOUNDS, "fixed": ROD_FIXED, "laser_nm": LASER_NM,
            "seed": seed, "material": "gold", "medium_index": 1.0, **SOLVER}
    path = Path(path)
    with Store.create(path, spec=spec, code_version="test") as store:
        if n:
            add_rod_results(store, rod_designs(n, seed))
    if model:
        train_store(path, **FAST_TRAINING)
    if front:
        search_store(path, n_trials=300, seed=0, n_mc_samples=64)  # the study file stays beside the store
    return path


def copy_store(src, dst_folder):
    """Copy a store (with SQLite's backup API), its models folder and study file into ``dst_folder``."""
    import sqlite3

    src, dst_folder = Path(src), Path(dst_folder)
    dst = dst_folder / src.name
    source = sqlite3.connect(f"file:{src}?mode=ro", uri=True)  # the backup API also takes what is still in the WAL
    target = sqlite3.connect(dst)
    try:
        source.backup(target)
    finally:
        source.close()
        target.close()
    models = src.with_name(src.stem + ".models")
    if models.is_dir():
        shutil.copytree(models, dst_folder / models.name)
    study = src.with_name(src.stem + ".search.journal")
    if study.is_file():
        shutil.copy(study, dst_folder / study.name)
    return dst


def page_test(page, store_path, timeout=60):
    """An AppTest of one page function with the store chosen (as ``surrogate app STORE`` does)."""
    at = AppTest.from_string(f"from surrogate.ui import {page}\n{page}()\n", default_timeout=timeout)
    if store_path is not None:
        at.session_state["store_path"] = str(store_path)
    return at


def record_large_front(path, n, *, seed=0):
    """Record a front of ``n`` designs sampled in the campaign bounds, predicted by the newest model.

    Not a Pareto front (a real search of a small store gives a few hundred points at most): a
    stand-in of the right size and content for timing the Front page. Returns the front id.
    """
    import numpy as np
    import pandas as pd
    from scipy.stats import qmc

    from surrogate.models import load_bundle
    from surrogate.search import ROBUSTNESS_COLUMNS

    with Store.open(path) as store:
        bundle = load_bundle(store, allow_stale=True)
        model = bundle.model
        names = list(model.feature_names_in_)
        lo = np.array([model.bounds_[k][0] for k in names])
        hi = np.array([model.bounds_[k][1] for k in names])
        X = lo + qmc.LatinHypercube(d=len(names), rng=np.random.default_rng(seed)).random(n) * (hi - lo)
        summary = model.predict_summary(pd.DataFrame(X, columns=names), coverage=0.95)
        last = store.fronts()[-1]
        points = []
        for i in range(n):
            pred = {t: {p: float(summary[f"{t}_{p}"].iloc[i]) for p in ("median", "lower", "upper")}
                    for t in model.targets_}
            wide = [t for t, v in pred.items() if (v["upper"] - v["lower"]) > 0.5 * abs(v["median"])]
            points.append({
                "trial_number": i, "params": dict(zip(names, map(float, X[i]))),
                "objectives": {f"{o['direction'][:3]}:{o['target']}": pred[o["target"]]["median"]
                               for o in last["objectives"]},
                "predictions": pred,
                "flags": [{"flag": "uncertain", "target": t, "reason": f"{t} interval wider than half its median"}
                          for t in wide],
                "robustness": {c: None for c in ROBUSTNESS_COLUMNS},
            })
        return store.record_front(model_version=bundle.version, objectives=last["objectives"],
                                  reference=last["reference"], hypervolume=0.0, n_trials=n, n_feasible=n,
                                  study={"note": "sampled stand-in for timing the app"},
                                  settings={**last["settings"], "note": "sampled stand-in for timing the app"},
                                  points=points, code_version="test")
