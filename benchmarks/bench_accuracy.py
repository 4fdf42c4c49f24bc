"""Accuracy against Mie theory versus lattice spacing, FCD and LDR, with extrapolation.

Gold spheres (Johnson & Christy) in water at and off their plasmon peak, a
40 nm gold sphere in vacuum at 800 nm, and a dielectric m = 1.5 sphere.
Prints relative errors of c_ext and c_abs per spacing, COCG iterations and
time, and the extrapolated c_ext with its error bar.

Run: /work/venv/bin/python benchmarks/bench_accuracy.py [--quick]
"""

from __future__ import annotations

import sys

import numpy as np

from _common import gold_eps, mie_c_ext_abs_nm2, sphere_lattice
from surrogate.solver import extrapolate_to_zero_spacing, solve

QUICK = "--quick" in sys.argv

CASES = [
    # (label, radius_nm, wavelength_nm, n_host, eps)
    ("Au 40nm water 520nm (peak)", 20.0, 520.0, 1.33, None),
    ("Au 60nm water 530nm (peak)", 30.0, 530.0, 1.33, None),
    ("Au 80nm water 545nm (peak)", 40.0, 545.0, 1.33, None),
    ("Au 60nm water 700nm (off)", 30.0, 700.0, 1.33, None),
    ("Au 40nm vacuum 800nm (off)", 20.0, 800.0, 1.0, None),
    ("m=1.5 60nm vacuum 500nm", 30.0, 500.0, 1.0, 2.25 + 0j),
]
SPACINGS = [3.0, 2.5, 2.0, 1.5] if QUICK else [4.0, 3.0, 2.5, 2.0, 1.5, 1.25]


def main():
    for label, a, wl, nh, eps in CASES:
        e = complex(gold_eps(wl)) if eps is None else eps
        ext_mie, abs_mie = mie_c_ext_abs_nm2(e, a, wl, nh)
        print(f"\n{label}: Mie c_ext = {ext_mie:.1f} nm2, c_abs = {abs_mie:.1f} nm2")
        for pol in ("fcd", "ldr"):
            ds, exts = [], []
            for d in SPACINGS:
                if a / d > 28:  # keep the run to minutes
                    continue
                lat = sphere_lattice(a, d)
                s = solve(lat, [e], wl, n_host=nh, polarizability=pol, k_direction=(0, 0, 1), max_iter=4000)
                ds.append(lat.spacing_nm)
                exts.append(s.c_ext_nm2)
                rel_abs = s.c_abs_nm2 / abs_mie - 1 if abs_mie > 0 else float("nan")
                print(
                    f"  {pol} d={lat.spacing_nm:5.3f} N={lat.n_dipoles:6d} ext {s.c_ext_nm2 / ext_mie - 1:+.4f} "
                    f"abs {rel_abs:+.4f} iter {s.n_iter:4d} conv {s.converged} {s.elapsed_s:6.2f}s"
                )
            for k in (3, 4):
                if len(ds) >= k:
                    v, err = extrapolate_to_zero_spacing(ds[-k:], exts[-k:])
                    print(
                        f"  {pol} extrapolated from {k} finest: {v / ext_mie - 1:+.4f} +- {err / ext_mie:.4f}"
                        f" (finest {exts[-1] / ext_mie - 1:+.4f}); contains Mie: {abs(v - ext_mie) <= err}"
                    )


if __name__ == "__main__":
    main()
