"""``surrogate families``: shape families, their parameters, fabrication rules and hotspots."""

from __future__ import annotations

import argparse
import json
import sys

from .shapes import FAMILIES, get_family

_HELP = """List the parametric shape families: parameters with units and default bounds,
the fabrication rules checked before anything is solved, the hotspot and the
default illumination. Lengths in nm, angles in deg. Geometry convention: the
antenna is a film in the x-y plane (thickness along z), its long axis along x,
illuminated at normal incidence along -z with the field along x."""


def add_families_command(sub, units):
    p = sub.add_parser("families", help="list shape families, parameters, rules and hotspots", description=_HELP,
                       epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("name", nargs="?", metavar="FAMILY", help="show one family only")
    p.add_argument("--json", action="store_true", help="machine-readable output")
    p.set_defaults(run=run_families)


def describe_family(fam):
    """A JSON-ready description of one family."""
    return {
        "name": fam.name,
        "description": fam.description,
        "parameters": [
            {"name": p.name, "unit": p.unit, "low": p.low, "high": p.high, "description": p.description}
            for p in fam.parameters
        ],
        "rules": [{"name": r.name, "description": r.description} for r in fam.rules],
        "hotspot": fam.hotspot_definition,
        "default_e_direction": list(fam.default_e_direction),
        "default_k_direction": list(fam.default_k_direction),
        "surroundings": bool(fam.supports_surroundings),
    }


def run_families(args):
    families = [get_family(args.name)] if args.name else list(FAMILIES.values())
    info = [describe_family(f) for f in families]
    if args.json:
        json.dump(info, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    for fam in info:
        print(f"{fam['name']}: {fam['description']}")
        for p in fam["parameters"]:
            print(f"  {p['name']:22s} [{p['low']:g}, {p['high']:g}] {p['unit']:4s} {p['description']}")
        for r in fam["rules"]:
            print(f"  rule {r['name']}: {r['description']}")
        print(f"  hotspot: {fam['hotspot']}")
        e, k = fam["default_e_direction"], fam["default_k_direction"]
        print(f"  illumination: field along ({', '.join(f'{v:g}' for v in e)}), travelling along "
              f"({', '.join(f'{v:g}' for v in k)}); surroundings: {'yes' if fam['surroundings'] else 'no'}")
        print()
    return 0
