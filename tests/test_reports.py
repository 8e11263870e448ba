"""Exact output of the reports whose content is settled: `house` and `crops`.

Each case is a command line and the screen it must print, byte for byte, at a fixed
terminal width (rich wraps to it) and with a neutral locale (see conftest). The expected
screens are in ``tests/data/reports/``. They are the program's own output at the time
they were written, checked by eye then, not a published reference: this test catches a
change nobody meant, and a meant change is reviewed as a diff of those files. After a
deliberate change, regenerate them and read the diff::

    GROWER_REGENERATE_REPORTS=1 .venv/bin/python -m pytest tests/test_reports.py
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from grower.cli import main
from grower.errors import EXIT_OK

from .conftest import ROOT

EXPECTED = Path(__file__).parent / "data" / "reports"
REGENERATE = os.environ.get("GROWER_REGENERATE_REPORTS") == "1"

CASES = {
    "house-gable-metric-100": (100, ["house", "examples/gable-house.toml"]),
    "house-hoop-us-60": (60, ["house", "examples/hoop-tunnel.toml", "--units", "us"]),
    "crops-tomato-metric-100": (100, ["crops", "tomato"]),
    "crops-basil-us-60": (60, ["crops", "basil", "--units", "us"]),
    "crops-kale-json": (100, ["crops", "kale", "--json"]),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_report_is_exactly_as_expected(name, capsys, monkeypatch):
    columns, argv = CASES[name]
    monkeypatch.chdir(ROOT)  # the reports name the file as given on the command line
    monkeypatch.setenv("COLUMNS", str(columns))
    monkeypatch.setenv("XDG_CONFIG_HOME", str(ROOT / "tests" / "data" / "no-such-config"))
    assert main(argv) == EXIT_OK
    out = capsys.readouterr().out.replace(str(ROOT), "<checkout>")  # where files live
    path = EXPECTED / f"{name}.txt"
    if REGENERATE:
        path.write_text(out, encoding="utf-8")
    expected = path.read_text(encoding="utf-8")
    assert out == expected, f"{name}: the report changed; see the module docstring"
