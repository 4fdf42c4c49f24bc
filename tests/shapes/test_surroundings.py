"""Substrate and medium-layer slabs: separate regions on the antenna's lattice, placed as stated."""

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError, InvalidTypeError
from surrogate.shapes import FAMILIES, MediumLayer, SubstrateSlab, get_family

from .test_shapes import EXAMPLES

ROD = {"length_nm": 90.0, "width_nm": 30.0, "thickness_nm": 20.0, "end_radius_nm": 15.0}


def _extent(sites):
    return tuple(int(v) for v in sites.indices.max(0) - sites.indices.min(0) + 1)


@pytest.mark.parametrize("d", [2.0, 3.0])
def test_substrate_lies_under_the_film_at_its_gap(d):
    fam = get_family("rod")
    sub = SubstrateSlab(thickness_nm=30.0, lateral_size_nm=200.0, gap_nm=4.0)
    sites = fam.sites(ROD, d, substrate=sub)
    assert sites.region_names == ("antenna", "substrate")
    pos = sites.positions_nm()
    film, slab = pos[sites.region_mask("antenna")], pos[sites.region_mask("substrate")]
    real = fam.realised_dimensions_nm(ROD, d, substrate=sub)
    # faces are the outer planes +- d/2: film bottom - slab top = realised gap = round(gap / d) d
    gap = (film[:, 2].min() - d / 2) - (slab[:, 2].max() + d / 2)
    assert gap == pytest.approx(real["substrate_gap_nm"]) == pytest.approx(round(4.0 / d + 1e-9) * d)
    assert slab[:, 2].max() - slab[:, 2].min() + d == pytest.approx(real["substrate_thickness_nm"])
    for axis, key in ((0, "substrate_size_x_nm"), (1, "substrate_size_y_nm")):
        assert slab[:, axis].max() - slab[:, axis].min() + d == pytest.approx(real[key])
        assert abs(real[key] - 200.0) <= d + 1e-9  # nearest count that keeps it centred on the rod
        assert slab[:, axis].max() + slab[:, axis].min() == pytest.approx(0.0, abs=1e-9)  # centred
    # a slab is a box of whole planes: its count is its realised volume / d^3 exactly
    n_slab = int(np.sum(sites.region_mask("substrate")))
    assert n_slab * d**3 == pytest.approx(real["substrate_thickness_nm"] * real["substrate_size_x_nm"] * real["substrate_size_y_nm"])
    # the antenna itself is unchanged by the slab
    assert np.sum(sites.region_mask("antenna")) == fam.sites(ROD, d).n_sites


@pytest.mark.parametrize("name, axis", [("rod", 0), ("disk-peg", 0), ("gap-dimer", 2), ("bowtie", 2)])
def test_medium_layer_faces_the_hotspot_across_its_separation(name, axis):
    d = 2.0
    fam = get_family(name)
    layer = MediumLayer(thickness_nm=10.0, lateral_size_nm=60.0, separation_nm=7.0)
    sites = fam.sites(EXAMPLES[name], d, medium_layer=layer)
    assert sites.region_names == ("antenna", "medium_layer")
    pos = sites.positions_nm()
    ant, med = pos[sites.region_mask("antenna")], pos[sites.region_mask("medium_layer")]
    real = fam.realised_dimensions_nm(EXAMPLES[name], d, medium_layer=layer)
    sep = (med[:, axis].min() - d / 2) - (ant[:, axis].max() + d / 2)
    assert sep == pytest.approx(real["medium_layer_separation_nm"]) == pytest.approx(8.0)  # round(3.5) = 4 planes
    assert med[:, axis].max() - med[:, axis].min() + d == pytest.approx(10.0)
    for b in {0, 1, 2} - {axis}:
        size = med[:, b].max() - med[:, b].min() + d
        assert size == pytest.approx(real[f"medium_layer_size_{'xyz'[b]}_nm"])
        assert abs(size - 60.0) <= d + 1e-9
    if fam.hotspot_kind == "tip":
        hot = fam.hotspot_nm(EXAMPLES[name], d, hotspot_offset_nm=3.0, medium_layer=layer)
        assert ant[:, 0].max() + d / 2 < hot[0] < med[:, 0].min() - d / 2  # inside the air gap
        with pytest.raises(InvalidParameterError, match=r"^hotspot_offset_nm must be < the realised medium-layer separation"):
            fam.hotspot_nm(EXAMPLES[name], d, hotspot_offset_nm=8.0, medium_layer=layer)


