"""``surrogate search``: multi-objective search of a store's surrogates, front with trust flags."""

from __future__ import annotations

import argparse
import json
import math
import sys
import warnings

from ._validation import check_int, check_real

__all__ = ["add_search_commands", "run_search"]

_SEARCH = """Search the trained surrogates of a campaign store for the trade-off front.

An optuna multi-objective study over the campaign's varied parameters, evaluated on
the surrogate predictions in batches. Default objectives: maximize
enhancement_at_laser, minimize heat_per_enhancement_nm2, minimize spot_area_nm2
(--objectives NAME[:max|min] ...). Constraints (feasible when <= 0): the predicted
resonance within --window-nm of the campaign's laser, and the shape family's
fabrication rules. --cautious K optimises mean -+ K sigma of each modelled target
(the pessimistic side) instead of the mean.

The study lives in a file beside the store (<store>.search.journal, optuna's
journal storage, or <store>.search.sqlite3 with --study-format sqlite); running the
same search again resumes it with --trials more trials. The feasible, non-dominated
designs are written to the store as a new front (append-only) with every target's
median and interval, the hypervolume and its reference point (the worst training
value of each objective, in model space: log for log targets).

Each front design carries trust flags with reasons: uncertain (a wide predictive
interval, per target), extrapolated (outside the sampled bounds or far from every
training design), near-edge (on a bound of the searched space) and sensitive (under
a length tolerance of --length-sigma-nm on every length, by Monte Carlo on the
surrogate, the resonance leaves the window too often). A flagged design needs a
full simulation before it is trusted."""


