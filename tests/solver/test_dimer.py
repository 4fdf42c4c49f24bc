"""The gap dimer: a near-field observable that exposes an inconsistent discretisation.

Two 80 x 30 x 30 nm gold bars (Johnson & Christy) end to end with a 10 nm gap, in
vacuum, lit at 800 nm along the axis; the observable is |E|^2 at the gap centre.
No closed form exists, so the reference is the method's own converged value: the
consistent FCD gives 264.7 / 270.8 / 267.1 / 270.4 at d = 2.5 / 2 / 1.667 / 1.25 nm
(measured here; converged to about 268 +- 2), and the same numbers were found by an
independent implementation of the same published method.  The earlier FCD gave
356 / 233 / 277 / 271 at d = 5 / 2.5 / 2 / 1.67 nm and fails the bounds below.
"""

import numpy as np
import pytest

from surrogate.solver import Lattice, near_field, solve

from .helpers import gold_eps

CONVERGED = 268.0  # mean of the four spacings above (d = 2.5 to 1.25 nm)


def dimer_lattice(spacing_nm, length_nm=80.0, width_nm=30.0, gap_nm=10.0):
    """Two bars along x with a gap; the gap centre at the origin."""
    nl, nw, ng = (int(round(v / spacing_nm)) for v in (length_nm, width_nm, gap_nm))
    g = np.meshgrid(np.arange(nl), np.arange(nw), np.arange(nw), indexing="ij")
    left = np.stack([a.ravel() for a in g], axis=1)
    right = left + np.array([nl + ng, 0, 0])
    c = np.array([(2 * nl + ng - 1) / 2, (nw - 1) / 2, (nw - 1) / 2]) * spacing_nm
    return Lattice(np.vstack([left, right]), spacing_nm, origin_nm=-c)


@pytest.mark.parametrize("spacing_nm", [2.5, 2.0])
def test_fcd_gap_enhancement_is_within_three_percent_of_converged(spacing_nm):
    # Tolerance: the goal of 3 % (measured -1.2 % and +1.0 %).
    lat = dimer_lattice(spacing_nm)
    s = solve(lat, [complex(gold_eps(800.0))], 800.0, polarizability="fcd")
    assert s.converged
    e2 = float(np.sum(np.abs(near_field(s, lat, [[0.0, 0.0, 0.0]])) ** 2))
    assert e2 == pytest.approx(CONVERGED, rel=0.03)
