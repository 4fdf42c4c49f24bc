"""One search of a store's surrogates: study -> feasible Pareto front -> flags, robustness -> the store.

Objective space of the front and its hypervolume: the objective statistics as
optimised (model space: log for log targets; the mean, or the cautious bound), in
minimisation form (maximised objectives negated).  The hypervolume reference point
is fixed per model version unless given: the worst value of each objective over the
model's training designs (the "nadir" of the data; points worse than every
simulated design add nothing), recorded with the front.
"""

from __future__ import annotations

import hashlib
import json
import math
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .._validation import check_choice, check_int, check_real
from ..errors import InvalidParameterError
from ._archive import STUDY_FORMATS, StudyArchive, study_file
from ._errors import EmptyFrontError, StaleModelWarning
from ._flags import TrustSettings, trust_flags
from ._objectives import DEFAULT_WINDOW_NM, SurrogateProblem, parse_objectives
from ._pareto import hypervolume, pareto_mask
from ._robust import DEFAULT_LENGTH_SIGMA_NM, DEFAULT_MC_SAMPLES, length_parameters, robustness
from ._study import DEFAULT_POPULATION_SIZE, SAMPLERS, run_study

__all__ = ["DEFAULT_TRIALS", "SearchOutcome", "search_store", "training_reference", "front_of"]

#: Trials per search run by default.
DEFAULT_TRIALS = 10_000

_OBJECTIVE_SPACE = ("model space (log for log targets), minimisation form (maximised objectives negated); "
                    "mean, or mean -+ k sigma when cautious")


@dataclass(frozen=True)
class SearchOutcome:
    """Result of :func:`search_store`.

    Attributes
    ----------
    front : pandas.DataFrame
        One row per front point, best first objective first: ``trial_number``, the
        parameters [their units], per target ``<t>_median``, ``<t>_lower``,
        ``<t>_upper`` (physical units, interval at ``settings["trust"]["coverage"]``),
        the robustness columns, ``trust_flags`` (comma-separated names, "" if none).
        Distinct designs only (an exact copy of a design is listed once).
    flags : list of list of dict
        Per front point, ``{"flag", "target", "reason"}``.
    objective_values : ndarray, shape (n, m)
        Front objective values in minimisation form (see the module docstring).
    hypervolume : float
    reference : tuple of float
    objectives : tuple of Objective
    constraint_names : tuple of str
    model_version : int
    stale : bool
    n_trials : int
        Complete trials of the study (this run and earlier ones).
    n_new, n_feasible : int
    elapsed_s, evaluate_s : float
    study_file, study_name : str or None
    front_id : int or None
        Id of the recorded front (None when not recorded).
    settings : dict
    """

    front: pd.DataFrame
    flags: list
    objective_values: np.ndarray
    hypervolume: float
    reference: tuple
    objectives: tuple
    constraint_names: tuple
    model_version: int
    stale: bool
    n_trials: int
    n_new: int
    n_feasible: int
    elapsed_s: float
    evaluate_s: float
    study_file: str | None
    study_name: str | None
    front_id: int | None
    settings: dict = field(default_factory=dict)

    def to_dict(self):
        """JSON-ready summary with every front point."""
        return {
            "front_id": self.front_id, "model_version": self.model_version, "stale": self.stale,
            "objectives": [{"target": o.target, "direction": o.direction} for o in self.objectives],
            "constraints": list(self.constraint_names), "hypervolume": self.hypervolume,
            "reference": list(self.reference), "objective_space": _OBJECTIVE_SPACE,
            "n_trials": self.n_trials, "n_new": self.n_new, "n_feasible": self.n_feasible,
            "elapsed_s": self.elapsed_s, "evaluate_s": self.evaluate_s, "study_file": self.study_file,
            "study_name": self.study_name, "settings": self.settings,
            "points": [dict(_json_row(self.front.iloc[i]), flags=self.flags[i]) for i in range(len(self.front))],
        }


def _json_row(row):
    out = {}
    for k, v in row.items():
        if k == "trust_flags":
            continue
        if isinstance(v, (np.integer,)):
            v = int(v)
        elif isinstance(v, (float, np.floating)):
            v = float(v) if math.isfinite(v) else None
        out[k] = v
    return out