@pytest.mark.parametrize("name", ["rod", "gap-dimer", "bowtie", "disk-peg"])
def test_bounding_grid_and_count_include_the_slabs(name):
    fam = get_family(name)
    kw = {
        "substrate": SubstrateSlab(thickness_nm=20.0, lateral_size_nm=250.0),
        "medium_layer": MediumLayer(thickness_nm=8.0, lateral_size_nm=80.0, separation_nm=6.0),
    }
    sites = fam.sites(EXAMPLES[name], 2.5, **kw)
    assert sites.region_names == ("antenna", "substrate", "medium_layer")
    assert fam.bounding_grid_shape(EXAMPLES[name], 2.5, **kw) == _extent(sites)
    assert fam.site_count(EXAMPLES[name], 2.5, **kw) == sites.n_sites
    assert np.unique(sites.indices, axis=0).shape[0] == sites.n_sites  # slabs never overlap the antenna
    # the y mirror symmetry survives the slabs (all are centred on the x axis)
    pos = np.round(sites.positions_nm() * 8).astype(np.int64)
    flip = pos * np.array([1, -1, 1])
    key = lambda p: np.sort(p[:, 0] * 10**12 + p[:, 1] * 10**6 + p[:, 2])  # noqa: E731
    np.testing.assert_array_equal(key(pos), key(flip))


def test_substrate_must_cover_the_footprint():
    fam = get_family("disk-peg")  # footprint 100 + 30 = 130 nm along x
    with pytest.raises(InvalidParameterError, match=r"^substrate lateral_size_nm must be >= the disk-peg's footprint \(130 nm\); got 120.0$"):
        fam.sites(EXAMPLES["disk-peg"], 2.0, substrate=SubstrateSlab(thickness_nm=10.0, lateral_size_nm=120.0))


@pytest.mark.parametrize("name", ["sphere", "coated-sphere", "box"])
def test_non_film_families_refuse_surroundings(name):
    with pytest.raises(InvalidParameterError, match=f"must be used with a film family; got them for {name}$"):
        FAMILIES[name].sites(EXAMPLES[name], 2.0, substrate=SubstrateSlab(thickness_nm=10.0, lateral_size_nm=500.0))


def test_slab_settings_are_checked_in_one_line():
    with pytest.raises(InvalidParameterError, match=r"^thickness_nm must be in \(0, 5000\] nm; got -1.0$"):
        SubstrateSlab(thickness_nm=-1.0, lateral_size_nm=100.0)
    with pytest.raises(InvalidParameterError, match=r"^separation_nm must be in \(0, 1000\] nm; got 0.0$"):
        MediumLayer(thickness_nm=10.0, lateral_size_nm=100.0, separation_nm=0.0)
    with pytest.raises(InvalidTypeError, match="^substrate must be a SubstrateSlab or None; got 5$"):
        get_family("rod").sites(ROD, 2.0, substrate=5)
    # a separation under d/2 holds no empty plane: refused, not silently closed
    with pytest.raises(InvalidParameterError, match=r"^medium_layer separation_nm must be >= spacing_nm / 2 = 2 nm"):
        get_family("rod").sites(ROD, 4.0, medium_layer=MediumLayer(thickness_nm=10.0, lateral_size_nm=100.0, separation_nm=1.5))
    with pytest.raises(InvalidParameterError, match=r"^substrate thickness_nm must be >= spacing_nm / 2 = 2 nm"):
        get_family("rod").sites(ROD, 4.0, substrate=SubstrateSlab(thickness_nm=1.0, lateral_size_nm=100.0))


def test_slabs_appear_in_the_outline():
    out = get_family("disk-peg").drawing_outline(
        EXAMPLES["disk-peg"],
        substrate=SubstrateSlab(thickness_nm=10.0, lateral_size_nm=200.0, gap_nm=2.0),
        medium_layer=MediumLayer(thickness_nm=10.0, lateral_size_nm=60.0, separation_nm=5.0),
    )
    assert [r for r, _ in out.side] == ["substrate", "medium_layer", "antenna"]
    side = dict(out.side)
    # substrate top at -T/2 - gap = -12 nm; medium layer from the tip (80 nm) + 5 nm
    assert side["substrate"][:, 1].max() == pytest.approx(-12.0)
    assert side["medium_layer"][:, 0].min() == pytest.approx(85.0)


def test_substrate_is_cut_flush_with_the_tip_when_a_medium_layer_faces_it():
    # a recording head: substrate (cladding) and peg tip end at the same plane, the medium beyond
    fam, d = get_family("disk-peg"), 2.0
    kw = {
        "substrate": SubstrateSlab(thickness_nm=10.0, lateral_size_nm=300.0),
        "medium_layer": MediumLayer(thickness_nm=10.0, lateral_size_nm=100.0, separation_nm=6.0),
    }
    sites = fam.sites(EXAMPLES["disk-peg"], d, **kw)
    pos = sites.positions_nm()
    tip = pos[sites.region_mask("antenna"), 0].max() + d / 2
    sub = pos[sites.region_mask("substrate")]
    assert sub[:, 0].max() + d / 2 == pytest.approx(tip)
    real = fam.realised_dimensions_nm(EXAMPLES["disk-peg"], d, **kw)
    assert real["substrate_size_x_nm"] == pytest.approx(sub[:, 0].max() - sub[:, 0].min() + d)
    assert np.unique(sites.indices, axis=0).shape[0] == sites.n_sites
