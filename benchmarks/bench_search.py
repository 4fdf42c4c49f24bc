"""Multi-objective search on the surrogates: 10,000 three-objective NSGA-II trials, timed.

A synthetic bowtie store (no solver) of 180 converged designs x 5 varied parameters
with smooth figures of merit and 1 % noise is trained (no CV, 2 restarts), then
``search_store`` runs 10,000 NSGA-II trials on the default objectives (maximize
enhancement_at_laser, minimize heat_per_enhancement_nm2, minimize spot_area_nm2)
with the resonance window and the fabrication rules as constraints, the study kept
in its journal file, the front flagged (Monte Carlo 512 samples per point) and
recorded in the store.

Baselines measured in the same run:
* one trial at a time: optuna's NSGA-II as shipped, each trial asked, predicted alone
  and told (the obvious ``study.optimize`` loop), on 1,000 trials, scaled x10 (a lower
  bound for 10,000: optuna's own bookkeeping grows with the trial count);
* the same batched driver with optuna's NSGA-II class as shipped (no memoised
  generation lookup), 10,000 trials in memory;
* the study file in SQLite (optuna's RDB storage) instead of the journal, 1,000 trials.

Goal: 10,000 trials well under a minute.

Run: /work/venv/bin/python benchmarks/bench_search.py [--quick]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from scipy.stats import qmc

from surrogate.campaign import Store
from surrogate.models import load_bundle, train_store
from surrogate.search import SurrogateProblem, parse_objectives, run_study, search_store
from surrogate.shapes import get_family

QUICK = "--quick" in sys.argv
N_TRIALS = 2_000 if QUICK else 10_000
N_BASE = 200 if QUICK else 1_000
BOUNDS = {"arm_length_nm": [60.0, 200.0], "flare_angle_deg": [30.0, 90.0], "thickness_nm": [20.0, 50.0],
          "gap_nm": [10.0, 30.0], "tip_radius_nm": [3.0, 15.0]}


def _figures(u, rng):
    noise = lambda: float(np.exp(rng.normal(0, 0.01)))  # noqa: E731
    res = 650 + 250 * u[0] - 60 * u[1] + 40 * u[2] ** 2 - 30 * np.exp(-3 * u[3]) + 10 * u[4]
    enh = np.exp(4 + 2.5 * np.exp(-((res - 830) / 80) ** 2) - 1.5 * u[3] - 0.5 * u[4])
    heat = 50 * (1 + u[1]) * (1 + u[2]) / enh * 100
    spot = 150 * (1 + 2 * u[3]) * (1 + u[4])
    return {"resonance_nm": float(res * (1 + 0.002 * rng.normal())), "resonance_resolved": True,
            "enhancement_at_laser": float(enh) * noise(), "heat_per_enhancement_nm2": float(heat) * noise(),
            "spot_area_nm2": float(spot) * noise(), "converged": True}


def build_store(path, n=180, seed=0):
    rng = np.random.default_rng(seed)
    unit = qmc.LatinHypercube(d=5, rng=rng).random(n)
    lo = np.array([b[0] for b in BOUNDS.values()])
    hi = np.array([b[1] for b in BOUNDS.values()])
    spec = {"name": "bench", "family": "bowtie", "bounds": BOUNDS, "fixed": {}, "laser_nm": 830.0, "seed": seed}
    store = Store.create(path, spec=spec, code_version="bench")
    designs = [(f"d{i:04d}", dict(zip(BOUNDS, map(float, lo + u * (hi - lo))))) for i, u in enumerate(unit)]
    store.add_designs(designs)
    spectrum = [{"wavelength_nm": 830.0, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5, "enhancement": 1.0,
                 "converged": True, "n_iter": 1, "residual": 0.0}]
    for (design_id, _), u in zip(designs, unit):
        store.record_result(design_id, figures=_figures(u, rng), solver={}, spectrum=spectrum, elapsed_s=0.0)
    store.close()


def one_at_a_time(problem, space, n):
    import optuna

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    study = optuna.create_study(directions=list(problem.directions),
                                sampler=optuna.samplers.NSGAIISampler(population_size=100, seed=0))
    names = list(space)
    t0 = time.perf_counter()
    for _ in range(n):
        trial = study.ask()
        x = np.array([[trial.suggest_float(k, *space[k]) for k in names]])
        values, cons = problem(x)
        for name, c in zip(problem.constraint_names, cons[0]):
            trial.set_constraint(name, float(c))
        study.tell(trial, values[0].tolist())
    return time.perf_counter() - t0


def main():
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench.sqlite"
        build_store(path)
        t0 = time.perf_counter()
        train_store(path, cv_folds=None, n_restarts=2, plots=False)
        print(f"trained 4 targets on 180 designs x 5 parameters in {time.perf_counter() - t0:.1f} s")

        t0 = time.perf_counter()
        out = search_store(path, n_trials=N_TRIALS, seed=0)
        total = time.perf_counter() - t0
        flagged = sum(1 for f in out.flags if f)
        print(f"search_store: {N_TRIALS} NSGA-II trials, 3 objectives, 2 constraints: {total:.1f} s in all "
              f"(study {out.elapsed_s:.1f} s, of which surrogate predictions {out.evaluate_s:.1f} s; "
              f"front, flags, Monte Carlo and store {total - out.elapsed_s:.1f} s)")
        print(f"  front: {len(out.front)} designs ({flagged} flagged), {out.n_feasible} feasible trials, "
              f"hypervolume {out.hypervolume:.4g}")

        with Store.open(path, readonly=True) as store:
            model = load_bundle(store).model
            spec = store.spec
        space = {k: tuple(v) for k, v in model.bounds_.items()}
        problem = SurrogateProblem(model, parse_objectives(None, model.targets_), family=get_family("bowtie"),
                                   fixed=spec["fixed"], laser_nm=spec["laser_nm"])
        t_plain = run_study(problem, space, problem.directions, n_trials=N_TRIALS,
                            constraint_names=problem.constraint_names, seed=0, memoised=False).elapsed_s
        t_one = one_at_a_time(problem, space, N_BASE)
        scaled = t_one * N_TRIALS / N_BASE
        print(f"baseline one trial at a time: {N_BASE} trials {t_one:.1f} s -> x{N_TRIALS // N_BASE} = {scaled:.1f} s "
              f"(lower bound); ratio {scaled / out.elapsed_s:.1f}x slower than the batched study")
        print(f"batched, optuna's NSGA-II as shipped: {t_plain:.1f} s ({t_plain / out.elapsed_s:.1f}x the memoised one)")
        t0 = time.perf_counter()
        search_store(path, n_trials=N_BASE, seed=1, study_format="sqlite", record=False)
        t_sql = time.perf_counter() - t0
        print(f"study file in SQLite (optuna RDB): {N_BASE} trials {t_sql:.1f} s ({t_sql / N_BASE * 1e3:.1f} ms per trial, "
              f"all included)")


if __name__ == "__main__":
    main()
