"""``surrogate queue | verify | refine | export-candidates``: the verification loop on the command line."""

from __future__ import annotations

import argparse
import json
import math
import sys

from ._validation import check_int, check_real

__all__ = ["add_verify_commands"]

_QUEUE = """Queue designs for verification by the solver.

--front-top K queues the first K designs of the newest front (best first objective
first), --flagged every front design that carries a trust flag, --design ID a
design already in the store, --point I point I of the front. Each entry keeps the
newest model's prediction (median, 95 % interval, model-space mean and sigma) to be
judged against. A design is queued once, ever: asking again reports it as skipped;
a failed entry is queued again. Without a selection, lists the queue."""

_VERIFY = """Re-simulate every queued design with the campaign's own solver settings.

Each result is stored as training data (source verification; the models become
stale: retrain with 'surrogate train'), and predicted vs simulated is recorded per
target with the error in units of the predicted sigma (model space: log for log
targets) and whether the value fell inside the 95 % interval. --spacing-nm D also
solves each design on a finer lattice (D below the campaign spacing) and records the
change and a linear d -> 0 estimate of every figure: the discretization error of the
campaign. Ctrl-C or a crash returns unfinished entries to the queue."""

_REFINE = """Run R rounds of search -> queue -> verify -> retrain.

Each round searches the newest model (--trials trials), queues --batch new front
designs (half the best by the first objective, rounded up, the rest the most
uncertain: widest relative interval), verifies them and retrains. Per round it
prints and records: the hypervolume of the simulated front (verified designs at
their simulated values, feasible when the simulated resonance is in the window; the
round-1 reference point), and the surrogate's error on the new designs as predicted
before simulation (RMSE in model space, mean |z| in sigma units, 95 % coverage)."""

_EXPORT = """Write the top K designs of the newest front as STL and JSON.

Per design: <design_id>.stl (binary STL, the closed surface of the shape voxelised at
--mesh-nm, coordinates in nm, long axis x, illumination along -z with the field
along x) and <design_id>.json (parameters, material, laser, predictions with
intervals, trust flags, robustness, the verification if there is one); plus an index
candidates.csv. Predictions are models: verify before fabrication."""


def add_verify_commands(sub, units):
    """Register ``queue``, ``verify``, ``refine`` and ``export-candidates``."""
    fmt = argparse.RawDescriptionHelpFormatter
    q = sub.add_parser("queue", help="queue front designs for verification; list the queue", description=_QUEUE,
                       epilog=units, formatter_class=fmt)
    q.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    q.add_argument("--front-top", type=int, metavar="K", help="the first K designs of the newest front")
    q.add_argument("--flagged", action="store_true", help="every flagged design of the newest front")
    q.add_argument("--design", action="append", default=[], metavar="ID", help="a design id of the store (repeatable)")
    q.add_argument("--point", action="append", type=int, default=[], metavar="I",
                   help="point index of the newest front (repeatable)")
    q.add_argument("--front", type=int, default=None, metavar="N", help="take points from front N (default: newest)")
    q.add_argument("--json", action="store_true", help="machine-readable output")
    q.set_defaults(run=run_queue)

    v = sub.add_parser("verify", help="re-simulate queued designs; predicted vs simulated", description=_VERIFY,
                       epilog=units, formatter_class=fmt)
    v.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    v.add_argument("--spacing-nm", type=float, default=None, metavar="D",
                   help="also solve on this finer lattice spacing [nm] to estimate the discretization error")
    _add_runner_options(v)
    v.add_argument("--json", action="store_true", help="machine-readable output")
    v.set_defaults(run=run_verify)

    r = sub.add_parser("refine", help="search -> queue -> verify -> retrain, for R rounds", description=_REFINE,
                       epilog=units, formatter_class=fmt)
    r.add_argument("store", metavar="STORE", help="the campaign store (.sqlite), with a trained model")
    r.add_argument("--rounds", type=int, required=True, metavar="R", help="rounds to run (1..100)")
    r.add_argument("--batch", type=int, required=True, metavar="K", help="designs verified per round (1..1000)")
    r.add_argument("--trials", type=int, default=2000, metavar="N", help="search trials per round (default 2000)")
    r.add_argument("--seed", type=int, default=None, metavar="S", help="round r searches with seed S + r "
                   "(default: the campaign's seed)")
    r.add_argument("--window-nm", type=float, default=15.0, metavar="W",
                   help="half-width of the resonance window around the laser [nm] (default 15)")
    r.add_argument("--spacing-nm", type=float, default=None, metavar="D", help="finer verification spacing [nm]")
    _add_runner_options(r)
    r.add_argument("--json", action="store_true", help="machine-readable output")
    r.set_defaults(run=run_refine)

    e = sub.add_parser("export-candidates", help="front designs as STL geometry and JSON data", description=_EXPORT,
                       epilog=units, formatter_class=fmt)
    e.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    e.add_argument("--top", type=int, default=10, metavar="K", help="designs to export (default 10)")
    e.add_argument("--out", required=True, metavar="DIR", help="output folder (created if missing)")
    e.add_argument("--front", type=int, default=None, metavar="N", help="front to export (default: newest)")
    e.add_argument("--mesh-nm", type=float, default=1.0, metavar="D", help="voxel size of the mesh [nm] (default 1)")
    e.set_defaults(run=run_export)


