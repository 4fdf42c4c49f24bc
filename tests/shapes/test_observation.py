"""Clearance between observation points and dipoles (the two-spacing rule), checked on exact geometry.

Rule: coupled-dipole near fields closer than about 2 d to the nearest dipole are not
trustworthy (Yurkin & Hoekstra, J. Quant. Spectrosc. Radiat. Transfer 106, 558 (2007),
the review of the method); the distances here are elementary geometry of the lattice.
"""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError
from surrogate.shapes import (
    MIN_CLEARANCE_CELLS,
    MediumLayer,
    SubstrateSlab,
    check_observation_clearance,
    get_family,
    observation_clearance,
)

from .test_shapes import EXAMPLES


@pytest.mark.parametrize("d", [1.0, 2.0, 2.5, 4.0])
@pytest.mark.parametrize("offset", [0.0, 3.0, 5.0, 12.0])
def test_tip_hotspot_distance_is_offset_plus_half_a_cell(d, offset):
    # a square bar with whole-spacing sides: the nearest dipoles sit on the last plane, d/2 inside
    # the face; laterally the rows nearest the axis are at 0 (odd count) or d/2 (even count), so
    # the distance is sqrt((h + d/2)^2 + dy^2 + dz^2) (Pythagoras)
    fam = get_family("rod")
    params = {"length_nm": 40 * d, "width_nm": 12 * d if d < 2 else 5 * d, "thickness_nm": 10 * d if d < 2 else 5 * d, "end_radius_nm": 0.0}
    params = {k: max(v, 10.0) if k != "end_radius_nm" else v for k, v in params.items()}
    sites = fam.sites(params, d)
    hot = fam.hotspot_nm(params, d, hotspot_offset_nm=offset)
    real = fam.realised_dimensions_nm(params, d)
    ny, nz = round(real["width_nm"] / d), round(real["thickness_nm"] / d)
    dy, dz = (0.0 if ny % 2 else d / 2), (0.0 if nz % 2 else d / 2)
    c = observation_clearance(hot, sites)
    assert c.distance_nm == pytest.approx(np.sqrt((offset + d / 2) ** 2 + dy**2 + dz**2), rel=1e-12)
    assert c.distance_cells == pytest.approx(c.distance_nm / d)
    assert c.required_nm == pytest.approx(MIN_CLEARANCE_CELLS * d)
    assert c.ok == (c.distance_nm >= 2 * d)


def test_default_offset_needs_a_fine_enough_lattice():
    # 5 nm beyond the tip is 5 + d/2 from the last plane: 2 d needs d <= 10/3 nm (5 + d/2 >= 2 d)
    fam, p = get_family("disk-peg"), EXAMPLES["disk-peg"]
    coarse = observation_clearance(fam.hotspot_nm(p, 4.0), fam.sites(p, 4.0))
    fine = observation_clearance(fam.hotspot_nm(p, 2.0), fam.sites(p, 2.0))
    assert not coarse.ok and fine.ok
    with pytest.raises(InvalidParameterError) as info:
        check_observation_clearance(fam.hotspot_nm(p, 4.0), fam.sites(p, 4.0))
    msg = str(info.value)
    assert "\n" not in msg
    assert msg.startswith("observation point (85, 0, 0) nm must be >= 2 spacings (8 nm) from the nearest dipole; got ")
    assert msg.endswith("use a smaller spacing_nm or move the point away from the dipoles")


def test_gap_centre_clearance_is_half_the_realised_gap_plus_half_a_cell():
    # dimer, width 20 nm and thickness 20 nm at d = 2: 10 rows each way (even) -> lateral offsets d/2
    fam, d = get_family("gap-dimer"), 2.0
    for gap in (6.0, 10.0, 14.0):
        p = {**EXAMPLES["gap-dimer"], "gap_nm": gap}
        c = observation_clearance(fam.hotspot_nm(p, d), fam.sites(p, d))
        g = fam.realised_dimensions_nm(p, d)["gap_nm"]
        assert c.distance_nm == pytest.approx(np.sqrt((g / 2 + d / 2) ** 2 + 2 * (d / 2) ** 2))


def test_observation_plane_grid_flags_points_near_a_substrate():
    # the plane through a rod's hotspot runs down into the substrate beyond the tip: the points
    # within 2 d of its dipoles are flagged, the hotspot itself is not
    fam, d = get_family("rod"), 2.0
    p = EXAMPLES["rod"]
    sub = SubstrateSlab(thickness_nm=20.0, lateral_size_nm=200.0)
    sites = fam.sites(p, d, substrate=sub)
    plane = fam.observation_plane(p, d, substrate=sub)
    u, v, pts = plane.grid_nm(half_width_nm=30.0, step_nm=1.0)
    c = observation_clearance(pts, sites)
    trusted = c.trusted.reshape(pts.shape[:2])
    assert trusted[u.size // 2, v.size // 2]  # the hotspot
    assert not c.ok
    # substrate top face at z = -10 nm: its top plane at -11; points with z > -11 + 2 d = -7 are clear of it
    # and (7 nm beyond the last plane at x = 45 - 1) clear of the rod; points below are not
    z_ok = v > -7.0 + 1e-9
    assert np.all(trusted[:, z_ok]) and not np.any(trusted[:, v < -7.0 - 1e-9])


def test_clearance_counts_every_region():
    fam, d = get_family("rod"), 2.0
    layer = MediumLayer(thickness_nm=10.0, lateral_size_nm=60.0, separation_nm=8.0)
    hot = fam.hotspot_nm(EXAMPLES["rod"], d, hotspot_offset_nm=4.0, medium_layer=layer)
    c = observation_clearance(hot, fam.sites(EXAMPLES["rod"], d, medium_layer=layer))
    # tip face at 45 nm, hotspot at 49, medium face at 53: both 4 nm from a face, 5 nm from a plane;
    # the rod's 30 x 20 nm section holds 15 x 10 planes (a row on y = 0, rows at z = +-d/2); the medium
    # layer keeps the same parities to stay centred, so both nearest dipoles are sqrt(5^2 + 1^2) away
    assert c.distance_nm == pytest.approx(np.sqrt(5.0**2 + 1.0**2))


def test_bad_points_refused():
    sites = get_family("rod").sites(EXAMPLES["rod"], 2.0)
    with pytest.raises(InvalidParameterError, match="points_nm must be finite points"):
        observation_clearance([np.nan, 0, 0], sites)
    with pytest.raises(InvalidParameterError, match=r"^min_cells must be in \[0, 100\]; got -1$"):
        observation_clearance([100.0, 0, 0], sites, min_cells=-1)
