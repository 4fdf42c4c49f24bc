"""Krylov methods, polarizabilities, precision, warm starts and the dense crossover.

Gold bar 200 x 40 x 40 nm in vacuum, d = 4 nm (5,000 dipoles), Johnson &
Christy gold:
* COCG vs BiCGStab vs GMRES at 800 nm: iterations, products, time;
* LDR vs FCD iterations at 800 nm;
* complex64 vs complex128 time and c_ext difference;
* a 600-980 nm sweep, warm-started vs cold: iterations saved;
* dense numpy.linalg.solve vs COCG for small gold spheres (the crossover);
* time per iteration against N for spheres.

Run: /work/venv/bin/python benchmarks/bench_solvers.py
"""

from __future__ import annotations

import time

import numpy as np

from _common import box_lattice, gold_eps, sphere_lattice
from surrogate.solver import solve, solve_sweep


#: The comparisons below are of methods and prescriptions without preconditioning, in double
#: precision unless stated (the solver's defaults are measured in bench_default_speed.py).
PLAIN = {"preconditioner": "none", "dtype": "complex128"}


def main():
    bar = box_lattice(200, 40, 40, 4.0)
    e800 = complex(gold_eps(800.0))
    print(f"gold bar, N = {bar.n_dipoles}, 800 nm")
    base = None
    for m in ("cocg", "bicgstab", "gmres"):
        s = solve(bar, [e800], 800.0, method=m, polarizability="ldr", **PLAIN)
        base = base or s
        print(
            f"  {m:8s} ldr: iter {s.n_iter:5d} products {s.matvecs:5d} ({s.matvecs / base.matvecs:.2f}x COCG) "
            f"time {s.elapsed_s:6.2f}s ({s.elapsed_s / base.elapsed_s:.2f}x) conv {s.converged} res {s.residual:.1e}"
        )
    f = solve(bar, [e800], 800.0, polarizability="fcd", **PLAIN)
    print(f"  FCD/LDR iterations: {f.n_iter}/{base.n_iter} = {f.n_iter / base.n_iter:.2f}; time {f.elapsed_s:.2f}s")
    s64 = solve(bar, [e800], 800.0, polarizability="ldr", preconditioner="none", dtype=np.complex64)
    print(
        f"  complex64: {s64.elapsed_s:.2f}s ({s64.elapsed_s / base.elapsed_s:.2f}x of complex128), iter {s64.n_iter}, "
        f"conv {s64.converged}, c_ext rel diff {abs(s64.c_ext_nm2 / base.c_ext_nm2 - 1):.1e}"
    )

    wls = np.arange(600.0, 981.0, 20.0)
    eps = gold_eps(wls)[:, None]
    for pol in ("ldr", "fcd"):
        t0 = time.perf_counter()
        warm = solve_sweep(bar, eps, wls, polarizability=pol, **PLAIN)
        tw = time.perf_counter() - t0
        t0 = time.perf_counter()
        cold = solve_sweep(bar, eps, wls, polarizability=pol, warm_start=False, **PLAIN)
        tc = time.perf_counter() - t0
        iw, ic = sum(s.n_iter for s in warm), sum(s.n_iter for s in cold)
        peak = wls[int(np.argmax([s.c_ext_nm2 for s in warm]))]
        print(
            f"  sweep 600-980 nm ({pol}): warm {iw} iter {tw:.1f}s, cold {ic} iter {tc:.1f}s, saved {1 - iw / ic:.1%}; "
            f"iter per wavelength {min(s.n_iter for s in cold)}-{max(s.n_iter for s in cold)}; "
            f"time {min(s.elapsed_s for s in cold):.2f}-{max(s.elapsed_s for s in cold):.2f}s; peak {peak:.0f} nm; "
            f"all converged {all(s.converged for s in warm + cold)}"
        )

    print("dense LU vs COCG, gold sphere in water at 520 nm (time ratio dense/COCG)")
    e520 = complex(gold_eps(520.0))
    for radius in (3.0, 4.0, 5.0, 6.0, 7.0):
        lat = sphere_lattice(radius, 1.0)
        d = solve(lat, [e520], 520.0, n_host=1.33, method="direct", preconditioner="none")
        c = solve(lat, [e520], 520.0, n_host=1.33, **PLAIN)
        print(f"  N={lat.n_dipoles:5d} dense {d.elapsed_s:7.3f}s cocg {c.elapsed_s:7.3f}s ratio {d.elapsed_s / c.elapsed_s:6.2f}")

    print("time per COCG iteration vs N (gold sphere, water, 520 nm)")
    prev = None
    for radius in (10.0, 15.0, 20.0, 25.0, 30.0):
        lat = sphere_lattice(radius, 1.0)
        s = solve(lat, [e520], 520.0, n_host=1.33, **PLAIN)
        per = s.elapsed_s / max(s.matvecs, 1)
        nlogn = lat.n_dipoles * np.log(lat.n_dipoles)
        ratio = "" if prev is None else f" (x{per / prev[0]:.2f} for N log N x{nlogn / prev[1]:.2f})"
        print(f"  N={lat.n_dipoles:6d} iter {s.n_iter:3d} {per * 1e3:7.2f} ms/product{ratio}")
        prev = (per, nlogn)


if __name__ == "__main__":
    main()
