"""Cross sections against Mie theory (miepython) and coated-sphere Mie (Bohren & Huffman 8.1).

Lattice spheres use the volume-preserving convention of helpers.sphere_lattice,
so the Mie radius is the nominal radius.  Tolerances sit just above the
disagreement measured at the stated spacings (see each comment).
"""

import numpy as np
import pytest

from surrogate.solver import estimate_zero_spacing, solve

from .helpers import coated_sphere_cross_sections_nm2, gold_eps, mie_cross_sections_nm2, sphere_lattice


@pytest.mark.parametrize("kind, tol_coarse, tol_fine", [("ldr", 0.009, 0.005), ("fcd", 0.010, 0.005)])
def test_dielectric_sphere_within_two_percent(kind, tol_coarse, tol_fine):
    # miepython, m = 1.5, 60 nm sphere in vacuum at 500 nm (x = 0.38).  Measured
    # c_ext errors at d = 4 / 2 nm: LDR +0.82 % / +0.47 %, FCD +0.96 % / +0.48 %
    # (the earlier, inconsistent FCD gave +2.55 % / +1.28 % and fails here).
    ext_mie, _, _ = mie_cross_sections_nm2(2.25, 30.0, 500.0)
    errs = []
    for d, tol in ((4.0, tol_coarse), (2.0, tol_fine)):
        s = solve(sphere_lattice(30.0, d), [2.25], 500.0, k_direction=(0, 0, 1), polarizability=kind)
        assert s.converged
        errs.append(abs(s.c_ext_nm2 / ext_mie - 1))
        assert errs[-1] < tol
        assert abs(s.c_abs_nm2) < 1e-9 * s.c_ext_nm2  # lossless: no absorption
    assert errs[1] < errs[0] < 0.02 + 0.01  # within 2 % at the fine spacing, falling


def test_gold_sphere_in_water_at_plasmon_peak():
    # miepython, 40 nm gold sphere (Johnson & Christy) in water (n = 1.33) at 520 nm.
    # Measured LDR c_ext errors at d = 3.93 / 1.99 / 1.25 nm: -6.24 % / -3.88 % / -2.67 %
    # (c_abs: -5.38 % / -3.35 % / -2.31 %); tolerances just above, falling with d.
    eps = complex(gold_eps(520.0))
    ext_mie, _, abs_mie = mie_cross_sections_nm2(eps, 20.0, 520.0, n_host=1.33)
    errs = []
    for d, tol_ext, tol_abs in ((4.0, 0.065, 0.056), (2.0, 0.041, 0.035), (1.25, 0.028, 0.024)):
        s = solve(sphere_lattice(20.0, d), [eps], 520.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="ldr")
        assert s.converged and s.polarizability == "ldr"
        errs.append(abs(s.c_ext_nm2 / ext_mie - 1))
        assert errs[-1] < tol_ext
        assert abs(s.c_abs_nm2 / abs_mie - 1) < tol_abs
    assert errs[0] > errs[1] > errs[2]


@pytest.mark.parametrize(
    "diameter_nm, peak_nm, spacings, tols",
    [
        # Measured FCD c_ext errors (c_abs: 40 nm -6.24 / -2.76 / -2.49 / -1.65 %, 60 nm
        # within +-0.3 %; held to the same tolerances):
        # 40 nm, 524 nm: d = 3 / 2.5 / 2 / 1.5: -7.22 / -3.52 / -3.16 / -2.23 %
        (40.0, 524.0, (3.0, 2.5, 2.0, 1.5), (0.073, 0.036, 0.032, 0.023)),
        # 60 nm, 536 nm: -3.29 / -2.57 / -1.99 / -1.49 %
        (60.0, 536.0, (3.0, 2.5, 2.0, 1.5), (0.034, 0.026, 0.020, 0.015)),
    ],
)
def test_fcd_gold_sphere_in_water_at_the_peak(diameter_nm, peak_nm, spacings, tols):
    # miepython; gold (Johnson & Christy) sphere in water (n = 1.33) at its Mie
    # extinction peak (found on a 1 nm grid).  The consistent FCD is within 4 % at
    # d <= 2.5 nm and its error falls with d; tolerances just above the measured
    # errors.  The earlier FCD (smeared contact term kept, static self term
    # -2 pi^2/9) scattered between -20 % and +0.5 % here and fails.
    eps = complex(gold_eps(peak_nm))
    ext_mie, _, abs_mie = mie_cross_sections_nm2(eps, diameter_nm / 2, peak_nm, n_host=1.33)
    errs = []
    for d, tol in zip(spacings, tols):
        s = solve(sphere_lattice(diameter_nm / 2, d), [eps], peak_nm, n_host=1.33, k_direction=(0, 0, 1), polarizability="fcd")
        assert s.converged
        errs.append(abs(s.c_ext_nm2 / ext_mie - 1))
        assert errs[-1] < tol
        assert abs(s.c_abs_nm2 / abs_mie - 1) < tol
    assert all(a > b for a, b in zip(errs, errs[1:]))


