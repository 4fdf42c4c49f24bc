"""``surrogate simulate``: one design's spectra and figures of merit."""

from __future__ import annotations

import argparse
import csv
import json
import math
import sys
from pathlib import Path

from ._validation import parse_wavelength_range
from .errors import InvalidParameterError
from .shapes import FAMILIES

_HELP = """Solve one design with the coupled-dipole method over a wavelength sweep and
report its spectrum and figures of merit.

FAMILY is one of: {families} (see 'surrogate families' for parameters, rules
and hotspots). Geometric parameters are --param NAME=VALUE with the unit in the
name (lengths in nm, angles in deg). The antenna is illuminated by a plane wave
of amplitude E0 = 1, by default at normal incidence along -z with the electric
field along x (its long axis); --incidence-polar-deg tilts it from the normal
(90 = grazing, in the film plane, as a guided mode drives a transducer),
--incidence-azimuth-deg turns the plane of incidence from x towards y and
--polarization-deg turns the field from p (in that plane) towards s. Cross
sections c_ext_nm2, c_abs_nm2, c_sca_nm2 are in nm^2, in the host medium of real
index --medium-index; enhancement is |E|^2/|E0|^2 at the hotspot. Every row says
whether its iterative solve converged, its iteration count and its true relative
residual; a row that did not converge is marked converged=False, never hidden,
and the command then exits with code 1.

Figures (with --laser-nm for the laser ones): resonance_nm, far_field_resonance_nm,
enhancement_at_laser, peak_enhancement, linewidth_nm, quality_factor,
c_abs_at_laser_nm2, heat_per_enhancement_nm2 (= c_abs / enhancement at the laser,
nm^2), spot_fwhm_y_nm, spot_fwhm_z_nm, spot_area_nm2 (half-maximum spot in the
plane through the hotspot perpendicular to x).

Parameters per family:
{params}"""


def _family_help():
    lines = []
    for fam in FAMILIES.values():
        ps = ", ".join(f"{p.name} [{p.low:g}-{p.high:g} {p.unit}]" for p in fam.parameters)
        lines.append(f"  {fam.name}: {ps}")
    return "\n".join(lines)


def add_simulate_command(sub, units):
    p = sub.add_parser(
        "simulate",
        help="spectra and figures of merit of one design",
        description=_HELP.format(families=", ".join(FAMILIES), params=_family_help()),
        epilog=units,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("family", metavar="FAMILY", help=f"shape family: {', '.join(FAMILIES)}")
    p.add_argument("--param", action="append", default=[], metavar="NAME=VALUE", help="a geometric parameter (repeat)")
    p.add_argument("--material", default="gold", help="antenna material (default gold = Johnson & Christy); see 'surrogate materials'")
    p.add_argument("--region-material", action="append", default=[], metavar="REGION=MATERIAL",
                   help="material of one region, e.g. shell=1.45 or substrate=glass (repeat)")
    p.add_argument("--medium-index", type=float, default=1.0, help="real refractive index of the host medium (default 1.0)")
    p.add_argument("--wavelengths-nm", required=True, metavar="RANGE", help="vacuum wavelengths in nm: START:STOP:STEP or one value")
    p.add_argument("--spacing-nm", type=float, required=True, help="lattice spacing d in nm (the finest under --refine)")
    p.add_argument("--laser-nm", type=float, help="laser vacuum wavelength in nm (added to the sweep if missing)")
    p.add_argument("--hotspot-offset-nm", type=float,
                   help="hotspot distance beyond the tip in nm (tip families; default the family's)")
    p.add_argument("--incidence-polar-deg", type=float, default=0.0,
                   help="angle of the incident wave from the downward normal -z in deg (default 0; 90 = grazing)")
    p.add_argument("--incidence-azimuth-deg", type=float, default=0.0,
                   help="azimuth of the plane of incidence from x towards y in deg (default 0)")
    p.add_argument("--polarization-deg", type=float, default=0.0,
                   help="field angle from p (in the plane of incidence) towards s in deg (default 0 = p)")
    p.add_argument("--polarizability", choices=("fcd", "ldr", "rrcm"), default="fcd",
                   help="dipole polarizability: fcd (filtered coupled dipole, default), ldr (lattice dispersion "
                   "relation), rrcm (Clausius-Mossotti with radiative reaction)")
    p.add_argument("--dtype", choices=("auto", "complex128", "complex64"), default="auto",
                   help="precision of the FFT interaction and Krylov vectors (default auto: complex64 from "
                   "--tol 1e-4 up, complex128 below)")
    p.add_argument("--method", choices=("cocg", "bicgstab", "gmres"), default="cocg", help="Krylov solver (default cocg)")
    p.add_argument("--preconditioner", choices=("auto", "none", "circulant"), default="auto",
                   help="COCG preconditioner: auto (default: the circulant where measured to save time, i.e. with "
                   "ldr/rrcm on films and sparse boxes; never with fcd), none, circulant")
    p.add_argument("--tol", type=float, default=1e-5, help="relative residual to stop at (default 1e-5)")
    p.add_argument("--max-iter", type=int, default=3000, help="iteration cap per wavelength (default 3000)")
    p.add_argument("--refine", action="store_true",
                   help="also solve at 1.25, 1.5, 1.75, 2 and 2.5 times the spacing and estimate the cross "
                   "sections at d -> 0 with an error bar (extrapolated when the values converge regularly, "
                   "else bounded by the trend of the finest spacings)")
    g = p.add_argument_group("surroundings (film families)")
    g.add_argument("--substrate-thickness-nm", type=float, help="add a substrate slab under the film of this thickness [nm]")
    g.add_argument("--substrate-size-nm", type=float, help="lateral size of the substrate slab [nm] (a convergence setting)")
    g.add_argument("--substrate-gap-nm", type=float, default=0.0, help="gap between film and substrate [nm] (default 0)")
    g.add_argument("--layer-thickness-nm", type=float, help="add a slab of this thickness [nm] facing the hotspot (recording layer / sample)")
    g.add_argument("--layer-size-nm", type=float, help="lateral size of that slab [nm] (a convergence setting)")
    g.add_argument("--layer-separation-nm", type=float, help="distance from the antenna's tip to that slab [nm]")
    p.add_argument("--out", metavar="FILE.csv", help="write the spectrum as CSV")
    p.add_argument("--json", action="store_true", help="print JSON instead of tables")
    p.add_argument("--field-map", metavar="MAP.png", help="draw |E|^2 in the observation plane at the laser wavelength")
    p.add_argument("--geometry", metavar="SHAPE.png", help="draw the voxelised shape (top and side sections)")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    p.set_defaults(run=run_simulate)


def _parse_pairs(items, what):
    out = {}
    for item in items:
        name, sep, value = item.partition("=")
        if not sep or not name.strip():
            raise InvalidParameterError(f"{what} must look like NAME=VALUE; got {item!r}")
        out[name.strip()] = value.strip()
    return out


def _progress(done, total):
    width = 30
    filled = int(width * done / total)
    sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] {done}/{total} solves")
    if done == total:
        sys.stderr.write("\n")
    sys.stderr.flush()


