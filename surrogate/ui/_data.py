"""What the pages read from a store, cached: frames by store fingerprint, models as resources.

Every loader opens the store read-only for the duration of the call, so a campaign
or a verification writing the same file never waits on the app.  Cache keys:

* fronts are append-only, so a front's frame is keyed by (store, front_id);
* training frames by (store, fingerprint, counts): the fingerprint changes exactly
  when finished data change, the counts when designs are added or change state;
* a model by (store, version, fingerprint), held with ``st.cache_resource``.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pandas as pd
import streamlit as st

from ..campaign import Store
from ..errors import SurrogateError

__all__ = [
    "STORE_ENV",
    "store_path",
    "open_store",
    "StoreView",
    "store_view",
    "front_frame",
    "training_frame",
    "load_model",
    "verified_points",
    "study_location",
    "infeasible_designs",
]

#: Environment variable through which ``surrogate app`` hands the store path to the app.
STORE_ENV = "SURROGATE_STORE"


def store_path():
    """The store the app shows: the sidebar's choice, else ``$SURROGATE_STORE``, else None."""
    chosen = st.session_state.get("store_path")
    if chosen:
        return Path(chosen)
    env = os.environ.get(STORE_ENV)
    return Path(env) if env else None


def open_store(path):
    """Open ``path`` read-only (the caller closes it)."""
    return Store.open(path, readonly=True)


class StoreView:
    """A cheap summary of a store for the pages' helpful states.

    Attributes
    ----------
    path : pathlib.Path
    error : str or None
        Why the store cannot be read (one line), else None.
    old_schema : bool
        The store has an older schema (readable after an upgrade).
    counts : dict
        Designs per status.
    fingerprint : str
    fronts : list of dict
        Recorded fronts, oldest first.
    open_runs : int
        Runs without a finish time (a campaign or verification writing the store, or one that died).
    has_queue : bool
        The store has the verification-queue tables (schema 3).
    """

    def __init__(self, path):
        self.path = Path(path)
        self.error = None
        self.old_schema = False
        self.counts = {}
        self.fingerprint = ""
        self.fronts = []
        self.open_runs = 0
        self.has_queue = False
        try:
            with open_store(self.path) as store:
                self.counts = store.counts()
                self.fingerprint = store.fingerprint()
                self.fronts = store.fronts()
                self.open_runs = sum(1 for r in store.runs() if r["finished_utc"] is None)
                self.has_queue = hasattr(store, "queue_entries")
        except SurrogateError as exc:
            self.error = str(exc)
            self.old_schema = "old schema" in self.error

    @property
    def n_designs(self):
        return sum(self.counts.values())

    @property
    def n_finished(self):
        return self.counts.get("done", 0) + self.counts.get("not_converged", 0)

    @property
    def being_written(self):
        """Designs are running or pending while a run is open: a campaign is (or was) writing."""
        return self.open_runs > 0 and (self.counts.get("running", 0) + self.counts.get("pending", 0)) > 0


def store_view(path):
    """A fresh :class:`StoreView` (not cached: it is what tells the caches their keys)."""
    return StoreView(path)


def _relative_width(median, lower, upper):
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.abs(median) > 0, (upper - lower) / np.abs(median), np.nan)


@st.cache_data(show_spinner=False, max_entries=16)
def front_frame(path, front_id):
    """One row per point of front ``front_id``: parameters, medians and intervals, robustness, flags.

    Columns: ``point``; the varied parameters (their units); per target ``<t>_median``,
    ``<t>_lower``, ``<t>_upper`` (physical units) and ``<t>_relative_width`` (interval
    width over the median [-]); the robustness columns; ``trust_flags`` (comma-separated
    names, "" when trusted); ``flag_reasons`` (one reason per line).
    """
    with open_store(path) as store:
        points = store.front_points(front_id)
    columns = {"point": [p["point_index"] for p in points]}
    if points:
        for name in points[0]["params"]:
            columns[name] = [p["params"][name] for p in points]
        for t in points[0]["predictions"]:
            for part in ("median", "lower", "upper"):
                columns[f"{t}_{part}"] = [p["predictions"][t][part] for p in points]
        for k in points[0]["robustness"]:
            columns[k] = [p["robustness"].get(k) for p in points]
    columns["trust_flags"] = [",".join(dict.fromkeys(f["flag"] for f in p["flags"])) for p in points]
    columns["flag_reasons"] = ["\n".join(f"{f['flag']}: {f['reason']}" for f in p["flags"]) for p in points]
    frame = pd.DataFrame(columns)
    for col in [c for c in frame.columns if c.endswith("_median")]:
        t = col.removesuffix("_median")
        frame[f"{t}_relative_width"] = _relative_width(frame[col].to_numpy(float), frame[f"{t}_lower"].to_numpy(float),
                                                       frame[f"{t}_upper"].to_numpy(float))
    robust = [c for c in (points[0]["robustness"] if points else ())]
    frame[robust] = frame[robust].astype(float)  # None (not computed) becomes NaN
    return frame


