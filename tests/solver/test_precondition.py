"""The circulant preconditioner: symmetry, exactness on a full box, agreement, savings."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError
from surrogate.solver import Lattice, dense_interaction_matrix, memory_estimate_bytes, solve
from surrogate.solver._krylov import krylov_solve
from surrogate.solver._polarizability import polarizability
from surrogate.solver._precondition import CirculantPreconditioner, circulant_pays, preconditioner_memory_bytes

from .helpers import box_lattice, gold_eps, mie_cross_sections_nm2, sphere_lattice

GOLD_800 = complex(gold_eps(800.0))


def _dense_m(pc, n3):
    # Columns M e_j of the preconditioner, as a dense matrix.
    return np.stack([pc.apply(np.eye(n3, 1, -j, dtype=complex).ravel()) for j in range(n3)], axis=1)


def _mixed_lattice():
    # An L-shaped, two-material lattice in a 6 x 5 x 3 box (fill 0.8), normal axis z.
    g = np.meshgrid(np.arange(6), np.arange(5), np.arange(3), indexing="ij")
    idx = np.stack([a.ravel() for a in g], axis=1)
    idx = idx[~((idx[:, 0] >= 3) & (idx[:, 1] >= 3))]
    mat = (idx[:, 0] >= 4).astype(np.int64)
    return Lattice(idx, 3.0, material_index=mat)


@pytest.mark.parametrize("filtered", [False, True])
def test_preconditioner_is_complex_symmetric(filtered):
    # M^T = M is what keeps preconditioned COCG a short recurrence (van der Vorst &
    # Melissen 1990); checked on the dense M of a two-material L-shape, whose box has
    # even lateral sizes (the Strang half-length offset) and an odd one.  Exact
    # linear algebra identity; measured asymmetry ~1e-16 relative; tolerance 1e-12.
    lat = _mixed_lattice()
    k = 2 * np.pi / 800.0
    alpha = polarizability(np.array([GOLD_800, 2.25])[lat.material_index], 3.0, k, kind="fcd")
    pc = CirculantPreconditioner(lat.indices, 3.0, k, alpha, filtered=filtered, shift=0.4)
    m = _dense_m(pc, 3 * lat.n_dipoles)
    assert np.abs(m - m.T).max() < 1e-12 * np.abs(m).max()
    assert np.abs(m - m.conj().T).max() > 1e-3 * np.abs(m).max()  # not Hermitian: the check can fail


@pytest.mark.parametrize("filtered", [False, True])
@pytest.mark.parametrize("shape", [(6, 5, 3), (5, 4, 4), (3, 7, 4)])
def test_full_box_preconditioner_is_the_system_up_to_the_wrap(filtered, shape):
    # On a solid box with one alpha and no shift, P = diag(1/alpha) - G exactly for
    # every pair whose lateral offsets are below half the box (Strang's circulant
    # keeps those Toeplitz entries, Strang 1986); the normal axis is exact.  P is
    # recovered as (D M D)^-1 and compared with dense_interaction_matrix (direct sum).
    # Measured agreement ~1e-12 relative; tolerance 1e-9.  The wrapped pairs must differ.
    lat = box_lattice(*shape, 2.0)
    k = 2 * np.pi / 700.0
    a = complex(polarizability(GOLD_800, 2.0, k, kind="fcd"))
    pc = CirculantPreconditioner(lat.indices, 2.0, k, np.full(lat.n_dipoles, a), filtered=filtered, shift=0.0)
    n3 = 3 * lat.n_dipoles
    p = np.linalg.inv(a * _dense_m(pc, n3))  # D M D = P^-1 with D = sqrt(a)
    ref = -dense_interaction_matrix(lat.positions_nm, k, filtered_spacing_nm=2.0 if filtered else None)
    ref[np.diag_indices(n3)] += 1.0 / a
    off = np.abs(np.repeat(lat.indices, 3, axis=0)[:, None, :] - np.repeat(lat.indices, 3, axis=0)[None, :, :])
    lat_axes = [ax for ax in range(3) if ax != pc.normal_axis_]
    n = np.array(lat.grid_shape)
    exact = np.all([2 * off[..., ax] < n[ax] for ax in lat_axes], axis=0)
    scale = np.abs(ref).max()
    assert np.abs(p - ref)[exact].max() < 1e-9 * scale
    assert np.abs(p - ref)[~exact].max() > 1e-4 * scale


def test_shift_enters_as_a_relative_loss_on_the_diagonal():
    # c = (1 - i tau) <1/alpha>: with one material, P(tau) - P(0) = -i tau/alpha I
    # (definition in _precondition.py); exact identity, measured ~1e-13, tolerance 1e-9.
    lat = box_lattice(4, 4, 2, 2.0)
    k = 2 * np.pi / 800.0
    a = complex(polarizability(GOLD_800, 2.0, k, kind="fcd"))
    alpha = np.full(lat.n_dipoles, a)
    n3 = 3 * lat.n_dipoles
    p0 = np.linalg.inv(a * _dense_m(CirculantPreconditioner(lat.indices, 2.0, k, alpha, filtered=True, shift=0.0), n3))
    p1 = np.linalg.inv(a * _dense_m(CirculantPreconditioner(lat.indices, 2.0, k, alpha, filtered=True, shift=0.3), n3))
    assert np.abs(p1 - p0 - (-0.3j / a) * np.eye(n3)).max() < 1e-9 * np.abs(p0).max()


def test_preconditioned_cocg_solves_a_dense_system_to_tolerance():
    # Against scipy's reference: numpy.linalg.solve of the dense scaled system
    # (I - D G D) y = D E of a gold L-shape; preconditioned COCG at tol 1e-10 agrees
    # to ~1e-10 relative; tolerance 1e-8.
    lat = _mixed_lattice()
    k = 2 * np.pi / 800.0
    alpha = polarizability(np.array([GOLD_800, 2.25])[lat.material_index], 3.0, k, kind="fcd")
    s3 = np.repeat(np.sqrt(alpha), 3)
    a_s = np.eye(3 * lat.n_dipoles) - s3[:, None] * dense_interaction_matrix(lat.positions_nm, k, filtered_spacing_nm=3.0) * s3[None, :]
    b = s3 * np.tile([1.0, 0.0, 0.0], lat.n_dipoles)
    ref = np.linalg.solve(a_s, b)
    pc = CirculantPreconditioner(lat.indices, 3.0, k, alpha, filtered=True, shift=0.4)
    kr = krylov_solve(lambda v: a_s @ v, b.astype(complex), tol=1e-10, preconditioner=pc)
    assert kr.converged
    assert np.linalg.norm(kr.x - ref) < 1e-8 * np.linalg.norm(ref)


@pytest.mark.parametrize("kind, mie_tol", [("fcd", 0.10), ("ldr", 0.065)])
def test_preconditioned_and_plain_gold_sphere_agree_with_each_other_and_mie(kind, mie_tol):
    # 40 nm gold sphere in water at 520 nm, d = 4 nm.  Preconditioned and plain COCG
    # solve the same system, so at tol 1e-5 their c_ext agree to ~1e-6 (tolerance
    # 2e-5, twice the solver tolerance).  Against Mie (miepython) the measured
    # lattice error at this spacing is -6.2 % (LDR, as in tests/solver/test_mie.py)
    # and -9.8 % (FCD); tolerances just above.
    lat = sphere_lattice(20.0, 4.0)
    eps = complex(gold_eps(520.0))
    ext_mie, _, _ = mie_cross_sections_nm2(eps, 20.0, 520.0, n_host=1.33)
    plain = solve(lat, [eps], 520.0, n_host=1.33, polarizability=kind, preconditioner="none")
    pre = solve(lat, [eps], 520.0, n_host=1.33, polarizability=kind, preconditioner="circulant")
    assert plain.converged and pre.converged and pre.preconditioner == "circulant"
    assert pre.c_ext_nm2 == pytest.approx(plain.c_ext_nm2, rel=2e-5)
    assert pre.c_abs_nm2 == pytest.approx(plain.c_abs_nm2, rel=2e-5)
    assert abs(pre.c_ext_nm2 / ext_mie - 1) < mie_tol


def test_iterations_drop_on_a_thin_gold_film():
    # Gold film 120 x 60 x 20 nm at 800 nm, d = 5 nm, LDR (the old default).
    # Measured: 991 products plain, 290 preconditioned (0.29x); the test asks
    # for at most 0.5x, so it fails if the preconditioner stops paying.
    lat = box_lattice(24, 12, 4, 5.0)
    plain = solve(lat, [GOLD_800], 800.0, polarizability="ldr", preconditioner="none")
    pre = solve(lat, [GOLD_800], 800.0, polarizability="ldr", preconditioner="circulant")
    assert plain.converged and pre.converged
    assert pre.matvecs <= 0.5 * plain.matvecs
    assert pre.c_ext_nm2 == pytest.approx(plain.c_ext_nm2, rel=2e-5)


@pytest.mark.parametrize("dtype", [np.complex128, np.complex64])
def test_memory_estimate_bounds_the_traced_peak(dtype):
    # The estimate made before allocation must bound the peak that tracemalloc
    # (which sees numpy's buffers) records while the object is built, and the
    # bytes it holds; measured peak / estimate 0.82-0.97 on boxes of 3,600-144,000 sites; lower bound 0.7.
    import tracemalloc

    lat = box_lattice(30, 20, 6, 5.0)
    k = 2 * np.pi / 800.0
    alpha = np.full(lat.n_dipoles, 0.3 * 125 + 0j)
    est = preconditioner_memory_bytes(lat.grid_shape, dtype)
    tracemalloc.start()
    pc = CirculantPreconditioner(lat.indices, 5.0, k, alpha, filtered=True, shift=0.4, dtype=dtype)
    pc.apply(np.ones(3 * lat.n_dipoles, dtype=dtype))
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert pc.nbytes <= peak <= est
    assert peak > 0.7 * est
    assert pc.setup_s_ > 0
    assert memory_estimate_bytes(lat, dtype, preconditioner="circulant") - memory_estimate_bytes(lat, dtype) >= est


def test_auto_rule_and_bad_choices():
    film = box_lattice(60, 30, 10, 5.0)
    sphere = sphere_lattice(30.0, 5.0)
    bar = box_lattice(40, 8, 8, 5.0)
    assert circulant_pays(film.grid_shape, film.n_dipoles, "ldr")
    assert circulant_pays(sphere.grid_shape, sphere.n_dipoles, "ldr")
    assert not circulant_pays(film.grid_shape, film.n_dipoles, "fcd")  # measured: never pays with FCD
    assert not circulant_pays(bar.grid_shape, bar.n_dipoles, "fcd")
    with pytest.raises(InvalidParameterError, match="preconditioner must be one of"):
        solve(bar, [GOLD_800], 800.0, preconditioner="jacobi")
    with pytest.raises(InvalidParameterError, match="preconditioner must be 'none' or 'auto'"):
        solve(bar, [GOLD_800], 800.0, method="bicgstab", preconditioner="circulant")
    s = solve(bar, [GOLD_800], 800.0, method="bicgstab", preconditioner="auto", tol=1e-3)
    assert s.preconditioner == "none"
