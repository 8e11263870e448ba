"""The `grower` command: parse, call a plan, hand the result to a renderer.

Each subcommand lives in ``grower/commands/<name>.py`` with two functions:
``register(subparsers, common)`` adds its parser (``common`` is the parent parser that
gives every command ``--json`` and ``--units``), and ``run(args) -> int`` does the work.
Errors in the user's input are `grower.errors.InputError`; they are printed here, as one
line on stderr, and the exit status is 2. ``tonight --alert-status`` exits 3 when action
is needed and the installed heater holds, 4 when damage is expected even with the
installed heat; 0 is success (or safe). The codes are in `grower.errors`.
"""

from __future__ import annotations

import argparse
import importlib
import re
import sys
import warnings
from collections.abc import Sequence

from grower.errors import EXIT_INPUT, EXIT_OK, InputError, InputNote, InputWarning

#: subcommands, in the order `grower --help` lists them
COMMANDS = ("tonight", "size", "stock", "winters", "house", "crops", "fit")


class _Version(argparse.Action):
    """``--version``: the installed package's version, looked up only when asked for."""

    def __init__(self, option_strings: Sequence[str], dest: str, **kwargs: object) -> None:
        super().__init__(option_strings, dest, nargs=0, help="show the version and exit")

    def __call__(self, parser, namespace, values, option_string=None):  # type: ignore[no-untyped-def]
        from grower import __version__

        print(f"grower {__version__}")
        parser.exit()


class Parser(argparse.ArgumentParser):
    """argparse, with a usage mistake reported like every other error: one line, exit 2."""

    def error(self, message: str):  # type: ignore[override]
        hint = f"; see `{self.prog} --help`"
        print(f"Error: {self.prog}: {' '.join(message.split())}{hint}", file=sys.stderr)
        raise SystemExit(EXIT_INPUT)


def common_parser() -> argparse.ArgumentParser:
    """The options every subcommand takes."""
    common = Parser(add_help=False)
    out = common.add_argument_group("output")
    out.add_argument(
        "--json",
        action="store_true",
        help="print one JSON document (SI units, ISO 8601 times) instead of the report",
    )
    out.add_argument(
        "--units",
        choices=("metric", "us"),
        default=None,
        help="units for the report (default: the house file's [site] units, else the locale's)",
    )
    return common


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    """The whole command line; with `only` (a name of `COMMANDS`), that subcommand's
    parser alone: a run imports and builds one command's options, not seven (a third of
    `tonight`'s start-up otherwise). Help and a mistyped command get all of them."""
    parser = Parser(
        prog="grower",
        description=(
            "Frost-protection planner for greenhouses and high tunnels: tonight's frost "
            "risk, backup heater sizing and fuel stock for a cold snap."
        ),
    )
    parser.add_argument("--version", action=_Version)
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)
    common = common_parser()
    for name in COMMANDS if only is None else (only,):
        try:
            module = importlib.import_module(f"grower.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name == f"grower.commands.{name}":
                continue  # command not built yet
            raise
        module.register(subparsers, common)
    return parser


def _error(message: str) -> int:
    print(f"Error: {message}", file=sys.stderr)
    return EXIT_INPUT


_NEGATIVE = re.compile(r"^[-\u2212]\.?\d")


def join_negative_values(argv: Sequence[str]) -> list[str]:
    """Let "--outside -25C" mean "--outside=-25C".

    argparse takes "-25C" for an option (only bare numbers like "-25" are spared), but a
    temperature below zero is the most common value grower is given.
    """
    out: list[str] = []
    for token in argv:
        if _NEGATIVE.match(token) and out and out[-1].startswith("--") and "=" not in out[-1]:
            out[-1] = f"{out[-1]}={token}"
        else:
            out.append(token)
    return out


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Input warnings and notes as one line on stderr; anything else as Python shows it."""
    if issubclass(category, InputWarning):
        print(f"Warning: {message}", file=sys.stderr)
    elif issubclass(category, InputNote):
        print(f"Note: {message}", file=sys.stderr)
    else:
        _python_showwarning(message, category, filename, lineno, file, line)


_python_showwarning = warnings.showwarning


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the `grower` console script; returns the exit status."""
    argv = list(sys.argv[1:] if argv is None else argv)
    # the command is the first word (the top level has only --help and --version)
    parser = build_parser(argv[0] if argv and argv[0] in COMMANDS else None)
    # a usage mistake: one line and SystemExit(2) (see `Parser.error`)
    args = parser.parse_args(join_negative_values(argv))
    with warnings.catch_warnings():
        warnings.simplefilter("always", InputWarning)
        warnings.simplefilter("always", InputNote)
        warnings.showwarning = _show_warning
        return _run(args)


def _run(args: argparse.Namespace) -> int:
    try:
        return int(args.run(args) or 0)
    except InputError as exc:
        return _error(str(exc))
    except FileNotFoundError as exc:
        return _error(f"{exc.filename}: no such file")
    except IsADirectoryError as exc:
        return _error(f"{exc.filename}: is a directory, not a file")
    except PermissionError as exc:
        return _error(f"{exc.filename}: permission denied")
    except BrokenPipeError:
        return EXIT_OK
    except OSError as exc:  # a full disk, a read-only file system, a vanished folder
        what = exc.strerror or str(exc)
        name = exc.filename or "a file"
        return _error(f"{name}: {what} (nothing was changed)")
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
