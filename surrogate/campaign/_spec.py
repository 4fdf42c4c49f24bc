"""Campaign files: a TOML description of one training-set campaign, validated all at once.

Schema (our own; every length in nm)
------------------------------------
::

    name = "disk-peg-830"            # letters, digits, - and _; names the store file
    family = "disk-peg"              # a shape family (surrogate families)
    designs = 160                    # number of sampled designs, >= 1
    seed = 20261202                  # integer seed of the Latin-hypercube sampler

    [bounds]                         # varied parameters: [low, high] inside the family limits
    disk_diameter_nm = [120.0, 300.0]

    [fixed]                          # the family's other parameters, one value each
    thickness_nm = 40.0

    [optics]
    material = "gold"                # see surrogate materials
    medium_index = 1.0               # real index of the host
    laser_nm = 830.0                 # laser (vacuum) wavelength
    hotspot_offset_nm = 5.0          # hotspot distance beyond the feature tip
    incidence_polar_deg = 0.0        # plane wave: angle from the downward normal -z (90 = grazing)
    incidence_azimuth_deg = 0.0      # plane of incidence, from x towards y
    polarization_deg = 0.0           # field angle from p (in the plane of incidence) towards s

    [solver]
    spacing_nm = 4.0
    wavelengths_nm = "600:1000:20"   # START:STOP:STEP; the laser wavelength is added if missing
    tol = 1e-5
    max_iter = 3000
    polarizability = "fcd"           # fcd | ldr | rrcm
    dtype = "auto"                   # auto | complex128 | complex64 (auto: complex64 from tol 1e-4 up)
    preconditioner = "auto"          # auto | none | circulant (auto: where measured to save time)

Every parameter of the family is either in ``bounds`` or in ``fixed``, never in
both.  Problems are collected and reported together, each naming the key, the
value and what is allowed.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import asdict, dataclass
from pathlib import Path

from .._paths import outside_project
from .._validation import parse_wavelength_range
from ..errors import InvalidParameterError, SurrogateError

__all__ = ["CampaignSpec", "CampaignFileError", "load_campaign", "parse_campaign", "ADDED_SPEC_DEFAULTS"]

_TOP = {"name", "family", "designs", "seed", "bounds", "fixed", "optics", "solver"}
_OPTICS = {
    "material": "gold", "medium_index": 1.0, "laser_nm": None, "hotspot_offset_nm": 5.0,
    "incidence_polar_deg": 0.0, "incidence_azimuth_deg": 0.0, "polarization_deg": 0.0,
}
_SOLVER = {
    "spacing_nm": None, "wavelengths_nm": None, "tol": 1e-5, "max_iter": 3000, "polarizability": "fcd",
    "dtype": "auto", "preconditioner": "auto",
}
#: Keys added after the first stores were written, with the value an older store implies.
#: (Older campaign files said polarizability explicitly, so its default change is not here.)
ADDED_SPEC_DEFAULTS = {
    "incidence_polar_deg": 0.0, "incidence_azimuth_deg": 0.0, "polarization_deg": 0.0, "dtype": "complex128",
    "preconditioner": "none",
}
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$")


class CampaignFileError(SurrogateError, ValueError):
    """A campaign file has problems; ``problems`` lists them, the message joins them."""

    def __init__(self, source, problems):
        self.source = source
        self.problems = list(problems)
        n = len(self.problems)
        super().__init__(f"{source}: {n} problem{'s' if n != 1 else ''}: " + "; ".join(self.problems))


@dataclass(frozen=True)
class CampaignSpec:
    """A validated campaign (see the module docstring for the fields)."""

    name: str
    family: str
    designs: int
    seed: int
    bounds: dict
    fixed: dict
    material: str
    medium_index: float
    laser_nm: float
    hotspot_offset_nm: float
    spacing_nm: float
    wavelengths_nm: str
    tol: float
    max_iter: int
    polarizability: str
    incidence_polar_deg: float = 0.0
    incidence_azimuth_deg: float = 0.0
    polarization_deg: float = 0.0
    dtype: str = "auto"
    preconditioner: str = "auto"

    def to_dict(self):
        """A JSON-ready dict (stored in the campaign's store)."""
        return asdict(self)

    @property
    def varied(self):
        """Names of the varied parameters, in the family's order."""
        return tuple(self.bounds)


def _is_number(v):
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def parse_campaign(data, *, source="campaign"):
    """Validate a parsed TOML mapping; return a :class:`CampaignSpec`.

    Raises
    ------
    CampaignFileError
        Listing every problem found.
    """
    from ..shapes import get_family

    problems = []

    def need(table, key, kind, default=None, where=""):
        full = f"{where}{key}"
        if key not in table:
            if default is None:
                problems.append(f"{full} is missing")
            return default
        value = table[key]
        if kind == "number" and not _is_number(value):
            problems.append(f"{full} = {value!r}: must be a number")
            return default
        if kind == "int" and (isinstance(value, bool) or not isinstance(value, int)):
            problems.append(f"{full} = {value!r}: must be an integer")
            return default
        if kind == "str" and not isinstance(value, str):
            problems.append(f"{full} = {value!r}: must be a string")
            return default
        return value

    if not isinstance(data, dict):
        raise CampaignFileError(source, ["the file must hold a TOML table"])
    for key in data:
        if key not in _TOP:
            problems.append(f"{key}: unknown key; allowed: {', '.join(sorted(_TOP))}")
    name = need(data, "name", "str")
    if isinstance(name, str) and not _NAME.match(name):
        problems.append(f"name = {name!r}: must be 1-64 letters, digits, '-' or '_' (it names the store file)")
    family_name = need(data, "family", "str")
    designs = need(data, "designs", "int")
    if isinstance(designs, int) and not 1 <= designs <= 100_000:
        problems.append(f"designs = {designs}: must be in [1, 100000]")
    seed = need(data, "seed", "int")
    if isinstance(seed, int) and seed < 0:
        problems.append(f"seed = {seed}: must be >= 0")

    family = None
    if isinstance(family_name, str):
        try:
            family = get_family(family_name)
        except InvalidParameterError as exc:
            problems.append(f"family = {family_name!r}: {exc}")

    bounds_in = data.get("bounds", {})
    fixed_in = data.get("fixed", {})
    bounds, fixed = {}, {}
    for tname, table in (("bounds", bounds_in), ("fixed", fixed_in)):
        if not isinstance(table, dict):
            problems.append(f"{tname}: must be a table")
    if not isinstance(bounds_in, dict):
        bounds_in = {}
    if not isinstance(fixed_in, dict):
        fixed_in = {}
    if not bounds_in:
        problems.append("bounds: must vary at least one parameter")
    if family is not None:
        limits = {p.name: p for p in family.parameters}
        for key, value in bounds_in.items():
            if key not in limits:
                problems.append(f"bounds.{key}: not a parameter of {family.name}; allowed: {', '.join(limits)}")
                continue
            p = limits[key]
            if not (isinstance(value, list) and len(value) == 2 and all(_is_number(v) for v in value)):
                problems.append(f"bounds.{key} = {value!r}: must be [low, high] in {p.unit}")
                continue
            lo, hi = float(value[0]), float(value[1])
            if lo >= hi:
                problems.append(f"bounds.{key} = {value!r}: low must be < high")
            elif lo < p.low or hi > p.high:
                problems.append(f"bounds.{key} = {value!r}: must lie inside the family limits [{p.low:g}, {p.high:g}] {p.unit}")
            else:
                bounds[key] = (lo, hi)
        for key, value in fixed_in.items():
            if key not in limits:
                problems.append(f"fixed.{key}: not a parameter of {family.name}; allowed: {', '.join(limits)}")
                continue
            p = limits[key]
            if key in bounds_in:
                problems.append(f"fixed.{key}: also in bounds; a parameter is either varied or fixed")
            elif not _is_number(value):
                problems.append(f"fixed.{key} = {value!r}: must be a number in {p.unit}")
            elif not p.low <= value <= p.high:
                problems.append(f"fixed.{key} = {value!r}: must be in [{p.low:g}, {p.high:g}] {p.unit}")
            else:
                fixed[key] = float(value)
        for key in limits:
            if key not in bounds_in and key not in fixed_in:
                problems.append(f"{key}: a parameter of {family.name} must be in bounds or fixed")
        # keep the family's parameter order
        bounds = {k: bounds[k] for k in limits if k in bounds}
        fixed = {k: fixed[k] for k in limits if k in fixed}

    sections = {}
    for tname, defaults in (("optics", _OPTICS), ("solver", _SOLVER)):
        table = data.get(tname, {})
        if not isinstance(table, dict):
            problems.append(f"{tname}: must be a table")
            table = {}
        for key in table:
            if key not in defaults:
                problems.append(f"{tname}.{key}: unknown key; allowed: {', '.join(defaults)}")
        values = {}
        for key, default in defaults.items():
            kind = "str" if key in ("material", "wavelengths_nm", "polarizability", "dtype", "preconditioner") else ("int" if key == "max_iter" else "number")
            values[key] = need(table, key, kind, default, where=f"{tname}.")
        sections.update(values)

    def check_range(key, lo, hi, unit="", value=None):
        v = sections.get(key) if value is None else value
        if _is_number(v) and not lo <= v <= hi:
            where = "optics." if key in _OPTICS else "solver."
            problems.append(f"{where}{key} = {v!r}: must be in [{lo:g}, {hi:g}]{' ' + unit if unit else ''}")

    check_range("medium_index", 1.0, 4.0)
    check_range("laser_nm", 200.0, 5000.0, "nm")
    check_range("hotspot_offset_nm", 0.0, 100.0, "nm")
    check_range("spacing_nm", 0.25, 50.0, "nm")
    check_range("tol", 1e-10, 1e-2)
    if isinstance(sections.get("max_iter"), int) and not 1 <= sections["max_iter"] <= 100_000:
        problems.append(f"solver.max_iter = {sections['max_iter']}: must be in [1, 100000]")
    if sections.get("polarizability") not in (None, "fcd", "ldr", "rrcm"):
        problems.append(f"solver.polarizability = {sections['polarizability']!r}: must be one of fcd, ldr, rrcm")
    if sections.get("dtype") not in (None, "auto", "complex128", "complex64"):
        problems.append(f"solver.dtype = {sections['dtype']!r}: must be one of auto, complex128, complex64")
    if sections.get("preconditioner") not in (None, "auto", "none", "circulant"):
        problems.append(f"solver.preconditioner = {sections['preconditioner']!r}: must be one of auto, none, circulant")
    check_range("incidence_polar_deg", 0.0, 180.0, "deg")
    check_range("incidence_azimuth_deg", -360.0, 360.0, "deg")
    check_range("polarization_deg", -180.0, 180.0, "deg")
    if isinstance(sections.get("wavelengths_nm"), str):
        try:
            wl = parse_wavelength_range(sections["wavelengths_nm"], name="solver.wavelengths_nm")
        except InvalidParameterError as exc:
            problems.append(str(exc))
        else:
            if wl.size < 3:
                problems.append(f"solver.wavelengths_nm = {sections['wavelengths_nm']!r}: needs at least 3 wavelengths to locate a resonance")
            laser = sections.get("laser_nm")
            if _is_number(laser) and not wl[0] <= laser <= wl[-1]:
                problems.append(f"optics.laser_nm = {laser!r}: must lie inside solver.wavelengths_nm [{wl[0]:g}, {wl[-1]:g}] nm")
    if isinstance(sections.get("material"), str) and sections["material"].strip().lower().endswith(".csv"):
        outside = outside_project(sections["material"].strip(), what="a table named in a campaign file")
        if outside:
            problems.append(f"optics.material = {sections['material']!r}: {outside}; copy the table into datasets/")
            sections["material"] = None  # not read
    if isinstance(sections.get("material"), str):
        from ..catalog import get_material

        try:
            mat = get_material(sections["material"])
            if isinstance(sections.get("wavelengths_nm"), str):
                mat.permittivity(parse_wavelength_range(sections["wavelengths_nm"]))
        except SurrogateError as exc:
            problems.append(f"optics.material = {sections['material']!r}: {exc}")

    if problems:
        raise CampaignFileError(source, problems)
    return CampaignSpec(
        name=name, family=family.name, designs=designs, seed=seed, bounds=bounds, fixed=fixed,
        material=sections["material"], medium_index=float(sections["medium_index"]),
        laser_nm=float(sections["laser_nm"]), hotspot_offset_nm=float(sections["hotspot_offset_nm"]),
        spacing_nm=float(sections["spacing_nm"]), wavelengths_nm=sections["wavelengths_nm"],
        tol=float(sections["tol"]), max_iter=int(sections["max_iter"]), polarizability=sections["polarizability"],
        incidence_polar_deg=float(sections["incidence_polar_deg"]),
        incidence_azimuth_deg=float(sections["incidence_azimuth_deg"]),
        polarization_deg=float(sections["polarization_deg"]), dtype=sections["dtype"],
        preconditioner=sections["preconditioner"],
    )


def load_campaign(path):
    """Read and validate a campaign TOML file."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CampaignFileError(str(path), ["no such file"]) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CampaignFileError(str(path), [f"cannot be read ({exc})"]) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CampaignFileError(str(path), [f"not valid TOML ({exc})"]) from None
    return parse_campaign(data, source=str(path))
