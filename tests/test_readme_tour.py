"""The newcomer's path: the README's tour run verbatim, the help texts, progress and the error remedies.

The tour's commands are read from README.md (the ``bash`` block after the tour table) and run as
written, through the installed ``surrogate`` command, in a temporary project folder.  Only the
campaign file they name is swapped for a tiny one of the same name and family, so that the
campaign, its surrogates, the search, the verification and the export run in minutes, not the
demo's hour.
"""

import os
import re
import shlex
import struct
import subprocess
import sys
import time
from pathlib import Path

import pytest

from surrogate.cli import build_parser
from surrogate.models import MIN_DESIGNS_PER_PARAMETER

README = Path(__file__).resolve().parents[1] / "README.md"
SURROGATE = Path(sys.executable).parent / "surrogate"
CAMPAIGN = "datasets/demo.toml"
STORE = "datasets/demo.sqlite"

# The tiny stand-in for datasets/demo.toml: the same family, material, laser and objectives, one
# varied parameter so that the fewest designs the surrogates accept (MIN_DESIGNS_PER_PARAMETER per
# varied parameter) suffice, on a coarse 10 nm lattice (the hotspot keeps 2 spacings from the
# nearest dipole: 16 nm + d/2 >= 2 d) and a 6-wavelength sweep: about 3 s per design on 2 workers.
# Diameters from 120 nm keep every resonance inside the sweep (a smaller disk peaked at the 700 nm
# edge, was left out of resonance_nm and left too few designs to train).
TINY_CAMPAIGN = f"""\
name = "demo"
family = "disk-peg"
designs = {MIN_DESIGNS_PER_PARAMETER}
seed = 20261202

[bounds]
disk_diameter_nm = [120.0, 200.0]

[fixed]
peg_length_nm = 35.0
peg_width_nm = 25.0
thickness_nm = 30.0

[optics]
material = "gold"
medium_index = 1.0
laser_nm = 830.0
hotspot_offset_nm = 16.0

[solver]
spacing_nm = 10.0
wavelengths_nm = "700:950:50"
tol = 1e-4
max_iter = 3000
polarizability = "ldr"
"""


def _env():
    env = dict(os.environ)
    env["PATH"] = f"{SURROGATE.parent}{os.pathsep}{env.get('PATH', '')}"
    return env


def run(argv, cwd, timeout=600):
    """Run one command line (a list) in ``cwd`` with the venv's ``surrogate`` first on PATH."""
    t0 = time.perf_counter()
    proc = subprocess.run(argv, cwd=cwd, env=_env(), capture_output=True, text=True, timeout=timeout)
    proc.seconds = time.perf_counter() - t0
    return proc


def tour_commands(text=None):
    """The README tour's command lines, verbatim: continuations joined, ``a && b`` split."""
    text = README.read_text(encoding="utf-8") if text is None else text
    section = text.split("## A tour of the commands", 1)[1].split("\n## ", 1)[0]
    block = re.search(r"Examples:\s*\n```bash\n(.*?)\n```", section, re.S)
    assert block, "README's tour has no ```bash block after 'Examples:'"
    joined = re.sub(r"\\\n\s*", "", block.group(1))
    commands = []
    for line in joined.splitlines():
        for part in line.split("&&"):
            if part.strip():
                commands.append(shlex.split(part))
    return commands


def tour_table_commands():
    """The subcommand names in the README's tour table."""
    section = README.read_text(encoding="utf-8").split("## A tour of the commands", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"^\| `surrogate ([a-z-]+)", section, re.M)


def _subcommand(argv):
    return argv[1] if len(argv) > 1 and argv[0] == "surrogate" else None


# -- the tour, verbatim ------------------------------------------------------------------------
def test_tour_parses_into_surrogate_commands():
    commands = tour_commands()
    assert len(commands) >= 8
    assert all(c[0] == "surrogate" for c in commands), commands
    assert ["surrogate", "generate", CAMPAIGN, "--workers", "2"] in commands
    assert any(c[:2] == ["surrogate", "verify"] for c in commands)  # the one after '&&'
    assert not any("\\" in arg for c in commands for arg in c)  # continuations joined


