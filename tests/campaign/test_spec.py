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
    assert spec.fixed == {"thickness_nm": 30.0} and spec.tol == 1e-5 and spec.polarizability == "fcd"


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


def _table(path):
    # Johnson & Christy gold rows near 800 nm, rounded (from memory; only the file's form matters here)
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("wavelength_nm,n,k\n550,0.43,2.46\n700,0.13,4.10\n850,0.16,5.30\n1050,0.22,6.90\n")
    return path


def test_a_table_inside_datasets_is_read(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    _table(tmp_path / "datasets" / "au.csv")
    spec = load_campaign(write(tmp_path, GOOD.replace('material = "gold"', 'material = "datasets/au.csv"')))
    assert spec.material == "datasets/au.csv"


@pytest.mark.parametrize("name", ["../au.csv", "/tmp/elsewhere/au.csv", "datasets/../au.csv", "datasets/link/au.csv"])
def test_a_table_outside_the_project_folders_is_refused_unread(tmp_path, monkeypatch, name):
    # security rule of the product (no outside source): files named in a shared campaign file stay
    # inside datasets/ or reports/, symbolic links resolved
    project = tmp_path / "project"
    (project / "datasets").mkdir(parents=True)
    monkeypatch.chdir(project)
    outside = _table(tmp_path / "au.csv")
    (project / "datasets" / "link").symlink_to(tmp_path)
    if name.startswith("/tmp/elsewhere"):
        name = str(outside)
    with pytest.raises(CampaignFileError, match=r"must lie inside the project's datasets/ or reports/"):
        load_campaign(write(project, GOOD.replace('material = "gold"', f'material = "{name}"')))
