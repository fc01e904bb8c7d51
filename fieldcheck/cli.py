"""Command line entry point: parse arguments, call the library, format, map errors to exit codes.

Exit codes: 0 success, 2 bad input or arguments (one line on stderr), 1 internal error.
Each subcommand lives in ``fieldcheck/commands/<name>.py`` and provides ``NAME``,
``HELP``, ``DESCRIPTION``, ``add_arguments(parser)`` and ``run(args) -> int``.
"""

from __future__ import annotations

import argparse
import importlib
import sys
import warnings

from . import __version__
from .errors import FieldcheckError

#: Subcommand modules in the order ``--help`` lists them.
COMMAND_MODULES = (
    "trim",
    "inspect",
    "diagnose",
    "locate",
    "wheeler",
    "predict",
    "simulate",
)

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as one line and exit code 2."""

    def error(self, message):  # noqa: D401 - argparse API
        self.exit(EXIT_INPUT, f"fieldcheck: error: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="fieldcheck",
        description=(
            "Read a VNA sweep of a wire antenna, move it to the antenna's own terminals, "
            "fit it with a physical model and answer: where does it resonate, how much to "
            "cut, and what is wrong if the match is bad.  Start with 'fieldcheck trim --help'."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"fieldcheck {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMAND_MODULES:
        mod = importlib.import_module(f".commands.{name}", __package__)
        p = sub.add_parser(
            mod.NAME,
            help=mod.HELP,
            description=mod.DESCRIPTION,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        mod.add_arguments(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code (also used by the console script)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        with warnings.catch_warnings():
            # Our own warnings are shown by the reports; library chatter is not for the bench.
            warnings.simplefilter("ignore")
            return int(args._run(args) or 0)
    except FieldcheckError as exc:
        print(f"fieldcheck: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # pragma: no cover - the point is to never reach here
        print(
            f"fieldcheck: internal error: {type(exc).__name__}: {exc} "
            "(this is a bug in fieldcheck; please report it with the input file)",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