def _add_runner_options(p):
    g = p.add_mutually_exclusive_group()
    g.add_argument("--workers", type=int, default=None, metavar="N", help="local worker processes (default: all cores)")
    g.add_argument("--scheduler", default=None, metavar="ADDR", help="Dask scheduler address tcp://HOST:PORT")
    g.add_argument("--dask-workers", type=int, default=None, metavar="N", help="start a local Dask cluster of N workers")


def _runner(args):
    if args.workers is not None:
        check_int("--workers", args.workers, low=1, high=1024)
    if args.dask_workers is not None:
        check_int("--dask-workers", args.dask_workers, low=1, high=1024)
    return {"workers": args.workers, "scheduler": args.scheduler, "dask_workers": args.dask_workers}


def _g(v, spec=".4g"):
    return "-" if v is None or (isinstance(v, float) and not math.isfinite(v)) else format(v, spec)


_OPEN_LINE = {"open": False}  # a progress line is on screen without its newline


def _progress(ev):
    stage = ev.get("stage", "")
    if "finished" in ev:
        eta = f", about {ev['eta_s']:.0f} s left" if ev.get("eta_s") else ""
        where = f"round {ev['round']}/{ev['rounds']}, " if "round" in ev else ""
        sys.stderr.write(f"\r{where}{stage}: {ev['finished']}/{ev['total']} designs{eta}   ")
        _OPEN_LINE["open"] = ev["finished"] != ev["total"]
        if not _OPEN_LINE["open"]:
            sys.stderr.write("\n")
    else:
        sys.stderr.write(f"round {ev.get('round')}/{ev.get('rounds')}: {stage}\n")
    sys.stderr.flush()


def _with_progress(fn, **kwargs):
    """Run ``fn``; if it fails, end an open progress line so that the error gets a line of its own."""
    _OPEN_LINE["open"] = False
    try:
        return fn(**kwargs)
    except BaseException:
        if _OPEN_LINE["open"]:
            sys.stderr.write("\n")
            sys.stderr.flush()
        raise
    finally:
        _OPEN_LINE["open"] = False


