"""Model bundles: one folder per training, beside the store, loaded only when it provably belongs.

Layout (our own)
----------------
::

    <store folder>/<store stem>.models/
        v0001/
            model.skops        the fitted GPSurrogate (skops format, no pickle)
            card.json          the model card (below), machine-readable
            card.md            the same for people
            parity.png         cross-validated parity plot
            calibration.png    cross-validated calibration plot
        v0002/ ...

A version folder is written as ``.vNNNN.partial`` and renamed when complete, so
a crash leaves no half bundle and an existing version is never overwritten.

The model card holds the targets with their transforms, kernels and fitted
hyperparameters, the cross-validated metrics (before and after any
recalibration), the training time, the seed, the store's dataset fingerprint,
the ids and digest of the training designs and the SHA-256 of ``model.skops``.

Loading refuses, with one line saying why and what to do:

* a model file whose SHA-256 differs from its card (modified after training);
* a bundle whose fingerprint differs from the store's: trained on another
  store, or on this store before new results arrived (``allow_stale`` accepts
  the latter only when every training design is still in the store unchanged);
* a model file holding any type outside :data:`TRUSTED_TYPES`.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import shutil
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from .. import __version__
from ._dataset import training_digest
from ._errors import ModelBundleError
from ._gp import GPSurrogate

__all__ = [
    "TRUSTED_TYPES",
    "CARD_FORMAT",
    "LoadedBundle",
    "bundles_folder",
    "save_bundle",
    "load_bundle",
    "list_versions",
    "card_markdown",
]

#: The only types a model file may contain besides those skops trusts by default
#: (numpy arrays, builtins, scikit-learn estimators).
TRUSTED_TYPES = (
    "surrogate.models._gp.GPSurrogate",
    "sklearn.gaussian_process.kernels.ConstantKernel",
    "sklearn.gaussian_process.kernels.Matern",
    "sklearn.gaussian_process.kernels.Product",
    "sklearn.gaussian_process.kernels.Sum",
    "sklearn.gaussian_process.kernels.WhiteKernel",
)

CARD_FORMAT = "surrogate-model-card/1"
MODEL_FILE = "model.skops"
_VERSION_DIR = re.compile(r"^v(\d{4,})$")


def bundles_folder(store_path):
    """``<store folder>/<store stem>.models`` for a store file path."""
    store_path = Path(store_path)
    return store_path.parent / f"{store_path.stem}.models"


def _sha256(path):
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def _versions(folder):
    if not folder.is_dir():
        return []
    out = []
    for p in folder.iterdir():
        m = _VERSION_DIR.match(p.name)
        if m and p.is_dir():
            out.append(int(m.group(1)))
    return sorted(out)


def _json_ready(value):
    if isinstance(value, dict):
        return {str(k): _json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(v) for v in value]
    if isinstance(value, (np.floating, float)):
        v = float(value)
        return v if np.isfinite(v) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


def _build_card(model, training_set, store, *, version, seed, training_time_s, model_sha256):
    spec = store.spec
    hyper = model.hyperparameters()
    targets = {}
    for t in model.targets_:
        mask = model.train_mask_[t]
        targets[t] = {
            "transform": model.transforms_[t],
            "n_designs": int(mask.sum()),
            "left_out": training_set.left_out.get(t, {}),
            "hyperparameters": hyper[t],
            "interval_scale": model.interval_scale_[t],
            "optimizer_notes": model.optimizer_notes_[t],
            "fit_time_s": model.fit_time_s_[t],
            "cv": model.cv_metrics_.get(t),
        }
    ids = list(training_set.design_ids)
    return _json_ready({
        "format": CARD_FORMAT,
        "version": version,
        "created_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "code_version": __version__,
        "store": {
            "file": Path(store.path).name,
            "fingerprint": training_set.fingerprint,
            "counts": training_set.counts,
        },
        "campaign": {k: spec.get(k) for k in ("name", "family", "material", "laser_nm", "medium_index")},
        "parameters": {n: list(b) for n, b in model.bounds_.items()},
        "fixed": training_set.fixed,
        "model": {
            "estimator": "GPSurrogate (one scikit-learn GaussianProcessRegressor per target)",
            "kernel": f"ConstantKernel * Matern(nu={model.nu}, anisotropic) + WhiteKernel on the unit cube",
            "normalize_y": True,
            "n_restarts": model.n_restarts,
            "cv_folds": model.cv_folds,
            "recalibrate": bool(model.recalibrate),
            "coverage_band": list(model.coverage_band),
            "seed": seed,
        },
        "model_file": {"name": MODEL_FILE, "sha256": model_sha256, "format": "skops"},
        "training_time_s": training_time_s,
        "targets": targets,
        "training": {"n_designs": len(ids), "digest": training_set.digest, "design_ids": ids},
    })


def card_markdown(card):
    """The model card as Markdown."""
    lines = [
        f"# Model card: {card['campaign'].get('name')} v{card['version']:04d}",
        "",
        f"- created {card['created_utc']} by surrogate {card['code_version']}; training time "
        f"{card['training_time_s']:.1f} s",
        f"- store `{card['store']['file']}`, fingerprint `{card['store']['fingerprint'][:16]}`, "
        f"{card['training']['n_designs']} converged designs",
        f"- model: {card['model']['kernel']}; normalised targets; {card['model']['n_restarts']} optimizer restarts; "
        f"{card['model']['cv_folds']}-fold cross-validation; seed {card['model']['seed']}",
        "- parameters: " + ", ".join(f"{n} [{lo:g}, {hi:g}]" for n, (lo, hi) in card["parameters"].items()),
        "",
        "## Cross-validated accuracy and calibration",
        "",
        "R^2 in the modelled space (log for log targets); RMSE and MAE of the median in the target's units; "
        "coverage of the central 68 % and 95 % intervals (before -> after recalibration); MSLL "
        "(mean standardized log loss, lower is better).",
        "",
        "| target | transform | n | R^2 | RMSE | MAE | coverage 68 % | coverage 95 % | MSLL | interval scale |",
        "|---|---|---|---|---|---|---|---|---|---|",
    ]
    for t, info in card["targets"].items():
        cv = info.get("cv")
        if not cv:
            lines.append(f"| {t} | {info['transform']} | {info['n_designs']} | - | - | - | - | - | - | 1 |")
            continue
        lines.append(
            f"| {t} | {info['transform']} | {info['n_designs']} | {cv['r2']:.4f} | {cv['rmse']:.4g} | {cv['mae']:.4g} | "
            f"{cv['coverage_68']:.2f} -> {cv['coverage_68_recalibrated']:.2f} | "
            f"{cv['coverage_95']:.2f} -> {cv['coverage_95_recalibrated']:.2f} | "
            f"{cv['msll']:.2f} -> {cv['msll_recalibrated']:.2f} | {info['interval_scale']:.3g} |"
        )
    lines += ["", "## Fitted hyperparameters", ""]
    for t, info in card["targets"].items():
        h = info["hyperparameters"]
        ls = ", ".join(f"{n} {v:.3g}" for n, v in h["length_scales"].items())
        lines.append(f"- **{t}**: `{h['kernel']}`; length scales (parameter units) {ls}; noise std "
                     f"{h['noise_std']:.3g} (model space); log marginal likelihood {h['log_marginal_likelihood']:.2f}")
        left = info.get("left_out") or {}
        if any(left.values()):
            lines.append(f"  - left out: {left.get('censored', 0)} censored (outside the sweep), "
                         f"{left.get('missing', 0)} missing")
        for note in info.get("optimizer_notes") or []:
            lines.append(f"  - optimizer: {note}")
    lines += ["", f"Model file `{card['model_file']['name']}` SHA-256 `{card['model_file']['sha256']}`.", ""]
    return "\n".join(lines)


def save_bundle(model, training_set, store, *, seed=None, training_time_s=0.0, plots=True):
    """Write a new version folder for a fitted model; return its card.

    Parameters
    ----------
    model : GPSurrogate
        Fitted on ``training_set``.
    training_set : TrainingSet
        The data it was fitted on (from :func:`surrogate.models.load_training_set`).
    store : surrogate.campaign.Store
        The store the set was read from (locates the bundles folder).
    seed : int or None
        Recorded in the card.
    training_time_s : float
        Wall time of the training [s].
    plots : bool, default True
        Also draw ``parity.png`` and ``calibration.png`` (needs cross-validation).

    Returns
    -------
    dict
        The card, with ``path`` (the version folder) added.
    """
    import skops.io as sio

    folder = bundles_folder(store.path)
    folder.mkdir(parents=True, exist_ok=True)
    version = (_versions(folder) or [0])[-1] + 1
    final = folder / f"v{version:04d}"
    tmp = folder / f".v{version:04d}.partial"
    shutil.rmtree(tmp, ignore_errors=True)
    tmp.mkdir()
    try:
        sio.dump(model, tmp / MODEL_FILE)
        card = _build_card(model, training_set, store, version=version, seed=seed, training_time_s=training_time_s,
                           model_sha256=_sha256(tmp / MODEL_FILE))
        (tmp / "card.json").write_text(json.dumps(card, indent=2) + "\n")
        (tmp / "card.md").write_text(card_markdown(card))
        if plots and model.cv_predictions_:
            from ._plots import draw_calibration, draw_parity

            draw_parity(model, tmp / "parity.png")
            draw_calibration(model, tmp / "calibration.png")
        if final.exists():
            raise ModelBundleError(f"model version {final} appeared while training; nothing was overwritten; train again")
        os.replace(tmp, final)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    card["path"] = str(final)
    return card


@dataclass(frozen=True)
class LoadedBundle:
    """A verified model bundle.

    Attributes
    ----------
    model : GPSurrogate
    card : dict
    version : int
    path : pathlib.Path
    stale : bool
        True when the store has finished designs the model was not trained on.
    """

    model: GPSurrogate
    card: dict
    version: int
    path: Path
    stale: bool


def _read_card(path):
    try:
        card = json.loads((path / "card.json").read_text())
    except (OSError, ValueError) as exc:
        raise ModelBundleError(f"model card {path / 'card.json'} cannot be read ({exc}); train a new version") from None
    if not isinstance(card, dict) or card.get("format") != CARD_FORMAT:
        raise ModelBundleError(f"model card {path / 'card.json'} must have format {CARD_FORMAT}; got {card.get('format')!r}")
    return card


def load_bundle(store, version=None, *, allow_stale=False):
    """Load and verify a model bundle of ``store``.

    Parameters
    ----------
    store : surrogate.campaign.Store
        An open store.
    version : int or None
        Version number; default the latest.
    allow_stale : bool, default False
        Accept a bundle trained before newer results arrived, provided every
        training design is still in the store with the same data.

    Returns
    -------
    LoadedBundle

    Raises
    ------
    ModelBundleError
        No bundle, a modified model file, another store's data, a stale bundle
        without ``allow_stale``, or an untrusted type in the file.
    """
    import skops.io as sio

    folder = bundles_folder(store.path)
    versions = _versions(folder)
    if not versions:
        raise ModelBundleError(f"store {store.path} has no trained models; train one with 'surrogate train {store.path}'")
    if version is None:
        version = versions[-1]
    if version not in versions:
        raise ModelBundleError(f"version must be one of {', '.join(map(str, versions))}; got {version}")
    path = folder / f"v{version:04d}"
    card = _read_card(path)
    model_path = path / card["model_file"]["name"]
    if not model_path.is_file():
        raise ModelBundleError(f"model file {model_path} is missing; train a new version")
    if _sha256(model_path) != card["model_file"]["sha256"]:
        raise ModelBundleError(
            f"model file {model_path} was modified after training (its SHA-256 differs from the card's); "
            "it was not loaded; train a new version"
        )
    stale = False
    if card["store"]["fingerprint"] != store.fingerprint():
        ids = set(card["training"]["design_ids"])
        present = [r for r in store.results() if r["design_id"] in ids]
        same_data = len(present) == len(ids) and training_digest(present) == card["training"]["digest"]
        if not same_data:
            raise ModelBundleError(
                f"model v{version:04d} was trained on other data than store {store.path} holds (fingerprints differ "
                "and its training designs are not all in this store unchanged); it was not loaded"
            )
        if not allow_stale:
            raise ModelBundleError(
                f"store {store.path} has new results since model v{version:04d} was trained; "
                f"train a new version with 'surrogate train {store.path}' or accept the old one with --allow-stale"
            )
        stale = True
    untrusted = set(sio.get_untrusted_types(file=model_path)) - set(TRUSTED_TYPES)
    if untrusted:
        raise ModelBundleError(
            f"model file {model_path} holds types outside the trusted list ({', '.join(sorted(untrusted))}); "
            "it was not loaded"
        )
    model = sio.load(model_path, trusted=list(TRUSTED_TYPES))
    if not isinstance(model, GPSurrogate):
        raise ModelBundleError(f"model file {model_path} must hold a GPSurrogate; got {type(model).__name__}")
    return LoadedBundle(model=model, card=card, version=version, path=path, stale=stale)


def list_versions(store):
    """Versions of a store's models with their headline metrics, oldest first.

    Returns
    -------
    list of dict
        ``version``, ``created_utc``, ``n_designs``, ``current`` (trained on the
        store's present data), ``training_time_s`` and per target ``r2``,
        ``rmse``, ``coverage_95`` (after recalibration) and ``msll``; a version
        whose card cannot be read has ``error``.
    """
    folder = bundles_folder(store.path)
    fingerprint = store.fingerprint()
    rows = []
    for v in _versions(folder):
        try:
            card = _read_card(folder / f"v{v:04d}")
        except ModelBundleError as exc:
            rows.append({"version": v, "error": str(exc)})
            continue
        rows.append({
            "version": v,
            "created_utc": card["created_utc"],
            "n_designs": card["training"]["n_designs"],
            "current": card["store"]["fingerprint"] == fingerprint,
            "training_time_s": card["training_time_s"],
            "targets": {
                t: {k: (info.get("cv") or {}).get(k) for k in ("r2", "rmse", "coverage_95_recalibrated", "msll")}
                for t, info in card["targets"].items()
            },
        })
    return rows
