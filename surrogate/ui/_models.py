"""The Models page: model versions, cross-validation metrics, parity and calibration plots, retrain."""

from __future__ import annotations

import json

import pandas as pd
import streamlit as st

from ..errors import SurrogateError
from ._common import fmt, need_designs, note_being_written, page_store
from ._data import load_model, open_store
from ._jobs import get_job, start_job

__all__ = ["models_page"]

_CV_COLUMNS = (("r2", "R² [-]"), ("rmse", "RMSE"), ("mae", "MAE"), ("coverage_68", "coverage 68 % [-]"),
               ("coverage_95", "coverage 95 % [-]"), ("coverage_95_recalibrated", "coverage 95 % recalibrated [-]"),
               ("msll", "MSLL [-]"))


def _versions_table(rows):
    out = []
    for r in rows:
        if "error" in r:
            out.append({"version": r["version"], "created_utc": "-", "designs": None, "current": "unreadable"})
            continue
        row = {"version": r["version"], "created_utc": r["created_utc"], "designs": r["n_designs"],
               "current": "yes" if r["current"] else "no (older data)", "training_time_s": r["training_time_s"]}
        for t, m in r["targets"].items():
            row[f"{t} R² [-]"] = m["r2"]
        out.append(row)
    return pd.DataFrame(out)


def _retrain_work(path, folds, restarts):
    def work(job):
        from ..models import train_store

        job.progress = {"phase": "fitting the Gaussian processes and cross-validating"}
        card = train_store(path, cv_folds=folds, n_restarts=restarts)
        job.message = f"Trained model v{card['version']:04d} on {card['training']['n_designs']} designs " \
                      f"in {card['training_time_s']:.1f} s."
        return card["version"]

    return work


@st.fragment(run_every=1.0)
def _retrain_status(path, expected_s):
    job = get_job("retrain", path)
    if job is None:
        return
    if job.running:
        frac = min(job.elapsed_s / expected_s, 0.99) if expected_s else 0.0
        st.progress(frac, text=f"Retraining in the background: {job.progress.get('phase', 'starting')}, "
                               f"{job.elapsed_s:.0f} s so far"
                               + (f" (the last training took {expected_s:.0f} s)" if expected_s else ""))
        return
    if job.state == "failed":
        st.error(f"Retraining failed: {job.message}")
    else:
        st.success(job.message)
    if st.session_state.get("retrain_seen") != id(job):
        st.session_state["retrain_seen"] = id(job)
        if job.state == "finished":
            st.session_state["model_version"] = job.result  # show the new version
        st.rerun(scope="app")


def models_page():
    """Render the Models page (a page function for ``st.navigation``)."""
    from ..models import bundles_folder, list_versions

    st.title("Models")
    view = page_store()
    if view is None or not need_designs(view):
        return
    note_being_written(view)
    with open_store(view.path) as store:
        versions = list_versions(store)
    last = next((r for r in reversed(versions) if "error" not in r), None)
    with st.expander("Training settings"):
        folds = st.number_input("Cross-validation folds", min_value=2, max_value=20, value=5, step=1, key="train_folds")
        restarts = st.number_input("Optimizer restarts per fit", min_value=0, max_value=20, value=4, step=1,
                                   key="train_restarts")
    job = get_job("retrain", view.path)
    busy = job is not None and job.running
    if view.n_finished == 0:
        st.info("No finished design yet, so nothing to train on. Run `surrogate generate CAMPAIGN.toml` first.")
    elif st.button("Retrain", key="retrain", disabled=busy, type="primary",
                   help="Fit a new model version on the store's present designs, in the background."):
        start_job("retrain", view.path, _retrain_work(view.path, int(folds), int(restarts)))
    _retrain_status(view.path, last["training_time_s"] if last else 0.0)
    if not versions:
        st.info(f"No trained surrogates yet. Press Retrain or run `surrogate train {view.path}`.")
        return
    st.subheader("Model versions")
    st.dataframe(_versions_table(versions), hide_index=True, key="versions_table")
    readable = [r["version"] for r in versions if "error" not in r]
    if not readable:
        st.error("No model card can be read; train a new version.")
        return
    version = st.selectbox("Version", readable[::-1], format_func=lambda v: f"v{v:04d}", key="model_version")
    folder = bundles_folder(view.path) / f"v{version:04d}"
    card = json.loads((folder / "card.json").read_text())
    try:
        bundle = load_model(view.path, version, view.fingerprint)
        if bundle.stale:
            st.warning(f"Model v{version:04d} predates the store's newest results; retrain to use them.")
    except SurrogateError as exc:  # a refused bundle is reported, the page stays up
        st.error(f"Model v{version:04d} cannot be used: {exc}")
    st.subheader(f"Cross-validated accuracy of v{version:04d}")
    rows = []
    for t, info in card["targets"].items():
        cv = info.get("cv") or {}
        rows.append({"target": t, "transform": info["transform"], "designs": info["n_designs"],
                     **{label: fmt(cv.get(k)) for k, label in _CV_COLUMNS}})
    st.dataframe(pd.DataFrame(rows), hide_index=True, key="cv_table")
    st.caption("RMSE and MAE in the target's units; R² in the modelled space (log for log targets); MSLL is the mean "
               "standardized log loss (lower is better).")
    plots = [(folder / n, label) for n, label in (("parity.png", "parity"), ("calibration.png", "calibration"))]
    present = [(p, label) for p, label in plots if p.is_file()]
    if present:
        cols = st.columns(len(present))
        for c, (p, label) in zip(cols, present):
            c.image(str(p), caption=f"{label} (cross-validated)")
    else:
        st.caption("This version was trained without cross-validation plots.")