def front_of(values_min, feasible):
    """Indices of the feasible, non-dominated rows of ``values_min`` (n, m), minimisation form."""
    idx = np.flatnonzero(feasible)
    if idx.size == 0:
        return idx
    return idx[pareto_mask(values_min[idx])]


def training_reference(store, bundle, objectives):
    """Worst value of each objective over the model's training designs (minimisation form, model space)."""
    from ..models import load_training_set, to_model_space

    data = load_training_set(store, [o.target for o in objectives], drop_missing=True)
    ids = set(bundle.card["training"]["design_ids"])
    Y = data.Y.loc[[i for i in data.Y.index if i in ids]]
    ref = []
    for o in objectives:
        v = to_model_space(o.target, Y[o.target].to_numpy(dtype=float), bundle.model.transforms_[o.target])
        v = o.sign * v[np.isfinite(v)]
        if v.size == 0:
            raise InvalidParameterError(f"objective {o.target} has no finite training value to set a reference from")
        ref.append(float(v.max()))
    return tuple(ref)


def _training_unit(model):
    parts = [np.asarray(e.X_train_, dtype=float) for e in model.estimators_.values()]
    return np.unique(np.vstack(parts), axis=0)


def _check_space(bounds, model, family):
    names = list(model.feature_names_in_)
    if bounds is None:
        return {n: tuple(float(v) for v in model.bounds_[n]) for n in names}
    if not isinstance(bounds, dict):
        raise InvalidParameterError(f"bounds must be a dict {{name: (low, high)}}; got {bounds!r}")
    unknown = [k for k in bounds if k not in names]
    if unknown:
        raise InvalidParameterError(f"bounds name must be a varied parameter ({', '.join(names)}); got {unknown[0]!r}")
    limits = {p.name: p for p in family.parameters} if family is not None else {}
    space = {}
    for n in names:
        lo, hi = bounds.get(n, model.bounds_[n])
        lo, hi = float(lo), float(hi)
        if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
            raise InvalidParameterError(f"bounds[{n!r}] must be finite with low < high; got {(lo, hi)!r}")
        if n in limits and (lo < limits[n].low or hi > limits[n].high):
            p = limits[n]
            raise InvalidParameterError(f"bounds[{n!r}] must lie in the family limits [{p.low:g}, {p.high:g}] {p.unit}; "
                                        f"got [{lo:g}, {hi:g}]")
        space[n] = (lo, hi)
    return space


