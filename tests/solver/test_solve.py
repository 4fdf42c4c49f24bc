"""Solver behaviour: optical theorem, invariances, methods, non-convergence, memory."""

import tracemalloc

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError, InvalidTypeError, LatticeTooLargeError, NotConvergedWarning
from surrogate.solver import (
    Lattice,
    c_sca_far_field_nm2,
    memory_estimate_bytes,
    solve,
    solve_polarizations,
    solve_sweep,
)

from .helpers import box_lattice, gold_eps, sphere_lattice

GOLD_700 = complex(gold_eps(704.5))  # Johnson & Christy tabulated point (n = 0.13, k = 4.103)


@pytest.mark.parametrize("kind", ["ldr", "fcd", "rrcm"])
def test_extinction_is_absorption_plus_far_field_scattering(kind):
    # Optical theorem (Draine 1988): c_ext = c_abs + c_sca with c_sca integrated
    # independently from the far field.  Gold bar 60 x 20 x 20 nm, d = 4 nm, tol 1e-8:
    # the identity is exact at convergence; measured gap < 1e-6; tolerance 1 %
    # as specified, and tighter 1e-4 to catch drift.
    lat = box_lattice(15, 5, 5, 4.0)
    s = solve(lat, [GOLD_700], 704.5, n_host=1.33, polarizability=kind, tol=1e-8)
    assert s.converged
    c_sca = c_sca_far_field_nm2(s, lat)
    assert abs(s.c_ext_nm2 - (s.c_abs_nm2 + c_sca)) < 1e-4 * s.c_ext_nm2


def test_rotating_shape_and_fields_together_changes_nothing():
    # Rotation invariance of Maxwell's equations: rotate lattice, polarization and
    # propagation by a cube symmetry; cross sections equal to the solver tolerance.
    lat = box_lattice(9, 4, 3, 3.0)
    base = solve(lat, [GOLD_700], 704.5, e_direction=(1, 0, 0), k_direction=(0, 0, 1), tol=1e-9)
    rot = np.array([[0, 0, 1], [1, 0, 0], [0, 1, 0]])
    rot2 = np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]]) @ rot
    for r in (rot, rot2):
        s = solve(lat.transformed(r), [GOLD_700], 704.5, e_direction=r @ [1, 0, 0], k_direction=r @ [0, 0, 1], tol=1e-9)
        assert s.c_ext_nm2 == pytest.approx(base.c_ext_nm2, rel=1e-7)
        assert s.c_abs_nm2 == pytest.approx(base.c_abs_nm2, rel=1e-7)


def test_all_methods_agree_with_the_direct_solve():
    # Dense LU (numpy.linalg.solve) is the reference; Krylov results at tol 1e-8
    # agree to ~1e-8 relative; tolerance 1e-6.
    lat = box_lattice(8, 4, 4, 4.0)
    ref = solve(lat, [GOLD_700], 704.5, method="direct")
    assert ref.converged and ref.residual < 1e-12
    for m in ("cocg", "bicgstab", "gmres"):
        s = solve(lat, [GOLD_700], 704.5, method=m, tol=1e-8)
        assert s.converged and s.residual <= 1e-8
        assert s.c_ext_nm2 == pytest.approx(ref.c_ext_nm2, rel=1e-6)
        assert np.allclose(s.polarization, ref.polarization, rtol=0, atol=1e-6 * np.abs(ref.polarization).max())


def test_complex64_stays_within_solver_tolerance():
    # Single precision reaches tol = 1e-5 on a gold sphere at its plasmon peak
    # (~50 iterations); c_ext within 1e-4 of the double-precision solve.
    lat = sphere_lattice(20.0, 2.0)
    eps = complex(gold_eps(520.9))
    d = solve(lat, [eps], 520.9, n_host=1.33)
    s = solve(lat, [eps], 520.9, n_host=1.33, dtype=np.complex64)
    assert s.converged and s.dtype == "complex64"
    assert s.c_ext_nm2 == pytest.approx(d.c_ext_nm2, rel=1e-4)


def test_complex64_reports_stagnation_honestly_on_hard_gold():
    # Near-infrared gold needs ~600 iterations; float32 rounding (6e-8) times the
    # conditioning can floor the true residual above 1e-5.  Then the result must
    # say so (converged=False, "stagnation"), while c_ext is still within 1e-4.
    lat = box_lattice(20, 5, 5, 4.0)
    d = solve(lat, [GOLD_700], 704.5)
    import warnings

    with warnings.catch_warnings(record=True):
        warnings.simplefilter("always")
        s = solve(lat, [GOLD_700], 704.5, dtype=np.complex64)
    assert s.converged == (s.residual <= s.tol)
    if not s.converged:
        assert s.stop_reason == "stagnation"
    assert s.c_ext_nm2 == pytest.approx(d.c_ext_nm2, rel=1e-4)


