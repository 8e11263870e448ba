"""Exact output of each report on a few fixed cases: house, crops, tonight, stock, size.

Each case is a command line and the screen it must print, byte for byte, at a fixed
terminal width (rich wraps to it) and with a neutral locale (see conftest). The expected
screens are in ``tests/data/reports/``. They are the program's own output at the time
they were written, checked by eye then, not a published reference: this test catches a
change nobody meant, and a meant change is reviewed as a diff of those files. After a
deliberate change, regenerate them and read the diff::

    GROWER_REGENERATE_REPORTS=1 .venv/bin/python -m pytest tests/test_reports.py
"""

from __future__ import annotations

import json
import math
import os
import re
from itertools import pairwise
from pathlib import Path

import pytest

from grower.cli import main
from grower.errors import EXIT_OK

from .conftest import ROOT

EXPECTED = Path(__file__).parent / "data" / "reports"
REGENERATE = os.environ.get("GROWER_REGENERATE_REPORTS") == "1"

#: the bundled forecasts from a fixed start, so the screens do not depend on the clock
NIGHT = ["--forecast", "examples/forecast-cold-night.csv", "--start", "2026-12-03T18:00"]
SNAP = ["--forecast", "examples/forecast-cold-snap.csv", "--start", "2026-12-05T00:00"]
HOUSES = ["examples/gable-house.toml", "examples/hoop-tunnel.toml", "examples/glass-range.toml"]

