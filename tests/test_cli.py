"""The command line: every command registered and documented, exit codes, a light start."""

from __future__ import annotations

import argparse
import pkgutil
import subprocess
import sys

import pytest

import grower.commands
from grower import errors
from grower.cli import COMMANDS, build_parser, main

from .conftest import ROOT

NIGHT = "examples/forecast-cold-night.csv"


def _subcommands() -> dict[str, argparse.ArgumentParser]:
    """The subcommands as the parser holds them (so a new one cannot be missed)."""
    parser = build_parser()
    (action,) = (a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return dict(action.choices)


def test_every_command_module_is_registered():
    modules = {m.name for m in pkgutil.iter_modules(grower.commands.__path__)}
    assert {m for m in modules if not m.startswith("_")} == set(_subcommands())


def test_the_top_level_help_lists_every_command(capsys):
    with pytest.raises(SystemExit) as exit_:
        main(["--help"])
    assert exit_.value.code == errors.EXIT_OK
    out = capsys.readouterr().out
    for name in _subcommands():
        line = next((ln for ln in out.splitlines() if ln.split()[:1] == [name]), None)
        assert line is not None and len(line.split()) > 2, f"{name} has no help line"


@pytest.mark.parametrize("command", sorted(_subcommands()))
def test_every_command_has_help(capsys, command):
    with pytest.raises(SystemExit) as exit_:
        main([command, "--help"])
    assert exit_.value.code == errors.EXIT_OK
    out = capsys.readouterr().out
    assert "--json" in out and "--units" in out
    # every option says what it does
    for action in _subcommands()[command]._actions:
        assert action.help, f"{command} {action.option_strings or action.dest} has no help"


def test_version_is_the_installed_metadata(capsys):
    from importlib.metadata import version

    with pytest.raises(SystemExit) as exit_:
        main(["--version"])
    assert exit_.value.code == errors.EXIT_OK
    assert capsys.readouterr().out.strip() == f"grower {version('grower')}"


def test_exit_codes_are_fixed():
    # DESIGN "Outputs": 0 done, 2 bad input; --alert-status graded: 3 action needed and the
    # equipment holds, 4 damage expected even with the installed heat (issue 12)
    assert (errors.EXIT_OK, errors.EXIT_INPUT, errors.EXIT_ACTION, errors.EXIT_DAMAGE) == (
        0,
        2,
        3,
        4,
    )


LIGHT = [
    ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT],
    ["size", "examples/gable-house.toml", "--outside", "-15C", "--crop", "tomato"],
    ["house", "examples/gable-house.toml"],
    ["crops", "tomato"],
    [
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--night-setpoint",
        "5C",
        "--forecast",
        "examples/forecast-cold-snap.csv",
    ],
]


def _loads_none_of(argv: list[str], modules: tuple[str, ...]) -> None:
    """Run one command in a fresh interpreter; fail if it imported any of `modules`."""
    code = (
        "import sys\n"
        "from grower.cli import main\n"
        f"status = main({argv!r})\n"
        f"heavy = sorted(m for m in {modules!r} if m in sys.modules)\n"
        "print(heavy, file=sys.stderr)\n"
        "sys.exit(10 if heavy else status)\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=False
    )
    assert done.returncode == 0, done.stderr[-2000:]


@pytest.mark.parametrize("argv", LIGHT, ids=[a[0] for a in LIGHT])
def test_the_quick_commands_import_neither_scipy_nor_matplotlib(argv):
    # the fast path stays light (the project's rules): scipy and matplotlib are imported
    # only where they run; a fresh interpreter shows what one command loads
    _loads_none_of(argv, ("scipy", "matplotlib"))


@pytest.mark.parametrize("argv", LIGHT, ids=[a[0] for a in LIGHT])
def test_the_quick_commands_do_not_import_pandas(argv):
    # issue 14: tonight on a file forecast starts in less than the bare import of numpy,
    # pandas and rich, which it can only do without pandas; forecasts are arrays
    # (`grower.weather.Samples`) and the pandas frame is built only when asked for
    _loads_none_of(argv, ("pandas",))


@pytest.mark.parametrize("argv", LIGHT, ids=[a[0] for a in LIGHT])
def test_the_quick_commands_do_not_import_numpy_ma(argv):
    # numpy.ma costs ~10 ms on its first import (np.unique and np.median ask it whether
    # an array is masked): grower.arrays gives those values without it
    _loads_none_of(argv, ("numpy.ma",))


@pytest.mark.parametrize("argv", LIGHT, ids=[a[0] for a in LIGHT])
def test_a_command_builds_only_its_own_parser(argv):
    # a run imports and builds the options of the command it runs, not of all seven
    # (`grower.cli.build_parser(only=...)`); `grower --help` still lists every one
    others = tuple(f"grower.commands.{c}" for c in COMMANDS if c != argv[0])
    _loads_none_of(argv, others)
