"""The ``surrogate`` command line.

The only module that prints or exits.  Every :class:`~surrogate.errors.SurrogateError`
becomes one line ``error: ...`` on standard error and exit code 2.
"""

from __future__ import annotations

import argparse
import sys
import warnings

from . import __version__
from .errors import NotConvergedWarning, SurrogateError

__all__ = ["main", "build_parser"]

EXIT_USER_ERROR = 2


class _Parser(argparse.ArgumentParser):
    """argparse with our one-line error format (no usage dump)."""

    def error(self, message):
        self.exit(EXIT_USER_ERROR, f"error: {self.prog}: {message} (see {self.prog} --help)\n")


_UNITS = """Conventions: lengths and wavelengths in nm (vacuum wavelength), cross sections
in nm^2, photon energies in eV. Permittivity eps = eps' + i eps'' with time
dependence exp(-i w t), so eps'' >= 0 and k >= 0 in absorbing media; the
complex index is n + i k."""


def build_parser():
    parser = _Parser(
        prog="surrogate",
        description="Design plasmonic optical antennas with coupled-dipole simulations, "
        "Gaussian-process surrogates and multi-objective search.",
        epilog=_UNITS,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"surrogate {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    from ._cli_app import add_app_commands
    from ._cli_campaign import add_campaign_commands
    from ._cli_families import add_families_command
    from ._cli_materials import add_materials_command
    from ._cli_models import add_model_commands
    from ._cli_report import add_report_command
    from ._cli_search import add_search_commands
    from ._cli_simulate import add_simulate_command
    from ._cli_verify import add_verify_commands

    add_materials_command(sub, _UNITS)
    add_families_command(sub, _UNITS)
    add_simulate_command(sub, _UNITS)
    add_campaign_commands(sub, _UNITS)
    add_model_commands(sub, _UNITS)
    add_search_commands(sub, _UNITS)
    add_report_command(sub, _UNITS)
    add_verify_commands(sub, _UNITS)
    add_app_commands(sub, _UNITS)
    return parser


def main(argv=None):
    """Run the command line; return the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    # the commands report non-convergence in their own output (rows marked converged=False)
    warnings.simplefilter("ignore", NotConvergedWarning)
    if args.command is None:
        parser.print_help()
        return EXIT_USER_ERROR
    try:
        return int(args.run(args) or 0)
    except SurrogateError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_USER_ERROR
    except KeyboardInterrupt:
        print("error: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # e.g. piped into head
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
