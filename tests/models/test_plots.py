"""Parity and calibration plots (surrogate/models/_plots.py)."""

import numpy as np
import pandas as pd
import pytest
from scipy.stats import norm

from surrogate.models import GPSurrogate, calibration_curve, draw_calibration, draw_parity

from .helpers import branin, unit_lhs


def test_calibration_curve_of_exact_gaussian_errors_is_the_diagonal():
    # outside reference: P(|Z| <= z(p)) = p for a standard normal Z; 20000 draws give a binomial
    # standard error <= 0.0036, tolerance 4 of them
    rng = np.random.default_rng(0)
    n = 20000
    mu, sigma = rng.normal(size=n), rng.uniform(0.5, 2, n)
    y = mu + sigma * rng.standard_normal(n)
    levels = np.array([0.1, 0.5, 0.6827, 0.9, 0.95])
    np.testing.assert_allclose(calibration_curve(y, mu, sigma, levels), levels, atol=4 * 0.0036)
    # doubling the stated sigma over-covers: P(|Z| <= 2 z(p)) (normal law)
    over = calibration_curve(y, mu, 2 * sigma, levels)
    np.testing.assert_allclose(over, 2 * norm.cdf(2 * norm.ppf(0.5 + levels / 2)) - 1, atol=4 * 0.0036)


@pytest.fixture(scope="module")
def model():
    u = unit_lhs(24, 2, 1)
    X = pd.DataFrame({"x1_nm": -5 + 15 * u[:, 0], "x2_nm": 15 * u[:, 1]})
    Y = pd.DataFrame({"resonance_nm": 600 + branin(X.x1_nm, X.x2_nm), "enhancement_at_laser": np.exp(X.x1_nm / 5)})
    return GPSurrogate(bounds={"x1_nm": (-5, 10), "x2_nm": (0, 15)}, n_restarts=0, cv_folds=3, seed=0).fit(X, Y)


def test_plots_are_written_as_png(model, tmp_path):
    draw_parity(model, tmp_path / "p" / "parity.png")
    draw_calibration(model, tmp_path / "calibration.png")
    for name in ("p/parity.png", "calibration.png"):
        data = (tmp_path / name).read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 5000
    assert not list(tmp_path.rglob("*.partial"))
