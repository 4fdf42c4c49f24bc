"""Gaussian-process surrogates: training time on a campaign-sized store, prediction throughput.

A synthetic store (no solver) of 180 converged designs x 5 varied parameters with
smooth figures of merit and 1 % multiplicative noise (standing in for the solver's
discretization noise) is trained with the production settings (5-fold CV, 4
restarts, plots), once in one process and once with 2 worker processes. Then
100,000 designs are predicted for all targets (median, 95 % interval, mean and
std), against two baselines measured in the same run: scikit-learn's own
``GaussianProcessRegressor.predict(return_std=True)`` on the same fitted
regressors, and one call per design.

Goals: training < 120 s on 2 cores; 100,000 designs x all targets < 2 s.

Run: /work/venv/bin/python benchmarks/bench_models.py [--quick]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.stats import qmc

from _common import median_time
from surrogate.campaign import Store
from surrogate.models import load_bundle, train_store

QUICK = "--quick" in sys.argv
N_DESIGNS = 180
N_PREDICT = 100_000
BOUNDS = {"length_nm": [60.0, 200.0], "width_nm": [20.0, 60.0], "thickness_nm": [20.0, 50.0],
          "gap_nm": [5.0, 30.0], "tip_radius_nm": [3.0, 15.0]}


def _figures(u, rng):
    """Smooth synthetic figures of the unit-cube point u (5,), with 1 % noise."""
    noise = lambda: float(np.exp(rng.normal(0, 0.01)))  # noqa: E731
    res = 650 + 250 * u[0] - 60 * u[1] + 40 * u[2] ** 2 - 30 * np.exp(-3 * u[3]) + 10 * u[4]
    enh = np.exp(4 + 2.5 * np.exp(-((res - 830) / 80) ** 2) - 1.5 * u[3] - 0.5 * u[4])
    heat = 50 * (1 + u[1]) * (1 + u[2]) / enh * 100
    spot = 150 * (1 + 2 * u[3]) * (1 + u[4])
    return {"resonance_nm": float(res * (1 + 0.002 * rng.normal())), "resonance_resolved": True,
            "enhancement_at_laser": float(enh) * noise(), "heat_per_enhancement_nm2": float(heat) * noise(),
            "spot_area_nm2": float(spot) * noise(), "converged": True}


def build_store(path, n, seed=0):
    rng = np.random.default_rng(seed)
    unit = qmc.LatinHypercube(d=5, rng=rng).random(n)
    lo = np.array([b[0] for b in BOUNDS.values()])
    hi = np.array([b[1] for b in BOUNDS.values()])
    spec = {"name": "bench", "family": "synthetic", "bounds": BOUNDS, "fixed": {}, "laser_nm": 830.0, "seed": seed}
    store = Store.create(path, spec=spec, code_version="bench")
    designs = [(f"d{i:04d}", dict(zip(BOUNDS, map(float, lo + u * (hi - lo))))) for i, u in enumerate(unit)]
    store.add_designs(designs)
    spectrum = [{"wavelength_nm": 830.0, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5, "enhancement": 1.0,
                 "converged": True, "n_iter": 1, "residual": 0.0}]
    for (design_id, _), u in zip(designs, unit):
        store.record_result(design_id, figures=_figures(u, rng), solver={}, spectrum=spectrum, elapsed_s=0.0)
    store.close()
    return lo, hi


def main():
    folder = Path(tempfile.mkdtemp(prefix="bench_models_"))
    path = folder / "bench.sqlite"
    n = 60 if QUICK else N_DESIGNS
    lo, hi = build_store(path, n)
    print(f"store: {n} converged designs x {len(BOUNDS)} parameters ({path})")

    timings = {}
    for label, jobs in (("1 process", None), ("2 processes", 2)):
        t0 = time.perf_counter()
        card = train_store(path, n_jobs=jobs)
        timings[label] = time.perf_counter() - t0
        print(f"train ({label}): {timings[label]:.1f} s (goal < 120 s on 2 cores) -> v{card['version']:04d}")
    print(f"  parallel speed-up: {timings['1 process'] / timings['2 processes']:.2f}x")
    print("  cross-validated metrics (5-fold; R^2 in modelled space; coverage before -> after recalibration):")
    for t, info in card["targets"].items():
        cv = info["cv"]
        print(f"    {t:<26} {info['transform']:<8} R^2 {cv['r2']:.4f}  RMSE {cv['rmse']:.4g}  "
              f"cov68 {cv['coverage_68']:.2f}->{cv['coverage_68_recalibrated']:.2f}  "
              f"cov95 {cv['coverage_95']:.2f}->{cv['coverage_95_recalibrated']:.2f}  MSLL {cv['msll']:.2f}")

    with Store.open(path, readonly=True) as store:
        model = load_bundle(store).model
    rng = np.random.default_rng(1)
    X = pd.DataFrame(lo + rng.random((N_PREDICT, len(BOUNDS))) * (hi - lo), columns=list(BOUNDS))

    def batched():
        model.predict_summary(X)

    t_batch = median_time(batched, repeat=3)
    print(f"\npredict {N_PREDICT} designs x {len(model.targets_)} targets (median, 95 % interval, mean, std): "
          f"{t_batch:.2f} s (goal < 2 s)")

    Xu = model._inputs(X)

    def sklearn_baseline():
        for gpr in model.estimators_.values():
            gpr.predict(Xu, return_std=True)

    t_sk = median_time(sklearn_baseline, repeat=1)
    print(f"  baseline scikit-learn predict(return_std=True), same regressors: {t_sk:.2f} s "
          f"-> ours {t_sk / t_batch:.1f}x faster")
    k = 200
    one = [X.iloc[[i]] for i in range(k)]
    t0 = time.perf_counter()
    for row in one:
        model.predict_summary(row)
    per_design = (time.perf_counter() - t0) / k
    print(f"  baseline one call per design: {per_design * 1e3:.2f} ms/design -> {per_design * N_PREDICT:.0f} s for "
          f"{N_PREDICT}; batched {per_design * N_PREDICT / t_batch:.0f}x faster "
          f"({t_batch / N_PREDICT * 1e6:.1f} us/design batched)")


if __name__ == "__main__":
    main()
