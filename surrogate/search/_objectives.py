"""Objectives and constraints on the surrogate predictions.

Objective values are statistics of the predictive normal law in model space (log
space for log targets, so a log-normal figure's median ``exp(mu)`` orders the same
as ``mu``):

* mean objective: ``mu``;
* cautious objective (``cautious_k = k > 0``): the pessimistic side, ``mu - k sigma``
  for a maximised target and ``mu + k sigma`` for a minimised one (a lower / upper
  confidence bound; N. Srinivas, A. Krause, S. Kakade and M. Seeger, ICML 2010, use
  the optimistic ``mu + k sigma`` for exploration; here the sign is reversed on
  purpose, to prefer designs the surrogate is sure of).

Constraints (optuna's convention: a value <= 0 is feasible):

* ``resonance-window`` [nm]: ``|median resonance_nm - laser_nm| - window_nm``;
* ``fabrication`` [-]: the number of the family's fabrication rules the design
  violates (:meth:`surrogate.shapes.ShapeFamily.violated_rules`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._validation import check_choice, check_real
from ..errors import InvalidParameterError

__all__ = [
    "Objective",
    "DEFAULT_OBJECTIVES",
    "KNOWN_DIRECTIONS",
    "DEFAULT_WINDOW_NM",
    "parse_objectives",
    "SurrogateProblem",
]

#: Direction of the figures of merit we know (what an engineer wants of each).
KNOWN_DIRECTIONS = {
    "enhancement_at_laser": "maximize",
    "peak_enhancement": "maximize",
    "heat_per_enhancement_nm2": "minimize",
    "spot_area_nm2": "minimize",
    "spot_fwhm_y_nm": "minimize",
    "spot_fwhm_z_nm": "minimize",
    "c_abs_at_laser_nm2": "minimize",
    "c_ext_at_laser_nm2": "maximize",
    "linewidth_nm": "minimize",
    "quality_factor": "maximize",
}

#: Half-width of the laser window the predicted resonance must fall in [nm] (a setting; our default).
DEFAULT_WINDOW_NM = 15.0

_ALIASES = {"max": "maximize", "maximize": "maximize", "min": "minimize", "minimize": "minimize"}


@dataclass(frozen=True)
class Objective:
    """One objective: a modelled figure of merit and a direction."""

    target: str
    direction: str

    @property
    def sign(self):
        """-1 for a maximised objective, +1 for a minimised one (the minimisation form)."""
        return -1.0 if self.direction == "maximize" else 1.0

    def label(self):
        return f"{'max' if self.direction == 'maximize' else 'min'}:{self.target}"


#: The default objectives: the hotspot, the heating per unit hotspot, the spot size.
DEFAULT_OBJECTIVES = (
    Objective("enhancement_at_laser", "maximize"),
    Objective("heat_per_enhancement_nm2", "minimize"),
    Objective("spot_area_nm2", "minimize"),
)


def parse_objectives(items, model_targets=None):
    """Objectives from ``NAME`` or ``NAME:max`` / ``NAME:min`` strings (or Objective objects).

    Parameters
    ----------
    items : sequence of str or Objective, or None
        None: :data:`DEFAULT_OBJECTIVES`.  A bare NAME takes its direction from
        :data:`KNOWN_DIRECTIONS`.
    model_targets : sequence of str or None
        The trained model's targets; an objective outside them is refused.

    Returns
    -------
    tuple of Objective

    Raises
    ------
    InvalidParameterError
        An unknown name, a bad direction, a duplicate, or a target with no trained model.
    """
    if items is None:
        out = DEFAULT_OBJECTIVES
    else:
        out = []
        for item in items:
            if isinstance(item, Objective):
                out.append(item)
                continue
            if not isinstance(item, str) or not item.strip():
                raise InvalidParameterError(f"objective must be NAME or NAME:max|min; got {item!r}")
            name, _, direction = item.strip().partition(":")
            known = set(KNOWN_DIRECTIONS) | set(model_targets or ())
            if name not in known:
                raise InvalidParameterError(
                    f"objective must be a figure of merit ({', '.join(sorted(KNOWN_DIRECTIONS))}) or a modelled "
                    f"target; got {name!r}")
            if direction:
                if direction not in _ALIASES:
                    raise InvalidParameterError(f"objective direction must be max or min; got {direction!r} in {item!r}")
                direction = _ALIASES[direction]
            elif name in KNOWN_DIRECTIONS:
                direction = KNOWN_DIRECTIONS[name]
            else:
                raise InvalidParameterError(f"objective {name} must state its direction (NAME:max or NAME:min); got {item!r}")
            out.append(Objective(name, direction))
        out = tuple(out)
    if not out:
        raise InvalidParameterError("objectives must hold at least one objective; got none")
    targets = [o.target for o in out]
    dup = sorted({t for t in targets if targets.count(t) > 1})
    if dup:
        raise InvalidParameterError(f"objectives must name each target once; got {dup[0]} twice")
    if model_targets is not None:
        for o in out:
            if o.target not in model_targets:
                raise InvalidParameterError(
                    f"objective {o.target} has no trained model (the model has {', '.join(model_targets)}); "
                    f"train one with 'surrogate train STORE --targets ... {o.target}'")
    return out


class SurrogateProblem:
    """A batched objective and constraint function on a fitted surrogate.

    Parameters
    ----------
    model : GPSurrogate
        Fitted; ``feature_names_in_`` are the searched parameters.
    objectives : sequence of Objective
    family : ShapeFamily or None
        Its fabrication rules become the ``fabrication`` constraint; None: no rules.
    fixed : dict
        The campaign's fixed parameters (merged into each design for the rules).
    laser_nm : float
    window_nm : float or None, default 15
        Half-width of the resonance window [nm]; None: no window constraint.
    cautious_k : float, default 0
        k of the cautious objective [-] (0: the mean).
    """

    def __init__(self, model, objectives, *, family=None, fixed=None, laser_nm=None, window_nm=DEFAULT_WINDOW_NM,
                 cautious_k=0.0):
        self.model = model
        self.objectives = tuple(objectives)
        self.names = tuple(model.feature_names_in_)
        self.family = family
        self.fixed = dict(fixed or {})
        self.cautious_k = check_real("cautious_k", cautious_k, low=0.0, high=10.0)
        self.window_nm = None if window_nm is None else check_real("window_nm", window_nm, low=0.0, high=1000.0,
                                                                   low_open=True, unit="nm")
        self.constraint_names = ()
        if self.window_nm is not None:
            if "resonance_nm" not in model.targets_:
                raise InvalidParameterError(
                    "window_nm needs a resonance_nm model (the model has " + ", ".join(model.targets_) +
                    "); train resonance_nm or search without the window")
            self.laser_nm = check_real("laser_nm", laser_nm, low=1.0, high=1e6, unit="nm")
            self.constraint_names += ("resonance-window",)
        else:
            self.laser_nm = None if laser_nm is None else float(laser_nm)
        if family is not None and family.rules:
            self.constraint_names += ("fabrication",)
        for o in self.objectives:
            check_choice("direction", o.direction, ("maximize", "minimize"))

    @property
    def directions(self):
        return tuple(o.direction for o in self.objectives)

    @property
    def targets(self):
        """Targets predicted per evaluation (objectives, then resonance_nm when constrained)."""
        t = [o.target for o in self.objectives]
        if self.window_nm is not None and "resonance_nm" not in t:
            t.append("resonance_nm")
        return tuple(t)

    def resonance_median_nm(self, mu, sigma=None):
        """Median resonance [nm] from its model-space mean (exp for a log model)."""
        return np.exp(mu) if self.model.transforms_["resonance_nm"] == "log" else mu

    def objective_values(self, pred):
        """Objective values (n, m) from ``predict_model_space`` output, in the study's directions."""
        k = self.cautious_k
        cols = []
        for o in self.objectives:
            mu, sigma = pred[o.target]
            # pessimistic side: mu - k sigma when maximising, mu + k sigma when minimising
            cols.append(mu + o.sign * k * sigma if k else mu)
        return np.column_stack(cols)

    def rule_violations(self, X):
        """Number of fabrication rules each design violates, shape (n,)."""
        if self.family is None or not self.family.rules:
            return np.zeros(len(X))
        out = np.empty(len(X))
        for i, row in enumerate(np.asarray(X, dtype=float)):
            params = dict(self.fixed)
            params.update(zip(self.names, row.tolist()))
            out[i] = len(self.family.violated_rules(params))
        return out

    def constraint_values(self, X, pred):
        """Constraint values (n, c), <= 0 feasible, in the order of ``constraint_names``."""
        cols = []
        if self.window_nm is not None:
            res = self.resonance_median_nm(*pred["resonance_nm"])
            cols.append(np.abs(res - self.laser_nm) - self.window_nm)
        if "fabrication" in self.constraint_names:
            cols.append(self.rule_violations(X))
        return np.column_stack(cols) if cols else np.zeros((len(X), 0))

    def __call__(self, X):
        """Evaluate a batch: ``(values (n, m), constraints (n, c))``."""
        pred = self.model.predict_model_space(np.asarray(X, dtype=float), targets=list(self.targets))
        return self.objective_values(pred), self.constraint_values(X, pred)

    def settings(self):
        """JSON-ready description (recorded with the study and the front)."""
        return {
            "objectives": [{"target": o.target, "direction": o.direction} for o in self.objectives],
            "cautious_k": self.cautious_k,
            "window_nm": self.window_nm,
            "laser_nm": None if self.laser_nm is None or not math.isfinite(self.laser_nm) else self.laser_nm,
            "constraints": list(self.constraint_names),
            "family": None if self.family is None else self.family.name,
        }
