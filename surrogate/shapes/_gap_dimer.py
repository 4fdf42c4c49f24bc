"""Gap dimers: two bars end to end across a gap along x."""

from __future__ import annotations

import numpy as np

from ._family import Parameter
from ._film import FilmFamily, FilmFrame, centred_planes
from ._outline import Dimension, rectangle
from ._rules import minimum_feature_rule, minimum_gap_rule
from ._surroundings import planes

__all__ = ["GapDimer"]


class GapDimer(FilmFamily):
    """Two identical square-ended bars along x, facing each other across a gap centred on the origin.

    Ideal area ``2 arm_length_nm * width_nm``.  On the lattice the gap holds
    ``round(gap_nm / d)`` empty planes (rounded half up, at least one) and each arm
    ``round(arm_length_nm / d)`` planes, so the realised gap is a whole number of
    spacings measured between the discretised faces (last dipole plane + d/2 on each
    side) and is reported by ``realised_dimensions_nm``.  Hotspot: the gap centre
    (the origin).  A medium layer, if any, lies above the film (+z).

    Parameters
    ----------
    min_feature_nm : float
        Minimum feature [nm], default 10.
    min_gap_nm : float
        Minimum gap [nm], default 5.

    Examples
    --------
    >>> from surrogate.shapes import get_family
    >>> dimer = get_family("gap-dimer")
    >>> p = {"arm_length_nm": 40, "width_nm": 20, "thickness_nm": 20, "gap_nm": 5}
    >>> dimer.realised_dimensions_nm(p, 2.0)["gap_nm"]  # 5 / 2 = 2.5 -> 3 empty planes
    6.0
    >>> dimer.hotspot_nm(p, 2.0).tolist()
    [0.0, 0.0, 0.0]
    """

    name = "gap-dimer"
    description = "two bars end to end across a gap along x (the gap antenna)"
    parameters = (
        Parameter("arm_length_nm", "nm", 1.0, 1000.0, "length of each bar along x [nm]"),
        Parameter("width_nm", "nm", 1.0, 500.0, "width along y [nm]"),
        Parameter("thickness_nm", "nm", 1.0, 500.0, "film thickness along z [nm]"),
        Parameter("gap_nm", "nm", 0.5, 500.0, "gap between the facing ends along x [nm]", "gap"),
    )
    hotspot_kind = "gap"
    hotspot_definition = "the centre of the discretised gap (the origin), at mid-thickness"
    facing_axis = 2
    mirror_axes = (0, 1, 2)

    def _make_rules(self):
        return (
            minimum_feature_rule(("arm_length_nm", "width_nm", "thickness_nm"), self.min_feature_nm),
            minimum_gap_rule("gap_nm", self.min_gap_nm),
        )

    def ideal_area_nm2(self, params):
        return 2 * params["arm_length_nm"] * params["width_nm"]

    def _ideal_box_nm(self, params):
        half = params["arm_length_nm"] + params["gap_nm"] / 2
        return -half, half, params["width_nm"] / 2

    def _frame(self, params, d):
        m, ng, ny = planes(params["arm_length_nm"], d), planes(params["gap_nm"], d), planes(params["width_nm"], d)
        x_lo, x_hi, cx = centred_planes(2 * m + ng)
        y_lo, y_hi, cy = centred_planes(ny)
        z_range, cz = self._z_frame(params, d)
        realised = {
            "arm_length_nm": m * d,
            "width_nm": ny * d,
            "thickness_nm": (z_range[1] - z_range[0] + 1) * d,
            "gap_nm": ng * d,
        }
        return FilmFrame((cx, cy, cz), (x_lo, x_hi), (y_lo, y_hi), z_range, 0.0, realised)

    def _half_width_nm(self, params, frame, x_nm, d):
        g2 = frame.realised["gap_nm"] / 2
        arm = frame.realised["arm_length_nm"]
        ax = np.abs(x_nm)
        inside = (ax > g2) & (ax < g2 + arm)
        return np.where(inside, frame.realised["width_nm"] / 2, -np.inf)

    def _antenna_parts(self, params, frame, x_nm, y_nm):
        # The two arms on either side of the gap centre (x = 0).
        return ("left_arm", "right_arm"), (np.asarray(x_nm) > 0).astype(np.int64)

    def _top_polygons(self, params):
        g2, arm, hy = params["gap_nm"] / 2, params["arm_length_nm"], params["width_nm"] / 2
        return (("antenna", rectangle(-g2 - arm, -g2, -hy, hy)), ("antenna", rectangle(g2, g2 + arm, -hy, hy)))

    def _side_spans(self, params):
        g2, arm = params["gap_nm"] / 2, params["arm_length_nm"]
        return ((-g2 - arm, -g2), (g2, g2 + arm))

    def _dimensions(self, params):
        g2, arm, hy, t = params["gap_nm"] / 2, params["arm_length_nm"], params["width_nm"] / 2, params["thickness_nm"] / 2
        return (
            Dimension("arm_length_nm", "top", (g2, -hy), (g2 + arm, -hy)),
            Dimension("width_nm", "top", (g2 + arm, -hy), (g2 + arm, hy)),
            Dimension("gap_nm", "top", (-g2, 0.0), (g2, 0.0)),
            Dimension("thickness_nm", "side", (g2 + arm, -t), (g2 + arm, t)),
        )
