"""The interaction tensor and its FFT product."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import dblquad

from surrogate.solver import FFTInteraction, dense_interaction_matrix, green_tensor
from surrogate.solver._green import green_coefficients


@st.composite
def random_lattices(draw):
    """Random site sets inside a small box (1..6 per axis), 1..80 sites."""
    shape = [draw(st.integers(1, 6)) for _ in range(3)]
    n_box = int(np.prod(shape))
    seed = draw(st.integers(0, 2**31 - 1))
    rng = np.random.default_rng(seed)
    n = draw(st.integers(1, min(80, n_box)))
    flat = rng.choice(n_box, size=n, replace=False)
    idx = np.stack(np.unravel_index(flat, shape), axis=1)
    p = rng.normal(size=(n, 3)) + 1j * rng.normal(size=(n, 3))
    return idx, p


@settings(derandomize=True, max_examples=40, deadline=None)
@given(random_lattices(), st.sampled_from([False, True]), st.floats(0.5, 3.0), st.floats(0.001, 0.05))
def test_fft_product_equals_dense_product(lat, filtered, spacing_nm, k_per_nm):
    # Reference: the dense matrix of G(r_i - r_j) built pair by pair (no FFT).
    # 1e-10 relative: both are double precision; measured disagreement ~1e-15.
    idx, p = lat
    op = FFTInteraction(idx, spacing_nm, k_per_nm, filtered=filtered)
    g = dense_interaction_matrix(idx * spacing_nm, k_per_nm, filtered_spacing_nm=spacing_nm if filtered else None)
    ref = (g @ p.reshape(-1)).reshape(-1, 3)
    out = op.apply(p)
    scale = max(np.linalg.norm(ref), 1e-300)
    assert np.linalg.norm(out - ref) <= 1e-10 * scale + 1e-300


@settings(derandomize=True, max_examples=15, deadline=None)
@given(random_lattices(), st.sampled_from([False, True]))
def test_interaction_matrix_is_complex_symmetric(lat, filtered):
    # Reciprocity: G(R)^T = G(-R) = G(R), so the matrix equals its transpose
    # (not its conjugate transpose).  1e-14: exact up to rounding.
    idx, _ = lat
    g = dense_interaction_matrix(idx * 1.3, 0.02, filtered_spacing_nm=1.3 if filtered else None)
    assert np.max(np.abs(g - g.T)) <= 1e-14 * max(np.max(np.abs(g)), 1.0)
    if idx.shape[0] > 1:
        assert np.max(np.abs(g - g.conj().T)) > 0  # and it is not Hermitian


def test_complex64_product_stays_at_single_precision():
    # complex64 transforms: expect ~1e-7 relative error (single precision eps 6e-8
    # times log2 of the grid); 1e-5 leaves room and is still below tol=1e-5 solves.
    rng = np.random.default_rng(1)
    idx = np.stack(np.unravel_index(rng.choice(512, 200, replace=False), (8, 8, 8)), axis=1)
    p = rng.normal(size=(200, 3)) + 1j * rng.normal(size=(200, 3))
    ref = FFTInteraction(idx, 1.0, 0.02, filtered=True).apply(p)
    out = FFTInteraction(idx, 1.0, 0.02, filtered=True, dtype=np.complex64).apply(p.astype(np.complex64))
    assert np.linalg.norm(out - ref) / np.linalg.norm(ref) < 1e-5


def test_point_tensor_is_the_oscillating_dipole_field():
    # Jackson, Classical Electrodynamics 3rd ed. eq. (9.18): for p along z at
    # distance r on the x axis, E = e^{ikr} [k^2/r + (ik/r^2 - 1/r^3)] p (transverse),
    # and on the z axis E = 2 e^{ikr} (1/r^3 - ik/r^2) p.  Exact formulas: 1e-13.
    k, r = 0.03, 7.0
    gx = green_tensor(np.array([r, 0.0, 0.0]), k)
    gz = green_tensor(np.array([0.0, 0.0, r]), k)
    e = np.exp(1j * k * r)
    assert gx[2, 2] == pytest.approx(e * (k * k / r + 1j * k / r**2 - 1.0 / r**3), rel=1e-13)
    assert gz[2, 2] == pytest.approx(2.0 * e * (1.0 / r**3 - 1j * k / r**2), rel=1e-13)


@pytest.mark.parametrize("r_nm", [1.0, 1.7320508, 3.0])
def test_filtered_static_tensor_matches_its_fourier_integral(r_nm):
    # Definition (Piller & Martin 1998; Yurkin, Min & Hoekstra 2010): the FCD
    # interaction is the inverse Fourier transform of the principal-value part of the
    # static tensor, -4 pi (q q / q^2 - I/3), restricted to |q| < pi/d (the contact
    # term -(4 pi/3) delta I stays in Clausius-Mossotti).  Direct numerical quadrature
    # along z: G_zz = -(1/pi) int q^2 (mu^2 - 1/3) cos(q r mu).  Quadrature ~1e-9.
    d = 1.0
    kf = np.pi / d
    a, b = green_coefficients(np.array([r_nm]), 1e-9, filtered_spacing_nm=d)
    zz, _ = dblquad(lambda mu, q: q * q * (mu * mu - 1 / 3) * np.cos(q * r_nm * mu), 0, kf, -1, 1)
    xx, _ = dblquad(lambda mu, q: q * q * (0.5 * (1 - mu * mu) - 1 / 3) * np.cos(q * r_nm * mu), 0, kf, -1, 1)
    assert (a + b).real[0] == pytest.approx(-zz / np.pi, rel=1e-7, abs=1e-12)
    assert a.real[0] == pytest.approx(-xx / np.pi, rel=1e-7, abs=1e-12)


@pytest.mark.parametrize("k", [1e-9, 0.02, 0.4])
def test_filtered_tensor_trace_has_no_smeared_contact_term(k):
    # Vector calculus: trace (k^2 I + grad grad) g = 2 k^2 g + (nabla^2 + k^2) g, and
    # (nabla^2 + k^2) g_F = -4 pi delta_F for the band-limited scalar.  The consistent
    # tensor adds (4 pi/3) delta_F I, so its trace is exactly 2 k^2 g_F = 2 k^2 u/r at
    # every r != 0.  The earlier tensor (the full derivative) fails this by 4 pi delta_F,
    # up to 1e0 relative near r = d.  Rounding only: 1e-10.
    from scipy.special import sici

    d = 1.0
    kf = np.pi / d
    r = np.array([0.6, 1.0, 1.4142136, 2.0, 3.7])
    a, b = green_coefficients(r, k, filtered_spacing_nm=d)
    si_a, ci_a = sici((kf - k) * r)
    si_b, ci_b = sici((kf + k) * r)
    u = (np.cos(k * r) * (si_a + si_b) + np.sin(k * r) * (ci_a - ci_b)) / np.pi + 1j * np.sin(k * r)
    np.testing.assert_allclose(3 * a + b, 2 * k * k * u / r, rtol=1e-10, atol=1e-12)


@pytest.mark.parametrize("kd", [0.05, 0.3, 1.0])
def test_filtered_tensor_tends_to_the_fcd_self_term_at_zero(kd):
    # Derivation in _polarizability.py: the FCD self term M / d^3 (Yurkin, Min &
    # Hoekstra 2010) is the r -> 0 limit of the consistent filtered tensor, isotropic.
    # The remainder is O(r^2): measured 1.7-2.0e-4 / d^3 at r = 1e-2 d and 100 times
    # less at 1e-3 d (closer, rounding of the u/r^3 terms takes over); tolerance 3e-6.
    from surrogate.solver._polarizability import fcd_self_term

    d = 2.0
    k = kd / d
    m = fcd_self_term(kd) / d**3
    rem = []
    for f in (1e-2, 1e-3):
        g = green_tensor(np.array([[f * d, 0.0, 0.0], [0.0, 0.0, f * d]]), k, filtered_spacing_nm=d)
        rem.append(max(float(np.max(np.abs(np.diag(t) - m))) for t in g) * d**3)
        assert all(abs(t[0, 1]) + abs(t[0, 2]) + abs(t[1, 2]) < 1e-12 for t in g)
    assert rem[1] < 3e-6
    assert 50 < rem[0] / rem[1] < 200  # second order in r


def test_filtered_tensor_tends_to_point_tensor_far_away():
    # The filter removes wavenumbers above pi/d.  Far from the source (r >> d) the
    # filtered tensor is the point tensor plus the band-limited principal-value tail
    # -4 pi delta_F (n n - I/3), which oscillates like cos(k_F r) / r^2 (the sharp
    # cut-off's ringing); the rest differs by about 1/(k_F r) relative.  At r = 400 d
    # it must be < 1 %.
    from surrogate.solver._green import smeared_delta

    k, d = 0.02, 1.0
    r = np.array([400.0])
    a_f, b_f = green_coefficients(r, k, filtered_spacing_nm=d)
    a_p, b_p = green_coefficients(r, k)
    tail = 4 * np.pi * smeared_delta(r, np.pi / d)
    assert abs(a_f[0] - tail[0] / 3 - a_p[0]) / abs(a_p[0]) < 1e-2
    assert abs(b_f[0] + tail[0] - b_p[0]) / abs(b_p[0]) < 1e-2
    # The imaginary (radiating) part is not filtered at all: equal to rounding.
    r2 = np.array([0.7, 2.0, 9.0])
    af, bf = green_coefficients(r2, k, filtered_spacing_nm=d)
    ap, bp = green_coefficients(r2, k)
    np.testing.assert_allclose(af.imag, ap.imag, rtol=1e-9)
    np.testing.assert_allclose(bf.imag, bp.imag, rtol=1e-9)