def test_gold_sphere_off_peak_is_worse_but_improves():
    # miepython, same sphere at 600 nm (eps = -9.39 + 1.53i), off the peak: the
    # lattice overestimates c_ext, as the literature warns for gold absorption
    # (Yurkin, Min & Hoekstra 2010).  Measured LDR errors at d = 3.93 / 1.99 nm:
    # +82.9 % / +63.1 %; tolerances just above, and falling.
    eps = complex(gold_eps(600.0))
    ext_mie, _, _ = mie_cross_sections_nm2(eps, 20.0, 600.0, n_host=1.33)
    e4 = solve(sphere_lattice(20.0, 4.0), [eps], 600.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="ldr").c_ext_nm2 / ext_mie - 1
    e2 = solve(sphere_lattice(20.0, 2.0), [eps], 600.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="ldr").c_ext_nm2 / ext_mie - 1
    assert 0 < e2 < e4 < 0.84
    assert e2 < 0.64


@pytest.mark.slow
def test_zero_spacing_estimate_brackets_mie():
    # miepython reference; 40 nm gold sphere in water at 520 nm, LDR, seven
    # spacings with 20..32 sites per diameter (values -3.88 .. -2.67 % of Mie).
    # Measured: observed order 3.19 (outside the accepted 0.5-2.1), so no
    # extrapolation; the bounded estimate is -2.57 % +- 2.77 % and contains Mie.
    # (The earlier least-squares extrapolation gave -0.54 % +- 2.81 %.)
    eps = complex(gold_eps(520.0))
    ext_mie, _, _ = mie_cross_sections_nm2(eps, 20.0, 520.0, n_host=1.33)
    ds, vals = [], []
    for n in range(20, 33, 2):
        lat = sphere_lattice(20.0, 40.0 / n)
        s = solve(lat, [eps], 520.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="ldr")
        ds.append(lat.spacing_nm)
        vals.append(s.c_ext_nm2)
    est = estimate_zero_spacing(ds, vals)
    assert est.method == "bounded" and not est.asymptotic
    assert abs(est.value - ext_mie) <= est.error
    assert est.error < 0.028 * ext_mie  # and the bar stays informative (measured 2.77 %)


def test_core_shell_sphere_matches_coated_mie():
    # Coated-sphere Mie, Bohren & Huffman section 8.1 (helpers).  Gold core
    # (r = 14 nm) in a high-index shell (eps = 4, outer 20 nm) in water at its
    # 560 nm peak: two materials on one lattice.  Measured LDR c_ext errors at
    # d = 2 / 1.6 nm: -20.6 % / -14.6 % (c_abs -20.1 % / -14.1 %; -12.8 % at 1.25 nm):
    # the metal-dielectric interface converges slowly.  Tolerances just above, falling.
    eps_core, eps_shell = complex(gold_eps(560.0)), 4.0 + 0j
    ext_ref, _, abs_ref = coated_sphere_cross_sections_nm2(eps_core, eps_shell, 14.0, 20.0, 560.0, n_host=1.33)
    errs = []
    for d, tol in ((2.0, 0.21), (1.6, 0.15)):
        lat = sphere_lattice(14.0, d, shell_radius_nm=20.0)
        assert set(np.unique(lat.material_index)) == {0, 1}
        s = solve(lat, [eps_core, eps_shell], 560.0, n_host=1.33, k_direction=(0, 0, 1), polarizability="ldr")
        assert s.converged
        errs.append(abs(s.c_ext_nm2 / ext_ref - 1))
        assert errs[-1] < tol
        assert abs(s.c_abs_nm2 / abs_ref - 1) < tol
    assert errs[1] < errs[0]


def test_two_materials_with_equal_eps_reproduce_one_material():
    # Defining property of per-site materials: labelling half the sites as a
    # second material with the same eps changes nothing (to solver tolerance).
    eps = complex(gold_eps(520.0))
    lat = sphere_lattice(14.0, 2.0, shell_radius_nm=20.0)
    one = solve(lat, [eps, eps], 520.0, n_host=1.33, tol=1e-9)
    from surrogate.solver import Lattice

    plain = Lattice(lat.indices, lat.spacing_nm, origin_nm=lat.origin_nm)
    ref = solve(plain, [eps], 520.0, n_host=1.33, tol=1e-9)
    assert one.c_ext_nm2 == pytest.approx(ref.c_ext_nm2, rel=1e-7)
