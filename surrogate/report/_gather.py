"""Everything a campaign report shows, read from an open store (read-only) and its model bundles.

Nothing here draws or writes; :func:`read_campaign` only reads.  Parts that a store
may not have yet (trained models, a search front, verification records) come back
as ``None`` or empty lists with a note saying what is missing and which command
produces it, so a report of an early campaign still builds.
"""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass, field

__all__ = ["CampaignRecord", "read_campaign", "VERIFICATION_METHODS"]

#: Store methods that read the verification records (schema 3).
VERIFICATION_METHODS = ("queue_entries", "verifications", "refine_rounds")


@dataclass(frozen=True)
class CampaignRecord:
    """What one report shows, as read from the store.

    Attributes
    ----------
    store_path : str
        The store file as given.
    spec : dict
        The campaign as stored.
    meta : dict
        ``code_version`` and ``created_utc`` of the store.
    counts : dict
        Designs per status.
    designs : list of dict
        Every design with its current status (``Store.designs``).
    results : list of dict
        Finished designs (``Store.results``).
    runs : list of dict
        Logged runs.
    fingerprint : str
        The store's dataset fingerprint (SHA-256 hex).
    versions : list of dict
        Model versions with headline metrics (``surrogate.models.list_versions``).
    bundle : LoadedBundle or None
        The newest model version, loaded and verified; None when there is none or
        it could not be loaded (``notes['models']`` says why).
    fronts : list of dict
        Recorded search fronts, oldest first.
    front : dict or None
        The newest front.
    front_points : list of dict
        Its points.
    queue : list of dict or None
        Verification-queue entries; None when the store predates verification.
    verifications : list of dict
        Predicted-vs-simulated records.
    refine_rounds : list of dict
        Refine rounds.
    notes : dict
        ``{"models" | "front" | "verification": "what is missing; command to run"}``.
    """

    store_path: str
    spec: dict
    meta: dict
    counts: dict
    designs: list
    results: list
    runs: list
    fingerprint: str
    versions: list
    bundle: object
    fronts: list
    front: dict | None
    front_points: list
    queue: list | None
    verifications: list
    refine_rounds: list
    notes: dict = field(default_factory=dict)


def _verification_records(store):
    """``(queue, verifications, refine_rounds)``, or ``(None, [], [])`` for a store without them.

    A store class without the reading methods, or a file without their tables
    (SQLite's "no such table"), means "no verification records yet"; any other
    database error propagates.
    """
    if not all(callable(getattr(store, m, None)) for m in VERIFICATION_METHODS):
        return None, [], []
    try:
        return list(store.queue_entries()), list(store.verifications()), list(store.refine_rounds())
    except sqlite3.OperationalError as exc:
        if "no such table" in str(exc):
            return None, [], []
        raise


def read_campaign(store):
    """Read everything a report shows from an open store (never writes).

    Parameters
    ----------
    store : surrogate.campaign.Store
        Opened read-only by the caller.

    Returns
    -------
    CampaignRecord
    """
    from ..models import ModelBundleError, list_versions, load_bundle

    path = str(store.path)
    notes = {}
    versions = list_versions(store)
    bundle = None
    if not versions:
        notes["models"] = (f"no trained surrogate models beside the store; run 'surrogate train {path}' "
                           "to fit them")
    else:
        try:
            bundle = load_bundle(store, allow_stale=True)
        except ModelBundleError as exc:
            notes["models"] = f"the newest model version could not be used: {exc}"
    fronts = list(store.fronts())
    front = fronts[-1] if fronts else None
    points = list(store.front_points(front["front_id"])) if front else []
    if front is None:
        notes["front"] = (f"no search front in the store; run 'surrogate search {path}' "
                          "(after 'surrogate train' if there are no models)")
    queue, verifications, rounds = _verification_records(store)
    if queue is None:
        notes["verification"] = ("this store has no verification records (it predates them); "
                                 f"queue candidates with 'surrogate queue {path} --front-top K' and simulate them "
                                 f"with 'surrogate verify {path}'")
    elif not verifications:
        notes["verification"] = ("no verified designs yet; queue candidates with "
                                 f"'surrogate queue {path} --front-top K' and simulate them with "
                                 f"'surrogate verify {path}'")
    return CampaignRecord(
        store_path=path,
        spec=store.spec,
        meta={"code_version": store.meta("code_version"), "created_utc": store.meta("created_utc")},
        counts=store.counts(),
        designs=list(store.designs()),
        results=list(store.results()),
        runs=list(store.runs()),
        fingerprint=store.fingerprint(),
        versions=versions,
        bundle=bundle,
        fronts=fronts,
        front=front,
        front_points=points,
        queue=queue,
        verifications=verifications,
        refine_rounds=rounds,
        notes=notes,
    )