def _surroundings(args):
    from .shapes import MediumLayer, SubstrateSlab

    out = {}
    if args.substrate_thickness_nm is not None or args.substrate_size_nm is not None:
        if args.substrate_thickness_nm is None or args.substrate_size_nm is None:
            raise InvalidParameterError("--substrate-thickness-nm and --substrate-size-nm must be given together")
        out["substrate"] = SubstrateSlab(args.substrate_thickness_nm, args.substrate_size_nm, args.substrate_gap_nm)
    layer = (args.layer_thickness_nm, args.layer_size_nm, args.layer_separation_nm)
    if any(v is not None for v in layer):
        if any(v is None for v in layer):
            raise InvalidParameterError(
                "--layer-thickness-nm, --layer-size-nm and --layer-separation-nm must be given together"
            )
        out["medium_layer"] = MediumLayer(*layer)
    return out


def _build(cls, options, args):
    # cls(**fields) from the parsed options {field: option}; an error names the option as typed.
    try:
        return cls(**{field: getattr(args, option[2:].replace("-", "_")) for field, option in options.items()})
    except InvalidParameterError as exc:
        field = str(exc).split(" ", 1)[0]
        raise InvalidParameterError(str(exc).replace(field, options.get(field, field), 1)) from None


def _settings(args):
    from .solver import SolverSettings

    return _build(SolverSettings, {
        "polarizability": "--polarizability", "method": "--method", "tol": "--tol", "max_iter": "--max-iter",
        "dtype": "--dtype", "preconditioner": "--preconditioner",
    }, args)


def _incidence(args):
    from .solver import Incidence

    return _build(Incidence, {
        "polar_deg": "--incidence-polar-deg", "azimuth_deg": "--incidence-azimuth-deg",
        "polarization_deg": "--polarization-deg",
    }, args)


def _absorption_by_part(ev):
    # Absorption cross section of each part at the laser wavelength [nm^2] (or None without a laser).
    sim = ev.simulation
    if math.isnan(ev.laser_nm):
        return None
    k = int(abs(sim.wavelength_nm - ev.laser_nm).argmin())
    return {name: float(v[k]) for name, v in sim.c_abs_by_part_nm2.items()}


def _check_png(name, value):
    if value is not None and not value.endswith(".png"):
        raise InvalidParameterError(f"{name} must name a .png file; got {value!r}")


