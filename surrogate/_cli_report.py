"""``surrogate report``: the campaign report (HTML with embedded figures, PNGs and CSVs beside it)."""

from __future__ import annotations

import argparse
import sys

__all__ = ["add_report_command", "run_report"]

_REPORT = """Write the campaign report of a store: one self-contained HTML file (figures
embedded, no external files, prints cleanly to PDF from a browser) plus its PNG
figures and CSV tables beside it.

Sections: the campaign (settings, material table, solver settings, designs by
status, compute time, code versions, dataset fingerprint); design-space coverage;
surrogate quality per target (cross-validation, parity, calibration, model
version); the Pareto front with trust flags and the top candidates; verification
(predicted vs simulated, errors in sigma units, refine rounds); the field map and
spectrum of the best verified design; cautions. A part the store does not have yet
(no models, no front, no verifications) is reported as missing with the command
that produces it.

The store is opened read-only. Default folder: reports/<store stem>/ (the report
is report.html inside it)."""


def add_report_command(sub, units):
    """Register ``report`` on an argparse subparsers object."""
    r = sub.add_parser("report", help="write the campaign report (HTML, PNG figures, CSV tables)",
                       description=_REPORT, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    r.add_argument("store", metavar="STORE", help="the campaign store (.sqlite)")
    r.add_argument("--out", metavar="FOLDER", default=None,
                   help="output folder (default reports/<store stem>); any path you type here is accepted")
    r.add_argument("--top", type=int, default=10, metavar="N", help="rows of the top-candidates table (default 10)")
    r.set_defaults(run=run_report)


def run_report(args):
    from .report import write_campaign_report

    # an --out typed on the command line may point anywhere; only the default lives under reports/
    out = write_campaign_report(args.store, args.out, allow_outside=args.out is not None, top=args.top)
    o = sys.stdout
    o.write(f"report {out.html_path} ({out.size_bytes / 1e6:.2f} MB), {len(out.figures)} figures, "
            f"{len(out.tables)} tables in {out.folder}\n")
    for part, what in out.missing.items():
        o.write(f"missing {part}: {what}\n")
    return 0
