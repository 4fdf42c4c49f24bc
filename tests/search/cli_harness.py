"""Run ``surrogate search`` the way surrogate.cli.main runs a command (routing added by cli.py)."""

from __future__ import annotations

import argparse

from surrogate._cli_search import add_search_commands
from surrogate.cli import EXIT_USER_ERROR, _Parser
from surrogate.errors import SurrogateError


def run_cli(argv, capsys):
    """Return (exit code, stdout, stderr)."""
    parser = _Parser(prog="surrogate", formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = parser.add_subparsers(dest="command", parser_class=_Parser)
    add_search_commands(sub, "")
    try:
        args = parser.parse_args(argv)
        try:
            code = int(args.run(args) or 0)
        except SurrogateError as exc:
            print(f"error: {exc}", file=__import__("sys").stderr)
            code = EXIT_USER_ERROR
    except SystemExit as exc:
        code = exc.code
    out = capsys.readouterr()
    return code, out.out, out.err
