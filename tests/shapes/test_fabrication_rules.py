"""Fabrication rules: each one violated once, its one-line message checked; all run before any site.

The default limits (minimum feature 10 nm, minimum gap 5 nm) are common practice for
electron-beam lithography of gold films, no source; the degenerate-shape rules follow
from elementary geometry (cited beside each case).
"""

import re

import numpy as np
import pytest

from surrogate.errors import InvalidParameterError
from surrogate.shapes import FAMILIES, Bowtie, GapDimer, Rod, get_family

GOOD = {
    "rod": {"length_nm": 90.0, "width_nm": 30.0, "thickness_nm": 20.0, "end_radius_nm": 15.0},
    "gap-dimer": {"arm_length_nm": 40.0, "width_nm": 20.0, "thickness_nm": 20.0, "gap_nm": 10.0},
    "bowtie": {"arm_length_nm": 50.0, "flare_angle_deg": 60.0, "thickness_nm": 20.0, "gap_nm": 10.0, "tip_radius_nm": 8.0},
    "disk-peg": {"disk_diameter_nm": 100.0, "peg_length_nm": 30.0, "peg_width_nm": 20.0, "thickness_nm": 20.0},
    "coated-sphere": {"core_diameter_nm": 30.0, "shell_thickness_nm": 6.0},
}

# (family, rule, changed parameters, expected message). Each case breaks exactly one rule.
CASES = [
    ("rod", "minimum-feature", {"width_nm": 8.0, "end_radius_nm": 4.0},
     "width_nm must be >= 10 nm (rule minimum-feature); got 8.0"),
    ("rod", "minimum-feature", {"thickness_nm": 9.5},
     "thickness_nm must be >= 10 nm (rule minimum-feature); got 9.5"),
    # long axis along x: a rod shorter than it is wide is the same rod turned by 90 degrees
    ("rod", "long-axis-along-x", {"length_nm": 25.0, "end_radius_nm": 10.0},
     "length_nm must be >= width_nm = 30 nm (rule long-axis-along-x); got 25.0"),
    # a corner radius above half the width does not fit: semicircular ends are the largest (r = W / 2)
    ("rod", "end-radius-fits-width", {"end_radius_nm": 15.5},
     "end_radius_nm must be <= width_nm / 2 = 15 nm (rule end-radius-fits-width); got 15.5"),
    ("gap-dimer", "minimum-feature", {"arm_length_nm": 6.0},
     "arm_length_nm must be >= 10 nm (rule minimum-feature); got 6.0"),
    ("gap-dimer", "minimum-gap", {"gap_nm": 3.0}, "gap_nm must be >= 5 nm (rule minimum-gap); got 3.0"),
    ("bowtie", "minimum-feature", {"thickness_nm": 5.0}, "thickness_nm must be >= 10 nm (rule minimum-feature); got 5.0"),
    ("bowtie", "minimum-gap", {"gap_nm": 4.0}, "gap_nm must be >= 5 nm (rule minimum-gap); got 4.0"),
    # the tip circle meets the sides r (1 - sin 30 deg) = r / 2 from the tip: it must stay within the arm,
    # r <= 50 / 0.5 = 100 nm (circle inscribed in an angle)
    ("bowtie", "tip-radius-fits-arm", {"tip_radius_nm": 101.0},
     "tip_radius_nm must be <= arm_length_nm / (1 - sin(flare_angle_deg / 2)) = 100 nm (rule tip-radius-fits-arm); got 101.0"),
    # base width 2 L tan(a) = 2 * 20 * tan(10 deg) = 7.05 nm for a sharp 20-degree arm of 20 nm
    ("bowtie", "minimum-base-width", {"arm_length_nm": 20.0, "flare_angle_deg": 20.0, "tip_radius_nm": 0.0},
     "flare_angle_deg must be large enough for a base width >= 10 nm (here 7.05 nm) (rule minimum-base-width); got 20.0"),
    ("disk-peg", "minimum-feature", {"peg_length_nm": 7.0},
     "peg_length_nm must be >= 10 nm (rule minimum-feature); got 7.0"),
    ("disk-peg", "peg-narrower-than-disk", {"peg_width_nm": 100.0},
     "peg_width_nm must be < disk_diameter_nm = 100 nm (rule peg-narrower-than-disk); got 100.0"),
    ("coated-sphere", "outer-diameter-limit", {"core_diameter_nm": 390.0},
     "shell_thickness_nm must be <= (400 nm - core_diameter_nm) / 2 = 5 nm (rule outer-diameter-limit); got 6.0"),
]