def add_search_commands(sub, units):
    """Register ``search`` on an argparse subparsers object."""
    s = sub.add_parser("search", help="multi-objective search of the surrogates; the front with trust flags",
                       description=_SEARCH, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    s.add_argument("--objectives", nargs="+", metavar="NAME[:max|min]",
                   help="objectives (default: enhancement_at_laser:max heat_per_enhancement_nm2:min spot_area_nm2:min)")
    s.add_argument("--trials", type=int, default=10_000, metavar="N", help="new trials of this run (default 10000)")
    s.add_argument("--seed", type=int, default=None, metavar="S", help="random seed (default: the campaign's seed)")
    s.add_argument("--sampler", choices=("nsga2", "tpe", "gp"), default="nsga2",
                   help="NSGA-II (default), TPE or Gaussian-process sampler (tpe and gp are far slower per trial)")
    s.add_argument("--window-nm", type=float, default=15.0, metavar="W",
                   help="half-width of the resonance window around the laser [nm] (default 15)")
    s.add_argument("--no-window", action="store_true", help="search without the resonance window")
    s.add_argument("--cautious", type=float, default=0.0, metavar="K",
                   help="optimise mean -+ K sigma (pessimistic side) instead of the mean (default 0)")
    s.add_argument("--version", type=int, default=None, metavar="N", help="model version (default: the latest)")
    s.add_argument("--strict", action="store_true", help="refuse a model older than the store's newest results")
    s.add_argument("--length-sigma-nm", type=float, default=2.0, metavar="S",
                   help="standard deviation of every length for the robustness Monte Carlo [nm] (default 2)")
    s.add_argument("--mc-samples", type=int, default=512, metavar="N", help="Monte Carlo samples per design (default 512)")
    s.add_argument("--study-format", choices=("journal", "sqlite"), default="journal",
                   help="study file format (default journal; sqlite adds about 7 ms per trial)")
    s.add_argument("--show", type=int, default=20, metavar="N", help="front rows to print (default 20; --json has all)")
    s.add_argument("--json", action="store_true", help="machine-readable output with every front point")
    s.set_defaults(run=run_search)


def _g(v, spec=".4g"):
    return "-" if v is None or (isinstance(v, float) and not math.isfinite(v)) else format(v, spec)


def _progress(ev):
    sys.stderr.write(f"\rsearch: {ev['finished']}/{ev['total']} trials, {ev['elapsed_s']:.0f} s   ")
    sys.stderr.flush()


def run_search(args):
    from numbers import Integral

    from . import __version__
    from .campaign import Store
    from .search import StaleModelWarning, search_store

    n_trials = check_int("--trials", args.trials, low=1, high=10_000_000)
    check_int("--show", args.show, low=0, high=1_000_000)
    check_int("--mc-samples", args.mc_samples, low=2, high=1_000_000)
    cautious = check_real("--cautious", args.cautious, low=0.0, high=10.0)
    window = None if args.no_window else check_real("--window-nm", args.window_nm, low=0.0, high=1000.0, low_open=True)
    sigma = check_real("--length-sigma-nm", args.length_sigma_nm, low=0.0, high=1000.0)
    if args.version is not None:
        check_int("--version", args.version, low=1)
    seed = args.seed
    if seed is None:
        with Store.open(args.store, readonly=True) as store:
            spec_seed = store.spec.get("seed")
        seed = int(spec_seed) if isinstance(spec_seed, Integral) else None
    objectives = None
    if args.objectives:
        objectives = [p.strip() for v in args.objectives for p in v.split(",") if p.strip()]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", StaleModelWarning)
        # progress on a terminal only: a log or a pipe gets the results and errors alone
        shown = []  # the progress line is open on stderr once a batch is reported

        def progress(ev):
            shown.append(True)
            _progress(ev)

        try:
            out = search_store(args.store, objectives=objectives, n_trials=n_trials, sampler=args.sampler, seed=seed,
                               window_nm=window, cautious_k=cautious, version=args.version, strict=args.strict,
                               length_sigma_nm=sigma, n_mc_samples=args.mc_samples, study_format=args.study_format,
                               code_version=__version__,
                               progress=progress if sys.stderr.isatty() and not args.json else None)
        finally:
            if shown:  # end the progress line: what follows (an error, the front) gets lines of its own
                sys.stderr.write("\n")
    for w in caught:
        if issubclass(w.category, StaleModelWarning):
            sys.stderr.write(f"warning: {w.message}\n")
    if args.json:
        json.dump({"store": str(args.store), **out.to_dict()}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    o = sys.stdout
    n_flagged = sum(1 for f in out.flags if f)
    o.write(f"front #{out.front_id}: {len(out.front)} designs ({n_flagged} flagged), {out.n_feasible} feasible of "
            f"{out.n_trials} trials ({out.n_new} new, {out.elapsed_s:.1f} s; surrogate {out.evaluate_s:.1f} s), "
            f"model v{out.model_version:04d}{' (stale)' if out.stale else ''}\n")
    o.write(f"hypervolume {out.hypervolume:.6g} with reference ({', '.join(f'{v:.4g}' for v in out.reference)}) "
            f"in model space, minimisation form ({', '.join(x.label() for x in out.objectives)})\n")
    o.write(f"study {out.study_name!r} in {out.study_file}\n")
    params = [c for c in out.settings["space"]]
    targets = [x.target for x in out.objectives]
    if "resonance_nm" not in targets and "resonance_nm_median" in out.front.columns:
        targets.append("resonance_nm")
    cov = round(out.settings["trust"]["coverage"] * 100, 3)
    head = [f"{'#':>4}"] + [f"{p:>16}" for p in params] + [f"{t + ' median [' + format(cov, 'g') + ' %]':>44}" for t in targets]
    head += [f"{'enh p05..p95':>20}", f"{'shift p05..p95 nm':>20}", "  trust_flags"]
    o.write(" ".join(head) + "\n")
    shown = out.front.head(args.show)
    for i, row in shown.iterrows():
        cells = [f"{i:>4}"] + [f"{row[p]:>16.4g}" for p in params]
        for t in targets:
            txt = f"{_g(row[t + '_median'])} [{_g(row[t + '_lower'])}, {_g(row[t + '_upper'])}]"
            cells.append(f"{txt:>44}")
        cells.append(f"{_g(row['enhancement_p05']) + '..' + _g(row['enhancement_p95']):>20}")
        cells.append(f"{_g(row['resonance_shift_p05_nm'], '.3g') + '..' + _g(row['resonance_shift_p95_nm'], '.3g'):>20}")
        cells.append("  " + (row["trust_flags"] or "-"))
        o.write(" ".join(cells) + "\n")
    if len(out.front) > len(shown):
        o.write(f"... {len(out.front) - len(shown)} more designs (all in the store's front #{out.front_id} and in --json)\n")
    reasons = [(i, f) for i in range(len(shown)) for f in out.flags[i]]
    if reasons:
        o.write("flag reasons:\n")
        for i, f in reasons:
            o.write(f"  #{i} {f['flag']}: {f['reason']}\n")
    return 0
