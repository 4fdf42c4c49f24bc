"""The Gaussian-process surrogate estimator (surrogate/models/_gp.py)."""

import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from sklearn.base import clone

from surrogate.errors import InvalidParameterError, InvalidTypeError
from surrogate.models import GPSurrogate, TrainingDataError

from .helpers import BRANIN_BOUNDS, branin, forrester, unit_lhs

BOUNDS = {k: tuple(v) for k, v in BRANIN_BOUNDS.items()}


def _frame(u):
    return pd.DataFrame({"x1_nm": -5 + 15 * u[:, 0], "x2_nm": 15 * u[:, 1]})


@pytest.fixture(scope="module")
def branin_model():
    X = _frame(unit_lhs(40, 2, 0))
    Y = pd.DataFrame({"branin": branin(X.x1_nm, X.x2_nm), "expb": np.exp(-branin(X.x1_nm, X.x2_nm) / 100)})
    model = GPSurrogate(bounds=BOUNDS, transforms={"branin": "identity", "expb": "log"}, n_restarts=2, seed=0)
    return model.fit(X, Y), X, Y


@pytest.fixture(scope="module")
def forrester_model():
    x = np.linspace(0, 1, 11)
    model = GPSurrogate(bounds={"x_nm": (0, 1)}, n_restarts=2, cv_folds=None, seed=0)
    return model.fit(pd.DataFrame({"x_nm": x}), pd.DataFrame({"f_nm": forrester(x)})), x


def test_branin_is_learned_and_its_intervals_cover(branin_model):
    # outside reference: the Branin function (Dixon & Szego 1978) on 2000 fresh Latin-hypercube points.
    # Measured over seeds 0-3 with 40 designs: test R^2 0.9993-0.9999, 95 % coverage 0.925-0.998
    # (noise-free data make the intervals conservative); bounds set below the worst measured value.
    model, _, _ = branin_model
    Xt = _frame(unit_lhs(2000, 2, 99))
    yt = branin(Xt.x1_nm, Xt.x2_nm).to_numpy()
    mean = model.predict(Xt)["branin"].to_numpy()
    r2 = 1 - np.sum((mean - yt) ** 2) / np.sum((yt - yt.mean()) ** 2)
    assert r2 >= 0.998
    iv = model.predict_interval(Xt, coverage=0.95)
    inside = np.mean((yt >= iv["branin_lower"]) & (yt <= iv["branin_upper"]))
    assert 0.90 <= inside <= 1.0
    cv = model.cv_metrics_["branin"]
    assert cv["r2"] >= 0.99  # measured 0.988-0.999 over seeds 0-3 (30-40 designs)
    assert 0.90 <= cv["coverage_95_recalibrated"] <= 0.98


def test_forrester_interpolates_and_std_is_the_noise_level_at_training_points(forrester_model):
    # outside reference: the Forrester et al. (2008) function; 11 evenly spaced designs.
    # Measured: R^2 0.9984 on 1001 points, largest error 0.73 (function range -6.0 to 15.8)
    model, x = forrester_model
    xt = np.linspace(0, 1, 1001)
    mean = model.predict(pd.DataFrame({"x_nm": xt}))["f_nm"].to_numpy()
    yt = forrester(xt)
    assert 1 - np.sum((mean - yt) ** 2) / np.sum((yt - yt.mean()) ** 2) >= 0.995
    # at a training input the latent posterior variance is at most the noise variance (it is the
    # noisy observation's), so the predictive std lies in [sigma_n, sqrt(2) sigma_n]
    # (Rasmussen & Williams 2006, eq. 2.24 with the noise added back)
    _, std = model.predict(pd.DataFrame({"x_nm": x}), return_std=True)
    noise_std = model.hyperparameters()["f_nm"]["noise_std"]
    assert np.all(std["f_nm"] >= noise_std * (1 - 1e-6))
    assert np.all(std["f_nm"] <= np.sqrt(2) * noise_std * (1 + 1e-4))  # measured ratio 1.41422; jitter 1e-10
    mean_train = model.predict(pd.DataFrame({"x_nm": x}))["f_nm"]
    np.testing.assert_allclose(mean_train, forrester(x), atol=5 * noise_std)


