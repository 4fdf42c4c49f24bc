"""Shape families: the contract every family keeps, and each shape's own geometry."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from surrogate.errors import InvalidParameterError
from surrogate.shapes import FAMILIES, Box, CoatedSphere, Sphere, get_family

EXAMPLES = {
    "sphere": {"diameter_nm": 40.0},
    "coated-sphere": {"core_diameter_nm": 30.0, "shell_thickness_nm": 6.0},
    "box": {"length_nm": 100.0, "width_nm": 30.0, "thickness_nm": 20.0},
    "rod": {"length_nm": 90.0, "width_nm": 30.0, "thickness_nm": 20.0, "end_radius_nm": 15.0},
    "gap-dimer": {"arm_length_nm": 40.0, "width_nm": 20.0, "thickness_nm": 20.0, "gap_nm": 10.0},
    "bowtie": {"arm_length_nm": 50.0, "flare_angle_deg": 60.0, "thickness_nm": 20.0, "gap_nm": 10.0, "tip_radius_nm": 8.0},
    "disk-peg": {"disk_diameter_nm": 100.0, "peg_length_nm": 30.0, "peg_width_nm": 20.0, "thickness_nm": 20.0},
}


class TestContract:
    """Every family: valid sites, mirror-symmetric as declared, bad parameters refused in one line."""

    def test_every_family_has_an_example(self):
        assert set(EXAMPLES) == set(FAMILIES)

    @pytest.mark.parametrize("name", list(FAMILIES))
    def test_sites_are_distinct_and_centred(self, name):
        sites = FAMILIES[name].sites(EXAMPLES[name], 2.0)
        assert np.unique(sites.indices, axis=0).shape[0] == sites.n_sites
        pos = sites.positions_nm()
        # mirror symmetry about each declared axis (the shapes are centred): the reflected set equals
        # the set; every family is symmetric in y and z, all but the disk-peg also in x
        assert {1, 2} <= set(FAMILIES[name].mirror_axes)
        for axis in FAMILIES[name].mirror_axes:
            mirrored = pos.copy()
            mirrored[:, axis] *= -1
            a = np.round(np.sort(pos.view([("", float)] * 3), axis=0).view(float), 9)
            b = np.round(np.sort(mirrored.view([("", float)] * 3), axis=0).view(float), 9)
            np.testing.assert_allclose(a, b, atol=1e-9)

    @pytest.mark.parametrize("name", list(FAMILIES))
    def test_unknown_missing_and_out_of_bounds_parameters(self, name):
        family = FAMILIES[name]
        good = dict(EXAMPLES[name])
        with pytest.raises(InvalidParameterError, match="got 'bogus_nm'"):
            family.validate({**good, "bogus_nm": 1.0})
        first = family.parameters[0]
        with pytest.raises(InvalidParameterError, match=f"needs parameter {first.name}"):
            family.validate({k: v for k, v in good.items() if k != first.name})
        with pytest.raises(InvalidParameterError, match=rf"^{first.name} must be in \[.*\] nm; got -3.0$"):
            family.validate({**good, first.name: -3.0})

    def test_unknown_family(self):
        with pytest.raises(InvalidParameterError, match="family must be one of"):
            get_family("pentagon")


@pytest.mark.parametrize("spacing", [1.0, 2.0, 4.0])
def test_sphere_volume_is_preserved(spacing):
    # Effective-radius convention (Draine & Flatau, JOSA A 11, 1491 (1994)): N d^3 = 4/3 pi a^3.
    sites = Sphere().sites({"diameter_nm": 40.0}, spacing)
    assert sites.n_sites * sites.spacing_nm**3 == pytest.approx(4 / 3 * np.pi * 20.0**3, rel=1e-12)
    assert abs(sites.spacing_nm / spacing - 1) < 0.05


def test_sphere_site_count_converges_to_the_volume():
    # Lattice points in a ball approach V / d^3 as d -> 0 (Gauss circle problem in 3-D; the
    # relative error falls with d). Measured: 5.4% at d = 4 nm, 0.84% at 2 nm, 0.12% at 1 nm.
    errors = []
    for d in (4.0, 2.0, 1.0):
        sites = Sphere(preserve_volume=False).sites({"diameter_nm": 40.0}, d)
        errors.append(abs(sites.n_sites * d**3 / (4 / 3 * np.pi * 20.0**3) - 1))
    assert errors[-1] < 0.003 and errors[2] < errors[1] < errors[0]


def test_coated_sphere_core_fraction():
    # Core volume fraction (a_core / a_out)^3; at d = 1 nm measured within 2%.
    sites = CoatedSphere().sites({"core_diameter_nm": 30.0, "shell_thickness_nm": 6.0}, 1.0)
    fraction = np.mean(sites.region == 0)
    assert fraction == pytest.approx((15 / 21) ** 3, rel=0.02)
    assert sites.region_names == ("core", "shell")


@given(
    length=st.floats(10, 300), width=st.floats(10, 100), thickness=st.floats(10, 60), d=st.sampled_from([2.0, 2.5, 4.0])
)
def test_box_has_whole_planes(length, width, thickness, d):
    params = {"length_nm": length, "width_nm": width, "thickness_nm": thickness}
    sites = Box().sites(params, d)
    counts = Box.counts(params, d)
    assert sites.n_sites == counts[0] * counts[1] * counts[2]
    realised = Box().realised_sides_nm(params, d)
    for side, want in zip(realised, (length, width, thickness)):
        assert abs(side - want) <= d / 2 + 1e-9
    extent = sites.positions_nm().max(0) - sites.positions_nm().min(0) + d
    np.testing.assert_allclose(extent, realised)


def test_spacing_larger_than_the_shape_is_refused():
    with pytest.raises(InvalidParameterError, match="spacing_nm must be at most the smallest dimension"):
        Box().sites({"length_nm": 100.0, "width_nm": 30.0, "thickness_nm": 5.0}, 8.0)


@pytest.mark.parametrize("name", list(FAMILIES))
def test_describe_lists_parameters_rules_and_hotspot(name):
    fam = FAMILIES[name]
    info = fam.describe()
    assert [p["name"] for p in info["parameters"]] == list(fam.parameter_names)
    assert all(p["low"] < p["high"] and p["name"].endswith("_" + p["unit"]) for p in info["parameters"])
    assert [r["name"] for r in info["rules"]] == [r.name for r in fam.rules]
    assert info["hotspot"]["kind"] == fam.hotspot_kind
    assert fam.site_count(EXAMPLES[name], 2.0) == fam.sites(EXAMPLES[name], 2.0).n_sites