def run_simulate(args):
    from .design import evaluate_design

    params = {}
    for name, value in _parse_pairs(args.param, "--param").items():
        try:
            params[name] = float(value)
        except ValueError:
            raise InvalidParameterError(f"--param {name} must be a number; got {value!r}") from None
    regions = _parse_pairs(args.region_material, "--region-material")
    if args.out is not None and not args.out.endswith(".csv"):
        raise InvalidParameterError(f"--out must name a .csv file; got {args.out!r}")
    _check_png("--field-map", args.field_map)
    _check_png("--geometry", args.geometry)
    if args.field_map and args.laser_nm is None:
        raise InvalidParameterError("--field-map needs --laser-nm (the map is taken at the laser wavelength)")
    wl = parse_wavelength_range(args.wavelengths_nm, name="--wavelengths-nm")
    surroundings = _surroundings(args)
    settings = _settings(args)
    incidence = _incidence(args)
    ev = evaluate_design(
        args.family, params, laser_nm=args.laser_nm, wavelengths_nm=wl, spacing_nm=args.spacing_nm,
        hotspot_offset_nm=args.hotspot_offset_nm, material=args.material, region_materials=regions,
        medium_index=args.medium_index, settings=settings, incidence=incidence,
        refine=args.refine, progress=None if (args.quiet or args.json) else _progress,
        **surroundings,
    )
    result = ev.simulation
    rows = ev.spectrum_rows()
    columns = list(result.columns[:4]) + ["enhancement"] + list(result.columns[4:])
    if args.out:
        path = Path(args.out)
        tmp = path.with_name(path.name + ".partial")
        with open(tmp, "w", newline="", encoding="utf-8") as fh:
            w = csv.DictWriter(fh, fieldnames=columns, lineterminator="\n")
            w.writeheader()
            w.writerows(rows)
        tmp.replace(path)
    if args.geometry or args.field_map:
        from .report import draw_field_map, draw_sites
        from .shapes import get_family

        fam = get_family(args.family)
        label = f"{fam.name} " + ", ".join(f"{k}={v:g}" for k, v in result.params.items())
        if args.geometry:
            sites = fam.sites(result.params, args.spacing_nm, **surroundings)
            draw_sites(sites, args.geometry, title=label, hotspot_nm=ev.hotspot_nm)
        if args.field_map:
            y, z, inten = ev.field_map
            draw_field_map(y, z, inten, args.field_map, title=label, wavelength_nm=ev.laser_nm)
    figures = ev.figures
    if args.json:
        json.dump(
            {
                "family": result.family, "params": dict(result.params), "materials": result.materials,
                "medium_index": result.medium_index, "spacing_nm": result.spacing_nm, "n_dipoles": result.n_dipoles,
                "polarizability": result.polarizability, "method": result.method,
                "solver_settings": result.settings.to_dict(), "incidence": result.incidence.to_dict(),
                "k_direction": [float(v) for v in result.incidence.k_direction],
                "e_direction": [float(v) for v in result.incidence.e_direction],
                "hotspot_nm": [float(v) for v in ev.hotspot_nm],
                "c_abs_by_part_at_laser_nm2": _absorption_by_part(ev),
                "laser_nm": None if math.isnan(ev.laser_nm) else ev.laser_nm,
                "refine_spacings_nm": None if result.refined is None else result.refined["spacings_nm"],
                "figures": {k: (None if isinstance(v, float) and math.isnan(v) else v) for k, v in figures.items()},
                "spectrum": rows,
            },
            sys.stdout, indent=2,
        )
        sys.stdout.write("\n")
    else:
        mats = ", ".join(f"{r}={m['name']}" for r, m in result.materials.items())
        hs = ", ".join(f"{v:.4g}" for v in ev.hotspot_nm)
        print(f"# {result.family} {dict(result.params)}; {mats}; medium n={result.medium_index:g}; "
              f"d={result.spacing_nm:.4g} nm; {result.n_dipoles} dipoles; {result.polarizability}/{result.method}/"
              f"{result.solutions[0].dtype if result.solutions else result.settings.dtype}; incidence polar {result.incidence.polar_deg:g} deg, azimuth "
              f"{result.incidence.azimuth_deg:g} deg, polarization {result.incidence.polarization_deg:g} deg; "
              f"hotspot ({hs}) nm")
        fmt = {"wavelength_nm": "{:g}", "converged": "{}", "n_iter": "{}", "residual": "{:.2e}",
               **{c: "{}" for c in columns if c.endswith("_method")}}
        cells = [[fmt.get(c, "{:.5g}").format(r[c]) for c in columns] for r in rows]
        widths = [max(len(c), *(len(x[i]) for x in cells)) for i, c in enumerate(columns)]
        print("  ".join(c.ljust(w) for c, w in zip(columns, widths)).rstrip())
        for x in cells:
            print("  ".join(v.ljust(w) for v, w in zip(x, widths)).rstrip())
        print("# figures of merit")
        for k, v in figures.items():
            text = f"{v:.5g}" if isinstance(v, float) else str(v)
            print(f"{k:28s} {text}")
        parts = _absorption_by_part(ev)
        if parts is not None:
            print(f"# absorption by part at the laser ({ev.laser_nm:g} nm), c_abs in nm^2")
            for name, v in parts.items():
                print(f"{name:28s} {v:.5g}")
    if not result.all_converged:
        print(f"warning: {int((~result.converged).sum())} of {len(rows)} solves did not converge within "
              f"--max-iter {args.max_iter}; their values are not trustworthy", file=sys.stderr)
    return 0 if result.all_converged else 1
