"""The verification queue: which designs go back to the solver, with what the surrogate predicted.

A queue entry holds the design's parameters (rounded as campaign designs are, so its
id is the campaign's content hash), why it was queued, the front point it came from,
and the prediction it will be judged against: for every modelled target the median
and central interval in physical units and the mean ``mu`` and standard deviation
``sigma`` in model space (log space for log targets), from the newest model version
at the time of queueing.  The store keeps one entry per design, ever (see the store
contract): asking again for a queued, running or verified design is reported as
skipped, never duplicated.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import pandas as pd

from .._validation import check_int
from ..errors import InvalidParameterError

__all__ = ["QueueReport", "enqueue", "prediction_record", "rank_uncertain", "REASONS", "COVERAGE"]

#: Why an entry was queued (``reason`` column).
REASONS = ("front-top", "flagged", "design", "app", "refine-best", "refine-uncertain")

#: Probability of the stored predictive interval.
COVERAGE = 0.95


@dataclass(frozen=True)
class QueueReport:
    """What one :func:`enqueue` call did.

    Attributes
    ----------
    added : list of int
        Entry ids queued (new, or failed ones queued again).
    skipped : list of (str, str)
        ``(design_id, why)`` for designs already in the queue.
    model_version : int or None
        The model the predictions were made with (None: no model yet).
    """

    added: list
    skipped: list
    model_version: int | None


def prediction_record(model, params_list, *, coverage=COVERAGE):
    """Per design, ``{target: {median, lower, upper, mu, sigma, transform}}`` (JSON-ready).

    Parameters
    ----------
    model : GPSurrogate
    params_list : list of dict
        Parameters (the model's features must all be present).
    """
    names = list(model.feature_names_in_)
    missing = [n for n in names if n not in params_list[0]]
    if missing:
        raise InvalidParameterError(f"design parameters must include {', '.join(names)}; missing {missing[0]!r}")
    X = pd.DataFrame([[float(p[n]) for n in names] for p in params_list], columns=names)
    latent = model.predict_model_space(X)
    summary = model.predict_interval(X, coverage=coverage)
    out = []
    for i in range(len(X)):
        rec = {}
        for t, (mu, sigma) in latent.items():
            rec[t] = {"median": float(summary[f"{t}_median"].iloc[i]), "lower": float(summary[f"{t}_lower"].iloc[i]),
                      "upper": float(summary[f"{t}_upper"].iloc[i]), "mu": float(mu[i]), "sigma": float(sigma[i]),
                      "transform": model.transforms_[t], "coverage": coverage}
        out.append(rec)
    return out


def rank_uncertain(predictions):
    """Order (most uncertain first) by the widest relative interval over targets.

    The relative width of a target is ``(upper - lower) / |median|`` [-]; a design's
    uncertainty is its largest relative width.
    """
    def width(rec):
        w = [(v["upper"] - v["lower"]) / abs(v["median"]) for v in rec.values()
             if v["median"] and math.isfinite(v["median"])]
        return max(w) if w else 0.0

    return sorted(range(len(predictions)), key=lambda i: -width(predictions[i]))


def _latest_front(store, front_id):
    fronts = store.fronts()
    if not fronts:
        raise InvalidParameterError(f"store {store.path} has no search front yet; run 'surrogate search {store.path}' first")
    if front_id is None:
        return fronts[-1]
    for f in fronts:
        if f["front_id"] == front_id:
            return f
    raise InvalidParameterError(f"front_id must be one of the store's fronts (1..{fronts[-1]['front_id']}); got {front_id}")


def _round_params(params, spec):
    from ..campaign._design import _DECIMALS

    full = dict(spec.get("fixed", {}))
    full.update({k: round(float(v), _DECIMALS) for k, v in params.items()})
    return full


def enqueue(store, *, front_top=None, flagged=False, design_ids=(), points=(), front_id=None, reason=None,
            refine_round=None):
    """Queue designs for verification (one transaction).

    Parameters
    ----------
    store : Store
        Open writable.
    front_top : int or None
        The first ``front_top`` points of the front (best first objective first).
    flagged : bool
        Every point of the front that carries a trust flag.
    design_ids : sequence of str
        Designs already in the store (sampled or earlier ones).
    points : sequence of int
        Point indices of the front.
    front_id : int or None
        The front to take points from; default the newest.
    reason : str or None
        Recorded reason; default by how the design was chosen (see :data:`REASONS`).
    refine_round : int or None
        The refine round that queued the entry.

    Returns
    -------
    QueueReport

    Raises
    ------
    InvalidParameterError
        Nothing asked for, an unknown design or point, a store with no front.
    ModelBundleError
        The store has models but the newest cannot be trusted (tampered, another store's);
        nothing is queued.
    """
    from ..campaign import design_id as content_id
    from ..models import list_versions, load_bundle

    if reason is not None and reason not in REASONS:
        raise InvalidParameterError(f"reason must be one of {', '.join(REASONS)}; got {reason!r}")
    design_ids = list(design_ids)
    points = [check_int("point", p, low=0) for p in points]
    if front_top is not None:
        front_top = check_int("front_top", front_top, low=1, high=100_000)
    if front_top is None and not flagged and not design_ids and not points:
        raise InvalidParameterError("a queue request must name candidates: front_top, flagged, design ids or points")
    spec = store.spec
    chosen = []  # (params, reason, front_id, point_index)
    if front_top is not None or flagged or points:
        front = _latest_front(store, front_id)
        fpoints = store.front_points(front["front_id"])
        picks = []
        if front_top is not None:
            picks += [(p, reason or "front-top") for p in fpoints[:front_top]]
        if flagged:
            picks += [(p, reason or "flagged") for p in fpoints if p["flags"]]
        for i in points:
            if i >= len(fpoints):
                raise InvalidParameterError(f"point must be a point index of front {front['front_id']} "
                                            f"(0..{len(fpoints) - 1}); got {i}")
            picks.append((fpoints[i], reason or "app"))
        for p, why in picks:
            params = _round_params(p["params"], spec)
            chosen.append((content_id(params), params, why, front["front_id"], p["point_index"]))
    if design_ids:
        known = {d["design_id"]: d for d in store.designs()}
        for did in design_ids:
            if did not in known:
                raise InvalidParameterError(f"design must be a design id of store {store.path}; got {did!r} "
                                            "(list them with 'surrogate export')")
            chosen.append((did, known[did]["params"], reason or "design", None, None))
    # no model yet: entries without predictions; a model that cannot be trusted (tampered, another
    # store's) is refused, never silently replaced by no prediction
    bundle = load_bundle(store, allow_stale=True) if list_versions(store) else None
    predicted = [None] * len(chosen)
    if bundle is not None and chosen:
        predicted = prediction_record(bundle.model, [c[1] for c in chosen])
    entries = []
    for (did, params, why, fid, idx), pred in zip(chosen, predicted):
        entries.append({"design_id": did, "params": params, "reason": why, "front_id": fid,
                        "point_index": idx, "model_version": None if bundle is None else bundle.version,
                        "predicted": pred, "refine_round": refine_round})
    added, skipped = store.enqueue(entries)
    return QueueReport(added=added, skipped=skipped, model_version=None if bundle is None else bundle.version)
