"""``surrogate train`` and ``surrogate predict``: Gaussian-process surrogates of a campaign store."""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path

from ._validation import check_int, check_real
from .errors import InvalidParameterError

__all__ = ["add_model_commands", "run_train", "run_predict"]

_TRAIN = """Fit Gaussian-process surrogates on the converged designs of a campaign store and
save them as a new model version beside the store (<store>.models/vNNNN/).

One Gaussian process per figure of merit: inputs scaled to the unit cube from the
campaign bounds, positive wide-ranging figures modelled in log space, an anisotropic
Matern-5/2 kernel plus a white-noise term, normalised targets, several optimizer
restarts, seeded. Each version is assessed by k-fold cross-validation: R^2, RMSE
and MAE (target units), coverage of the 68 % and 95 % intervals and the mean
standardized log loss, with parity and calibration plots (PNG). A 95 % coverage
outside [0.90, 0.98] is recalibrated (split-conformal scale of the standard
deviations) and both are reported. Designs whose resonance lies outside the
sweep are left out of resonance_nm (the stored value is only the sweep edge).
The store is opened read-only; every version is kept, with its metrics, so you
can see whether new designs helped (--list)."""

_PREDICT = """Predict figures of merit of new designs with a trained model version.

Give one design with --param NAME=VALUE for every varied parameter (units as in
the campaign, e.g. nm), or many with --designs FILE.csv (one column per varied
parameter; a design_id column is passed through). Prints, per target, the median
and the central interval at --coverage (for log-modelled figures exp(mu) and
exp(mu -+ z sigma), so the interval is asymmetric and positive) and the mean and
standard deviation of the predictive distribution, all in physical units.
Designs outside the campaign bounds are refused unless --extrapolate. A model
whose store has new results since it was trained is refused unless --allow-stale."""


def _comma_list(values):
    if not values:
        return None
    out = []
    for v in values:
        out.extend(p.strip() for p in v.split(",") if p.strip())
    return out


