"""Bowties: two triangular prisms tip to tip across a gap along x, with rounded tips."""

from __future__ import annotations

import numpy as np

from ._family import Parameter
from ._film import FilmFamily, FilmFrame
from ._outline import ARC_POINTS, Dimension, circle
from ._rules import minimum_feature_rule, minimum_gap_rule, relation_rule
from ._surroundings import planes

__all__ = ["Bowtie"]


def _apex_to_base_nm(arm_nm, radius_nm, half_angle_rad):
    """Distance from the sharp apex to the base, H = L + r (1 / sin(a) - 1) [nm].

    The tip circle of radius r is tangent to both sides of a wedge of half angle a,
    so its centre lies r / sin(a) from the apex and its nearest point
    r / sin(a) - r from it (elementary geometry of a circle inscribed in an angle).
    The arm length L is measured from that nearest point (the rounded tip) to the base.
    """
    return arm_nm + radius_nm * (1.0 / np.sin(half_angle_rad) - 1.0)


def arm_area_nm2(arm_nm, radius_nm, flare_deg):
    """Area of one rounded triangular arm [nm^2].

    The triangle from the sharp apex (height H, half angle a) has area H^2 tan(a).
    Rounding the tip removes the region between the two tangent segments (each of
    length r / tan(a) from the apex) and the arc: the kite apex-tangent-centre-tangent
    of area r^2 / tan(a), less the circular sector of angle pi - 2a at the centre,
    (pi / 2 - a) r^2.  Hence A = H^2 tan(a) - r^2 (cot(a) - (pi / 2 - a)).
    """
    a = np.radians(flare_deg) / 2
    h = _apex_to_base_nm(arm_nm, radius_nm, a)
    return h**2 * np.tan(a) - radius_nm**2 * (1 / np.tan(a) - (np.pi / 2 - a))


