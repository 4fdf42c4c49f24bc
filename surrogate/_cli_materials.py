"""``surrogate materials``: list materials and print their optical constants."""

from __future__ import annotations

import argparse
import csv
import sys

import numpy as np

from ._validation import parse_wavelength_range
from .catalog import get_material, list_materials

_HELP = """List the available materials, or print one material's optical constants.

Without NAME: one row per named material with its source and wavelength range.
With NAME: columns wavelength_nm, n, k, eps_real, eps_imag at the requested
vacuum wavelengths. NAME is a material name (gold, gold-ld, silver, ...),
db:BOOK/PAGE for any tabulated entry of the bundled open refractive-index
database (e.g. db:Au/McPeak), a path to a CSV table (columns wavelength_nm, n, k),
or a bare number for a non-dispersive dielectric of that refractive index.
Tables are interpolated with PCHIP of n and k in photon energy; wavelengths
outside a table are refused, never extrapolated."""


def add_materials_command(sub, units):
    p = sub.add_parser(
        "materials",
        help="list materials or print n, k and eps of one",
        description=_HELP,
        epilog=units,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("name", nargs="?", metavar="NAME", help="material name, db:BOOK/PAGE, CSV path or refractive index")
    p.add_argument(
        "--wavelengths-nm",
        default="400:1000:50",
        metavar="RANGE",
        help="vacuum wavelengths in nm: START:STOP:STEP (STOP included when on the grid) "
        "or one wavelength (default 400:1000:50)",
    )
    p.add_argument("--csv", action="store_true", help="print a machine-readable CSV table")
    p.set_defaults(run=run_materials)


def _print_table(rows, columns, formats, out):
    cells = [[fmt.format(row[c]) if not isinstance(row[c], str) else row[c] for c, fmt in zip(columns, formats)] for row in rows]
    widths = [max(len(c), *(len(r[i]) for r in cells)) for i, c in enumerate(columns)]
    out.write("  ".join(c.ljust(w) for c, w in zip(columns, widths)).rstrip() + "\n")
    for r in cells:
        out.write("  ".join(v.ljust(w) for v, w in zip(r, widths)).rstrip() + "\n")


def run_materials(args):
    out = sys.stdout
    if args.name is None:
        rows = list_materials()
        columns = ["name", "aliases", "kind", "wavelength_min_nm", "wavelength_max_nm", "source"]
        if args.csv:
            w = csv.DictWriter(out, fieldnames=columns, extrasaction="ignore", lineterminator="\n")
            w.writeheader()
            w.writerows(rows)
        else:
            _print_table(rows, columns, ["{}", "{}", "{}", "{:g}", "{:g}", "{}"], out)
        return 0
    material = get_material(args.name)
    wl = parse_wavelength_range(args.wavelengths_nm, name="--wavelengths-nm")
    eps = np.atleast_1d(material.permittivity(wl))
    nk = np.sqrt(eps)
    columns = ["wavelength_nm", "n", "k", "eps_real", "eps_imag"]
    rows = [
        dict(zip(columns, (float(w), float(v.real), float(v.imag), float(e.real), float(e.imag))))
        for w, v, e in zip(wl, nk, eps)
    ]
    if args.csv:
        w = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
        w.writeheader()
        for row in rows:
            w.writerow({c: repr(row[c]) for c in columns})
    else:
        out.write(f"# {material.name}: {material.source}; interpolation: {material.interpolation}\n")
        _print_table(rows, columns, ["{:g}", "{:.4f}", "{:.4f}", "{:.3f}", "{:.3f}"], out)
    return 0
