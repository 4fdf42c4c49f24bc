"""Absorption by site and by region: energy conservation, lossless regions, coated-sphere Mie."""

import numpy as np
import pytest

from surrogate.solver import c_sca_far_field_nm2, solve

from .helpers import coated_sphere_cross_sections_nm2, gold_eps, sphere_lattice


@pytest.mark.parametrize("kind", ["fcd", "ldr"])
def test_absorbed_plus_far_field_scattered_power_is_the_extinction(kind):
    # Energy conservation (optical theorem): c_ext = c_abs + c_sca, with c_sca integrated
    # independently from the far field over the sphere of directions.  The per-site
    # absorption sums to c_abs; measured |c_ext - sum - c_sca| / c_ext below 2e-6 at
    # tol 1e-9 (quadrature and solver); tolerance 1e-5.
    eps = complex(gold_eps(700.0))
    lat = sphere_lattice(30.0, 4.0)
    s = solve(lat, [eps], 700.0, k_direction=(0, 0, 1), polarizability=kind, tol=1e-9)
    assert s.c_abs_site_nm2.shape == (lat.n_dipoles,)
    assert np.sum(s.c_abs_site_nm2) == pytest.approx(s.c_abs_nm2, rel=1e-12)
    sca = c_sca_far_field_nm2(s, lat)
    assert abs(s.c_ext_nm2 - np.sum(s.c_abs_site_nm2) - sca) < 1e-5 * s.c_ext_nm2


def test_a_lossless_region_absorbs_nothing_and_the_core_matches_coated_mie():
    # Coated-sphere Mie (Bohren & Huffman section 8.1, helpers): a gold core (14 nm) in a
    # lossless shell (eps = 4, 20 nm) in water at 560 nm.  All absorption is in the core:
    # the FCD shell sites absorb exactly nothing (their radiative term cancels, rounding
    # only), and the core's absorption is the coated sphere's c_abs.  The metal-dielectric
    # interface converges slowly and erratically: measured core absorption, FCD, at
    # d = 2 / 1.6 / 1.25 / 1.0 nm: -14.7 / -24.8 / -10.0 / -9.0 % (LDR -20.1 / -14.1 /
    # -12.3 / -11.5 %).  Tolerance at d = 1.25 nm: 11 %.
    eps_core, eps_shell = complex(gold_eps(560.0)), 4.0 + 0j
    _, _, abs_ref = coated_sphere_cross_sections_nm2(eps_core, eps_shell, 14.0, 20.0, 560.0, n_host=1.33)
    lat = sphere_lattice(14.0, 1.25, shell_radius_nm=20.0)
    s = solve(lat, [eps_core, eps_shell], 560.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="fcd")
    core = lat.material_index == 0
    shell_abs = np.abs(s.c_abs_site_nm2[~core]).max()
    assert shell_abs < 1e-12 * s.c_abs_nm2
    assert np.sum(s.c_abs_site_nm2[core]) == pytest.approx(abs_ref, rel=0.11)
    assert np.all(s.c_abs_site_nm2[core] > 0)