def test_std_grows_away_from_the_data_towards_the_prior(forrester_model):
    model, x = forrester_model
    mid = (x[:-1] + x[1:]) / 2
    _, s_train = model.predict(pd.DataFrame({"x_nm": x}), return_std=True)
    _, s_mid = model.predict(pd.DataFrame({"x_nm": mid}), return_std=True)
    assert s_mid["f_nm"].min() > 10 * s_train["f_nm"].max()
    far = np.array([1.05, 1.2, 1.5, 2.0, 50.0])
    _, s_far = model.predict(pd.DataFrame({"x_nm": far}), return_std=True)
    assert np.all(np.diff(s_far["f_nm"]) > 0)
    # far from all data the prediction falls back to the prior: std = y_std sqrt(s^2 + n^2) (Rasmussen &
    # Williams 2006, eq. 2.26 with k(x*, X) -> 0); Matern-5/2 at 190 length scales is below 1e-70
    gpr = model.estimators_["f_nm"]
    h = model.hyperparameters()["f_nm"]
    prior = gpr._y_train_std * np.sqrt(h["signal_variance"] + h["noise_variance"])
    assert s_far["f_nm"].iloc[-1] == pytest.approx(prior, rel=1e-9)


def test_fast_prediction_matches_scikit_learn(forrester_model, branin_model):
    # outside reference: scikit-learn's GaussianProcessRegressor.predict on the same fitted regressor.
    # Measured: means agree to 1e-10 relative; stds to 3.4e-5 relative at worst, where the variance
    # s^2 + n^2 - v.v cancels (signal variance near its upper bound) and the explicit inverse Cholesky
    # factor rounds differently from a triangular solve; tolerance 2e-4 (a 0.02 % interval width)
    for model, frame in ((forrester_model[0], pd.DataFrame({"x_nm": np.linspace(-0.2, 1.2, 20000)})),
                         (branin_model[0], _frame(unit_lhs(20000, 2, 5)))):
        for t in model.targets_:
            Xu = model._inputs(frame)
            ref_mu, ref_sd = model.estimators_[t].predict(Xu, return_std=True)
            mu, sd = model.predict_model_space(frame, targets=[t])[t]
            np.testing.assert_allclose(mu, ref_mu, rtol=1e-6, atol=1e-9 * np.abs(ref_mu).max())
            np.testing.assert_allclose(sd / model.interval_scale_[t], ref_sd, rtol=2e-4)


def test_log_target_predictions_are_positive_medians_and_skewed_intervals(branin_model):
    model, _, _ = branin_model
    Xt = _frame(unit_lhs(500, 2, 7))
    mu, sigma = model.predict_model_space(Xt, targets=["expb"])["expb"]
    iv = model.predict_interval(Xt, coverage=0.95, targets=["expb"])
    mean, std = model.predict(Xt, return_std=True, targets=["expb"])
    np.testing.assert_allclose(iv["expb_median"], np.exp(mu), rtol=1e-12)
    np.testing.assert_allclose(iv["expb_upper"], np.exp(mu + 1.959963984540054 * sigma), rtol=1e-12)
    assert (iv["expb_lower"] > 0).all() and (mean["expb"] > iv["expb_median"]).all()
    assert (iv["expb_upper"] / iv["expb_median"]).to_numpy() == pytest.approx(
        (iv["expb_median"] / iv["expb_lower"]).to_numpy(), rel=1e-9)  # symmetric in log space only


def test_fitted_attributes_follow_scikit_learn_conventions(branin_model):
    model, X, _ = branin_model
    assert list(model.feature_names_in_) == ["x1_nm", "x2_nm"] and model.n_features_in_ == 2
    assert model.targets_ == ("branin", "expb") and model.transforms_ == {"branin": "identity", "expb": "log"}
    assert all(m.sum() == len(X) for m in model.train_mask_.values())
    params = clone(model).get_params()
    assert params["seed"] == 0 and params["n_restarts"] == 2 and not hasattr(clone(model), "estimators_")
    with pytest.raises(TypeError):
        GPSurrogate(BOUNDS)  # keyword-only


def test_same_seed_reproduces_in_a_fresh_process():
    code = (
        "import numpy as np, pandas as pd\n"
        "from surrogate.models import GPSurrogate\n"
        "x = np.linspace(0, 1, 12)\n"
        "X = pd.DataFrame({'x_nm': x}); Y = pd.DataFrame({'y_nm': np.sin(7 * x) + x})\n"
        "m = GPSurrogate(bounds={'x_nm': (0, 1)}, n_restarts=3, cv_folds=3, seed=42).fit(X, Y)\n"
        "print(repr(list(m.estimators_['y_nm'].kernel_.theta) + [m.cv_metrics_['y_nm']['msll']]))\n"
    )
    here = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    again = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert here == again and here.strip()
    x = np.linspace(0, 1, 12)
    m = GPSurrogate(bounds={"x_nm": (0, 1)}, n_restarts=3, cv_folds=3, seed=np.random.default_rng(42))
    m.fit(pd.DataFrame({"x_nm": x}), pd.DataFrame({"y_nm": np.sin(7 * x) + x}))
    theta = list(m.estimators_["y_nm"].kernel_.theta) + [m.cv_metrics_["y_nm"]["msll"]]
    assert theta == json.loads(here.replace("np.float64(", "").replace(")", ""))  # int seed == its Generator


