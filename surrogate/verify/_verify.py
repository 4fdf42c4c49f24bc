"""Verification: re-simulate queued designs, judge the predictions, feed the results back.

For each queued entry the design is solved with the campaign's own settings (same
lattice spacing, material, sweep), so the result is ordinary training data: it is
stored as a design of source ``verification`` and the model versions trained before
it become stale (the dataset fingerprint changes).  Optionally each verified design
is solved again on a finer lattice; that solve is not training data, it estimates
the discretization error of the campaign's spacing.

Error of a prediction, in units of its sigma (model space, log for log targets)::

    z = (T(simulated) - mu) / sigma,        T = log or identity

``inside`` says whether the simulated value lies in the stored central interval.
Discretization estimate from the two spacings d1 > d2, assuming an error linear in
d (the leading order of the coupled-dipole discretization error; Yurkin & Hoekstra,
J. Quant. Spectrosc. Radiat. Transfer 106, 558 (2007))::

    f(0) ~ f(d2) + (f(d2) - f(d1)) d2 / (d1 - d2)
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np

from .._validation import check_real
from ..errors import InvalidParameterError
from ..models._dataset import _RESOLVED_FLAG

__all__ = ["VerifyReport", "verify_store", "compare", "discretization"]



@dataclass(frozen=True)
class VerifyReport:
    """What one :func:`verify_store` call did.

    Attributes
    ----------
    verified : list of int
        Entries now ``done`` (predicted vs simulated recorded).
    failed : list of (int, str)
        Entries now ``failed`` with the reason (solver error, not converged).
    requeued : list of int
        Entries returned to ``queued`` (stopped before they ran).
    comparisons : dict
        Entry id -> the recorded comparison.
    spacing_nm, fine_spacing_nm : float, float or None
    elapsed_s : float
    interrupted : bool
    """

    verified: list
    failed: list
    requeued: list
    comparisons: dict
    spacing_nm: float
    fine_spacing_nm: float | None
    elapsed_s: float
    interrupted: bool


def compare(predicted, figures):
    """Predicted vs simulated per target.

    Each row: ``median``, ``lower``, ``upper`` (physical units), ``mu``, ``sigma``,
    ``transform`` (model space), ``simulated``, ``z_sigma``, ``inside``, ``resolved``
    (False when the simulated value is only a bound of the sweep: no z then).

    Parameters
    ----------
    predicted : dict or None
        ``{target: {median, lower, upper, mu, sigma, transform}}`` (see
        :func:`surrogate.verify.prediction_record`).
    figures : dict
        The simulated figures of merit.
    """
    out = {}
    for t, p in (predicted or {}).items():
        sim = figures.get(t)
        # the figure that says whether the value is a measurement or only a bound of the sweep,
        # the same rule the training sets use
        flag = _RESOLVED_FLAG.get(t)
        resolved = bool(figures.get(flag, True)) if flag else True
        row = {"median": p["median"], "lower": p["lower"], "upper": p["upper"], "mu": p["mu"], "sigma": p["sigma"],
               "transform": p["transform"], "simulated": None, "z_sigma": None, "inside": None, "resolved": resolved}
        if isinstance(sim, (int, float)) and math.isfinite(sim) and not isinstance(sim, bool):
            row["simulated"] = float(sim)
            if resolved and (p["transform"] == "identity" or sim > 0):
                value = math.log(sim) if p["transform"] == "log" else float(sim)
                row["z_sigma"] = (value - p["mu"]) / p["sigma"] if p["sigma"] > 0 else None
                row["inside"] = bool(p["lower"] <= sim <= p["upper"])
        out[t] = row
    return out


def discretization(coarse, fine, d_coarse_nm, d_fine_nm):
    """Per numeric figure: values at both spacings, relative change and the linear d -> 0 estimate."""
    out = {}
    for k, v1 in coarse.items():
        v2 = fine.get(k)
        if isinstance(v1, bool) or not isinstance(v1, (int, float)) or not isinstance(v2, (int, float)):
            continue
        if not (math.isfinite(v1) and math.isfinite(v2)):
            continue
        extrapolated = v2 + (v2 - v1) * d_fine_nm / (d_coarse_nm - d_fine_nm)
        out[k] = {"campaign": float(v1), "fine": float(v2),
                  "relative_change": (v2 - v1) / abs(v2) if v2 else None, "extrapolated": float(extrapolated)}
    return out


def verify_store(store_path, *, spacing_nm=None, workers=None, scheduler=None, dask_workers=None, task=None,
                 progress=None, should_stop=None, code_version="unknown"):
    """Re-simulate every queued entry of a store and record predicted vs simulated.

    Parameters
    ----------
    store_path : str or pathlib.Path
    spacing_nm : float or None
        Also solve each design on this finer lattice spacing [nm] (smaller than the
        campaign's) to estimate the discretization error; None: only the campaign's.
    workers, scheduler, dask_workers
        As for :func:`surrogate.campaign.run_campaign`.
    task : callable(spec, params) -> dict or None
        The design solve; default the campaign's own
        (:func:`surrogate.campaign._task.evaluate_design`).  Top-level and picklable.
    progress : callable(dict) or None
        Called with ``{"stage", "finished", "total", ...}`` as designs finish.
    should_stop : callable() -> bool or None
        Once True, no new design starts; unfinished entries go back to ``queued``.
    code_version : str

    Returns
    -------
    VerifyReport

    Raises
    ------
    InvalidParameterError
        A spacing that is not finer than the campaign's.
    StoreError
        The store cannot be opened or written.
    """
    from ..campaign import QueueState, Source, Status, Store
    from ..campaign._runner import run_campaign, solve_jobs
    from ..campaign._task import evaluate_design

    task = evaluate_design if task is None else task
    t0 = time.perf_counter()
    with Store.open(store_path) as store:
        spec = store.spec
        d_campaign = float(spec.get("spacing_nm", float("nan")))
        if spacing_nm is not None:
            spacing_nm = check_real("spacing_nm", spacing_nm, low=0.0, low_open=True, unit="nm")
            if not spacing_nm < d_campaign:
                raise InvalidParameterError(f"spacing_nm must be finer than the campaign's {d_campaign:g} nm; "
                                            f"got {spacing_nm:g} nm")
        run_id = store.start_run("verify", code_version)
        # entries left running by a dead verification go back to the queue
        stale = [e["entry_id"] for e in store.queue_entries(QueueState.RUNNING)]
        if stale:
            store.mark_entries(stale, QueueState.QUEUED, "interrupted verification; queued again", run_id=run_id)
        entries = store.queue_entries(QueueState.QUEUED)
        report = dict(verified=[], failed=[], requeued=[], comparisons={})
        interrupted = False
        try:
            if entries:
                store.mark_entries([e["entry_id"] for e in entries], QueueState.RUNNING, run_id=run_id)
                known = {d["design_id"]: d for d in store.designs()}
                new = [(e["design_id"], e["params"]) for e in entries if e["design_id"] not in known]
                if new:
                    store.add_designs(new, source=Source.VERIFICATION)
                ids = [e["design_id"] for e in entries]

                def campaign_progress(ev):
                    if progress is not None:
                        progress({"stage": "campaign spacing", **ev})

                summary = run_campaign(store, spec, task, workers=workers, scheduler=scheduler,
                                       dask_workers=dask_workers, retry_failed=True, command="verify (solve)",
                                       progress=campaign_progress, design_ids=ids, should_stop=should_stop)
                interrupted = summary.interrupted
                status = {d["design_id"]: d for d in store.designs()}
                results = {r["design_id"]: r for r in store.results()}
                fine = {}
                if spacing_nm is not None and not interrupted:
                    fine_spec = dict(spec, spacing_nm=spacing_nm)
                    jobs = [(e["design_id"], e["params"]) for e in entries
                            if status[e["design_id"]]["status"] is Status.DONE]
                    for k, (did, payload, _elapsed, error) in enumerate(
                            solve_jobs(jobs, fine_spec, task, workers=workers, scheduler=scheduler,
                                       dask_workers=dask_workers, should_stop=should_stop)):
                        fine[did] = payload["figures"] if payload is not None else {"error": error}
                        if progress is not None:
                            progress({"stage": f"fine spacing {spacing_nm:g} nm", "finished": k + 1, "total": len(jobs)})
                for e in entries:
                    _settle(store, e, status[e["design_id"]], results.get(e["design_id"]), fine, d_campaign,
                            spacing_nm, run_id, report)
        except KeyboardInterrupt:
            interrupted = True
        finally:
            left = [e["entry_id"] for e in store.queue_entries(QueueState.RUNNING)]
            if left:
                store.mark_entries(left, QueueState.QUEUED, "stopped before it was verified; queued again", run_id=run_id)
                report["requeued"] += left
            store.finish_run(run_id, note=" interrupted" if interrupted else "")
    return VerifyReport(spacing_nm=d_campaign, fine_spacing_nm=spacing_nm, elapsed_s=time.perf_counter() - t0,
                        interrupted=interrupted, **report)


def _settle(store, entry, design, result, fine, d_campaign, d_fine, run_id, report):
    from ..campaign import QueueState, Status

    eid = entry["entry_id"]
    st = design["status"]
    if st is Status.DONE and result is not None:
        figures = result["figures"]
        comparison = compare(entry["predicted"], figures)
        fine_block = None
        if d_fine is not None and entry["design_id"] in fine:
            f = fine[entry["design_id"]]
            if "error" in f:
                fine_block = {"error": f["error"]}
            elif not f.get("converged", False):
                fine_block = {"error": f"the solve at {d_fine:g} nm did not converge; no discretization estimate"}
            else:
                fine_block = {"figures": _plain(f), "discretization": discretization(figures, f, d_campaign, d_fine)}
        store.record_verification(eid, design_id=entry["design_id"], spacing_nm=d_campaign, simulated=_plain(figures),
                                  comparison=comparison, fine_spacing_nm=d_fine if fine_block else None,
                                  fine=fine_block, run_id=run_id)
        report["verified"].append(eid)
        report["comparisons"][eid] = comparison
    elif st is Status.NOT_CONVERGED:
        why = "the solve did not converge at the campaign spacing; its result is kept out of training"
        store.mark_entries([eid], QueueState.FAILED, why, run_id=run_id)
        report["failed"].append((eid, why))
    elif st is Status.FAILED:
        why = f"the solve failed: {design['message']}"
        store.mark_entries([eid], QueueState.FAILED, why, run_id=run_id)
        report["failed"].append((eid, why))
    # pending: stopped before it ran; the caller returns it to the queue


def _plain(figures):
    out = {}
    for k, v in figures.items():
        if isinstance(v, (np.floating, np.integer)):
            v = v.item()
        if isinstance(v, float) and not math.isfinite(v):
            v = None
        out[k] = v
    return out
