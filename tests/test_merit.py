"""Figures of merit against analytic line shapes and the analytic dipole near field."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.optimize import brentq

from surrogate.merit import figures_of_merit, half_max_width, refine_peak, spot_widths


def lorentzian(x, x0, gamma):
    return 1.0 / ((x - x0) ** 2 + gamma**2)


@given(x0=st.floats(760.0, 940.0), gamma=st.floats(15.0, 80.0), step=st.sampled_from([5.0, 10.0, 20.0]))
def test_peak_of_a_lorentzian_is_exact_below_the_step(x0, gamma, step):
    # Analytic: 1/L(x) is a parabola with vertex x0, so the 3-point vertex is exact.
    x = np.arange(700.0, 1000.0 + step / 2, step)
    xp, yp, ok = refine_peak(x, lorentzian(x, x0, gamma))
    assert ok
    assert xp == pytest.approx(x0, abs=1e-6)
    assert yp == pytest.approx(1.0 / gamma**2, rel=1e-9)


def test_fwhm_of_a_lorentzian():
    # Analytic FWHM of A/((x-x0)^2+g^2) is 2 g. Linear interpolation between 1 nm samples:
    # measured error 0.005 nm; tolerance 0.05 nm.
    x = np.arange(600.0, 1100.0, 1.0)
    y = lorentzian(x, 850.3, 40.0)
    xp, yp, _ = refine_peak(x, y)
    assert half_max_width(x, y, xp, yp) == pytest.approx(80.0, abs=0.05)


def test_peak_on_the_edge_is_not_resolved():
    x = np.arange(600.0, 801.0, 20.0)
    xp, _, ok = refine_peak(x, lorentzian(x, 900.0, 50.0))
    assert not ok and xp == 800.0


def _dipole_plane_map(h, half_width, n):
    # Quasi-static dipole p along x at the origin (Jackson, Classical Electrodynamics, 3rd ed.,
    # Eq. 4.13): E = (3 (p.r) r / r^5 - p / r^3); sampled on the plane x = h.
    y = np.linspace(-half_width, half_width, n)
    z = np.linspace(-half_width, half_width, n)
    Y, Z = np.meshgrid(y, z, indexing="ij")
    r2 = h**2 + Y**2 + Z**2
    ex = 3 * h * h / r2**2.5 - 1 / r2**1.5
    ey = 3 * h * Y / r2**2.5
    ez = 3 * h * Z / r2**2.5
    return y, z, ex**2 + ey**2 + ez**2


def test_spot_of_a_point_dipole_matches_the_analytic_width():
    # On the plane x = h the dipole |E|^2 is p^2 (u^2 + 5u + 4) / (h^6 (1+u)^5), u = rho^2/h^2
    # (from Jackson Eq. 4.13); half maximum where u + 4 = 2 (1 + u)^4, so FWHM = 2 h sqrt(u*)
    # in every direction (FWHM = 0.904 h). On a 0.25 nm grid the interpolation error measured
    # 0.0005 nm; tolerance 0.01 nm.
    u = brentq(lambda u: u + 4 - 2 * (1 + u) ** 4, 0.0, 1.0)
    h = 25.0
    fy, fz, area = spot_widths(*_dipole_plane_map(h, 40.0, 321))
    assert fy == pytest.approx(2 * h * math.sqrt(u), abs=0.01)
    assert fz == pytest.approx(2 * h * math.sqrt(u), abs=0.01)
    assert area == pytest.approx(math.pi / 4 * fy * fz)


def test_spot_not_falling_to_half_is_nan():
    y, z, m = _dipole_plane_map(25.0, 5.0, 21)
    fy, fz, area = spot_widths(y, z, m)
    assert math.isnan(fy) and math.isnan(area)


def test_row_assembly_and_heat_figure():
    wl = np.arange(700.0, 1001.0, 10.0)
    enh = 500.0 * 40**2 * lorentzian(wl, 850.0, 40.0)
    c_abs = 2.0e4 * 40**2 * lorentzian(wl, 845.0, 40.0)
    row = figures_of_merit(
        wl, enh, c_abs * 1.5, c_abs, laser_nm=830.0,
        converged=np.ones(wl.size, bool), residual=np.full(wl.size, 1e-6), n_iter=np.full(wl.size, 10),
    )
    k = list(wl).index(830.0)
    assert row["resonance_nm"] == pytest.approx(850.0, abs=1e-6)
    assert row["far_field_resonance_nm"] == pytest.approx(845.0, abs=1e-6)
    assert row["heat_per_enhancement_nm2"] == pytest.approx(c_abs[k] / enh[k])
    assert row["quality_factor"] == pytest.approx(850.0 / 80.0, rel=0.01)
    assert row["total_iterations"] == 10 * wl.size and row["converged"]
    with pytest.raises(ValueError, match="laser_nm must be one of the sweep wavelengths"):
        figures_of_merit(wl, enh, c_abs, c_abs, laser_nm=833.0, converged=[True], residual=[0], n_iter=[0])
