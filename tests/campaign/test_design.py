"""Latin-hypercube designs: stratification, feasibility, reproducibility across processes."""

import json
import subprocess
import sys

import numpy as np
import pytest
from scipy.stats import qmc

from surrogate.campaign._design import _lhs, design_id, sample_designs, to_unit_cube
from surrogate.errors import InvalidParameterError
from surrogate.shapes import get_family

BOUNDS = {"length_nm": (40.0, 200.0), "width_nm": (10.0, 60.0)}
FIXED = {"thickness_nm": 20.0}


@pytest.mark.parametrize("n,k", [(10, 2), (37, 4), (150, 5)])
def test_one_point_per_stratum_in_every_projection(n, k):
    # Defining property of a Latin hypercube (McKay, Beckman & Conover, Technometrics 21, 239
    # (1979)): in every 1-D projection each of the n strata [i/n, (i+1)/n) holds one point.
    unit = _lhs(k, n, np.random.SeedSequence([7, 0]))
    for j in range(k):
        strata = np.floor(unit[:, j] * n).astype(int)
        assert sorted(strata) == list(range(n))


def test_random_cd_lowers_the_discrepancy():
    # The optimisation must actually improve space filling: centred L2 discrepancy (Hickernell,
    # Math. Comp. 67, 299 (1998), via scipy.stats.qmc.discrepancy) below a plain LHS's.
    optimised = _lhs(3, 40, np.random.SeedSequence([3, 0]))
    plain = qmc.LatinHypercube(d=3, rng=np.random.default_rng(3)).random(40)
    assert qmc.discrepancy(optimised) < qmc.discrepancy(plain)


def test_same_seed_same_designs_and_bounds_respected():
    a = sample_designs(get_family("box"), BOUNDS, FIXED, count=12, seed=5)
    b = sample_designs(get_family("box"), BOUNDS, FIXED, count=12, seed=5)
    c = sample_designs(get_family("box"), BOUNDS, FIXED, count=12, seed=6)
    assert a == b and a != c
    for _, p in a:
        assert 40.0 <= p["length_nm"] <= 200.0 and 10.0 <= p["width_nm"] <= 60.0 and p["thickness_nm"] == 20.0
    assert len({i for i, _ in a}) == 12


def test_same_seed_same_designs_in_a_fresh_process():
    code = (
        "import json; from surrogate.campaign._design import sample_designs; from surrogate.shapes import get_family;"
        f"print(json.dumps(sample_designs(get_family('box'), {BOUNDS!r}, {FIXED!r}, count=9, seed=11)))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    here = sample_designs(get_family("box"), BOUNDS, FIXED, count=9, seed=11)
    assert json.loads(out) == [list(x) for x in here]


def test_add_extends_with_new_space_filling_designs():
    first = sample_designs(get_family("box"), BOUNDS, FIXED, count=10, seed=2)
    more = sample_designs(get_family("box"), BOUNDS, FIXED, count=10, seed=2, batch=1, existing=[p for _, p in first])
    ids = {i for i, _ in first} | {i for i, _ in more}
    assert len(ids) == 20
    # greedy maximin: the added points are farther from the first batch than random points are
    cube_first = to_unit_cube([[p["length_nm"], p["width_nm"]] for _, p in first], BOUNDS)
    cube_more = to_unit_cube([[p["length_nm"], p["width_nm"]] for _, p in more], BOUNDS)
    rnd = np.random.default_rng(0).random((2000, 2))

    def mean_nearest(points):
        return np.mean(np.min(np.linalg.norm(points[:, None] - cube_first[None], axis=2), axis=1))

    assert mean_nearest(cube_more) > mean_nearest(rnd)


def test_rule_breaking_designs_are_replaced_by_feasible_ones():
    # The sphere-in-shell rule core + 2 shell <= 400 nm forbids a corner of this box of bounds.
    family = get_family("coated-sphere")
    bounds = {"core_diameter_nm": (100.0, 390.0), "shell_thickness_nm": (1.0, 100.0)}
    designs = sample_designs(family, bounds, {}, count=30, seed=4)
    assert len(designs) == 30
    for _, p in designs:
        family.validate(p)  # every design passes the rules


def test_impossible_bounds_are_reported():
    family = get_family("coated-sphere")
    bounds = {"core_diameter_nm": (380.0, 400.0), "shell_thickness_nm": (50.0, 100.0)}
    with pytest.raises(InvalidParameterError, match="too few designs that pass"):
        sample_designs(family, bounds, {}, count=5, seed=1)


def test_design_id_is_stable_and_order_free():
    assert design_id({"a_nm": 1.0, "b_nm": 2.0}) == design_id({"b_nm": 2.0, "a_nm": 1.000001})
    assert design_id({"a_nm": 1.0}) != design_id({"a_nm": 1.01})
