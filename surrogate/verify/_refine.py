"""The refine loop: search -> queue (best and most uncertain) -> verify -> retrain, for R rounds.

Each round, on the newest model:

1. search the surrogates for the feasible Pareto front (recorded in the store);
2. queue ``batch`` front designs not verified before: the ``batch - batch // 2``
   best by the first objective, then the ``batch // 2`` most uncertain of the rest
   (widest relative predictive interval over the targets, see
   :func:`surrogate.verify.rank_uncertain`);
3. verify them with the solver (they become training data);
4. retrain the surrogates on everything simulated so far.

Per round the store records (``refine_rounds``): the hypervolume of the *simulated*
front (every verified design so far, at its simulated values, feasible when its
simulated resonance is in the window; same objectives, model space and reference
point as the round-1 search, so rounds compare), and the surrogate's error on the
newly simulated designs as predicted before they were simulated: RMSE in model space,
mean |z| in sigma units and the fraction inside the 95 % interval, per target.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validation import check_int
from ..errors import InvalidParameterError

__all__ = ["RefineRound", "refine_store", "simulated_front_hypervolume", "round_metrics"]


@dataclass(frozen=True)
class RefineRound:
    """One refine round (the values recorded in the store)."""

    round: int
    front_id: int
    model_version: int
    queued: int
    verified: int
    failed: int
    hypervolume_simulated: float | None
    metrics: dict
    new_model_version: int | None


def round_metrics(comparisons):
    """Per target over the given comparisons: ``n``, ``rmse_model_space``, ``mean_abs_z``, ``coverage``.

    ``rmse_model_space`` is the root-mean-square of ``T(simulated) - mu`` (log space for
    log targets, [-]; physical units otherwise).
    """
    by_target = {}
    for comp in comparisons:
        for t, row in comp.items():
            if row["z_sigma"] is not None:
                by_target.setdefault(t, []).append(row)
    out = {}
    for t, rows in by_target.items():
        z = np.array([r["z_sigma"] for r in rows])
        err = z * np.array([r["sigma"] for r in rows])
        out[t] = {"n": len(rows), "rmse_model_space": float(np.sqrt(np.mean(err**2))),
                  "mean_abs_z": float(np.mean(np.abs(z))),
                  "coverage": float(np.mean([bool(r["inside"]) for r in rows]))}
    return out


def simulated_front_hypervolume(store, objectives, reference, *, window_nm):
    """Hypervolume of the verified designs at their simulated values (model space, minimisation form).

    Returns None when no verified design is feasible.
    """
    from ..models import to_model_space
    from ..search import hypervolume, pareto_mask

    laser = store.spec.get("laser_nm")
    rows = []
    for v in store.verifications():
        f = v["simulated"]
        if window_nm is not None and laser is not None:
            res = f.get("resonance_nm")
            if res is None or not f.get("resonance_resolved", True) or abs(res - laser) > window_nm:
                continue
        vals = []
        for o in objectives:
            x = f.get(o["target"])
            if x is None:
                break
            transform = o.get("transform", "identity")
            vals.append((1.0 if o["direction"] == "minimize" else -1.0) * float(to_model_space(o["target"], x, transform)))
        else:
            rows.append(vals)
    if not rows:
        return None
    pts = np.array(rows)
    ref = np.asarray(reference, dtype=float)
    pts = pts[np.all(pts < ref, axis=1)]
    if pts.size == 0:
        return 0.0
    return float(hypervolume(pts[pareto_mask(pts)], ref))


def refine_store(store_path, *, rounds, batch, n_trials=2000, seed=None, window_nm=15.0, spacing_nm=None,
                 workers=None, scheduler=None, dask_workers=None, task=None, train_options=None, progress=None,
                 code_version="unknown"):
    """Run ``rounds`` rounds of search -> queue -> verify -> retrain on a store.

    Parameters
    ----------
    store_path : str or pathlib.Path
        A store with a trained model.
    rounds : int
        Rounds to run (1..100).
    batch : int
        Designs verified per round (1..1000): ``batch - batch // 2`` best, ``batch // 2``
        most uncertain.
    n_trials : int, default 2000
        Search trials per round.
    seed : int or None
        Round ``r`` searches with seed ``seed + r`` (default: the campaign's seed).
    window_nm : float or None, default 15
    spacing_nm : float or None
        Finer spacing for the verification (see :func:`verify_store`).
    workers, scheduler, dask_workers, task
        As for :func:`verify_store`.
    train_options : dict or None
        Keyword arguments for :func:`surrogate.models.train_store` (e.g. ``cv_folds``).
    progress : callable(dict) or None
        Called with ``{"stage", "round", ...}``.

    Returns
    -------
    list of RefineRound
    """
    from ..campaign import Store
    from ..campaign import design_id as content_id
    from ..models import load_bundle, train_store
    from ..search import search_store
    from ._queue import _round_params, enqueue, rank_uncertain
    from ._verify import verify_store

    rounds = check_int("rounds", rounds, low=1, high=100)
    batch = check_int("batch", batch, low=1, high=1000)
    n_trials = check_int("trials", n_trials, low=1, high=10_000_000)
    train_options = dict(train_options or {})
    with Store.open(store_path) as store:
        run_id = store.start_run("refine", code_version, note=f"rounds={rounds} batch={batch}")
        spec_seed = store.spec.get("seed")
        load_bundle(store, allow_stale=True)  # a store with no model is refused here, before any search
    base_seed = seed if seed is not None else (int(spec_seed) if isinstance(spec_seed, int) else 0)
    out = []
    reference = objectives = None
    for r in range(1, rounds + 1):
        if progress is not None:
            progress({"stage": "search", "round": r, "rounds": rounds})
        found = search_store(store_path, n_trials=n_trials, seed=base_seed + r, window_nm=window_nm, persist=False,
                             reference=reference, code_version=code_version)
        if reference is None:
            reference = found.reference
            with Store.open(store_path, readonly=True) as store:
                bundle = load_bundle(store, allow_stale=True)
                transforms = dict(bundle.model.transforms_)
            objectives = [{"target": o.target, "direction": o.direction, "transform": transforms[o.target]}
                          for o in found.objectives]
        with Store.open(store_path) as store:
            done = {e["design_id"] for e in store.queue_entries()}
            points = store.front_points(found.front_id)
            spec = store.spec
            fresh = [p for p in points if content_id(_round_params(p["params"], spec)) not in done]
            if not fresh:
                raise InvalidParameterError(f"refine round {r}: every design of front {found.front_id} is already "
                                            "verified; run more trials or widen the space")
            n_best = batch - batch // 2
            best = fresh[:n_best]
            rest = fresh[n_best:]
            order = rank_uncertain([p["predictions"] for p in rest])
            uncertain = [rest[i] for i in order[: batch - len(best)]]
            q1 = enqueue(store, points=[p["point_index"] for p in best], front_id=found.front_id,
                         reason="refine-best", refine_round=r) if best else None
            q2 = enqueue(store, points=[p["point_index"] for p in uncertain], front_id=found.front_id,
                         reason="refine-uncertain", refine_round=r) if uncertain else None
            queued = sum(len(q.added) for q in (q1, q2) if q is not None)
        if progress is not None:
            progress({"stage": "verify", "round": r, "rounds": rounds, "queued": queued})
        ver = verify_store(store_path, spacing_nm=spacing_nm, workers=workers, scheduler=scheduler,
                           dask_workers=dask_workers, task=task, code_version=code_version,
                           progress=None if progress is None else (lambda ev, r=r: progress({**ev, "round": r,
                                                                                               "rounds": rounds})))
        if ver.interrupted:
            raise KeyboardInterrupt
        metrics = round_metrics(list(ver.comparisons.values()))
        with Store.open(store_path) as store:
            hv = simulated_front_hypervolume(store, objectives, reference, window_nm=window_nm)
        if progress is not None:
            progress({"stage": "retrain", "round": r, "rounds": rounds})
        card = train_store(store_path, **train_options)
        new_version = card.get("version") if isinstance(card, dict) else None
        with Store.open(store_path) as store:
            store.record_refine_round(round=r, front_id=found.front_id, model_version=found.model_version,
                                      n_verified=len(ver.verified), hypervolume_simulated=hv,
                                      metrics={"targets": metrics, "failed": len(ver.failed), "queued": queued,
                                               "new_model_version": new_version, "reference": list(reference),
                                               "objectives": objectives, "window_nm": window_nm},
                                      run_id=run_id)
        out.append(RefineRound(round=r, front_id=found.front_id, model_version=found.model_version, queued=queued,
                               verified=len(ver.verified), failed=len(ver.failed), hypervolume_simulated=hv,
                               metrics=metrics, new_model_version=new_version))
    with Store.open(store_path) as store:
        store.finish_run(run_id)
    return out