def add_model_commands(sub, units):
    """Register ``train`` and ``predict`` on an argparse subparsers object."""
    t = sub.add_parser("train", help="fit Gaussian-process surrogates on a store; list model versions",
                       description=_TRAIN, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    t.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    t.add_argument("--targets", nargs="+", metavar="NAME",
                   help="figures of merit to model (default: resonance_nm enhancement_at_laser "
                   "heat_per_enhancement_nm2 spot_area_nm2)")
    t.add_argument("--folds", type=int, default=5, metavar="K", help="cross-validation folds (default 5)")
    t.add_argument("--restarts", type=int, default=4, metavar="N", help="optimizer restarts per fit (default 4)")
    t.add_argument("--seed", type=int, default=None, metavar="N", help="random seed (default: the campaign's seed)")
    t.add_argument("--drop-missing", action="store_true",
                   help="leave designs with a NaN figure out of that figure instead of refusing")
    t.add_argument("--min-per-parameter", type=int, default=None, metavar="N",
                   help="fewest converged designs per varied parameter (default 10)")
    t.add_argument("--workers", type=int, default=None, metavar="N", help="processes fitting targets in parallel")
    t.add_argument("--no-plots", action="store_true", help="skip the parity and calibration PNGs")
    t.add_argument("--list", action="store_true", help="only list the model versions with their metrics")
    t.add_argument("--json", action="store_true", help="machine-readable output")
    t.set_defaults(run=run_train)

    p = sub.add_parser("predict", help="predict figures of merit of designs with a trained model",
                       description=_PREDICT, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    g = p.add_mutually_exclusive_group(required=True)
    g.add_argument("--param", action="append", metavar="NAME=VALUE", help="one parameter of one design (repeat)")
    g.add_argument("--designs", metavar="FILE.csv", help="CSV file with one design per row")
    p.add_argument("--version", type=int, default=None, metavar="N", help="model version (default: the latest)")
    p.add_argument("--targets", nargs="+", metavar="NAME", help="targets to print (default: all of the model)")
    p.add_argument("--coverage", type=float, default=0.95, metavar="P", help="probability of the interval (default 0.95)")
    p.add_argument("--extrapolate", action="store_true", help="allow designs outside the campaign bounds")
    p.add_argument("--allow-stale", action="store_true",
                   help="use a model trained before the store's newest results (its training designs unchanged)")
    p.add_argument("--json", action="store_true", help="JSON output (default CSV)")
    p.set_defaults(run=run_predict)


# -- train ---------------------------------------------------------------------------------------
def _fmt(v, spec=".3f"):
    return "-" if v is None or (isinstance(v, float) and not math.isfinite(v)) else format(v, spec)


def _print_versions(rows, out):
    out.write("versions (cross-validated; coverage after any recalibration):\n")
    out.write(f"  {'version':<8}{'created_utc':<27}{'designs':>8}  {'current':<8}{'target':<28}{'R^2':>8}{'RMSE':>11}"
              f"{'cov95':>7}{'MSLL':>8}\n")
    for r in rows:
        if "error" in r:
            out.write(f"  v{r['version']:04d}   unreadable: {r['error']}\n")
            continue
        for i, (t, m) in enumerate(r["targets"].items()):
            head = (f"  v{r['version']:04d}   {r['created_utc']:<27}{r['n_designs']:>8}  {'yes' if r['current'] else 'no':<8}"
                    if i == 0 else " " * 53)
            out.write(f"{head}{t:<28}{_fmt(m['r2'], '.4f'):>8}{_fmt(m['rmse'], '.4g'):>11}"
                      f"{_fmt(m['coverage_95_recalibrated'], '.2f'):>7}{_fmt(m['msll'], '.2f'):>8}\n")


def run_train(args):
    from .campaign import Store
    from .models import list_versions, train_store

    if args.list:
        with Store.open(args.store, readonly=True) as store:
            rows = list_versions(store)
        if args.json:
            json.dump({"store": str(args.store), "versions": rows}, sys.stdout, indent=2)
            sys.stdout.write("\n")
        elif not rows:
            print(f"store {args.store} has no trained models; train one with 'surrogate train {args.store}'")
        else:
            _print_versions(rows, sys.stdout)
        return 0
    check_int("--folds", args.folds, low=2, high=100)
    check_int("--restarts", args.restarts, low=0, high=100)
    if args.seed is not None:
        check_int("--seed", args.seed, low=0)
    if args.workers is not None:
        check_int("--workers", args.workers, low=1, high=256)
    if args.min_per_parameter is not None:
        check_int("--min-per-parameter", args.min_per_parameter, low=1, high=1000)
    if sys.stderr.isatty() and not args.json:  # a log or a pipe gets the results alone
        sys.stderr.write(f"training on {args.store} ({args.folds}-fold cross-validation, {args.restarts} optimizer "
                         "restarts; the demo's 160 designs take about 16 s on 2 cores)...\n")
        sys.stderr.flush()
    try:
        card = train_store(args.store, targets=_comma_list(args.targets), seed=args.seed, cv_folds=args.folds,
                           n_restarts=args.restarts, drop_missing=args.drop_missing,
                           min_designs_per_parameter=args.min_per_parameter, n_jobs=args.workers,
                           plots=not args.no_plots)
    except OSError as exc:  # a read-only or full models folder: no version was added
        from .models import ModelBundleError, bundles_folder

        raise ModelBundleError(f"model folder {bundles_folder(args.store)} cannot be written ({exc.strerror}: "
                               f"{exc.filename}); no model version was added") from None
    with Store.open(args.store, readonly=True) as store:
        rows = list_versions(store)
    if args.json:
        json.dump({"card": card, "versions": rows}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    out = sys.stdout
    out.write(f"trained v{card['version']:04d} on {card['training']['n_designs']} converged designs in "
              f"{card['training_time_s']:.1f} s -> {card['path']}\n")
    out.write(f"  {'target':<28}{'transform':<10}{'n':>5}{'R^2':>8}{'RMSE':>11}{'MAE':>11}  "
              f"{'cov68':<12}{'cov95':<12}{'MSLL':<14}\n")
    for t, info in card["targets"].items():
        cv = info["cv"]
        out.write(f"  {t:<28}{info['transform']:<10}{info['n_designs']:>5}{_fmt(cv['r2'], '.4f'):>8}"
                  f"{_fmt(cv['rmse'], '.4g'):>11}{_fmt(cv['mae'], '.4g'):>11}  "
                  f"{_fmt(cv['coverage_68'], '.2f') + '->' + _fmt(cv['coverage_68_recalibrated'], '.2f'):<12}"
                  f"{_fmt(cv['coverage_95'], '.2f') + '->' + _fmt(cv['coverage_95_recalibrated'], '.2f'):<12}"
                  f"{_fmt(cv['msll'], '.2f') + '->' + _fmt(cv['msll_recalibrated'], '.2f'):<14}\n")
        left = info.get("left_out") or {}
        if left.get("censored") or left.get("missing"):
            out.write(f"  {'':<28}left out: {left.get('censored', 0)} censored, {left.get('missing', 0)} missing\n")
    out.write("  R^2 in the modelled space (log for log targets); RMSE and MAE of the median in target units; "
              "coverage and MSLL before->after recalibration\n")
    _print_versions(rows, out)
    return 0


# -- predict -------------------------------------------------------------------------------------
def _parse_params(items, varied, fixed):
    values = {}
    for item in items:
        name, sep, text = item.partition("=")
        name = name.strip()
        if not sep or not name:
            raise InvalidParameterError(f"--param must be NAME=VALUE; got {item!r}")
        try:
            value = float(text)
        except ValueError:
            raise InvalidParameterError(f"--param {name} must be a number; got {text!r}") from None
        if name in fixed:
            if not math.isclose(value, float(fixed[name]), rel_tol=1e-9, abs_tol=1e-9):
                raise InvalidParameterError(f"--param {name} must equal the campaign's fixed value {fixed[name]:g}; got {value:g}")
            continue
        if name not in varied:
            raise InvalidParameterError(f"--param NAME must be a varied parameter ({', '.join(varied)}); got {name!r}")
        values[name] = value
    missing = [n for n in varied if n not in values]
    if missing:
        raise InvalidParameterError(f"--param must set every varied parameter ({', '.join(varied)}); missing {', '.join(missing)}")
    import pandas as pd

    return pd.DataFrame([values], columns=list(varied))


def _read_designs(path, varied, fixed):
    import pandas as pd

    try:
        frame = pd.read_csv(path)
    except (OSError, ValueError) as exc:
        raise InvalidParameterError(f"--designs must be a readable CSV file; got {path} ({exc})") from None
    missing = [n for n in varied if n not in frame.columns]
    if missing:
        raise InvalidParameterError(f"--designs must have a column per varied parameter ({', '.join(varied)}); "
                                    f"missing {', '.join(missing)}")
    if frame.empty:
        raise InvalidParameterError(f"--designs must hold at least one design; got an empty file {path}")
    for n in varied:
        if not pd.api.types.is_numeric_dtype(frame[n]) or frame[n].isna().any():
            raise InvalidParameterError(f"--designs column {n} must hold numbers in every row; got {frame[n].dtype} "
                                        f"with {int(frame[n].isna().sum())} empty cells")
    for n, v in fixed.items():
        if n in frame.columns and not ((frame[n] - float(v)).abs() <= 1e-9 * max(1.0, abs(float(v)))).all():
            raise InvalidParameterError(f"--designs column {n} must equal the campaign's fixed value {float(v):g} in every row")
    keep = (["design_id"] if "design_id" in frame.columns else []) + list(varied)
    return frame[keep].reset_index(drop=True)


def _check_in_bounds(frame, bounds):
    for n, (lo, hi) in bounds.items():
        bad = (frame[n] < lo) | (frame[n] > hi)
        if bad.any():
            v = float(frame.loc[bad, n].iloc[0])
            raise InvalidParameterError(f"{n} must be in [{lo:g}, {hi:g}] (the campaign bounds); got {v:g} "
                                        f"(row {int(bad.to_numpy().argmax())}); pass --extrapolate to predict anyway")


def run_predict(args):
    import pandas as pd

    from .campaign import Store
    from .models import load_bundle

    coverage = check_real("--coverage", args.coverage, low=0, high=1, low_open=True, high_open=True)
    if args.version is not None:
        check_int("--version", args.version, low=1)
    with Store.open(args.store, readonly=True) as store:
        bundle = load_bundle(store, args.version, allow_stale=args.allow_stale)
    model, card = bundle.model, bundle.card
    varied = list(model.feature_names_in_)
    fixed = card.get("fixed", {})
    designs = (_parse_params(args.param, varied, fixed) if args.param
               else _read_designs(Path(args.designs), varied, fixed))
    if not args.extrapolate:
        _check_in_bounds(designs, model.bounds_)
    targets = _comma_list(args.targets)
    if targets:
        for t in targets:
            if t not in model.targets_:
                raise InvalidParameterError(f"--targets must be among the model's ({', '.join(model.targets_)}); got {t!r}")
    summary = model.predict_summary(designs[varied], coverage=coverage, targets=targets)
    names = list(targets or model.targets_)
    if bundle.stale:
        sys.stderr.write(f"note: model v{bundle.version:04d} predates the store's newest results; "
                         f"retrain with 'surrogate train {args.store}'\n")
    if args.json:
        rows = []
        for i in range(len(designs)):
            row = {}
            if "design_id" in designs.columns:
                row["design_id"] = str(designs["design_id"].iloc[i])
            row["params"] = {n: float(designs[n].iloc[i]) for n in varied}
            row["predictions"] = {
                t: {**{part: float(summary[f"{t}_{part}"].iloc[i]) for part in ("median", "lower", "upper", "mean", "std")},
                    "transform": model.transforms_[t]}
                for t in names
            }
            rows.append(row)
        json.dump({"store": str(args.store), "model_version": bundle.version, "stale": bundle.stale,
                   "coverage": coverage, "designs": rows}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    table = pd.concat([designs.reset_index(drop=True), summary.reset_index(drop=True)], axis=1)
    table.to_csv(sys.stdout, index=False, float_format="%.7g", lineterminator="\n")
    return 0