def run_queue(args):
    from .campaign import Store
    from .verify import enqueue

    with Store.open(args.store) as store:
        if args.front_top is None and not args.flagged and not args.design and not args.point:
            entries = store.queue_entries()
            if args.json:
                json.dump([{**e, "state": e["state"].value} for e in entries], sys.stdout, indent=2)
                sys.stdout.write("\n")
                return 0
            if not entries:
                print(f"the queue of {args.store} is empty; add designs with --front-top K, --flagged or --design ID")
                return 0
            for e in entries:
                print(f"#{e['entry_id']:<4} {e['design_id']}  {e['state'].value:<8} {e['reason']:<16} {e['message']}")
            return 0
        rep = enqueue(store, front_top=args.front_top, flagged=args.flagged, design_ids=args.design,
                      points=args.point, front_id=args.front)
    if args.json:
        json.dump({"added": rep.added, "skipped": [list(s) for s in rep.skipped], "model_version": rep.model_version},
                  sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    model = f"predictions of model v{rep.model_version:04d}" if rep.model_version else "no model: no predictions"
    print(f"queued {len(rep.added)} designs ({model}); {len(rep.skipped)} skipped")
    for did, why in rep.skipped:
        print(f"  skipped {did}: {why}")
    if rep.added:
        print(f"next: surrogate verify {args.store}")
    return 0


def run_verify(args):
    from . import __version__
    from .verify import verify_store

    if args.spacing_nm is not None:
        check_real("--spacing-nm", args.spacing_nm, low=0.0, low_open=True)
    rep = _with_progress(verify_store, store_path=args.store, spacing_nm=args.spacing_nm,
                         progress=None if args.json else _progress, code_version=__version__, **_runner(args))
    if args.json:
        json.dump({"verified": rep.verified, "failed": [list(f) for f in rep.failed], "requeued": rep.requeued,
                   "comparisons": {str(k): v for k, v in rep.comparisons.items()}, "spacing_nm": rep.spacing_nm,
                   "fine_spacing_nm": rep.fine_spacing_nm, "elapsed_s": rep.elapsed_s,
                   "interrupted": rep.interrupted}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 130 if rep.interrupted else 0
    if not (rep.verified or rep.failed or rep.requeued):
        print(f"nothing queued in {args.store}; queue designs with 'surrogate queue {args.store} --front-top K'")
        return 0
    print(f"verified {len(rep.verified)}, failed {len(rep.failed)}, returned to the queue {len(rep.requeued)} "
          f"({rep.elapsed_s:.1f} s, spacing {rep.spacing_nm:g} nm"
          + (f", fine {rep.fine_spacing_nm:g} nm" if rep.fine_spacing_nm else "") + ")")
    for eid in rep.verified:
        for t, row in rep.comparisons[eid].items():
            print(f"  #{eid:<4} {t:<26} predicted {_g(row['median'])} [{_g(row['lower'])}, {_g(row['upper'])}]  "
                  f"simulated {_g(row['simulated'])}  z {_g(row['z_sigma'], '+.2f')}")
    for eid, why in rep.failed:
        print(f"  #{eid} failed: {why}")
    if rep.verified:
        print(f"the models are now stale; retrain with 'surrogate train {args.store}'")
    return 130 if rep.interrupted else 0


def run_refine(args):
    from . import __version__
    from .verify import refine_store

    window = check_real("--window-nm", args.window_nm, low=0.0, high=1000.0, low_open=True)
    rounds = _with_progress(refine_store, store_path=args.store, rounds=args.rounds, batch=args.batch,
                            n_trials=args.trials, seed=args.seed, window_nm=window, spacing_nm=args.spacing_nm,
                            progress=None if args.json else _progress, code_version=__version__, **_runner(args))
    if args.json:
        json.dump([r.__dict__ for r in rounds], sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    for r in rounds:
        print(f"round {r.round}: front #{r.front_id} (model v{r.model_version:04d}), verified {r.verified} of "
              f"{r.queued} queued, hypervolume of the simulated front {_g(r.hypervolume_simulated)}, "
              f"retrained as v{r.new_model_version:04d}")
        for t, m in r.metrics.items():
            print(f"    {t:<26} n {m['n']:>3}  rmse (model space) {m['rmse_model_space']:.3g}  "
                  f"mean |z| {m['mean_abs_z']:.2f}  coverage {m['coverage']:.2f}")
    return 0


def run_export(args):
    from .verify import export_candidates

    rows = export_candidates(args.store, args.out, top=args.top, front_id=args.front, mesh_spacing_nm=args.mesh_nm)
    print(f"wrote {len(rows)} candidates to {args.out} (STL in nm, JSON, candidates.csv)")
    for r in rows:
        print(f"  {r['rank']:>3} {r['design_id']}  {r['n_triangles']} triangles  {r['volume_nm3']:.4g} nm^3  "
              f"{r['trust_flags'] or '-'}")
    return 0