def test_too_few_designs_per_parameter_is_refused():
    X = _frame(unit_lhs(19, 2, 0))
    Y = pd.DataFrame({"branin": branin(X.x1_nm, X.x2_nm)})
    with pytest.raises(TrainingDataError, match=r"branin must have at least 20 usable designs .*got 19"):
        GPSurrogate(bounds=BOUNDS, cv_folds=None).fit(X, Y)


def test_nan_targets_are_refused_or_dropped():
    X = _frame(unit_lhs(24, 2, 0))
    y = branin(X.x1_nm, X.x2_nm).to_numpy().copy()
    y[3] = np.nan
    Y = pd.DataFrame({"branin": y})
    with pytest.raises(TrainingDataError, match=r"branin must be finite in every training design; got nan in row 3"):
        GPSurrogate(bounds=BOUNDS, cv_folds=None).fit(X, Y)
    m = GPSurrogate(bounds=BOUNDS, cv_folds=None, missing="drop", n_restarts=0, seed=0).fit(X, Y)
    assert m.train_mask_["branin"].sum() == 23 and not m.train_mask_["branin"][3]


@pytest.mark.parametrize(
    ("params", "error", "match"),
    [
        ({"nu": 2.0}, InvalidParameterError, "nu must be one of"),
        ({"n_restarts": -1}, InvalidParameterError, r"n_restarts must be an integer in \[0, 100\]; got -1"),
        ({"cv_folds": 1}, InvalidParameterError, "cv_folds must be an integer in"),
        ({"missing": "ignore"}, InvalidParameterError, "missing must be one of"),
        ({"coverage_band": (0.96, 0.99)}, InvalidParameterError, "coverage_band must satisfy"),
        ({"transforms": {"branin": "sqrt"}}, InvalidParameterError, "must be one of 'identity', 'log'"),
        ({"seed": 1.5}, InvalidTypeError, "seed must be an int, a numpy Generator or None; got 1.5"),
    ],
)
def test_bad_parameters_are_refused_at_fit(params, error, match):
    X = _frame(unit_lhs(20, 2, 0))
    with pytest.raises(error, match=match):
        GPSurrogate(bounds=BOUNDS, **params).fit(X, pd.DataFrame({"branin": branin(X.x1_nm, X.x2_nm)}))


def test_prediction_input_errors(branin_model):
    model, _, _ = branin_model
    with pytest.raises(TrainingDataError, match="X must have the columns x1_nm, x2_nm; missing x2_nm"):
        model.predict(pd.DataFrame({"x1_nm": [0.0]}))
    with pytest.raises(InvalidParameterError, match=r"x2_nm must be a finite number; got nan in row 0"):
        model.predict(pd.DataFrame({"x1_nm": [0.0], "x2_nm": [np.nan]}))
    with pytest.raises(InvalidParameterError, match=r"target must be one of 'branin', 'expb'; got 'other'"):
        model.predict(pd.DataFrame({"x1_nm": [0.0], "x2_nm": [1.0]}), targets=["other"])
    with pytest.raises(InvalidParameterError, match=r"coverage must be in \(0, 1\)"):
        model.predict_interval(pd.DataFrame({"x1_nm": [0.0], "x2_nm": [1.0]}), coverage=1.0)
    with pytest.raises(InvalidParameterError, match="must be fitted before predicting"):
        GPSurrogate().predict(pd.DataFrame({"x1_nm": [0.0]}))
    arr = model.predict(np.array([[0.0, 1.0]]))  # arrays in feature order are accepted too
    assert arr.shape == (1, 2)


def test_summary_is_interval_and_moments_in_one_pass(branin_model):
    model, _, _ = branin_model
    Xt = _frame(unit_lhs(300, 2, 8))
    summary = model.predict_summary(Xt, coverage=0.9)
    iv = model.predict_interval(Xt, coverage=0.9)
    mean, std = model.predict(Xt, return_std=True)
    for t in model.targets_:
        for part in ("median", "lower", "upper"):
            np.testing.assert_array_equal(summary[f"{t}_{part}"], iv[f"{t}_{part}"])
        np.testing.assert_array_equal(summary[f"{t}_mean"], mean[t])
        np.testing.assert_array_equal(summary[f"{t}_std"], std[t])
