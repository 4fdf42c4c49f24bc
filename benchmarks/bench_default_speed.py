"""The solver's new defaults against the old ones, measured in one run.

Old default: LDR, complex128, no preconditioner.  New default: FCD (consistent form)
with dtype "auto" (complex64 at the campaigns' tol 1e-4) and preconditioner "auto"
(none for FCD).  Also FCD with the circulant preconditioner forced on.  Cases:

* the demo's mid-range disk-peg (disk 150 nm, peg 35 x 25 nm, 30 nm thick) at 830 nm,
  d = 5 and 2.5 nm, one wavelength: matrix products and wall time (median of 3);
* a gold film 300 x 150 x 50 nm at 800 nm, d = 5 nm, one wavelength (at 2.5 nm, 144,000
  dipoles, three repeats of three settings take about half an hour on 2 cores);
* a whole demo-setting design: the disk-peg at d = 5 nm, 600-1000 nm in 50 nm steps
  plus 830 nm, tol 1e-4 (one run each, the same sweep).

Ratios are new / old, products first (deterministic), then wall time (noisy on the
shared 2-core machine).

Run: .venv/bin/python benchmarks/bench_default_speed.py
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from _common import box_lattice, gold_eps
from surrogate.design import evaluate_design
from surrogate.shapes import get_family
from surrogate.solver import Lattice, SolverSettings, solve

DESIGN = {"disk_diameter_nm": 150.0, "peg_length_nm": 35.0, "peg_width_nm": 25.0, "thickness_nm": 30.0}
OLD = SolverSettings(polarizability="ldr", dtype="complex128", preconditioner="none", tol=1e-4)
NEW = SolverSettings(tol=1e-4)


def _disk_peg(d):
    s = get_family("disk-peg").sites(DESIGN, d)
    return Lattice(s.indices, s.spacing_nm, origin_nm=s.origin_nm)


def _one(lat, wl, settings, reps=3):
    eps = [complex(gold_eps(wl))]
    runs = [solve(lat, eps, wl, settings=settings) for _ in range(reps)]
    return runs[0].matvecs, statistics.median(r.elapsed_s for r in runs), runs[0]


def main():
    print("one wavelength, tol 1e-4: products and wall time, new (FCD, auto dtype) / old (LDR, complex128)")
    for label, make, wl in (
        ("disk-peg d=5", lambda: _disk_peg(5.0), 830.0),
        ("disk-peg d=2.5", lambda: _disk_peg(2.5), 830.0),
        ("film 300x150x50 d=5", lambda: box_lattice(300, 150, 50, 5.0), 800.0),
    ):
        lat = make()
        m_old, t_old, s_old = _one(lat, wl, OLD)
        m_new, t_new, s_new = _one(lat, wl, NEW)
        m_pc, t_pc, s_pc = _one(lat, wl, NEW.replace(preconditioner="circulant"))
        print(f"  {label:24s} N={lat.n_dipoles:6d} products {m_old:5d} -> {m_new:5d} ({m_new / m_old:.2f}x)  "
              f"wall {t_old:6.2f} -> {t_new:6.2f} s ({t_new / t_old:.2f}x)  converged {s_old.converged}/{s_new.converged} "
              f"dtype {s_new.dtype}, preconditioner {s_new.preconditioner}; with the circulant: products "
              f"{m_pc / m_old:.2f}x, wall {t_pc / t_old:.2f}x")
    print("whole demo-setting design (d = 5 nm, 600:1000:50 + 830 nm, tol 1e-4)")
    wl = np.arange(600.0, 1001.0, 50.0)
    out = {}
    for name, st in (("old", OLD), ("new", NEW)):
        t0 = time.perf_counter()
        ev = evaluate_design("disk-peg", DESIGN, laser_nm=830.0, wavelengths_nm=wl, spacing_nm=5.0,
                             hotspot_offset_nm=8.0, settings=st)
        out[name] = (time.perf_counter() - t0, ev.figures["total_iterations"], ev.figures)
    (t_o, it_o, f_o), (t_n, it_n, f_n) = out["old"], out["new"]
    print(f"  iterations {it_o} -> {it_n} ({it_n / it_o:.2f}x); wall {t_o:.1f} -> {t_n:.1f} s ({t_n / t_o:.2f}x)")
    print(f"  resonance {f_o['resonance_nm']:.1f} -> {f_n['resonance_nm']:.1f} nm; enhancement at the laser "
          f"{f_o['enhancement_at_laser']:.1f} -> {f_n['enhancement_at_laser']:.1f}")


if __name__ == "__main__":
    main()