def search_store(store_path, *, objectives=None, n_trials=DEFAULT_TRIALS, sampler="nsga2", seed=None,
                 window_nm=DEFAULT_WINDOW_NM, cautious_k=0.0, version=None, strict=False, bounds=None,
                 trust=TrustSettings(), length_sigma_nm=DEFAULT_LENGTH_SIGMA_NM, n_mc_samples=DEFAULT_MC_SAMPLES,
                 population_size=DEFAULT_POPULATION_SIZE, study_format="journal", study_name=None, persist=True,
                 record=True, reference=None, code_version="unknown", progress=None):
    """Search a store's surrogates for the feasible Pareto front and record it in the store.

    Parameters
    ----------
    store_path : str or pathlib.Path
        The campaign store; opened writable when ``record`` (an older schema is migrated).
    objectives : sequence of str or Objective, or None
        ``NAME`` or ``NAME:max|min``; default :data:`DEFAULT_OBJECTIVES`.
    n_trials : int, default 10000
        New trials of this run (a study found in the study file is resumed).
    sampler : {"nsga2", "tpe", "gp"}, default "nsga2"
    seed : int, numpy.random.Generator or None
        Converted once with ``numpy.random.default_rng``; derived ints seed the sampler
        and the Monte Carlo.
    window_nm : float or None, default 15
        Half-width of the resonance window around the laser [nm]; None: no window.
    cautious_k : float, default 0
        Optimise mean -+ k sigma (the pessimistic side) instead of the mean [-].
    version : int or None
        Model version; default the latest.
    strict : bool, default False
        Refuse a stale model (default: warn with :class:`StaleModelWarning` and use it).
    bounds : dict or None
        Searched space, name -> (low, high) within the family limits; default the
        campaign bounds.  Outside the sampled bounds points are flagged ``extrapolated``.
    trust : TrustSettings
    length_sigma_nm : float, default 2
    n_mc_samples : int, default 512
    population_size : int, default 100
    study_format : {"journal", "sqlite"}, default "journal"
    study_name : str or None
        Default: derived from the model version, objectives, window, k, sampler, space.
    persist : bool, default True
        Keep the study in the study file beside the store (False: in memory only).
    record : bool, default True
        Write the front to the store.
    reference : sequence of float or None
        Hypervolume reference (minimisation form); default :func:`training_reference`.
    code_version : str
    progress : callable(dict) or None
        Called after each batch of trials (see :func:`run_study`).

    Returns
    -------
    SearchOutcome

    Raises
    ------
    InvalidParameterError
        Bad settings, an unknown objective or one with no trained model.
    ModelBundleError
        No model, or a stale one with ``strict``.
    EmptyFrontError
        No trial is feasible (nothing is recorded; the trials stay in the study file).
    """
    from ..campaign import Store
    from ..models import load_bundle
    from ..shapes import get_family

    n_trials = check_int("trials", n_trials, low=1, high=10_000_000)
    check_choice("sampler", sampler, SAMPLERS)
    check_choice("study_format", study_format, STUDY_FORMATS)
    cautious_k = check_real("cautious_k", cautious_k, low=0.0, high=10.0)
    if window_nm is not None:
        window_nm = check_real("window_nm", window_nm, low=0.0, high=1000.0, low_open=True, unit="nm")
    length_sigma_nm = check_real("length_sigma_nm", length_sigma_nm, low=0.0, high=1000.0, unit="nm")
    n_mc_samples = check_int("n_mc_samples", n_mc_samples, low=2, high=1_000_000)
    if not isinstance(trust, TrustSettings):
        raise InvalidParameterError(f"trust must be a TrustSettings; got {type(trust).__name__}")
    rng = np.random.default_rng(seed)
    study_seed, mc_seed = (int(v) for v in rng.integers(0, 2**31 - 1, size=2))

    with Store.open(store_path, readonly=not record) as store:
        bundle = load_bundle(store, version, allow_stale=not strict)
        if bundle.stale:
            warnings.warn(StaleModelWarning(
                f"model v{bundle.version:04d} predates the store's newest results; searching it anyway "
                f"(retrain with 'surrogate train {store.path}', or refuse stale models with strict)"), stacklevel=2)
        model = bundle.model
        objs = parse_objectives(objectives, model.targets_)
        spec = store.spec
        family = get_family(spec["family"])
        names = list(model.feature_names_in_)
        space = _check_space(bounds, model, family)
        problem = SurrogateProblem(model, objs, family=family, fixed=spec.get("fixed", {}),
                                   laser_nm=spec.get("laser_nm"), window_nm=window_nm, cautious_k=cautious_k)
        if reference is None:
            ref = training_reference(store, bundle, objs)
            ref_source = "worst training value per objective"
        else:
            ref = tuple(float(check_real("reference", v)) for v in reference)
            if len(ref) != len(objs):
                raise InvalidParameterError(f"reference must have one value per objective ({len(objs)}); got {len(ref)}")
            ref_source = "given"
        if study_name is None:
            study_name = (f"v{bundle.version:04d}|{','.join(o.label() for o in objs)}|window_nm={window_nm}|"
                          f"k={cautious_k:g}|{sampler}")
            if bounds is not None:
                study_name += "|space=" + hashlib.sha256(json.dumps(space, sort_keys=True).encode()).hexdigest()[:8]
        settings = {
            **problem.settings(), "sampler": sampler, "population_size": population_size,
            "seed": seed if isinstance(seed, (int, np.integer)) and not isinstance(seed, bool) else None,
            "sampler_seed_base": study_seed, "space": {k: list(v) for k, v in space.items()},
            "trust": trust.to_dict(), "length_sigma_nm": length_sigma_nm, "n_mc_samples": n_mc_samples,
            "length_parameters": list(length_parameters(names, family)),
            "reference_source": ref_source, "objective_space": _OBJECTIVE_SPACE, "model_version": bundle.version,
        }
        archive = None
        if persist:
            archive = StudyArchive(study_file(store.path, study_format), study_name, problem.directions,
                                   study_format=study_format, user_attrs={"settings": json.dumps(settings, sort_keys=True)})
        result = run_study(problem, space, problem.directions, n_trials=n_trials,
                           constraint_names=problem.constraint_names, sampler=sampler, seed=study_seed,
                           population_size=population_size, archive=archive, study_name=study_name,
                           progress=progress)
        settings["sampler_seed"] = result.seed
        values_min = result.minimisation_values()
        feasible = result.feasible
        idx = front_of(values_min, feasible)
        if idx.size == 0:
            window = f"resonance within -+{window_nm:g} nm of {problem.laser_nm:g} nm" if window_nm is not None else ""
            rules = "the fabrication rules" if "fabrication" in problem.constraint_names else ""
            what = " and ".join(x for x in (window, rules) if x) or "the constraints"
            raise EmptyFrontError(
                f"front must hold at least one feasible design; got none among {len(values_min)} trials ({what}); "
                "widen the window, change the space or run more trials")
        # one point per distinct design: NSGA-II offspring may copy a parent, and points closer than
        # the 0.01 nm design rounding are one design (one design id, one simulation)
        from ..campaign._design import _DECIMALS

        idx = idx[np.argsort(values_min[idx, 0], kind="stable")]  # best first objective first
        _, first = np.unique(np.round(result.params[idx], _DECIMALS), axis=0, return_index=True)
        idx = idx[np.sort(first)]  # the best of each design, order kept
        X = result.params[idx]
        frame_x = pd.DataFrame(X, columns=names)
        summary = model.predict_summary(frame_x, coverage=trust.coverage)
        robust = robustness(model, X, length_names=length_parameters(names, family), length_sigma_nm=length_sigma_nm,
                            n_samples=n_mc_samples, laser_nm=problem.laser_nm, window_nm=window_nm, seed=mc_seed)
        units = {p.name: p.unit for p in family.parameters}
        flags = trust_flags(X, names, summary, transforms=dict(model.transforms_), train_unit=_training_unit(model),
                            sampled_bounds=model.bounds_, space=space, units=units, robust=robust,
                            window_nm=window_nm, laser_nm=problem.laser_nm, n_mc_samples=n_mc_samples,
                            length_sigma_nm=length_sigma_nm, settings=trust)
        hv = hypervolume(values_min[idx], ref)
        pred_cols = [f"{t}_{p}" for t in model.targets_ for p in ("median", "lower", "upper")]
        front = pd.concat([pd.DataFrame({"trial_number": result.trial_numbers[idx]}), frame_x,
                           summary[pred_cols].reset_index(drop=True), robust.reset_index(drop=True)], axis=1)
        front["trust_flags"] = [",".join(dict.fromkeys(f["flag"] for f in fl)) for fl in flags]
        front_id = None
        if record:
            points = []
            for i in range(len(front)):
                points.append({
                    "trial_number": int(front["trial_number"].iloc[i]),
                    "params": {n: float(X[i, j]) for j, n in enumerate(names)},
                    "objectives": {o.label(): float(values_min[idx[i], k]) for k, o in enumerate(objs)},
                    "predictions": {t: {p: float(summary[f"{t}_{p}"].iloc[i]) for p in ("median", "lower", "upper")}
                                    for t in model.targets_},
                    "flags": flags[i],
                    "robustness": {c: (None if not np.isfinite(v) else float(v)) for c, v in robust.iloc[i].items()},
                })
            front_id = store.record_front(
                model_version=bundle.version, objectives=[{"target": o.target, "direction": o.direction} for o in objs],
                reference=ref, hypervolume=hv, n_trials=len(values_min), n_feasible=int(feasible.sum()),
                study={"file": result.study_file, "name": result.study_name, "format": study_format if persist else None,
                       "sampler": sampler},
                settings=settings, points=points, code_version=code_version)
    return SearchOutcome(
        front=front, flags=flags, objective_values=values_min[idx], hypervolume=hv, reference=tuple(ref),
        objectives=objs, constraint_names=problem.constraint_names, model_version=bundle.version, stale=bundle.stale,
        n_trials=len(values_min), n_new=result.n_new, n_feasible=int(feasible.sum()), elapsed_s=result.elapsed_s,
        evaluate_s=result.evaluate_s, study_file=result.study_file, study_name=result.study_name, front_id=front_id,
        settings=settings)