def test_tour_parser_joins_continuations_and_splits_and():
    text = ("## A tour of the commands\n\nExamples:\n\n```bash\n"
            "surrogate a --x 1 \\\n    --y 2\nsurrogate b && surrogate c\n```\n")
    assert tour_commands(text) == [["surrogate", "a", "--x", "1", "--y", "2"], ["surrogate", "b"], ["surrogate", "c"]]


def test_tour_trains_before_it_searches():
    # search, queue and export-candidates need a trained model; a newcomer following the tour
    # verbatim must be told to train first
    names = [_subcommand(c) for c in tour_commands()]
    assert "search" in names
    assert "train" in names[:names.index("search")], (
        "README tour runs 'surrogate search' without 'surrogate train' before it; search refuses a store "
        f"without models. Tour order: {names}")


@pytest.fixture(scope="module")
def tour(tmp_path_factory):
    """Run the README's tour in a fresh project folder with the tiny campaign; the completed runs."""
    root = tmp_path_factory.mktemp("tour")
    (root / "datasets").mkdir()
    (root / CAMPAIGN).write_text(TINY_CAMPAIGN)
    runs = []
    for argv in tour_commands():
        runs.append((argv, run(argv, root)))
    return root, runs


def _one(tour, name, predicate=lambda argv: True):
    root, runs = tour
    found = [(argv, p) for argv, p in runs if _subcommand(argv) == name and predicate(argv)]
    assert found, f"the tour has no 'surrogate {name}' command"
    return found


def _ok(argv, proc):
    assert proc.returncode == 0, f"{shlex.join(argv)} exited {proc.returncode}:\n{proc.stderr[-2000:]}"


@pytest.mark.slow
def test_tour_every_command_exits_0(tour):
    root, runs = tour
    failed = [(shlex.join(a), p.returncode, p.stderr.strip().splitlines()[-1:]) for a, p in runs if p.returncode]
    assert not failed, failed
    total = sum(p.seconds for _, p in runs)
    assert total < 900, [(shlex.join(a), round(p.seconds)) for a, p in runs]


@pytest.mark.slow
def test_tour_materials_lists_the_asked_wavelengths(tour):
    for argv, proc in _one(tour, "materials"):
        _ok(argv, proc)
        start, stop, step = (float(v) for v in argv[argv.index("--wavelengths-nm") + 1].split(":"))
        rows = [ln.split() for ln in proc.stdout.splitlines() if re.match(r"^\d", ln)]
        assert [float(r[0]) for r in rows] == [start + i * step for i in range(int((stop - start) / step) + 1)]
        header = next(ln for ln in proc.stdout.splitlines() if ln.startswith("wavelength_nm"))
        assert header.split() == ["wavelength_nm", "n", "k", "eps_real", "eps_imag"]


@pytest.mark.slow
def test_tour_simulate_prints_spectrum_figures_and_writes_pictures(tour):
    root, _ = tour
    for argv, proc in _one(tour, "simulate"):
        _ok(argv, proc)
        out = proc.stdout
        assert "# figures of merit" in out and re.search(r"^resonance_nm\s+\d", out, re.M)
        assert re.search(r"^converged\s+True", out, re.M)
        if "--refine" in argv:  # the refinement columns: a d -> 0 estimate with its error bar
            assert "c_ext_limit_nm2" in out and "c_ext_limit_error_nm2" in out and "c_ext_limit_method" in out
        if "--laser-nm" in argv:
            laser = float(argv[argv.index("--laser-nm") + 1])
            assert re.search(rf"^{laser:g}\s", out, re.M)  # the laser is in the sweep
            assert re.search(r"^enhancement_at_laser\s+\d", out, re.M)
        for flag in ("--field-map", "--geometry"):
            if flag in argv:
                picture = root / argv[argv.index(flag) + 1]
                assert picture.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and picture.stat().st_size > 1000


