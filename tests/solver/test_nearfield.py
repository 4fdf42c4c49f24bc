"""Near fields against the quasi-static sphere and full Mie near fields (miepython)."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError
from surrogate.solver import near_field, solve

from .helpers import gold_eps, mie_near_field, sphere_lattice


@pytest.mark.parametrize(
    "kind, eps, d, tols",
    [
        ("ldr", 2.25 + 0j, 1.0, (0.002, 0.002, 0.001)),
        ("ldr", -10.0 + 1.0j, 2.0, (0.035, 0.105, 0.082)),
        ("ldr", -10.0 + 1.0j, 1.0, (0.03, 0.05, 0.031)),
        ("fcd", 2.25 + 0j, 1.0, (0.006, 0.004, 0.001)),
        ("fcd", -10.0 + 1.0j, 1.0, (0.135, 0.125, 0.06)),
    ],
)
def test_pole_intensity_is_quasi_static(kind, eps, d, tols):
    # Bohren & Huffman (1983) ch. 5: outside a small sphere the field on the
    # polarization axis is E0 [1 + 2 (eps - 1)/(eps + 2) (a/r)^3], so
    # |E|^2 = |1 + 2 (eps-1)/(eps+2) (a/r)^3|^2.  a = 10 nm, lambda = 20 um,
    # points 3 / 5 / 10 nm outside.  Measured relative deviations:
    # eps = 2.25, d = 1: 0.10 / 0.12 / 0.02 %; eps = -10 + i, d = 2: 3.3 / 10.1 / 7.9 %,
    # d = 1: 2.9 / 4.7 / 3.0 %.  FCD: eps = 2.25, d = 1: 0.57 / 0.39 / 0.09 %;
    # eps = -10 + i, d = 1: 12.9 / 12.0 / 5.5 % (its total dipole is 10.8 % high: for this
    # small static metal sphere the lattice-shape error of FCD is larger than LDR's, and
    # it jitters with d: 2.8-12.9 % at the 3 nm point for d = 1.5 to 0.5 nm).  Tolerances
    # just above.
    a = 10.0
    lat = sphere_lattice(a, d)
    s = solve(lat, [eps], 20000.0, k_direction=(0, 0, 1), polarizability=kind)
    r = a + np.array([3.0, 5.0, 10.0])
    pts = np.stack([r, 0 * r, 0 * r], axis=1)
    intensity = np.sum(np.abs(near_field(s, lat, pts)) ** 2, axis=1)
    expect = np.abs(1 + 2 * (eps - 1) / (eps + 2) * (a / r) ** 3) ** 2
    assert np.all(np.abs(intensity / expect - 1) < np.array(tols))


@pytest.mark.slow
@pytest.mark.parametrize("kind, tol", [("ldr", 0.03), ("fcd", 0.05)])
def test_near_field_of_gold_sphere_matches_full_mie(kind, tol):
    # miepython e_near_cartesian (full Mie, vector spherical harmonics; its
    # conventions: exp(-i omega t), incidence +z, E along +x, m = n - ik).
    # 40 nm gold sphere in vacuum at 800 nm, LDR, d = 1.25 nm; |E|^2 at 4 / 6 / 10 nm
    # outside the pole (3 or more spacings from the surface).  Measured: +0.75 /
    # +2.46 / +2.65 %; tolerance 3 %.  FCD: +3.15 / +4.71 / +4.06 %; tolerance 5 %.
    # (At d = 1.7 nm the 2 nm point is 40 % off: near fields need 2-3 spacings of
    # clearance.)
    eps, a = complex(gold_eps(800.0)), 20.0
    lat = sphere_lattice(a, 1.25)
    s = solve(lat, [eps], 800.0, k_direction=(0, 0, 1), polarizability=kind)
    assert s.converged
    gaps = np.array([4.0, 6.0, 10.0])
    pts = np.stack([a + gaps, 0 * gaps, 0 * gaps], axis=1)
    ref = np.sum(np.abs(mie_near_field(eps, a, 800.0, pts)) ** 2, axis=1)
    got = np.sum(np.abs(near_field(s, lat, pts, chunk_size=1)) ** 2, axis=1)
    assert np.all(np.abs(got / ref - 1) < tol)


def test_chunking_does_not_change_the_field():
    # Blocks are an implementation detail: chunk sizes 1, 7 and all agree to rounding.
    lat = sphere_lattice(6.0, 2.0)
    s = solve(lat, [2.25], 500.0)
    pts = np.random.default_rng(0).normal(size=(20, 3)) * 3 + np.array([0, 0, 15.0])
    ref = near_field(s, lat, pts, chunk_size=1000)
    for c in (1, 7):
        np.testing.assert_allclose(near_field(s, lat, pts, chunk_size=c), ref, rtol=1e-12, atol=1e-15)


def test_point_on_a_dipole_is_refused():
    lat = sphere_lattice(4.0, 2.0)
    s = solve(lat, [2.25], 500.0)
    with pytest.raises(InvalidParameterError, match="must not coincide"):
        near_field(s, lat, lat.positions_nm[:1])