@pytest.mark.parametrize("family, rule, change, message", CASES, ids=[f"{c[0]}:{c[1]}:{next(iter(c[2]))}" for c in CASES])
def test_each_rule_refuses_with_one_line(family, rule, change, message):
    fam = get_family(family)
    params = {**GOOD[family], **change}
    with pytest.raises(InvalidParameterError) as info:
        fam.validate(params)
    text = str(info.value)
    assert text == message
    assert "\n" not in text and f"(rule {rule})" in text
    # exactly the one rule is broken
    assert [name for name, _ in fam.violated_rules(params)] == [rule]


def test_every_rule_of_every_family_has_a_violating_case():
    covered = {(c[0], c[1]) for c in CASES}
    for family in FAMILIES.values():
        for rule in family.rules:
            assert (family.name, rule.name) in covered, f"{family.name} rule {rule.name} has no test"


@pytest.mark.parametrize("family", list(GOOD))
def test_good_examples_satisfy_every_rule(family):
    assert get_family(family).violated_rules(GOOD[family]) == ()


def test_rules_are_listed_as_data():
    for family in FAMILIES.values():
        for rule in family.rules:
            assert re.fullmatch(r"[a-z]+(-[a-z]+)*", rule.name)
            assert rule.description and "\n" not in rule.description
            assert set(rule.parameters) <= set(family.parameter_names)
        assert len({r.name for r in family.rules}) == len(family.rules)


def test_rules_run_without_a_lattice():
    # validate takes no spacing: a violation is reported before any site could be built
    fam = Rod()
    fam._sites = None  # would fail if called
    with pytest.raises(InvalidParameterError, match="rule end-radius-fits-width"):
        fam.sites({**GOOD["rod"], "end_radius_nm": 20.0}, 2.0)


def test_limits_are_settings():
    strict = GapDimer(min_feature_nm=25.0, min_gap_nm=12.0)
    # validate raises the first broken rule in listing order; violated_rules gives them all
    with pytest.raises(InvalidParameterError, match=r"^width_nm must be >= 25 nm \(rule minimum-feature\); got 20.0$"):
        strict.validate(GOOD["gap-dimer"])
    names = dict(strict.violated_rules(GOOD["gap-dimer"]))
    assert set(names) == {"minimum-gap", "minimum-feature"}
    assert names["minimum-gap"] == "gap_nm must be >= 12 nm (rule minimum-gap); got 10.0"
    loose = Bowtie(min_feature_nm=5.0, min_gap_nm=2.0)
    assert loose.violated_rules({**GOOD["bowtie"], "gap_nm": 3.0, "thickness_nm": 6.0}) == ()
    with pytest.raises(InvalidParameterError, match=r"^min_gap_nm must be in \[0, 1000\] nm; got -1.0$"):
        GapDimer(min_gap_nm=-1.0)


def test_bowtie_tip_rule_is_the_tangent_point_reaching_the_base():
    # at the limit r (1 - sin a) = L the tip circle meets the sides exactly at the base: allowed,
    # and a hair more is refused (circle inscribed in an angle, tangent length r / tan a from the apex)
    a = np.radians(30.0)
    limit = 50.0 / (1 - np.sin(a))
    fam = get_family("bowtie")
    assert fam.violated_rules({**GOOD["bowtie"], "tip_radius_nm": limit}) == ()
    assert [n for n, _ in fam.violated_rules({**GOOD["bowtie"], "tip_radius_nm": limit * 1.001})] == ["tip-radius-fits-arm"]
