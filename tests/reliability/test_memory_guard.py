"""The memory guard: a design whose lattice would need more than the limit (default half the machine's
RAM) is refused before anything is allocated, with the estimate and the limit in the message."""

import os
import re
import resource
import subprocess
import sys
from pathlib import Path

from surrogate.campaign import Status, Store
from surrogate.cli import main

ROOT = Path(__file__).resolve().parents[2]
GIB = 2**30
ADDRESS_SPACE_LIMIT = 4 * GIB  # far below the estimate: a process that tried to allocate would die

_MESSAGE = re.compile(r"lattice of sphere at spacing_nm=([\d.]+) \(bounding grid (\d+)x(\d+)x(\d+)\) would need about "
                      r"([\d.]+) GiB; the limit is ([\d.]+) GiB; use a larger spacing_nm")


def _half_ram_gib():
    return 0.5 * os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / GIB


def _check_estimate(match, diameter_nm, spacing_nm):
    nx, ny, nz = (int(match.group(i)) for i in (2, 3, 4))
    # the bounding grid holds the sphere: at least diameter/spacing cells per axis
    assert min(nx, ny, nz) >= diameter_nm / spacing_nm
    # lower bound, common practice (no source): one complex128 3-vector (48 bytes) per cell of the grid
    assert float(match.group(5)) >= 48 * nx * ny * nz / GIB
    assert float(match.group(6)) == round(_half_ram_gib(), 2)


def _limit_address_space():
    resource.setrlimit(resource.RLIMIT_AS, (ADDRESS_SPACE_LIMIT, ADDRESS_SPACE_LIMIT))


def test_simulate_refuses_an_oversized_lattice_up_front_with_the_estimate(tmp_path):
    out = tmp_path / "s.csv"
    proc = subprocess.run(
        [sys.executable, "-m", "surrogate", "simulate", "sphere", "--param", "diameter_nm=400", "--spacing-nm", "0.1",
         "--wavelengths-nm", "700", "--out", str(out)],
        cwd=ROOT, capture_output=True, text=True, timeout=120, preexec_fn=_limit_address_space)
    assert proc.returncode == 2 and proc.stdout == ""
    assert proc.stderr.startswith("error: ") and proc.stderr.count("\n") == 1, proc.stderr
    match = _MESSAGE.search(proc.stderr)
    assert match, proc.stderr
    _check_estimate(match, 400.0, 0.1)
    assert not out.exists() and list(tmp_path.iterdir()) == []


_CAMPAIGN = """
name = "big"
family = "sphere"
designs = 2
seed = 1

[bounds]
diameter_nm = [390.0, 400.0]

[fixed]

[optics]
material = "gold"
medium_index = 1.0
laser_nm = 700.0
hotspot_offset_nm = 8.0

[solver]
spacing_nm = 0.25
wavelengths_nm = "600:800:100"
tol = 1e-4
"""


def test_a_campaign_design_too_large_for_memory_fails_with_the_estimate(tmp_path, capsys):
    toml = tmp_path / "big.toml"
    toml.write_text(_CAMPAIGN)
    assert main(["generate", str(toml), "--workers", "1", "--quiet"]) == 0
    assert "failed 2" in capsys.readouterr().out
    with Store.open(tmp_path / "big.sqlite", readonly=True) as store:
        designs = store.designs()
        assert store.results() == []
    for d in designs:
        assert d["status"] is Status.FAILED and d["message"].startswith("LatticeTooLargeError: ")
        match = _MESSAGE.search(d["message"])
        assert match, d["message"]
        _check_estimate(match, d["params"]["diameter_nm"], 0.25)
