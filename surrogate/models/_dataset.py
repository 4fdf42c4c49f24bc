"""Training sets read from a campaign store: converged designs, their varied parameters and targets.

Rules
-----
* Only designs with status ``done`` (converged) are used; ``not_converged``
  results are counted, never trained on.
* The inputs are the campaign's varied parameters (``spec["bounds"]``, in that
  order); fixed parameters are constant and carry no information.
* A resonance that lies outside the wavelength sweep (``resonance_resolved``
  False) is only a bound: the stored value is the sweep edge.  Such designs are
  left out of ``resonance_nm`` (likewise ``far_field_resonance_nm``) and counted
  as ``censored``; the other targets still use them.
* Any other non-finite target value is an error unless ``drop_missing``.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..campaign import Status
from ._errors import TrainingDataError

__all__ = ["DEFAULT_TARGETS", "TrainingSet", "load_training_set", "training_digest"]

#: Targets trained by default.
DEFAULT_TARGETS = ("resonance_nm", "enhancement_at_laser", "heat_per_enhancement_nm2", "spot_area_nm2")

# target -> the flag that says whether its stored value is a measurement (True) or a bound
_RESOLVED_FLAG = {"resonance_nm": "resonance_resolved", "far_field_resonance_nm": "far_field_resonance_resolved"}
_NOT_TARGETS = {"converged", "worst_residual", "total_iterations", "resonance_resolved", "far_field_resonance_resolved"}


def training_digest(results):
    """SHA-256 (hex) over the given results' ids, parameters and figures, in id order.

    Parameters
    ----------
    results : iterable of dict
        Rows of :meth:`surrogate.campaign.Store.results`.
    """
    h = hashlib.sha256()
    for r in sorted(results, key=lambda r: r["design_id"]):
        for part in (r["design_id"], json.dumps(r["params"], sort_keys=True), json.dumps(r["figures"], sort_keys=True)):
            h.update(part.encode())
            h.update(b"\x1f")
    return h.hexdigest()


@dataclass(frozen=True)
class TrainingSet:
    """Converged designs of a store, ready for :class:`surrogate.models.GPSurrogate`.

    Attributes
    ----------
    X : pandas.DataFrame, shape (n, d)
        Varied parameters (columns in bounds order, units in their names), index design_id.
    Y : pandas.DataFrame, shape (n, n_targets)
        Targets in physical units; NaN where a design is left out of a target.
    bounds : dict
        Varied parameter -> (low, high) of the campaign.
    fixed : dict
        Fixed parameter -> value.
    fingerprint : str
        The store's dataset fingerprint when the set was read.
    digest : str
        :func:`training_digest` of the designs in the set.
    counts : dict
        Designs per status in the store.
    left_out : dict
        Target -> {"censored": n, "missing": n} designs left out of that target.
    """

    X: pd.DataFrame
    Y: pd.DataFrame
    bounds: dict
    fixed: dict
    fingerprint: str
    digest: str
    counts: dict
    left_out: dict = field(default_factory=dict)

    @property
    def design_ids(self):
        """Ids of the designs in the set, in store order."""
        return tuple(self.X.index)


def load_training_set(store, targets=None, *, drop_missing=False):
    """Read the converged designs of ``store`` as a :class:`TrainingSet`.

    Parameters
    ----------
    store : surrogate.campaign.Store
        An open store.
    targets : sequence of str or None
        Figures of merit to model; default :data:`DEFAULT_TARGETS`.
    drop_missing : bool, default False
        Leave a design out of a target whose value is NaN instead of refusing.

    Raises
    ------
    TrainingDataError
        No converged design, an unknown target, or a NaN target without ``drop_missing``.
    """
    spec = store.spec
    bounds = {k: (float(v[0]), float(v[1])) for k, v in spec.get("bounds", {}).items()}
    if not bounds:
        raise TrainingDataError(f"store {store.path} must vary at least one parameter (spec bounds); got none")
    counts = store.counts()
    done = [r for r in store.results() if r["status"] is Status.DONE]
    if not done:
        summary = ", ".join(f"{k} {v}" for k, v in counts.items())
        raise TrainingDataError(
            f"store {store.path} must hold converged designs to train on; got none ({summary}); "
            "run 'surrogate generate' on its campaign first"
        )
    targets = list(DEFAULT_TARGETS if targets is None else targets)
    available = sorted({k for r in done for k, v in r["figures"].items() if k not in _NOT_TARGETS})
    for t in targets:
        if t not in available:
            raise TrainingDataError(
                f"targets must be figures of merit of the store ({', '.join(available)}); got {t!r}"
            )
    ids = [r["design_id"] for r in done]
    X = pd.DataFrame([{n: r["params"].get(n, np.nan) for n in bounds} for r in done], index=pd.Index(ids, name="design_id"))
    if X.isna().any().any():
        col = X.columns[X.isna().any()][0]
        raise TrainingDataError(f"every converged design must set the varied parameter {col}; some designs lack it")
    cols, left_out = {}, {}
    for t in targets:
        raw = [r["figures"].get(t) for r in done]
        values = np.array([np.nan if v is None else float(v) for v in raw])
        censored = np.zeros(len(done), dtype=bool)
        flag = _RESOLVED_FLAG.get(t)
        if flag is not None:
            censored = np.array([r["figures"].get(flag) is False for r in done])
        missing = ~np.isfinite(values) & ~censored
        if missing.any() and not drop_missing:
            first = ids[int(np.argmax(missing))]
            raise TrainingDataError(
                f"{t} must be finite in every converged design; got NaN in {int(missing.sum())} designs "
                f"(first {first}); leave them out with --drop-missing"
            )
        values[censored | missing] = np.nan
        cols[t] = values
        left_out[t] = {"censored": int(censored.sum()), "missing": int(missing.sum())}
    Y = pd.DataFrame(cols, index=X.index)
    return TrainingSet(
        X=X.astype(float),
        Y=Y,
        bounds=bounds,
        fixed=dict(spec.get("fixed", {})),
        fingerprint=store.fingerprint(),
        digest=training_digest(done),
        counts=counts,
        left_out=left_out,
    )
