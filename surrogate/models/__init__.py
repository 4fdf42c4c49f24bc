"""Gaussian-process surrogates: features, fit, assessment, persistence.

* :mod:`._features`  inputs on the unit cube, targets in log or linear space, lognormal back-transform
* :mod:`._gp`        :class:`GPSurrogate`, one Gaussian process per figure of merit
* :mod:`._assess`    k-fold cross-validation metrics and interval recalibration
* :mod:`._dataset`   training sets read from a campaign store
* :mod:`._bundle`    versioned model bundles (skops file + model card) beside the store
* :mod:`._plots`     parity and calibration PNGs
* :mod:`._train`     one call from a store to a saved version
"""

from ._assess import (
    COVERAGE_BAND,
    Z_68,
    Z_95,
    assess_target,
    conformal_scale,
    interval_coverage,
    mean_standardized_log_loss,
    out_of_fold_predictions,
    r2_score,
)
from ._bundle import (
    CARD_FORMAT,
    TRUSTED_TYPES,
    LoadedBundle,
    bundles_folder,
    card_markdown,
    list_versions,
    load_bundle,
    save_bundle,
)
from ._dataset import DEFAULT_TARGETS, TrainingSet, load_training_set, training_digest
from ._errors import ModelBundleError, TrainingDataError
from ._features import (
    DEFAULT_TRANSFORMS,
    TRANSFORMS,
    WIDE_RANGE_RATIO,
    choose_transform,
    mean_and_std,
    median_and_interval,
    to_model_space,
)
from ._gp import MIN_DESIGNS_PER_PARAMETER, GPSurrogate, make_kernel
from ._plots import calibration_curve, draw_calibration, draw_parity
from ._train import train_store

__all__ = [
    "GPSurrogate",
    "make_kernel",
    "MIN_DESIGNS_PER_PARAMETER",
    "TRANSFORMS",
    "DEFAULT_TRANSFORMS",
    "WIDE_RANGE_RATIO",
    "choose_transform",
    "to_model_space",
    "mean_and_std",
    "median_and_interval",
    "COVERAGE_BAND",
    "Z_68",
    "Z_95",
    "assess_target",
    "conformal_scale",
    "interval_coverage",
    "mean_standardized_log_loss",
    "out_of_fold_predictions",
    "r2_score",
    "DEFAULT_TARGETS",
    "TrainingSet",
    "load_training_set",
    "training_digest",
    "TRUSTED_TYPES",
    "CARD_FORMAT",
    "LoadedBundle",
    "bundles_folder",
    "save_bundle",
    "load_bundle",
    "list_versions",
    "card_markdown",
    "calibration_curve",
    "draw_parity",
    "draw_calibration",
    "train_store",
    "TrainingDataError",
    "ModelBundleError",
]
