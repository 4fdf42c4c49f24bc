"""Resonance of a gold bar antenna against the lattice spacing, FCD and LDR.

A 200 x 40 x 40 nm gold bar (Johnson & Christy) in vacuum, lit along -z with the field
along its long axis; the far-field resonance is the vertex of the parabola through
1/c_ext at the largest sample of a 20 nm sweep and its neighbours (``merit.refine_peak``).
Spacings put whole planes through the bar (200/d, 40/d integers).  Prints, per spacing,
the resonance and peak c_ext for each polarizability, and their shift against the
finest FCD value measured in the same run.

Run: .venv/bin/python benchmarks/bench_antenna_spacing.py
"""

from __future__ import annotations

import numpy as np

from _common import box_lattice, gold_eps
from surrogate.merit import refine_peak
from surrogate.solver import SolverSettings, solve_sweep

WAVELENGTHS_NM = np.arange(800.0, 981.0, 20.0)
SPACINGS_NM = (5.0, 4.0, 10.0 / 3.0, 20.0 / 7.0, 2.5, 2.0)


def resonance(spacing_nm, kind):
    lat = box_lattice(200, 40, 40, spacing_nm)
    eps = gold_eps(WAVELENGTHS_NM)[:, None]
    sols = solve_sweep(lat, eps, WAVELENGTHS_NM, settings=SolverSettings(polarizability=kind, tol=1e-5))
    c_ext = np.array([s.c_ext_nm2 for s in sols])
    peak, value, resolved = refine_peak(WAVELENGTHS_NM, c_ext)
    return peak, value, resolved, all(s.converged for s in sols), sum(s.n_iter for s in sols)


def main():
    rows = []
    for d in SPACINGS_NM:
        for kind in ("fcd", "ldr"):
            peak, value, resolved, conv, iters = resonance(d, kind)
            rows.append((d, kind, peak, value, resolved, conv, iters))
            print(f"d = {d:5.3f} nm {kind}: resonance {peak:6.1f} nm, peak c_ext {value:8.0f} nm^2, "
                  f"resolved {resolved}, converged {conv}, iterations {iters}", flush=True)
    ref = [r for r in rows if r[1] == "fcd"][-1]
    print(f"shift against FCD at d = {ref[0]:.3f} nm ({ref[2]:.1f} nm):")
    for d, kind, peak, value, *_ in rows:
        print(f"  d = {d:5.3f} {kind}: {peak - ref[2]:+6.1f} nm, c_ext {100 * (value / ref[3] - 1):+5.1f} %")


if __name__ == "__main__":
    main()
