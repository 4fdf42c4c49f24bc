"""Spacing convergence of the demo settings: how far the d = 5 nm figures are from finer lattices.

Evaluates one mid-range design of datasets/demo.toml at several spacings (all keeping the hotspot
2 spacings from the nearest dipole) and prints each figure and its change against the finest
lattice, plus the extrapolation to d -> 0 where three or more spacings allow it.

    python benchmarks/bench_demo_convergence.py [--spacings 5,4,3.33]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from surrogate.design import evaluate_design
from surrogate.solver import SolverSettings, extrapolate_to_zero_spacing

DESIGN = {"disk_diameter_nm": 150.0, "peg_length_nm": 35.0, "peg_width_nm": 25.0, "thickness_nm": 30.0}
FIGURES = ("resonance_nm", "enhancement_at_laser", "c_abs_at_laser_nm2", "heat_per_enhancement_nm2", "spot_area_nm2")


def main():
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--spacings", default="5,4,3.333")
    parser.add_argument("--wavelengths", default="700:900:50")
    parser.add_argument("--polarizability", default="ldr", choices=("fcd", "ldr", "rrcm"),
                        help="default ldr, as the shipped demo store (datasets/demo.toml)")
    args = parser.parse_args()
    lo, hi, step = (float(v) for v in args.wavelengths.split(":"))
    wl = np.arange(lo, hi + step / 2, step)
    spacings = [float(v) for v in args.spacings.split(",")]
    rows = []
    for d in spacings:
        t0 = time.perf_counter()
        settings = SolverSettings(polarizability=args.polarizability, tol=1e-4, dtype="complex128", preconditioner="none")
        ev = evaluate_design("disk-peg", DESIGN, laser_nm=830.0, wavelengths_nm=wl, spacing_nm=d, hotspot_offset_nm=8.0,
                             settings=settings)
        rows.append({"spacing_nm": d, "n_dipoles": ev.simulation.n_dipoles, "seconds": time.perf_counter() - t0,
                     **{k: ev.figures[k] for k in FIGURES}})
        print(f"d = {d:g} nm: {ev.simulation.n_dipoles} dipoles, {rows[-1]['seconds']:.0f} s", flush=True)
    finest = rows[-1]
    print(f"design {DESIGN}, laser 830 nm, hotspot 8 nm beyond the tip, sweep {args.wavelengths} nm")
    print("figure".ljust(26) + "".join(f"d={r['spacing_nm']:<8g}" for r in rows) + "change d=max vs d=min   d->0")
    for k in FIGURES:
        vals = [r[k] for r in rows]
        change = (vals[0] - finest[k]) / finest[k]
        extra = ""
        if len(rows) >= 3:
            v0, err = extrapolate_to_zero_spacing([r["spacing_nm"] for r in rows], vals)
            extra = f"{v0:.4g} +- {err:.2g}"
        print(k.ljust(26) + "".join(f"{v:<10.4g}" for v in vals) + f"{100 * change:+.1f} %".ljust(24) + extra)


if __name__ == "__main__":
    main()