def test_non_convergence_is_a_result_not_an_exception():
    lat = box_lattice(20, 5, 5, 4.0)
    with pytest.warns(NotConvergedWarning, match="converged=False"):
        s = solve(lat, [GOLD_700], 704.5, max_iter=5, dtype=np.complex128)
    assert not s.converged
    assert s.n_iter == 5 and s.stop_reason == "max_iter"
    assert s.residual > s.tol
    # the true residual is reported: recompute it with a fresh solve started there
    # (double precision: in complex64 a restart loses the Krylov history's accuracy)
    s2 = solve(lat, [GOLD_700], 704.5, x0=s.polarization, dtype=np.complex128)
    assert s2.converged and s2.n_iter < solve(lat, [GOLD_700], 704.5, dtype=np.complex128).n_iter + 5


def test_memory_limit_refuses_before_allocating():
    # A 100^3 block (1e6 dipoles) needs ~GiB; with a 100 MiB limit solve must
    # raise before building anything: traced allocations stay far below one grid.
    lat = Lattice(np.stack(np.unravel_index(np.arange(10**6), (100, 100, 100)), axis=1), 1.0)
    est = memory_estimate_bytes(lat, np.complex128)
    assert est > 2**30
    tracemalloc.start()
    tracemalloc.reset_peak()
    with pytest.raises(LatticeTooLargeError) as info:
        solve(lat, [GOLD_700], 704.5, memory_limit_bytes=100 * 2**20)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    msg = str(info.value)
    assert "GiB" in msg and f"{est / 2**30:.2f}" in msg and "0.10 GiB" in msg
    assert peak < 0.05 * est
    assert isinstance(info.value, MemoryError)


def test_memory_estimate_covers_the_measured_peak():
    # The estimate should bound the real peak (tracemalloc sees numpy buffers)
    # without being wildly pessimistic (< 4x, common practice, no source).
    lat = sphere_lattice(20.0, 1.0)
    tracemalloc.start()
    tracemalloc.reset_peak()
    solve(lat, [GOLD_700], 704.5, max_iter=3, tol=1e-5) if False else None
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NotConvergedWarning)
        solve(lat, [GOLD_700], 704.5, max_iter=3)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    est = memory_estimate_bytes(lat, np.complex128)
    assert peak <= est < 4 * peak


def test_sweep_warm_start_saves_iterations_and_reports_progress():
    # Warm start from the previous wavelength's dipoles (scaled by the best
    # factor) must need fewer iterations in total than cold starts, and give the
    # same cross sections to the tolerance.
    lat = box_lattice(20, 5, 5, 4.0)
    wls = np.array([690.0, 700.0, 710.0, 720.0])
    eps = gold_eps(wls)[:, None]
    calls = []
    warm = solve_sweep(lat, eps, wls, progress=lambda i, n: calls.append((i, n)))
    cold = solve_sweep(lat, eps, wls, warm_start=False)
    assert calls == [(0, 4), (1, 4), (2, 4), (3, 4)]
    assert sum(s.n_iter for s in warm[1:]) < sum(s.n_iter for s in cold[1:])
    for w, c in zip(warm, cold):
        assert w.converged and c.converged
        assert w.c_ext_nm2 == pytest.approx(c.c_ext_nm2, rel=1e-4)


def test_two_polarizations_of_a_sphere_agree():
    # A sphere (with the cube-symmetric lattice) has the same cross sections for
    # x and y polarization: equal to the solver tolerance.
    lat = sphere_lattice(10.0, 2.0)
    sx, sy = solve_polarizations(lat, [GOLD_700], 704.5, tol=1e-9)
    assert sx.c_ext_nm2 == pytest.approx(sy.c_ext_nm2, rel=1e-7)
    one = solve(lat, [GOLD_700], 704.5, e_direction=(0, 1, 0), tol=1e-9)
    assert one.c_ext_nm2 == pytest.approx(sy.c_ext_nm2, rel=1e-7)


@pytest.mark.parametrize(
    "kwargs, exc, text",
    [
        (dict(eps=[1 - 1j]), InvalidParameterError, "imaginary part >= 0"),
        (dict(eps=[]), InvalidParameterError, "at least 1"),
        (dict(wavelength_nm=-5.0), InvalidParameterError, "wavelength_nm must be in (0, inf) nm; got -5.0"),
        (dict(e_direction=(0, 0, 1)), InvalidParameterError, "perpendicular"),
        (dict(method="lu"), InvalidParameterError, "method must be one of"),
        (dict(polarizability="cm"), InvalidParameterError, "polarizability must be one of"),
        (dict(tol=0.0), InvalidParameterError, "tol must be in (0, 1)"),
        (dict(max_iter=0), InvalidParameterError, "max_iter must be an integer"),
        (dict(dtype=np.float64), InvalidParameterError, "dtype must be"),
        (dict(x0=np.zeros((2, 3))), InvalidParameterError, "x0 must be"),
        (dict(lattice="sphere"), InvalidTypeError, "lattice must be"),
    ],
)
def test_bad_input_gives_one_line_error(kwargs, exc, text):
    args = dict(lattice=sphere_lattice(4.0, 2.0), eps=[2.25], wavelength_nm=500.0)
    args.update(kwargs)
    lattice, eps, wl = args.pop("lattice"), args.pop("eps"), args.pop("wavelength_nm")
    with pytest.raises(exc) as info:
        solve(lattice, eps, wl, **args)
    assert text in str(info.value) and "\n" not in str(info.value) and "got" in str(info.value)
