"""Space-filling designs: Latin hypercube samples that respect the fabrication rules.

Method
------
Batch 0 (``designs`` points) is a Latin hypercube from
``scipy.stats.qmc.LatinHypercube(optimization="random-cd")`` (centred
discrepancy minimised by random coordinate swaps; Fang, Li & Sudjianto, Design and
Modeling for Computer Experiments, 2006), seeded from ``SeedSequence([seed, 0])``
and scaled to the bounds.  A sampled design that breaks a fabrication rule is
replaced by the feasible point of a candidate pool (a further seeded Latin
hypercube of ``POOL_FACTOR`` x the batch size) that lies farthest, in the unit
cube, from every design kept so far (greedy maximin).  That keeps the set
space-filling where the rules allow designs and simply leaves out the region
they forbid.  ``--add N`` (batch b >= 1) picks its N designs the same greedy
maximin way from a pool seeded by ``SeedSequence([seed, b])``, against every
design already in the campaign.

Parameters are rounded to 0.01 nm (0.01 deg), far below any fabrication
tolerance, so ids and stored values are exact decimal numbers.  A design's id is
``d`` + the first 12 hex digits of the SHA-256 of its rounded parameters; the
same file and seed therefore give bit-identical designs and ids in any process.
"""

from __future__ import annotations

import hashlib
import json

import numpy as np
from scipy.stats import qmc

from ..errors import InvalidParameterError

__all__ = ["sample_designs", "design_id", "to_unit_cube", "POOL_FACTOR"]

POOL_FACTOR = 20
_DECIMALS = 2


def design_id(params):
    """Stable id of a parameter mapping (``d`` + 12 hex digits)."""
    text = json.dumps({k: round(float(v), _DECIMALS) for k, v in sorted(params.items())}, sort_keys=True)
    return "d" + hashlib.sha256(text.encode()).hexdigest()[:12]


def to_unit_cube(points, bounds):
    """Scale parameter arrays (M, k) to [0, 1]^k with ``bounds`` {name: (low, high)}."""
    lo = np.array([b[0] for b in bounds.values()])
    hi = np.array([b[1] for b in bounds.values()])
    return (np.asarray(points, float) - lo) / (hi - lo)


def _lhs(k, n, seed_seq):
    rng = np.random.default_rng(seed_seq)
    return qmc.LatinHypercube(d=k, optimization="random-cd", rng=rng).random(n)


def _scale(unit, bounds):
    lo = np.array([b[0] for b in bounds.values()])
    hi = np.array([b[1] for b in bounds.values()])
    return np.round(lo + unit * (hi - lo), _DECIMALS)


def _feasible(family, names, row, fixed):
    given = dict(fixed)
    given.update(zip(names, (float(v) for v in row)))
    params = {n: given[n] for n in family.parameter_names}  # the family's order
    try:
        family.validate(params)
    except InvalidParameterError:
        return None
    return params


def _maximin_pick(pool_unit, pool_rows, taken_unit, count, feasible):
    """Greedy maximin: repeatedly take the feasible pool point farthest from ``taken_unit``."""
    chosen = []
    mask = np.array(feasible, dtype=bool)
    if taken_unit.size:
        dmin = np.min(np.linalg.norm(pool_unit[:, None, :] - taken_unit[None, :, :], axis=2), axis=1)
    else:
        dmin = np.full(pool_unit.shape[0], np.inf)
    for _ in range(count):
        if not mask.any():
            break
        scores = np.where(mask, dmin, -1.0)
        j = int(np.argmax(scores))
        chosen.append(j)
        mask[j] = False
        dmin = np.minimum(dmin, np.linalg.norm(pool_unit - pool_unit[j], axis=1))
    return [pool_rows[j] for j in chosen], pool_unit[chosen]


def sample_designs(family, bounds, fixed, *, count, seed, batch=0, existing=()):
    """Feasible, space-filling designs of one batch.

    Parameters
    ----------
    family : ShapeFamily
    bounds : dict
        Varied parameter -> (low, high).
    fixed : dict
        Fixed parameter -> value.
    count : int
        Designs to return.
    seed : int
        The campaign seed.
    batch : int
        0 for the initial sample, b >= 1 for the b-th ``--add``.
    existing : sequence of dict
        Parameters of designs already in the campaign (for ``batch >= 1``).

    Returns
    -------
    list of (design_id, params)
        ``count`` designs, or fewer only when the rules leave too few feasible points
        in the pool (then InvalidParameterError says so).
    """
    names = list(bounds)
    k = len(names)
    taken_rows = []
    if batch == 0:
        unit = _lhs(k, count, np.random.SeedSequence([seed, 0]))
        rows = _scale(unit, bounds)
        kept = [_feasible(family, names, r, fixed) for r in rows]
        taken_rows = [p for p in kept if p is not None]
        need = count - len(taken_rows)
    else:
        need = count
    prior = [[p[n] for n in names] for p in [*existing, *taken_rows]]
    taken_unit = to_unit_cube(prior, bounds) if prior else np.empty((0, k))
    if need > 0:
        pool_n = POOL_FACTOR * max(count, 10)
        pool = _lhs(k, pool_n, np.random.SeedSequence([seed, batch, 1]))
        pool_rows = _scale(pool, bounds)
        pool_params = [_feasible(family, names, r, fixed) for r in pool_rows]
        seen = {design_id(p) for p in [*existing, *taken_rows]}
        feasible = [p is not None and design_id(p) not in seen for p in pool_params]
        picked, _ = _maximin_pick(to_unit_cube(pool_rows, bounds), pool_params, taken_unit, need, feasible)
        taken_rows.extend(picked)
        if len(picked) < need:
            raise InvalidParameterError(
                f"bounds leave too few designs that pass the {family.name} fabrication rules: "
                f"found {len(taken_rows)} of {count}; widen the bounds or relax the fixed parameters"
            )
    return [(design_id(p), p) for p in taken_rows]
