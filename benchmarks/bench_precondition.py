"""The circulant preconditioner: matrix products and wall time against the old default.

For each case (Johnson & Christy gold) this prints the matrix products and the
median wall time of repeated solves of

* ``old``: LDR, no preconditioner, complex128 (the old default), the reference;
* ``fcd``: FCD, no preconditioner;
* ``fcd+pc``: FCD with ``preconditioner="circulant"``;
* ``fcd+pc64``: the same in complex64;
* ``ldr+pc``: LDR with ``preconditioner="circulant"``;

as ratios against ``old`` and against ``fcd``, all measured in the same run,
plus the set-up time and memory of the preconditioner and what
``preconditioner="auto"`` chooses.  ``--scan-shift`` instead prints the
products against the relative shift ``tau`` (the measurement behind
``SHIFTS`` in ``surrogate/solver/_precondition.py``).

Run: PYTHONPATH=. python benchmarks/bench_precondition.py [--spacing 2.5] [--repeat 3]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from _common import box_lattice, gold_eps, sphere_lattice
from surrogate.shapes import get_family
from surrogate.solver import Lattice, SolverSettings, solve
from surrogate.solver._polarizability import polarizability
from surrogate.solver._precondition import SHIFTS, CirculantPreconditioner, circulant_pays, preconditioner_memory_bytes
from surrogate.solver._solve import _System, _s_factor
from surrogate.solver._observables import incident_field
from surrogate.solver._krylov import krylov_solve


def _family_lattice(name, params, spacing_nm):
    s = get_family(name).sites(params, spacing_nm)
    return Lattice(s.indices, s.spacing_nm, origin_nm=s.origin_nm)


def cases(spacing_nm):
    """name -> (lattice factory, wavelength [nm], host index)."""
    d = spacing_nm
    return {
        "film 300x150x50": (lambda: box_lattice(300, 150, 50, d), 800.0, 1.0),
        "disk-peg": (lambda: _family_lattice("disk-peg", {"disk_diameter_nm": 150, "peg_length_nm": 35,
                                                          "peg_width_nm": 25, "thickness_nm": 30}, d), 830.0, 1.0),
        "bar 200x40x40": (lambda: box_lattice(200, 40, 40, d), 886.0, 1.0),
        "gap dimer": (lambda: _family_lattice("gap-dimer", {"arm_length_nm": 80, "width_nm": 30, "thickness_nm": 30,
                                                            "gap_nm": 10}, d), 800.0, 1.0),
        "sphere 60 nm water": (lambda: sphere_lattice(30.0, d), 536.0, 1.33),
    }


CONFIGS = (
    ("old", "ldr", "none", np.complex128),
    ("fcd", "fcd", "none", np.complex128),
    ("fcd+pc", "fcd", "circulant", np.complex128),
    ("fcd+pc64", "fcd", "circulant", np.complex64),
    ("ldr+pc", "ldr", "circulant", np.complex128),
)


def _timed(fn, repeat):
    out, ts = None, []
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t)
    return out, float(np.median(ts))


def compare(spacing_nm, tols, repeat, names):
    for name, (make, wl, n_host) in cases(spacing_nm).items():
        if names and not any(n in name for n in names):
            continue
        lat = make()
        eps = [complex(gold_eps(wl))]
        g = lat.grid_shape
        fill = lat.n_dipoles / np.prod(g)
        k = 2 * np.pi * n_host / wl
        t0 = time.perf_counter()
        alpha = np.full(lat.n_dipoles, polarizability(eps[0] / n_host**2, lat.spacing_nm, k, kind="fcd"))
        pc = CirculantPreconditioner(lat.indices, lat.spacing_nm, k, alpha, filtered=True, shift=SHIFTS["fcd"])
        print(f"\n{name} at {wl:g} nm, d = {spacing_nm:g} nm: N = {lat.n_dipoles}, box {g}, fill {fill:.2f}; "
              f"preconditioner set-up {time.perf_counter() - t0:.2f} s, {pc.nbytes / 2**20:.0f} MiB held, "
              f"estimate {preconditioner_memory_bytes(g) / 2**20:.0f} MiB peak; "
              f"auto: fcd {'on' if circulant_pays(g, lat.n_dipoles, 'fcd') else 'off'}, "
              f"ldr {'on' if circulant_pays(g, lat.n_dipoles, 'ldr') else 'off'}")
        del pc
        for tol in tols:
            res = {}
            for label, kind, pre, dt in CONFIGS:
                s, t = _timed(lambda: solve(lat, eps, wl, n_host=n_host, polarizability=kind, tol=tol,
                                            preconditioner=pre, dtype=dt), repeat)
                res[label] = (s, t)
            ref_s, ref_t = res["old"]
            f_s, f_t = res["fcd"]
            for label, (s, t) in res.items():
                print(f"  tol {tol:g} {label:9s} products {s.matvecs:5d} ({s.matvecs / ref_s.matvecs:.2f}x old, "
                      f"{s.matvecs / f_s.matvecs:.2f}x fcd)  wall {t:7.2f} s ({t / ref_t:.2f}x old, {t / f_t:.2f}x fcd)  "
                      f"conv {s.converged} res {s.residual:.1e}  c_ext/c_ext(old) {s.c_ext_nm2 / ref_s.c_ext_nm2:.4f}",
                      flush=True)


def scan_shift(spacing_nm, shifts, names):
    # Products of preconditioned COCG against tau, through the internal system
    # so that tau can vary (tol 1e-5, x-polarized, k along -z).
    for kind in ("fcd", "ldr"):
        for name, (make, wl, n_host) in cases(spacing_nm).items():
            if names and not any(n in name for n in names):
                continue
            lat = make()
            eps = np.array([complex(gold_eps(wl))])
            kdir, edir = np.array([0.0, 0.0, -1.0]), np.array([1.0, 0.0, 0.0])
            st = SolverSettings(polarizability=kind, dtype="complex128", preconditioner="none")
            sy = _System(lat, eps, wl, n_host, st, _s_factor(kdir, edir))
            b = sy.s3 * incident_field(lat.positions_nm, sy.k, kdir, edir).reshape(-1)
            plain = krylov_solve(sy.matvec_scaled, b, weight=sy.w3, tol=1e-5)
            row = []
            for tau in shifts:
                pc = CirculantPreconditioner(lat.indices, lat.spacing_nm, sy.k, sy.alpha_site, filtered=kind == "fcd", shift=tau)
                kr = krylov_solve(sy.matvec_scaled, b, weight=sy.w3, tol=1e-5, preconditioner=pc)
                row.append(f"{tau:g}: {kr.matvecs:5d}{'' if kr.converged else '*'}")
            print(f"{kind} {name:20s} none {plain.matvecs:5d} | " + "  ".join(row), flush=True)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--spacing", type=float, default=2.5, help="lattice spacing [nm]")
    ap.add_argument("--repeat", type=int, default=3, help="timed runs per configuration (median)")
    ap.add_argument("--tol", type=float, nargs="+", default=[1e-5, 1e-4])
    ap.add_argument("--cases", nargs="*", default=[], help="substrings of case names to run (default all)")
    ap.add_argument("--scan-shift", type=float, nargs="*", default=None, help="scan these tau instead")
    a = ap.parse_args()
    if a.scan_shift:
        scan_shift(a.spacing, a.scan_shift, a.cases)
    else:
        compare(a.spacing, a.tol, a.repeat, a.cases)


if __name__ == "__main__":
    main()