class Bowtie(FilmFamily):
    """Two identical triangular arms, apex to apex across a gap centred on the origin.

    Each arm is an isosceles triangle of full apex angle ``flare_angle_deg`` whose
    apex is rounded by a circle of radius ``tip_radius_nm`` tangent to both sides;
    ``arm_length_nm`` runs along x from the rounded tip to the base, and
    ``gap_nm`` separates the two rounded tips.  Ideal area per arm: see
    :func:`arm_area_nm2`.

    On the lattice the gap holds ``round(gap_nm / d)`` empty planes and each arm
    ``round(arm_length_nm / d)`` planes (rounded half up); a lattice row runs along
    the axis (y = 0), so the tip surfaces (first dipole plane - d/2) bound the gap
    exactly.  Hotspot: the gap centre (the origin).  A medium layer, if any, lies
    above the film (+z).

    Parameters
    ----------
    min_feature_nm : float
        Minimum feature [nm], default 10.
    min_gap_nm : float
        Minimum gap [nm], default 5.
    """

    name = "bowtie"
    description = "two triangular prisms tip to tip across a gap along x"
    parameters = (
        Parameter("arm_length_nm", "nm", 1.0, 1000.0, "length of each triangle along x, rounded tip to base [nm]"),
        Parameter("flare_angle_deg", "deg", 5.0, 170.0, "full apex angle of each triangle [deg]", "angle"),
        Parameter("thickness_nm", "nm", 1.0, 500.0, "film thickness along z [nm]"),
        Parameter("gap_nm", "nm", 0.5, 500.0, "gap between the rounded tips along x [nm]", "gap"),
        Parameter("tip_radius_nm", "nm", 0.0, 500.0, "radius of the rounded tips; 0 = sharp [nm]", "radius"),
    )
    hotspot_kind = "gap"
    hotspot_definition = "the centre of the discretised gap between the tips (the origin), at mid-thickness"
    facing_axis = 2
    mirror_axes = (0, 1, 2)

    def _make_rules(self):
        mf = self.min_feature_nm

        def tip_fits(p):
            a = np.radians(p["flare_angle_deg"]) / 2
            limit = p["arm_length_nm"] / (1 - np.sin(a))
            return p["tip_radius_nm"] <= limit, f"<= arm_length_nm / (1 - sin(flare_angle_deg / 2)) = {limit:.4g} nm"

        def base_wide(p):
            a = np.radians(p["flare_angle_deg"]) / 2
            base = 2 * _apex_to_base_nm(p["arm_length_nm"], p["tip_radius_nm"], a) * np.tan(a)
            return base >= mf, f"large enough for a base width >= {mf:g} nm (here {base:.3g} nm)"

        return (
            minimum_feature_rule(("arm_length_nm", "thickness_nm"), mf),
            minimum_gap_rule("gap_nm", self.min_gap_nm),
            relation_rule(
                "tip-radius-fits-arm",
                "tip_radius_nm",
                "the tip circle meets both sides within the arm: tip_radius_nm (1 - sin(flare_angle_deg / 2)) <= arm_length_nm",
                tip_fits,
                reads=("arm_length_nm", "flare_angle_deg"),
            ),
            relation_rule(
                "minimum-base-width",
                "flare_angle_deg",
                f"base width of each triangle >= {mf:g} nm (the widest part must be patternable)",
                base_wide,
                reads=("arm_length_nm", "tip_radius_nm"),
            ),
        )

    def ideal_area_nm2(self, params):
        return 2 * arm_area_nm2(params["arm_length_nm"], params["tip_radius_nm"], params["flare_angle_deg"])

    def _half_base_nm(self, arm_nm, params):
        a = np.radians(params["flare_angle_deg"]) / 2
        return _apex_to_base_nm(arm_nm, params["tip_radius_nm"], a) * np.tan(a)

    def _ideal_box_nm(self, params):
        half = params["arm_length_nm"] + params["gap_nm"] / 2
        return -half, half, self._half_base_nm(params["arm_length_nm"], params)

    def _frame(self, params, d):
        m, ng = planes(params["arm_length_nm"], d), planes(params["gap_nm"], d)
        n = 2 * m + ng
        x_lo = -(n // 2) if n % 2 == 0 else -(n - 1) // 2
        cx = 0.5 if n % 2 == 0 else 0.0
        j = int(np.ceil(self._half_base_nm(m * d, params) / d)) + 1
        z_range, cz = self._z_frame(params, d)
        realised = {
            "arm_length_nm": m * d,
            "flare_angle_deg": params["flare_angle_deg"],
            "thickness_nm": (z_range[1] - z_range[0] + 1) * d,
            "gap_nm": ng * d,
            "tip_radius_nm": params["tip_radius_nm"],
        }
        # a row on the axis (cy = 0) so the first plane of each arm always holds its tip site
        return FilmFrame((cx, 0.0, cz), (x_lo, x_lo + n - 1), (-j, j), z_range, 0.0, realised)

    def _half_width_nm(self, params, frame, x_nm, d):
        x0 = frame.realised["gap_nm"] / 2
        arm = frame.realised["arm_length_nm"]
        r = params["tip_radius_nm"]
        a = np.radians(params["flare_angle_deg"]) / 2
        s = np.abs(x_nm) - x0  # distance from the rounded tip along x
        s_apex = -r * (1 / np.sin(a) - 1)  # sharp apex
        s_tangent = r * (1 - np.sin(a))  # where the tip circle meets the sides
        h = (s - s_apex) * np.tan(a)
        on_arc = s < s_tangent
        h = np.where(on_arc, np.sqrt(np.clip(r**2 - (s - r) ** 2, 0.0, None)), h)
        return np.where((s > 0) & (s < arm), h, -np.inf)

    def _arm_polygon(self, params, sign):
        x0, arm, r = params["gap_nm"] / 2, params["arm_length_nm"], params["tip_radius_nm"]
        a = np.radians(params["flare_angle_deg"]) / 2
        hb = self._half_base_nm(arm, params)
        if r > 0:
            tip = circle(x0 + r, 0.0, r, start_rad=np.pi / 2 + a, stop_rad=1.5 * np.pi - a, n=2 * ARC_POINTS + 1, endpoint=True)
        else:
            tip = np.array([[x0, 0.0]])
        poly = np.concatenate([tip, [[x0 + arm, -hb], [x0 + arm, hb]]])
        if sign < 0:
            poly = poly * np.array([-1.0, 1.0])
        return poly

    def _antenna_parts(self, params, frame, x_nm, y_nm):
        # The two arms on either side of the gap centre (x = 0).
        return ("left_arm", "right_arm"), (np.asarray(x_nm) > 0).astype(np.int64)

    def _top_polygons(self, params):
        return (("antenna", self._arm_polygon(params, -1)), ("antenna", self._arm_polygon(params, 1)))

    def _side_spans(self, params):
        g2, arm = params["gap_nm"] / 2, params["arm_length_nm"]
        return ((-g2 - arm, -g2), (g2, g2 + arm))

    def _dimensions(self, params):
        g2, arm, t = params["gap_nm"] / 2, params["arm_length_nm"], params["thickness_nm"] / 2
        hb = self._half_base_nm(arm, params)
        r = params["tip_radius_nm"]
        return (
            Dimension("arm_length_nm", "top", (g2, -hb), (g2 + arm, -hb)),
            Dimension("flare_angle_deg", "top", (g2, 0.0), (g2 + arm, hb)),
            Dimension("gap_nm", "top", (-g2, 0.0), (g2, 0.0)),
            Dimension("tip_radius_nm", "top", (g2 + r, 0.0), (g2 + r, r)),
            Dimension("thickness_nm", "side", (g2 + arm, -t), (g2 + arm, t)),
        )
