"""The optuna study driver: batched ask / evaluate / tell, seeded samplers, an optional study file.

Each batch asks ``batch_size`` trials, evaluates them in one vectorised call and tells
them all, so a surrogate is queried once per batch instead of once per trial.  For
NSGA-II the batch is one generation (``population_size`` trials): optuna assigns a
trial to the current generation until that generation holds ``population_size``
complete trials, so asking a whole generation before telling it gives the same
generations as asking one at a time (K. Deb, A. Pratap, S. Agarwal and T. Meyarivan,
IEEE Trans. Evol. Comput. 6, 182 (2002)).  TPE (J. Bergstra, R. Bardenet, Y. Bengio and
B. Kegl, NeurIPS 2011; multi-objective: Y. Ozaki et al., GECCO 2020) asks a few at a
time with optuna's constant liar; the Gaussian-process sampler one at a time.

Constraints go through ``Trial.set_constraint`` (optuna >= 5; ``constraints_func`` is
deprecated there): a trial is feasible when every constraint value is <= 0.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np

from .._validation import check_choice, check_int
from ..errors import InvalidParameterError

__all__ = ["SAMPLERS", "DEFAULT_POPULATION_SIZE", "StudyResult", "make_sampler", "run_study"]

#: Sampler names.
SAMPLERS = ("nsga2", "tpe", "gp")

#: NSGA-II population (= batch) size (our choice: 100 generations for 10,000 trials).
DEFAULT_POPULATION_SIZE = 100

#: Trials asked per batch for the other samplers (TPE: constant liar; GP: sequential).
_BATCH = {"tpe": 8, "gp": 1}


def _nsga2_class():
    import optuna
    from optuna.trial import TrialState

    class _NSGAII(optuna.samplers.NSGAIISampler):
        """optuna's NSGA-II with the generation lookup memoised.

        The library finds a new trial's generation by scanning every complete trial
        (O(n) per trial, O(n^2) per study: 15 of 25 s at 6,000 trials, measured).
        The answer depends only on the set of complete trials, which only grows, so
        an unchanged count of complete trials gives the unchanged answer; within a
        batch nothing completes, so the scan runs once per batch.
        """

        _memo = None

        def get_trial_generation(self, study, trial):
            key = self._get_generation_key()
            generation = trial.system_attrs.get(key)
            if generation is not None:
                return generation
            n_complete = len(study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)))
            stamp = (id(study._storage), study._study_id, n_complete)
            if self._memo is not None and self._memo[0] == stamp:
                generation = self._memo[1]
                study._storage.set_trial_system_attr(trial._trial_id, key, generation)
                return generation
            generation = super().get_trial_generation(study, trial)
            self._memo = (stamp, generation)
            return generation

    return _NSGAII


def make_sampler(name, seed, *, population_size=DEFAULT_POPULATION_SIZE, memoised=True):
    """An optuna sampler by name, seeded with the int ``seed``.

    Parameters
    ----------
    name : {"nsga2", "tpe", "gp"}
    seed : int
    population_size : int, default 100
        NSGA-II only.
    memoised : bool, default True
        NSGA-II only: the memoised generation lookup (same trials, faster); False is
        optuna's class as shipped.
    """
    import optuna

    check_choice("sampler", name, SAMPLERS)
    if name == "nsga2":
        cls = _nsga2_class() if memoised else optuna.samplers.NSGAIISampler
        return cls(population_size=population_size, seed=seed)
    if name == "tpe":
        return optuna.samplers.TPESampler(seed=seed, multivariate=True, constant_liar=True)
    import importlib.util

    if importlib.util.find_spec("torch") is None:
        raise InvalidParameterError("sampler 'gp' needs PyTorch (optuna's GPSampler runs on it), which is not installed; "
                                    "got sampler 'gp'; install torch or use nsga2 or tpe")
    return optuna.samplers.GPSampler(seed=seed)


@dataclass(frozen=True)
class StudyResult:
    """Every complete trial of a study after a run.

    Attributes
    ----------
    trial_numbers : ndarray of int, shape (n,)
    params : ndarray of float, shape (n, d)
        In the order of ``names``.
    names : tuple of str
    values : ndarray of float, shape (n, m)
        Objective values as optimised (in the study's directions).
    constraints : ndarray of float, shape (n, c)
        Constraint values (<= 0 feasible), in the order of ``constraint_names``.
    constraint_names : tuple of str
    directions : tuple of str
    n_new : int
        Trials run by this call (``n - n_new`` came from the study file).
    n_failed : int
        Trials of this call told as failed (a non-finite value or constraint).
    elapsed_s, evaluate_s : float
        Wall time of the call and the part spent in ``evaluate`` [s].
    sampler, seed, study_name, study_file
        Provenance (``study_file`` None for an in-memory study).
    """

    trial_numbers: np.ndarray
    params: np.ndarray
    names: tuple
    values: np.ndarray
    constraints: np.ndarray
    constraint_names: tuple
    directions: tuple
    n_new: int
    n_failed: int
    elapsed_s: float
    evaluate_s: float
    sampler: str
    seed: int
    study_name: str
    study_file: str | None

    @property
    def feasible(self):
        """Mask of trials whose every constraint is <= 0, shape (n,)."""
        if self.constraints.shape[1] == 0:
            return np.ones(len(self.values), dtype=bool)
        return np.all(self.constraints <= 0.0, axis=1)

    def minimisation_values(self):
        """Objective values with maximised ones negated, shape (n, m)."""
        sign = np.array([-1.0 if d == "maximize" else 1.0 for d in self.directions])
        return self.values * sign


def _check_space(space):
    if not isinstance(space, dict) or not space:
        raise InvalidParameterError(f"space must be a non-empty dict {{name: (low, high)}}; got {space!r}")
    for name, pair in space.items():
        lo, hi = (float(v) for v in pair)
        if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
            raise InvalidParameterError(f"space[{name!r}] must be finite with low < high; got {pair!r}")
    return {str(n): (float(p[0]), float(p[1])) for n, p in space.items()}


def run_study(evaluate, space, directions, *, n_trials, constraint_names=(), sampler="nsga2", seed=None,
              population_size=DEFAULT_POPULATION_SIZE, archive=None, study_name="search", memoised=True,
              progress=None):
    """Run ``n_trials`` new trials of a multi-objective optuna study in batches.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(X) -> (values, constraints)`` for X of shape (b, d) in the order of
        ``space``: values (b, m) in the study's directions; constraints (b, c), <= 0
        feasible (ignored when ``constraint_names`` is empty).
    space : dict
        Parameter name -> (low, high), searched uniformly.
    directions : sequence of {"minimize", "maximize"}
    n_trials : int
        New trials to run, >= 1.
    constraint_names : sequence of str
    sampler : {"nsga2", "tpe", "gp"}, default "nsga2"
    seed : int, numpy.random.Generator or None
        Converted once with ``numpy.random.default_rng``; the sampler gets a derived
        int (mixed with the number of trials already in the study, so a resumed run
        does not replay the first one).
    population_size : int, default 100
        NSGA-II population, also its batch size.
    archive : StudyArchive or None
        Study file to resume from and append to; None: in memory only.
    study_name : str, default "search"
        Name of the in-memory study (the archive's name when given).
    memoised : bool, default True
        See :func:`make_sampler`.
    progress : callable(dict) or None
        Called after each batch with ``finished`` and ``total`` (new trials) and ``elapsed_s``.

    Returns
    -------
    StudyResult
    """
    import optuna
    from optuna.trial import TrialState

    n_trials = check_int("n_trials", n_trials, low=1, high=10_000_000)
    population_size = check_int("population_size", population_size, low=2, high=100_000)
    check_choice("sampler", sampler, SAMPLERS)
    space = _check_space(space)
    directions = tuple(check_choice("direction", d, ("minimize", "maximize")) for d in directions)
    if not directions:
        raise InvalidParameterError("directions must hold at least one direction; got none")
    constraint_names = tuple(constraint_names)
    names = tuple(space)
    rng = np.random.default_rng(seed)
    base_seed = int(rng.integers(0, 2**31 - 1))

    t0 = time.perf_counter()
    previous = archive.finished_trials() if archive is not None else []
    sampler_seed = int(np.random.SeedSequence([base_seed, len(previous)]).generate_state(1)[0] & 0x7FFFFFFF)
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    study = optuna.create_study(directions=list(directions), study_name=archive.study_name if archive else study_name,
                                sampler=make_sampler(sampler, sampler_seed, population_size=population_size,
                                                     memoised=memoised))
    if previous:
        study.add_trials(previous)
    dists = {n: optuna.distributions.FloatDistribution(lo, hi) for n, (lo, hi) in space.items()}
    batch = population_size if sampler == "nsga2" else _BATCH[sampler]
    done = failed = 0
    eval_s = 0.0
    m = len(directions)
    while done < n_trials:
        k = min(batch, n_trials - done)
        start = len(study.get_trials(deepcopy=False))
        trials = [study.ask(dists) for _ in range(k)]
        X = np.array([[t.params[n] for n in names] for t in trials], dtype=float)
        te = time.perf_counter()
        values, cons = evaluate(X)
        eval_s += time.perf_counter() - te
        values = np.asarray(values, dtype=float).reshape(k, m)
        cons = (np.asarray(cons, dtype=float).reshape(k, len(constraint_names)) if constraint_names
                else np.zeros((k, 0)))
        for t, v, c in zip(trials, values, cons):
            if not (np.all(np.isfinite(v)) and np.all(np.isfinite(c))):
                study.tell(t, state=TrialState.FAIL)
                failed += 1
                continue
            for name, value in zip(constraint_names, c):
                t.set_constraint(name, float(value))
            study.tell(t, v.tolist())
        done += k
        if archive is not None:
            archive.append(study.get_trials(deepcopy=False)[start:])
        if progress is not None:
            progress({"finished": done, "total": n_trials, "elapsed_s": time.perf_counter() - t0})

    complete = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    n = len(complete)
    params = np.array([[t.params[nm] for nm in names] for t in complete], dtype=float).reshape(n, len(names))
    vals = np.array([t.values for t in complete], dtype=float).reshape(n, m)
    cons = np.array([[t.constraints.get(c, math.inf) for c in constraint_names] for t in complete],
                    dtype=float).reshape(n, len(constraint_names))
    return StudyResult(
        trial_numbers=np.array([t.number for t in complete], dtype=int), params=params, names=names, values=vals,
        constraints=cons, constraint_names=constraint_names, directions=directions, n_new=n_trials, n_failed=failed,
        elapsed_s=time.perf_counter() - t0, evaluate_s=eval_s, sampler=sampler, seed=sampler_seed,
        study_name=study.study_name, study_file=None if archive is None else str(archive.path),
    )