@st.cache_data(show_spinner=False, max_entries=16)
def training_frame(path, fingerprint, counts_key):
    """Every design of the store: ``design_id``, ``status``, ``source``, ``message``, parameters, figures.

    ``fingerprint`` and ``counts_key`` only key the cache (see the module docstring).
    """
    with open_store(path) as store:
        designs = store.designs()
        figures = {r["design_id"]: r["figures"] for r in store.results()}
    rows = []
    for d in designs:
        row = {"design_id": d["design_id"], "status": d["status"].value, "source": d["source"], "message": d["message"]}
        row.update(d["params"])
        for k, v in figures.get(d["design_id"], {}).items():
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                row[k] = v
        rows.append(row)
    return pd.DataFrame(rows)


@st.cache_resource(show_spinner=False, max_entries=8)
def load_model(path, version, fingerprint):
    """The verified model bundle ``version`` of the store (stale bundles accepted; see ``.stale``)."""
    from ..models import load_bundle

    with open_store(path) as store:
        return load_bundle(store, version, allow_stale=True)


def verified_points(path, front_id):
    """Finished verifications of points of ``front_id``: ``point`` and ``<t>_simulated`` per target.

    Not cached: the queue changes while the app runs and the table is small.
    """
    with open_store(path) as store:
        if not hasattr(store, "verifications"):
            return pd.DataFrame(columns=["point"])
        entries = {e["entry_id"]: e for e in store.queue_entries()}
        rows = []
        for v in store.verifications():
            e = entries.get(v["entry_id"])
            if e is None or e.get("front_id") != front_id or e.get("point_index") is None:
                continue
            row = {"point": int(e["point_index"]), "design_id": v["design_id"]}
            row.update({f"{t}_simulated": val for t, val in (v.get("simulated") or {}).items()})
            rows.append(row)
    return pd.DataFrame(rows, columns=None if rows else ["point"])


def study_location(path, front):
    """``(study file, study name)`` of a front's search (the file beside the store), or None when not kept."""
    from ..search import study_file

    study = front.get("study") or {}
    if not study.get("name") or study.get("format") not in ("journal", "sqlite"):
        return None
    return study_file(path, study["format"]), study["name"]


@st.cache_data(show_spinner=False, max_entries=8)
def infeasible_designs(path, study_path, study_name, stamp, version, fingerprint):
    """The infeasible trials of a search study, with every target's predicted median (model ``version``).

    ``stamp`` (the study file's size and modification time) and ``fingerprint`` only key the
    cache. Columns: the varied parameters and ``<t>_median`` per target (physical units).
    """
    import optuna
    from optuna.trial import TrialState

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    if str(study_path).endswith(".journal"):
        from optuna.storages.journal import JournalFileBackend

        storage = optuna.storages.JournalStorage(JournalFileBackend(str(study_path)))
    else:
        storage = f"sqlite:///{study_path}"
    study = optuna.load_study(study_name=study_name, storage=storage)
    trials = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    model = load_model(path, version, fingerprint).model
    names = list(model.feature_names_in_)
    bad = [t for t in trials if any(v > 0.0 for v in (t.constraints or {}).values())]
    X = pd.DataFrame([[float(t.params[n]) for n in names] for t in bad], columns=names)
    if X.empty:
        return X
    summary = model.predict_summary(X, coverage=0.95)
    return pd.concat([X, summary[[f"{t}_median" for t in model.targets_]]], axis=1)
