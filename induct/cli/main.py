"""Command-line entry point: a thin layer over the Python API.

Each sub-command lives in its own module under :mod:`induct.cli.commands` and
provides two functions::

    def register(subparsers) -> argparse.ArgumentParser   # add the sub-parser
    def run(args) -> int                                    # do the work, return exit code

To add a command, write the module and append its name to ``COMMANDS``.

Failures are handled here, each printed as one line on standard error:

==== =============================================================================="""

from __future__ import annotations

import argparse
import importlib
import os
import signal
import sys
import threading
import warnings

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
    "plan",
    "demo",
    "bench",
)


#: Options whose values are files (or prefixes) the command writes; every other option naming a file is an input.
OUTPUT_OPTIONS = ("out", "csv", "json", "plot", "toml", "residuals", "write_scenario")


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (exit code 2)."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {' '.join(str(message).split())} (see {self.prog} --help)\n")


class _Terminated(BaseException):
    """Raised by the SIGTERM handler so that temporary files are removed on the way out."""


def _one_line(text) -> str:
    return " ".join(str(text).split())


def input_paths(args) -> list[str]:
    """The files a parsed command line reads: values of the non-output options that name existing files."""
    found = []
    for key, value in vars(args).items():
        if key.startswith("_") or key in OUTPUT_OPTIONS:
            continue
        for item in value if isinstance(value, (list, tuple)) else [value]:
            if isinstance(item, str) and item and os.path.isfile(item):
                found.append(item)
    return found


def output_files(args) -> list[str]:
    """The files named directly by the output options (prefix options add suffixes later)."""
    found = []
    for key in OUTPUT_OPTIONS:
        value = getattr(args, key, None)
        if not isinstance(value, str) or value in ("", "-"):
            continue
        if key == "out" and args.command in ("map", "diagram", "separate", "demo"):
            continue  # a prefix or folder: checked when each file is written
        found.append(value)
        if key == "plot":  # figures are written as PNG and PDF
            stem = os.path.splitext(value)[0] if value.lower().endswith((".png", ".pdf", ".svg")) else value
            found.extend([stem + ".png", stem + ".pdf"])
    return found


def build_parser() -> argparse.ArgumentParser:
    from induct.cli.budget import add_budget_options

    parser = _Parser(
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
        add_budget_options(sub_parser)
        sub_parser.set_defaults(_run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    name = f"induct {args.command}"
    previous = None
    if threading.current_thread() is threading.main_thread():
        def _on_term(signum, frame):
            raise _Terminated()

        previous = signal.signal(signal.SIGTERM, _on_term)
    try:
        return _run(args, name)
    except KeyboardInterrupt:
        print(f"{name}: interrupted; no output written", file=sys.stderr)
        return 130
    except _Terminated:
        print(f"{name}: terminated; no output written", file=sys.stderr)
        return 143
    except MemoryError:
        print(f"{name}: error: out of memory; make the job smaller (see --max-memory)", file=sys.stderr)
        return 1
    except RuntimeWarning as exc:
        print(f"{name}: error: a value is outside the range the model computes ({_one_line(exc)}); "
              "check the magnitudes of the inputs", file=sys.stderr)
        return 2
    except (ValueError, FileNotFoundError, KeyError) as exc:
        message = exc.args[0] if isinstance(exc, KeyError) and exc.args else exc
        print(f"{name}: error: {_one_line(message)}", file=sys.stderr)
        return 2
    except ImportError as exc:  # an optional extra is missing; the message names it
        print(f"{name}: error: {_one_line(exc)}", file=sys.stderr)
        return 2
    except OSError as exc:
        where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
        print(f"{name}: error: {where}{_one_line(exc.strerror or exc)}", file=sys.stderr)
        return 1
    except Exception as exc:  # noqa: BLE001 - a bug: one line unless debugging
        if os.environ.get("INDUCT_DEBUG"):
            raise
        print(f"{name}: internal error: {type(exc).__name__}: {_one_line(exc)} (rerun with INDUCT_DEBUG=1 "
              "for the traceback and please report it)", file=sys.stderr)
        return 1
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"induct: warning: {_one_line(message)}", file=sys.stderr)


def _run(args, name: str) -> int:
    from induct.io.files import output_set

    import numpy as np

    with warnings.catch_warnings(), np.printoptions(legacy="1.25"):  # numbers in messages print plainly
        if getattr(warnings._showwarnmsg_impl, "__module__", None) == "warnings":  # not while recorded (tests)
            warnings.showwarning = _show_warning
        warnings.filterwarnings("error", category=RuntimeWarning, message=r".*encountered in")
        with output_set() as outputs:
            outputs.protect(*input_paths(args))
            for path in output_files(args):
                outputs.check(path)
            code = int(args._run(args) or 0)
    for path in outputs.replaced:
        print(f"{name}: replaced the earlier file {path}", file=sys.stderr)
    return code


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
