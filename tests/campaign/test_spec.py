"""Campaign files: a good file parses; a bad one lists every problem at once."""

import pytest

from surrogate.campaign._spec import CampaignFileError, load_campaign

GOOD = """
name = "bar-830"
family = "box"
designs = 20
seed = 1

[bounds]
length_nm = [60.0, 200.0]
width_nm = [20.0, 60.0]

[fixed]
thickness_nm = 30.0

[optics]
material = "gold"
medium_index = 1.0
laser_nm = 830.0
hotspot_offset_nm = 5.0

[solver]
spacing_nm = 4.0
wavelengths_nm = "600:1000:20"
"""


def write(tmp_path, text):
    path = tmp_path / "c.toml"
    path.write_text(text)
    return path


def test_good_file(tmp_path):
    spec = load_campaign(write(tmp_path, GOOD))
    assert spec.family == "box" and spec.varied == ("length_nm", "width_nm")
    assert spec.fixed == {"thickness_nm": 30.0} and spec.tol == 1e-5 and spec.polarizability == "ldr"


def test_every_problem_is_listed_at_once(tmp_path):
    bad = (
        GOOD.replace('family = "box"', 'family = "box"\ncolour = "red"')
        .replace("length_nm = [60.0, 200.0]", "length_nm = [200.0, 60.0]")
        .replace("width_nm = [20.0, 60.0]", "width_nm = [0.5, 60.0]")
        .replace("designs = 20", "designs = -3")
        .replace('spacing_nm = 4.0', 'spacing_nm = "four"')
        .replace("laser_nm = 830.0", "laser_nm = 1200.0")
    )
    with pytest.raises(CampaignFileError) as info:
        load_campaign(write(tmp_path, bad))
    problems = info.value.problems
    text = str(info.value)
    assert "\n" not in text
    for fragment in (
        "colour: unknown key",
        "bounds.length_nm = [200.0, 60.0]: low must be < high",
        "bounds.width_nm = [0.5, 60.0]: must lie inside the family limits [2, 1000] nm",
        "designs = -3: must be in [1, 100000]",
        "solver.spacing_nm = 'four': must be a number",
        "optics.laser_nm = 1200.0: must lie inside solver.wavelengths_nm [600, 1000] nm",
    ):
        assert any(fragment in p for p in problems), fragment
    assert len(problems) == 6


@pytest.mark.parametrize(
    "change,fragment",
    [
        (('family = "box"', 'family = "pentagon"'), "family = 'pentagon'"),
        (("[fixed]\nthickness_nm = 30.0", "[fixed]"), "thickness_nm: a parameter of box must be in bounds or fixed"),
        (("thickness_nm = 30.0", "thickness_nm = 30.0\nlength_nm = 50.0"), "fixed.length_nm: also in bounds"),
        (('material = "gold"', 'material = "unobtainium"'), "optics.material = 'unobtainium'"),
        (('wavelengths_nm = "600:1000:20"', 'wavelengths_nm = "100:1000:20"'), "optics.material = 'gold'"),
        (("seed = 1", 'seed = "one"'), "seed = 'one': must be an integer"),
        (("[solver]", "[solver]\npolarizability = \"magic\""), "must be one of fcd, ldr, rrcm"),
    ],
)
def test_single_problems(tmp_path, change, fragment):
    with pytest.raises(CampaignFileError) as info:
        load_campaign(write(tmp_path, GOOD.replace(*change)))
    assert fragment in str(info.value)


def test_unreadable_files(tmp_path):
    with pytest.raises(CampaignFileError, match="no such file"):
        load_campaign(tmp_path / "missing.toml")
    with pytest.raises(CampaignFileError, match="not valid TOML"):
        load_campaign(write(tmp_path, "name = "))
