"""Train a new model version from a campaign store (read-only) and save its bundle."""

from __future__ import annotations

import time
from numbers import Integral

from ..campaign import Store
from ._bundle import save_bundle
from ._dataset import load_training_set
from ._gp import GPSurrogate

__all__ = ["train_store"]


def train_store(store_path, *, targets=None, seed=None, cv_folds=5, n_restarts=4, drop_missing=False,
                min_designs_per_parameter=None, n_jobs=None, plots=True):
    """Fit a :class:`GPSurrogate` on a store's converged designs and save it as a new version.

    Parameters
    ----------
    store_path : str or pathlib.Path
        The campaign store (opened read-only; never written).
    targets : sequence of str or None
        Figures of merit; default :data:`surrogate.models.DEFAULT_TARGETS`.
    seed : int or None
        Default: the campaign's seed (so retraining the same data reproduces).
    cv_folds : int, default 5
    n_restarts : int, default 4
    drop_missing : bool, default False
        Leave NaN target values out instead of refusing.
    min_designs_per_parameter : int or None
        Default :data:`surrogate.models.MIN_DESIGNS_PER_PARAMETER`.
    n_jobs : int or None
        Processes fitting targets in parallel.
    plots : bool, default True

    Returns
    -------
    dict
        The model card (see :mod:`surrogate.models._bundle`), with ``path``.

    Raises
    ------
    TrainingDataError
        The store cannot give a usable training set; no bundle is written.
    """
    t0 = time.perf_counter()
    with Store.open(store_path, readonly=True) as store:
        data = load_training_set(store, targets, drop_missing=drop_missing)
        if seed is None:
            spec_seed = store.spec.get("seed")
            seed = int(spec_seed) if isinstance(spec_seed, Integral) else None
        extra = {} if min_designs_per_parameter is None else {"min_designs_per_parameter": min_designs_per_parameter}
        model = GPSurrogate(bounds=data.bounds, targets=list(data.Y.columns), cv_folds=cv_folds, n_restarts=n_restarts,
                            missing="drop", n_jobs=n_jobs, seed=seed, **extra)
        model.fit(data.X, data.Y)
        elapsed = time.perf_counter() - t0
        return save_bundle(model, data, store, seed=seed, training_time_s=elapsed, plots=plots)
