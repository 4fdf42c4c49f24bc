"""Trust flags fire on planted cases and stay quiet on ordinary ones."""

import numpy as np
import pandas as pd
import pytest

from surrogate.campaign import Store
from surrogate.errors import InvalidParameterError
from surrogate.models import load_bundle
from surrogate.search import TrustSettings, nearest_distances, trust_flags, typical_spacing

NAMES = ["a_nm", "b_nm"]
BOUNDS = {"a_nm": (0.0, 10.0), "b_nm": (0.0, 10.0)}
GRID = np.array([[i / 4, j / 4] for i in range(5) for j in range(5)])  # training designs on a 5 x 5 grid


def _summary(rows):
    return pd.DataFrame(rows)


def _flags(params, summary, robust=None, **kw):
    return trust_flags(np.array(params, dtype=float), NAMES, summary,
                       transforms={"resonance_nm": "identity", "spot_area_nm2": "log"}, train_unit=GRID,
                       sampled_bounds=BOUNDS, space=BOUNDS, robust=robust, window_nm=15.0, laser_nm=830.0, **kw)


NARROW = {"resonance_nm_median": 830.0, "resonance_nm_lower": 825.0, "resonance_nm_upper": 835.0,
          "spot_area_nm2_median": 100.0, "spot_area_nm2_lower": 90.0, "spot_area_nm2_upper": 112.0}


def test_grid_spacing_is_the_nearest_neighbour_distance():
    # Hand computed: every point of a 5 x 5 grid of step 0.25 has a neighbour at 0.25.
    assert typical_spacing(GRID) == pytest.approx(0.25)
    np.testing.assert_allclose(nearest_distances([[0.125, 0.0], [2.0, 0.0]], GRID), [0.125, 1.0])


def test_an_ordinary_point_has_no_flags():
    assert _flags([[3.75, 6.25]], _summary([NARROW])) == [[]]


def test_uncertain_fires_per_target_with_its_reason():
    wide_spot = dict(NARROW, spot_area_nm2_lower=50.0, spot_area_nm2_upper=200.0)  # spans 1.5 of the median
    wide_res = dict(NARROW, resonance_nm_lower=810.0, resonance_nm_upper=850.0)  # 40 nm > the 30 nm window
    out = _flags([[3.75, 6.25]] * 2, _summary([wide_spot, wide_res]))
    assert [(f["flag"], f["target"]) for f in out[0]] == [("uncertain", "spot_area_nm2")]
    assert "spans 1.50 of the median" in out[0][0]["reason"] and "threshold 0.5" in out[0][0]["reason"]
    assert [(f["flag"], f["target"]) for f in out[1]] == [("uncertain", "resonance_nm")]
    assert "wider than the laser window (30 nm)" in out[1][0]["reason"]
    # a looser threshold silences the spot area
    assert _flags([[3.75, 6.25]], _summary([wide_spot]), settings=TrustSettings(uncertain_fraction=2.0)) == [[]]


def test_extrapolated_outside_the_sampled_bounds_and_far_from_the_data():
    out = _flags([[12.0, 5.0]], _summary([NARROW]))  # a_nm beyond the sampled [0, 10]
    assert any(f["flag"] == "extrapolated" and "outside the sampled [0, 10]" in f["reason"] for f in out[0])
    # inside the bounds but in a hole: training designs only in the lower-left quarter
    sparse = GRID[(GRID[:, 0] <= 0.5) & (GRID[:, 1] <= 0.5)]
    far = trust_flags(np.array([[9.0, 9.0]]), NAMES, _summary([NARROW]), transforms={}, train_unit=sparse,
                      sampled_bounds=BOUNDS, space=BOUNDS)
    assert [f["flag"] for f in far[0]] == ["extrapolated"]
    assert "typical spacing 0.250" in far[0][0]["reason"]
    near = trust_flags(np.array([[4.0, 4.0]]), NAMES, _summary([NARROW]), transforms={}, train_unit=sparse,
                       sampled_bounds=BOUNDS, space=BOUNDS)
    assert near == [[]]  # 0.14 from (0.5, 0.5): under 2 x 0.25


def test_near_edge_on_a_bound_only():
    out = _flags([[0.0, 5.1], [10.0, 9.95], [0.2, 5.1]], _summary([NARROW] * 3))
    assert [f["flag"] for f in out[0]] == ["near-edge"] and "lower bound 0" in out[0][0]["reason"]
    assert [f["flag"] for f in out[1]] == ["near-edge", "near-edge"]  # both parameters within 1 % (0.1) of 10
    assert out[2] == []  # 0.2 is 2 % of the range away


def test_sensitive_from_the_monte_carlo_fraction():
    robust = pd.DataFrame({"outside_window_fraction": [0.5, 0.1]})
    out = _flags([[3.75, 6.25]] * 2, _summary([NARROW] * 2), robust=robust, n_mc_samples=512, length_sigma_nm=2.0)
    assert [f["flag"] for f in out[0]] == ["sensitive"]
    assert "in 50% of 512 Monte Carlo samples, sigma 2 nm" in out[0][0]["reason"]
    assert out[1] == []


def test_settings_are_validated():
    with pytest.raises(InvalidParameterError, match="coverage must be in"):
        TrustSettings(coverage=1.0)
    with pytest.raises(InvalidParameterError, match="edge_fraction must be in"):
        TrustSettings(edge_fraction=0.7)


def test_a_real_surrogate_far_outside_its_data_is_uncertain_and_extrapolated(rod_store):
    # Planted: a rod twice as long as any training design; the Gaussian process reverts to its
    # prior there, so its interval widens (Rasmussen & Williams 2006, sec. 2.2) and the flag fires.
    with Store.open(rod_store, readonly=True) as store:
        model = load_bundle(store).model
    names = list(model.feature_names_in_)
    x = pd.DataFrame([{"length_nm": 130.0, "width_nm": 40.0, "end_radius_nm": 10.0},
                      {"length_nm": 400.0, "width_nm": 40.0, "end_radius_nm": 10.0}])[names]
    summary = model.predict_summary(x, coverage=0.95)
    train_unit = np.unique(np.vstack([e.X_train_ for e in model.estimators_.values()]), axis=0)
    out = trust_flags(x.to_numpy(), names, summary, transforms=dict(model.transforms_), train_unit=train_unit,
                      sampled_bounds=model.bounds_, space={"length_nm": (60, 400), "width_nm": (20, 60),
                                                           "end_radius_nm": (0, 20)},
                      window_nm=15.0, laser_nm=830.0)
    assert out[0] == []
    kinds = {f["flag"] for f in out[1]}
    assert {"uncertain", "extrapolated", "near-edge"} <= kinds