@pytest.mark.slow
def test_tour_generate_fills_the_store_and_shows_progress(tour):
    root, _ = tour
    ((argv, proc),) = _one(tour, "generate")
    _ok(argv, proc)
    assert (root / STORE).is_file()
    n = MIN_DESIGNS_PER_PARAMETER
    assert re.search(rf"done {n}, not converged 0, failed 0, pending 0", proc.stdout), proc.stdout
    # the progress bar: counts out of the total, redrawn with \r while the campaign runs
    counts = [tuple(map(int, m)) for m in re.findall(r"(\d+)/(\d+) designs", proc.stderr)]
    assert len(counts) >= 2 and counts[-1] == (n, n), proc.stderr[-500:]
    assert [c[0] for c in counts] == sorted(c[0] for c in counts)
    assert "ETA" in proc.stderr


@pytest.mark.slow
def test_tour_search_writes_a_front(tour):
    root, _ = tour
    for argv, proc in _one(tour, "train"):
        _ok(argv, proc)
        assert (root / "datasets" / "demo.models" / "v0001").is_dir()
    ((argv, proc),) = _one(tour, "search")
    _ok(argv, proc)
    m = re.search(r"^front #1: (\d+) designs .* of (\d+) trials", proc.stdout, re.M)
    assert m, proc.stdout[:500]
    assert int(m.group(1)) >= 4 and int(m.group(2)) == int(argv[argv.index("--trials") + 1])
    assert (root / "datasets" / "demo.search.journal").is_file()


@pytest.mark.slow
def test_tour_queue_then_verify_resimulates_the_queued_designs(tour):
    ((qa, q),) = _one(tour, "queue")
    ((va, v),) = _one(tour, "verify")
    _ok(qa, q)
    _ok(va, v)
    queued = int(re.search(r"^queued (\d+) designs \(predictions of model v0001\)", q.stdout, re.M).group(1))
    assert 1 <= queued <= int(qa[qa.index("--front-top") + 1])
    assert re.search(rf"^verified {queued}, failed 0, returned to the queue 0", v.stdout, re.M), v.stdout
    assert len(re.findall(r"predicted .* simulated .* z [+-]", v.stdout)) >= 4 * queued  # every target compared
    assert re.search(rf"{queued}/{queued} designs", v.stderr)  # its progress line


@pytest.mark.slow
def test_tour_export_candidates_writes_closed_meshes_and_json(tour):
    import pandas as pd

    root, _ = tour
    ((argv, proc),) = _one(tour, "export-candidates")
    _ok(argv, proc)
    out = root / argv[argv.index("--out") + 1]
    table = pd.read_csv(out / "candidates.csv")
    assert len(table) == int(argv[argv.index("--top") + 1])
    for design_id in table["design_id"]:
        stl = (out / f"{design_id}.stl").read_bytes()
        (n_triangles,) = struct.unpack("<I", stl[80:84])  # binary STL: header, count, 50 bytes per triangle
        assert n_triangles > 0 and len(stl) == 84 + 50 * n_triangles
        assert (out / f"{design_id}.json").is_file()


# -- help ----------------------------------------------------------------------------------------
def _subparsers():
    import argparse

    parser = build_parser()
    (action,) = [a for a in parser._actions if isinstance(a, argparse._SubParsersAction)]
    return action.choices


SUBCOMMANDS = sorted(_subparsers())


def test_top_help_lists_every_subcommand(tmp_path):
    proc = run(["surrogate", "--help"], tmp_path)
    assert proc.returncode == 0 and proc.stdout.strip()
    listed = set(re.findall(r"^    ([a-z][a-z-]+)\s", proc.stdout, re.M))
    assert set(SUBCOMMANDS) <= listed, set(SUBCOMMANDS) - listed
    assert set(tour_table_commands()) <= listed, set(tour_table_commands()) - listed
    assert "nm" in proc.stdout  # the units convention


