"""``surrogate generate``, ``status`` and ``export``: training-set campaigns."""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__
from .errors import InvalidParameterError, StoreError

_GENERATE = """Create or resume a training-set campaign from a campaign file (TOML).

The first run samples the designs (a space-filling Latin hypercube inside the
bounds; designs that break a fabrication rule are replaced), creates the store
(an SQLite file named after the campaign, beside the campaign file unless
--store says otherwise) and solves them. A rerun resumes: finished designs are
kept, designs left running by a crash return to pending, failed ones are retried
only with --retry-failed. --add N samples N more space-filling designs first.
Ctrl-C stops cleanly; rerun the same command to resume. Lengths in nm,
wavelengths are vacuum wavelengths in nm, cross sections in nm^2."""


def add_campaign_commands(sub, units):
    g = sub.add_parser("generate", help="create, extend or resume a campaign", description=_GENERATE,
                       epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    g.add_argument("campaign", metavar="CAMPAIGN.toml", help="the campaign file")
    g.add_argument("--store", metavar="FILE.sqlite", help="store file (default: <campaign dir>/<name>.sqlite)")
    g.add_argument("--add", type=int, default=0, metavar="N", help="sample N more designs before running")
    g.add_argument("--workers", type=int, default=None, metavar="N", help="local worker processes (default: all cores)")
    g.add_argument("--scheduler", metavar="tcp://HOST:PORT", help="submit to an existing Dask scheduler")
    g.add_argument("--dask-workers", type=int, metavar="N", help="start a Dask LocalCluster on 127.0.0.1 with N workers")
    g.add_argument("--retry-failed", action="store_true", help="also solve designs that failed before")
    g.add_argument("--no-run", action="store_true", help="create or extend the store without solving")
    g.add_argument("--quiet", action="store_true", help="no progress bar")
    g.set_defaults(run=run_generate)

    s = sub.add_parser("status", help="counts by status, time spent and the spec of a store",
                       description="Show a campaign store: designs per status, compute time, runs and the campaign spec. "
                       "Times in seconds, lengths in nm.", epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    s.add_argument("--json", action="store_true", help="machine-readable output")
    s.set_defaults(run=run_status)

    e = sub.add_parser("export", help="write wide and long tables of a store (parquet or csv)",
                       description="Write designs.<ext> (one row per design: status, parameters in nm, figures of merit "
                       "with unit-suffixed columns) and spectra.<ext> (one row per design and wavelength: wavelength_nm, "
                       "c_ext_nm2, c_abs_nm2, c_sca_nm2, enhancement, converged, n_iter, residual).",
                       epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    e.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    e.add_argument("--format", choices=("parquet", "csv"), default="parquet", help="table format (default parquet)")
    e.add_argument("--out", required=True, metavar="DIR", help="output folder (created if missing)")
    e.set_defaults(run=run_export)


def _check_count(name, value, low=1, high=100_000):
    if value is not None and not low <= value <= high:
        raise InvalidParameterError(f"{name} must be in [{low}, {high}]; got {value}")


_OPEN_LINE = {"open": False}  # the progress bar is on screen without its newline


def _bar(event):
    _OPEN_LINE["open"] = True
    width = 30
    done, total = event["finished"], max(event["total"], 1)
    filled = int(width * done / total)
    eta = event["eta_s"]
    sys.stderr.write(
        f"\r[{'#' * filled}{'.' * (width - filled)}] {done}/{event['total']} designs; done {event['done']}, "
        f"not converged {event['not_converged']}, failed {event['failed']}; "
        f"{event['seconds_per_design']:.1f} s/design; ETA {eta / 60:.1f} min   "
    )
    sys.stderr.flush()


def open_or_create(spec, store_path, *, add=0):
    """Open the campaign's store (checking it belongs to ``spec``) or create and sample it."""
    from .campaign import Store
    from .campaign._design import sample_designs
    from .catalog import get_material
    from .shapes import get_family

    family = get_family(spec.family)
    spec_dict = spec.to_dict()
    if store_path.exists():
        store = Store.open(store_path)
        from .campaign import ADDED_SPEC_DEFAULTS

        stored = {**ADDED_SPEC_DEFAULTS, **store.spec}  # keys added since the store was written
        diff = sorted(k for k in set(stored) | set(spec_dict) if stored.get(k) != json.loads(json.dumps(spec_dict)).get(k))
        if diff:
            store.close()
            raise StoreError(
                f"store {store_path} belongs to a different campaign (differs in {', '.join(diff)}); "
                "nothing was written; use another --store or restore the campaign file"
            )
    else:
        designs = sample_designs(family, spec.bounds, spec.fixed, count=spec.designs, seed=spec.seed, batch=0)
        store = Store.create(store_path, spec=spec_dict, code_version=__version__)
        store.set_meta_once("material_json", json.dumps(get_material(spec.material).describe(), sort_keys=True))
        store.set_meta_once("batch_0", str(len(designs)))
        store.add_designs(designs)
    if add:
        batch = 1 + max(int(k.split("_")[1]) for k in _batch_keys(store))
        existing = [d["params"] for d in store.designs()]
        more = sample_designs(family, spec.bounds, spec.fixed, count=add, seed=spec.seed, batch=batch, existing=existing)
        store.add_designs(more)
        store.set_meta_once(f"batch_{batch}", str(len(more)))
    return store


def _batch_keys(store):
    return [r[0] for r in store._db.execute("SELECT key FROM meta WHERE key LIKE 'batch_%'")]


def run_generate(args):
    from .campaign import run_campaign
    from .campaign._spec import load_campaign
    from .campaign._task import evaluate_design

    _check_count("--add", args.add, low=0)
    _check_count("--workers", args.workers, high=1024)
    _check_count("--dask-workers", args.dask_workers, high=1024)
    if args.scheduler and args.dask_workers:
        raise InvalidParameterError("--scheduler and --dask-workers are alternatives; got both")
    if not Path(args.campaign).is_file():
        raise InvalidParameterError(f"campaign file {args.campaign} does not exist; check the path, or start from a "
                                    "copy of datasets/demo.toml (see 'surrogate generate --help')")
    spec = load_campaign(args.campaign)
    store_path = Path(args.store) if args.store else Path(args.campaign).resolve().parent / f"{spec.name}.sqlite"
    store = open_or_create(spec, store_path, add=args.add)
    try:
        counts = store.counts()
        print(f"store {store_path}: {sum(counts.values())} designs "
              + ", ".join(f"{k} {v}" for k, v in counts.items() if v))
        if args.no_run:
            return 0
        _OPEN_LINE["open"] = False
        summary = run_campaign(
            store, spec.to_dict(), evaluate_design, workers=args.workers, scheduler=args.scheduler,
            dask_workers=args.dask_workers, retry_failed=args.retry_failed,
            progress=None if args.quiet else _bar,
        )
    except BaseException:
        if _OPEN_LINE["open"]:  # the error gets a line of its own
            sys.stderr.write("\n")
        raise
    finally:
        _OPEN_LINE["open"] = False
        store.close()
    if not args.quiet:
        sys.stderr.write("\n")
    print(f"run {summary.run_id}: done {summary.done}, not converged {summary.not_converged}, "
          f"failed {summary.failed}, pending {summary.remaining}; {summary.elapsed_s:.0f} s")
    if summary.interrupted:
        print(f"stopped; resume with: surrogate generate {args.campaign}" + (f" --store {args.store}" if args.store else ""))
        return 130
    return 0


def run_status(args):
    from .campaign import Store

    with Store.open(args.store, readonly=True) as store:
        counts = store.counts()
        results = store.results()
        info = {
            "store": str(args.store),
            "counts": counts,
            "compute_s": round(sum(r["elapsed_s"] for r in results), 3),
            "fingerprint": store.fingerprint(),
            "code_version": store.meta("code_version"),
            "spec": store.spec,
            "runs": store.runs(),
        }
    if args.json:
        json.dump(info, sys.stdout, indent=2, default=str)
        sys.stdout.write("\n")
        return 0
    spec = info["spec"]
    print(f"campaign {spec['name']} ({spec['family']}), store {args.store}")
    print("designs: " + ", ".join(f"{k} {v}" for k, v in counts.items()))
    print(f"compute time: {info['compute_s'] / 3600:.2f} h over {len(results)} finished designs; "
          f"{len(info['runs'])} runs; fingerprint {info['fingerprint'][:16]}")
    print("varied: " + ", ".join(f"{k} [{lo:g}, {hi:g}]" for k, (lo, hi) in spec["bounds"].items()))
    print("fixed: " + (", ".join(f"{k} = {v:g}" for k, v in spec["fixed"].items()) or "none"))
    print(f"optics: {spec['material']} in n = {spec['medium_index']:g}, laser {spec['laser_nm']:g} nm, "
          f"hotspot {spec['hotspot_offset_nm']:g} nm beyond the tip")
    print(f"solver: d = {spec['spacing_nm']:g} nm, wavelengths {spec['wavelengths_nm']} nm, "
          f"{spec['polarizability']}, tol {spec['tol']:g}, max_iter {spec['max_iter']}")
    return 0


def run_export(args):
    from .campaign import Store
    from .campaign._tables import long_table, wide_table

    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    with Store.open(args.store, readonly=True) as store:
        wide, long = wide_table(store), long_table(store)
    for name, frame in (("designs", wide), ("spectra", long)):
        path = out / f"{name}.{args.format}"
        tmp = path.with_name(path.name + ".partial")
        if args.format == "parquet":
            frame.to_parquet(tmp, index=False)
        else:
            frame.to_csv(tmp, index=False)
        tmp.replace(path)
        print(f"wrote {path} ({len(frame)} rows)")
    return 0
