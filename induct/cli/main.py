"""Command-line entry point: a thin layer over the Python API.

Each sub-command lives in its own module under :mod:`induct.cli.commands` and
provides two functions::

    def register(subparsers) -> argparse.ArgumentParser   # add the sub-parser
    def run(args) -> int                                    # do the work, return exit code

To add a command, write the module and append its name to ``COMMANDS``.
Errors a user can fix (bad input files, out-of-range values, a missing optional
extra) are raised as ``ValueError``/``FileNotFoundError``/``ImportError`` by the
API and printed here as one line on stderr with exit code 2; an interrupt
(Ctrl-C) exits with 130; nothing else is caught. Exit codes of commands:
0 ok, 2 bad input, 3 data the model cannot fit, 4 sampler not converged,
130 interrupted.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from induct import __version__
from induct.constants import MODEL_LIMITS

#: Sub-command modules, in the order ``induct --help`` lists them.
COMMANDS = (
    "respond",
    "brine",
    "drive",
    "flyby",
    "fit",
    "invert",
    "compare",
    "map",
    "diagram",
    "separate",
    "demo",
    "bench",
)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="induct",
        description=(
            "Electromagnetic induction in icy moons with subsurface oceans. " + MODEL_LIMITS
        ),
    )
    parser.add_argument("--version", action="version", version=f"induct {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name in COMMANDS:
        module = importlib.import_module(f"induct.cli.commands.{name}")
        sub_parser = module.register(sub)
        sub_parser.set_defaults(_run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args._run(args) or 0)
    except (ValueError, FileNotFoundError, KeyError) as exc:
        message = exc.args[0] if isinstance(exc, KeyError) and exc.args else exc
        print(f"induct {args.command}: error: {message}", file=sys.stderr)
        return 2
    except ImportError as exc:  # an optional extra is missing; the message names it
        print(f"induct {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"induct {args.command}: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