@pytest.mark.parametrize("name", SUBCOMMANDS)
def test_subcommand_help_exits_0_and_names_its_options(name, tmp_path):
    proc = run(["surrogate", name, "--help"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith(f"usage: surrogate {name}")
    sub = _subparsers()[name]
    assert (sub.description or "").strip(), f"surrogate {name} --help has no description"
    for action in sub._actions:
        if action.dest == "help":
            continue
        label = action.option_strings[0] if action.option_strings else action.metavar or action.dest
        assert (action.help or "").strip(), f"surrogate {name} {label}: empty help text"
        for option in action.option_strings:
            assert option in proc.stdout
            if option.endswith("-nm"):
                assert re.search(r"\bnm\b", action.help), f"surrogate {name} {option}: help does not say nm"


# -- errors say what to do next -----------------------------------------------------------------
@pytest.fixture(scope="module")
def fresh(tmp_path_factory):
    """A project folder whose tiny campaign store is sampled but not solved (``generate --no-run``)."""
    tmp_path = tmp_path_factory.mktemp("fresh")
    (tmp_path / "datasets").mkdir()
    (tmp_path / CAMPAIGN).write_text(TINY_CAMPAIGN)
    proc = run(["surrogate", "generate", CAMPAIGN, "--no-run"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    return tmp_path


# a remedy: a command to run (quoted or after "run"/"with") or an option to set
_REMEDY = re.compile(r"'surrogate [a-z-]+[^']*'|surrogate [a-z-]+ |--[a-z][a-z-]+")

_MISTAKES = [
    ("store missing", ["surrogate", "status", "datasets/nope.sqlite"], 2, "surrogate generate"),
    ("train a missing store", ["surrogate", "train", "datasets/nope.sqlite"], 2, "surrogate generate"),
    ("campaign file missing", ["surrogate", "generate", "datasets/nope.toml"], 2, "datasets/demo.toml"),
    ("train before generate", ["surrogate", "train", STORE], 2, "surrogate generate"),
    ("search before train", ["surrogate", "search", STORE, "--trials", "10"], 2, f"surrogate train {STORE}"),
    ("predict before train", ["surrogate", "predict", STORE, "--param", "disk_diameter_nm=150"], 2, "surrogate train"),
    ("queue with no front", ["surrogate", "queue", STORE, "--front-top", "4"], 2, "surrogate search"),
    ("export with no front", ["surrogate", "export-candidates", STORE, "--top", "5", "--out", "c/"], 2,
     "surrogate search"),
    ("verify an empty queue", ["surrogate", "verify", STORE], 0, f"surrogate queue {STORE} --front-top"),
    ("list an empty queue", ["surrogate", "queue", STORE], 0, "--front-top"),
    ("an option typo", ["surrogate", "generate", CAMPAIGN, "--wokers", "2"], 2, "--help"),
]


@pytest.mark.parametrize("argv,code,remedy", [m[1:] for m in _MISTAKES], ids=[m[0] for m in _MISTAKES])
def test_newcomer_mistake_gets_one_line_with_a_remedy(fresh, argv, code, remedy):
    proc = run(argv, fresh, timeout=120)
    assert proc.returncode == code, (proc.returncode, proc.stdout, proc.stderr)
    if code == 2:  # an error: one line on stderr, nothing on stdout
        lines = proc.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("error: "), proc.stderr
        assert not proc.stdout.strip()
    else:  # a hint: the product's behaviour for "nothing to do"
        lines = proc.stdout.strip().splitlines()
        assert len(lines) == 1 and not proc.stderr.strip(), (proc.stdout, proc.stderr)
    assert remedy in lines[0] and _REMEDY.search(lines[0]), lines[0]
    assert "Traceback" not in proc.stderr