CASES = {
    "house-gable-metric-100": (100, ["house", "examples/gable-house.toml"]),
    "house-hoop-us-60": (60, ["house", "examples/hoop-tunnel.toml", "--units", "us"]),
    # a cover name longer than its column is folded, never cut (twin-wall-polycarbonate-8mm)
    "house-gable-metric-60": (60, ["house", "examples/gable-house.toml"]),
    "crops-tomato-metric-100": (100, ["crops", "tomato"]),
    "crops-basil-us-60": (60, ["crops", "basil", "--units", "us"]),
    "crops-kale-json": (100, ["crops", "kale", "--json"]),
    "tonight-gable-metric-100": (
        100,
        ["tonight", "examples/gable-house.toml", "--crop", "tomato", *NIGHT, "--inside-now", "8C"],
    ),
    "tonight-gable-us-60": (
        60,
        ["tonight", "examples/gable-house.toml", "--crop", "tomato", *NIGHT, "--units", "us"],
    ),
    "tonight-three-brief-100": (
        100,
        ["tonight", *HOUSES, "--crop", "basil", *NIGHT, "--brief"],
    ),
    "tonight-hoop-json": (
        100,
        ["tonight", "examples/hoop-tunnel.toml", "--crop", "kale", *NIGHT, "--json"],
    ),
    "stock-gable-metric-100": (
        100,
        ["stock", "examples/gable-house.toml", "--setpoint", "10C", "--night-setpoint", "5C", *SNAP]
        + ["--on-hand", "900 L", "--price", "0.85", "--crop", "tomato"],
    ),
    "stock-gable-us-60": (
        60,
        ["stock", "examples/gable-house.toml", "--setpoint", "50F", *SNAP, "--units", "us"]
        + ["--on-hand", "2 100-lb cylinders", "--fill", "80%"],
    ),
    "size-gable-us-60": (
        60,
        ["size", "examples/gable-house.toml", "--outside=-20C", "--hold", "10C", "--units", "us"],
    ),
    "size-range-metric-100": (
        100,
        ["size", "examples/glass-range.toml", "--outside=-25C", "--hold", "12C"],
    ),
    "fit-gable-us-60": (
        60,
        ["fit", "examples/gable-house.toml", "--log", "examples/logger-gable-house.csv"]
        + ["--units", "us"],
    ),
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
    if name.endswith("-json"):
        # full-precision floats differ in the last digit between CPUs and numpy builds
        # (seen: 1 ulp in forecast_shift_k); the document is compared to 1e-9 instead
        differences = _json_differences(json.loads(out), json.loads(expected), "")
        assert not differences, f"{name}: the report changed: {differences[:5]}"
    else:
        assert out == expected, f"{name}: the report changed; see the module docstring"


def _json_differences(got: object, want: object, where: str) -> list[str]:
    """Where two JSON documents differ: same keys in the same order, same types, same
    strings, numbers equal to a relative 1e-9 (an absolute 1e-12 near zero)."""
    if isinstance(want, dict):
        if not isinstance(got, dict) or list(got) != list(want):
            return [f"{where or '/'}: keys {list(got) if isinstance(got, dict) else got!r}"]
        return [d for k in want for d in _json_differences(got[k], want[k], f"{where}/{k}")]
    if isinstance(want, list):
        if not isinstance(got, list) or len(got) != len(want):
            return [f"{where}: {got!r} != {want!r}"]
        return [
            d
            for i, (g, w) in enumerate(zip(got, want, strict=True))
            for d in _json_differences(g, w, f"{where}/{i}")
        ]
    if isinstance(want, float) and isinstance(got, float):
        close = math.isclose(got, want, rel_tol=1e-9, abs_tol=1e-12)
        return [] if close else [f"{where}: {got!r} != {want!r}"]
    return [] if type(got) is type(want) and got == want else [f"{where}: {got!r} != {want!r}"]


def test_the_json_comparison_sees_a_changed_value_key_or_type():
    want = {"a": 1.0, "b": [1, "x"], "c": None}
    assert _json_differences({"a": 1.0 + 1e-12, "b": [1, "x"], "c": None}, want, "") == []
    assert _json_differences({"a": 1.001, "b": [1, "x"], "c": None}, want, "") == [
        "/a: 1.001 != 1.0"
    ]
    assert _json_differences({"a": 1.0, "b": [1.0, "x"], "c": None}, want, "") == ["/b/0: 1.0 != 1"]
    assert _json_differences({"b": [1, "x"], "a": 1.0, "c": None}, want, "")  # key order


#: a number followed by an SI unit: none may show on a US screen (material names such as
#: "twin-wall-polycarbonate-8mm" are names, not quantities: no space before the unit)
SI_UNIT = r"\d ?(°C|K\b|kW\b|W/K|MJ|MJ/K|L\b|cm|km|m/s|m²|m³|kg\b|W\b)"
#: an SI unit a column or a value is said to be in: "RMS, K", "per L", "power (W)"
SI_UNIT_NAMED = r"\((W|kW|W/K|L|kg|K|°C)\)|\bper (L|kg|m³|kelvin|K)\b|\bRMS,? K\b"
#: a crop source's value is shown converted and says the scale it was printed in
PRINTED_IN = r"\(printed in °[CF]\)"
#: the several-day hourly history `winters` runs on (tests/test_winters.history_csv)
WINTERS = ["--season-start", "11-01", "--season-days", "8", "--winters", "1"]
#: an electric heater on a design night: the electrical caution's currents and ratings
ELECTRIC_SIZE = ["size", "examples/gable-house.toml", "--outside=-25C", "--hold", "5C"]
ELECTRIC_SIZE += ["--fuel", "electricity"]
US_SCREENS = {
    "tonight": ["tonight", "examples/gable-house.toml", "--crop", "tomato"],
    "tonight, several houses": [
        "tonight",
        "examples/gable-house.toml",
        "examples/hoop-tunnel.toml",
        "examples/glass-range.toml",
        "--crop",
        "tomato",
    ],
    # a forecast low (its high assumed, its dew point capped), and plants below the alarm
    "tonight, a forecast low": [
        *["tonight", "examples/gable-house.toml", "examples/hoop-tunnel.toml", "--crop", "kale"],
        *["--low=-4F", "--dew-point", "30F", "--start", "2026-12-03T16:00"],
    ],
    "tonight, below the alarm now": [
        *["tonight", "examples/gable-house.toml", "--crop", "tomato"],
        *["--inside-now", "32F", "--start", "2026-12-03T16:00"],
    ],
    "stock": ["stock", "examples/gable-house.toml", "--crop", "tomato", "--setpoint", "50F"],
    "size": ["size", "examples/gable-house.toml", "--outside=-20C", "--hold", "10C"],
    "size, a crop": ["size", "examples/hoop-tunnel.toml", "--outside=-25C", "--crop", "kale"],
    "house": ["house", "examples/hoop-tunnel.toml"],
    "fit": ["fit", "examples/gable-house.toml", "--log", "examples/logger-gable-house.csv"],
    "crops": ["crops"],
    "crops, tomato": ["crops", "tomato"],  # notes and sources printed in °C
    "crops, strawberry": ["crops", "strawberry"],
    "size, electricity": ELECTRIC_SIZE,
    "winters": ["winters", "examples/gable-house.toml", "--setpoint", "10C", *WINTERS],
}


def _screen(argv: list[str], system: str, tmp_path, capsys) -> str:
    """The screen `argv` prints in `system` (a `winters` run on a short history file)."""
    argv = list(argv)
    if argv[0] == "winters":
        from tests.test_winters import history_csv

        argv += ["--history", history_csv(tmp_path / "history.csv", "2025-11-01", 9)]
    assert main([*argv, "--units", system]) == EXIT_OK
    return capsys.readouterr().out


@pytest.mark.parametrize("name", sorted(US_SCREENS))
@pytest.mark.parametrize("columns", [60, 100])
def test_us_screens_show_no_si_quantity(name, columns, capsys, monkeypatch, tmp_path):

    argv = list(US_SCREENS[name])
    if argv[0] == "tonight" and not any(a.startswith("--low") for a in argv):
        argv += ["--forecast", "examples/forecast-cold-night.csv"]
    if argv[0] == "stock":
        argv += ["--forecast", "examples/forecast-cold-snap.csv"]
    monkeypatch.chdir(ROOT)
    monkeypatch.setenv("COLUMNS", str(columns))
    out = _screen(argv, "us", tmp_path, capsys)
    assert "°F" in out or name == "house"
    if columns == 60:
        # a narrow screen wraps or shortens; it never runs past the edge or cuts a cell
        # (rich marks a cut with "…")
        cut = [line for line in out.splitlines() if len(line) > columns or "…" in line]
        assert not cut, f"{name} at {columns} columns cuts or overruns: {cut}"
    found = _unit_hits(out, rf"{SI_UNIT}|{SI_UNIT_NAMED}")
    assert not found, f"{name} at {columns} columns shows SI units: {found}"


def _unit_hits(out: str, pattern: str, kept: tuple[str, ...] = ()) -> list[str]:
    """The lines of `out` (and the seams where prose wraps a number away from its unit:
    the last word of a line with the first of the next) that match `pattern`, once the
    crop sources' "(printed in °F)" and the `kept` patterns are taken out."""
    import re

    lines = out.splitlines()
    seams = [
        f"{a.split()[-1]} {b.split()[0]}"
        for a, b in zip(lines[:-1], lines[1:], strict=True)
        if a.split() and b.split()
    ]
    found = []
    for piece in lines + seams:
        for drop in (PRINTED_IN, *kept):
            piece = re.sub(drop, "", piece)
        found += [m[0] for m in re.finditer(rf".{{0,30}}(?:{pattern}).{{0,10}}", piece)]
    return found


@pytest.mark.parametrize("system", ["us", "metric"])
def test_several_houses_at_60_columns_keep_headers_and_names_whole(system, capsys, monkeypatch):
    # the US powers ("139,000 Btu/h") are the widest cells; a cropped column loses its
    # header's tail without any "…", and a folded name splits a word ("Propagatio" + "n")
    monkeypatch.chdir(ROOT)
    monkeypatch.setenv("COLUMNS", "60")
    main(["tonight", *HOUSES, "--crop", "basil", *NIGHT, "--units", system])
    lines = capsys.readouterr().out.splitlines()
    header = next(line for line in lines if line.split()[:1] == ["house"])
    assert header.split() == ["house", "reaches", "coldest", "to", "hold", "heater"]
    words = {w for line in lines for w in line.split()}
    assert {"Propagation", "Glass", "Lane", "tunnel"} <= words


#: a number followed by a US unit; the SI screens keep only the trade's Btu/h in brackets
#: beside a heater's kW ("84.8 kW (289,000 Btu/h)", README: the SI screens keep the trade's
#: Btu/h beside a heater's kW), the container names ("20-lb cylinder", "500-gal tank") and
#: the quoted "1 in² per 1,000 Btu/h"
US_UNIT = r"\d ?(°F|Btu\b|Btu/|gal\b|therm|lb\b|mph|ft\b|ft²|ft³|in²)"
#: a US unit a column or a value is said to be in: "per gal", "(°F)"
US_UNIT_NAMED = r"\((°F|gal|lb|Btu/h|therm)\)|\bper (gal|lb|therm|°F)\b|\bRMS,? °F\b"
#: what the SI screens may keep (see above)
US_KEPT = (
    r"\(\d[\d,]* Btu/h\)",
    r"\b\d+-(lb|gal)\b",
    r"1 in² per 1,000 Btu/h",
)
SI_SCREENS = {
    "tonight, natural gas": ["tonight", "examples/glass-range.toml", "--crop", "tomato", *NIGHT],
    "stock, natural gas": ["stock", "examples/glass-range.toml", "--setpoint", "12C", *SNAP],
    "size, natural gas": ["size", "examples/glass-range.toml", "--outside=-25C", "--hold", "12C"],
    "house": ["house", "examples/glass-range.toml"],
    "size, propane, a US house": [
        "size",
        "examples/hoop-tunnel.toml",
        "--outside=-25C",
        "--hold",
        "5C",
    ],
    "stock, propane": ["stock", "examples/gable-house.toml", "--setpoint", "8C", *SNAP],
    "house, gable": ["house", "examples/gable-house.toml"],  # a US-file house on a metric screen
    "house, hoop": ["house", "examples/hoop-tunnel.toml"],
    "crops, tomato": ["crops", "tomato"],  # notes and sources printed in °F
    "crops, apple": ["crops", "apple"],
    "fit": ["fit", "examples/gable-house.toml", "--log", "examples/logger-gable-house.csv"],
    "size, electricity": ELECTRIC_SIZE,
    "winters": [
        "winters",
        "examples/hoop-tunnel.toml",
        "--setpoint",
        "10C",
        *WINTERS,
        "--price",
        "3",
    ],
}


@pytest.mark.parametrize("name", sorted(SI_SCREENS))
@pytest.mark.parametrize("columns", [60, 100])
def test_si_screens_show_no_us_quantity(name, columns, capsys, monkeypatch, tmp_path):

    monkeypatch.chdir(ROOT)
    monkeypatch.setenv("COLUMNS", str(columns))
    out = _screen(SI_SCREENS[name], "metric", tmp_path, capsys)
    assert "°C" in out or name.startswith("house")
    found = _unit_hits(out, rf"{US_UNIT}|{US_UNIT_NAMED}", US_KEPT)
    assert not found, f"{name} at {columns} columns shows US units: {found}"


def test_no_screen_cuts_a_word_short():
    # the exact screens above at their widths: rich's ellipsis would hide a cover's or a
    # crop's name; a long word is folded onto the next line instead
    cut = [name for name in CASES if "…" in (EXPECTED / f"{name}.txt").read_text("utf-8")]
    assert cut == []


#: a unit that must not begin a line when the line before ends in its number
UNIT_START = re.compile(r"^(°[CF]|h\b|min\b|kW\b|W\b|W/K|Btu|L\b|gal\b|ft\b|mph|m/s|%)")


def test_no_screen_splits_a_number_from_its_unit():
    # wrapping happens at ordinary spaces only (`grower.report.common.keep_units`):
    # "time constant C/K = 12.8" at a line's end and "h" on the next is what it prevents
    split = [
        (name, a.rstrip()[-12:], b.strip()[:12])
        for name in CASES
        if not name.endswith("-json")
        for a, b in pairwise((EXPECTED / f"{name}.txt").read_text("utf-8").splitlines())
        if a.rstrip()[-1:].isdigit() and UNIT_START.match(b.lstrip())
    ]
    assert split == []
