"""The hostile inputs of issue 15, one by one: each refused with one line naming the
value (and the range), warned about, or read the way the grower meant.

Every case runs the CLI in-process through `tests.test_contract.assert_contract` (exit
0/3 with sane numbers, or exit 2 with one line; no traceback, no hang, no changed file)
and then checks the message or the reading.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

from tests.calibration_tables import format2
from tests.conftest import EXAMPLES
from tests.test_contract import _quiet_environment, assert_contract, run_cli  # noqa: F401

HOOP = (EXAMPLES / "hoop-tunnel.toml").read_text(encoding="utf-8")
GABLE = (EXAMPLES / "gable-house.toml").read_text(encoding="utf-8")
NIGHT = str(EXAMPLES / "forecast-cold-night.csv")
SNAP = str(EXAMPLES / "forecast-cold-snap.csv")
LOG = str(EXAMPLES / "logger-gable-house.csv")
START = ["--start", "2026-12-03T16:00-05:00"]


def _sub(text: str, old: str, new: str) -> str:
    assert old in text, old
    return text.replace(old, new)


def _house(tmp_path: Path, text: str, name: str = "h.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _error(tmp_path, argv, files=()) -> str:
    rc, _out, err = assert_contract(argv, list(files))
    assert rc == 2, err
    return err.strip().splitlines()[-1]


#: (label, house text, extra arguments, words the one-line error must hold)
REFUSED_HOUSES = [
    ("deep ground 1000 °C", HOOP + '\ndeep_ground_temperature = "1000 C"\n', ["1000 C", "−30…40"]),
    (
        "2,000 water barrels",
        HOOP + '\n[[mass]]\nmaterial = "water"\nvolume = "55 gal"\ncount = 2000\n',
        ["inside volume", "25%"],
    ),
    ("a 9 mm wide house", _sub(HOOP, 'width = "30 ft"', 'width = "9 mm"'), ["9 mm", "0.3…100 m"]),
    (
        "a 500 m ridge",
        _sub(
            _sub(HOOP, 'ridge_height = "15 ft"', 'ridge_height = "500 m"'),
            'shape = "arch"',
            'shape = "gable"',
        ),
        ["500 m", "0.3…40 m"],
    ),
    (
        "9×10¹⁸ bays",
        _sub(_sub(HOOP, "bays = 1", "bays = 9000000000000000000"), "arch", "gable"),
        ["bays", "1…1,000"],
    ),
    (
        "efficiency 1e-9",
        _sub(GABLE, 'appliance = "unit-heater-power-vented"', "efficiency = 1e-9"),
        ["efficiency", "0.3…1"],
    ),
    (
        "a heater of 1e30 W",
        _sub(GABLE, 'input = "100000 BTU/h"', 'input = "1e30 W"'),
        ["1e30 W", "heater power"],
    ),
    (
        "5 mW is a milliwatt, not a megawatt",
        _sub(GABLE, 'input = "100000 BTU/h"', 'input = "5 mW"'),
        ["0.005 W", "heater power"],
    ),
    (
        "5 mw could be either",
        _sub(GABLE, 'input = "100000 BTU/h"', 'input = "5 mw"'),
        ['"MW" or "mW"'],
    ),
    (
        "a [calibration] K a hundredth of the geometry's",
        format2(HOOP, conduction=0.01),
        ["calibration.k_outside_w_per_k", "K to outside air", "0.01 ×", "0.2–5"],
    ),
    (
        "a format-2 [calibration] without its sky part",
        format2(HOOP).replace("k_sky_w_per_k = ", "sky = "),
        ["calibration", 'missing key "k_sky_w_per_k"', "grower fit --write"],
    ),
    (
        "an infinite calibration K",
        HOOP + "\n[calibration]\nk_w_per_k = inf\nc_j_per_k = 5.0e7\n",
        ["calibration.k_w_per_k", "positive number"],
    ),
    (
        "a negative price in the file",
        _sub(GABLE, "price = 0.85", "price = -0.85"),
        ["negative price"],
    ),
    ("an elevation of 50 km", _sub(HOOP, '"95 m"', '"50 km"'), ["50 km", "−500…9,000 m"]),
    (
        "a time zone 10 hours from the longitude",
        _sub(HOOP, "longitude = -76.50", "longitude = 76.50"),
        ["America/Toronto", "west longitudes are negative"],
    ),
    (
        "a mass area of 1e9 m²",
        HOOP + '\n[[mass]]\nmaterial = "water"\nvolume = "1 m3"\narea = 1e9\n',
        ["mass surface", "floor area"],
    ),
    ("TOML nested 5,000 deep", "a = " + "[" * 5000 + "]" * 5000 + "\n", ["nested too deeply"]),
    ("ten air changes a minute", _sub(HOOP, "changes_per_hour = 1.5", "changes_per_hour = 600"), ["0–60"]),
]  # fmt: skip


@pytest.mark.parametrize(
    ("label", "text", "words"), REFUSED_HOUSES, ids=[c[0] for c in REFUSED_HOUSES]
)
def test_impossible_house_files_are_refused_in_one_line(tmp_path, label, text, words):
    h = _house(tmp_path, text)
    for argv in (
        ["tonight", str(h), "--crop", "tomato", "--forecast", NIGHT, *START],
        ["size", str(h), "--outside", "-20C", "--hold", "5C"],
    ):
        line = _error(tmp_path, argv, [h])
        for w in words:
            assert w in line, line


#: (label, arguments after the house, words of the one-line error)
REFUSED_ARGUMENTS = [
    ("--threshold -200C", ["tonight", "--threshold", "-200C", "--forecast", NIGHT, *START], ['"-200C"', "alarm temperature", "−60…30 °C"]),
    ("--margin 100K", ["tonight", "--crop", "tomato", "--margin", "100K", "--forecast", NIGHT, *START], ['"100K"', "0…20 K"]),
    ("--inside-now 500C", ["tonight", "--crop", "tomato", "--inside-now", "500C", "--forecast", NIGHT, *START], ['"500C"', "inside air"]),
    ("--outside -273C", ["size", "--outside", "-273C", "--hold", "5C"], ['"-273C"', "−90…60 °C"]),
    ("--wind 1e6 m/s", ["size", "--outside", "-20C", "--hold", "5C", "--wind", "1e6 m/s"], ["113 m/s"]),
    ("--start in the year 1000", ["tonight", "--crop", "tomato", "--low", "-2C", "--start", "1000-01-01T18:00"], ["1000", "1900–2200"]),
    ("--start in the year 3000", ["tonight", "--crop", "tomato", "--low", "-2C", "--start", "3000-01-01T18:00"], ["3000"]),
    ("a usage mistake", ["tonight", "--crop", "tomato", "--model", "three-node"], ["--model", "--help"]),
    ("--draws -1", ["tonight", "--crop", "tomato", "--draws", "-1", "--forecast", NIGHT, *START], ["--draws", "negative"]),
    ("--draws 1e9", ["tonight", "--crop", "tomato", "--draws", "1e9", "--forecast", NIGHT, *START], ["--draws", "whole number"]),
    ("--draws 10**9", ["tonight", "--crop", "tomato", "--draws", "1000000000", "--forecast", NIGHT, *START], ["--draws", "0…20,000"]),
    ("--seed x", ["tonight", "--crop", "tomato", "--seed", "x", "--forecast", NIGHT, *START], ["--seed", "whole number"]),
    ("--seed 2**70", ["tonight", "--crop", "tomato", "--seed", str(2**70), "--forecast", NIGHT, *START], ["--seed", "too large"]),
]  # fmt: skip


@pytest.mark.parametrize(
    ("label", "args", "words"), REFUSED_ARGUMENTS, ids=[c[0] for c in REFUSED_ARGUMENTS]
)
def test_impossible_arguments_are_refused_in_one_line(tmp_path, label, args, words):
    h = _house(tmp_path, GABLE)
    line = _error(tmp_path, [args[0], str(h), *args[1:]], [h])
    for w in words:
        assert w in line, line


def test_a_bare_temperature_is_read_in_the_houses_units_and_echoed(tmp_path):
    """The hoop tunnel's [site] units = "us": "--low 28" is 28 °F (frost), as "28F"."""
    h = _house(tmp_path, HOOP)
    runs = {}
    for low in ("28", "28F", "-2.2222C"):
        argv = ["tonight", str(h), "--crop", "tomato", "--low", low, "--json"]
        argv += ["--start", "2026-12-03T18:00"]
        rc, out, err = assert_contract(argv, [h], json_out=True)
        runs[low] = (json.loads(out), err)
    bare, unit = runs["28"][0], runs["28F"][0]
    assert bare["min_plant_c"] == pytest.approx(unit["min_plant_c"], abs=1e-9)
    assert bare["crossing_time"] == unit["crossing_time"] is not None  # FROST, not SAFE
    assert "Note: --low: 28 read as 28 °F" in runs["28"][1]
    assert "Note:" not in runs["28F"][1]


def test_a_bare_number_follows_units_option_and_metric_houses(tmp_path):
    metric = _house(tmp_path, GABLE, "metric.toml")  # [site] units = "metric"
    a = ["size", str(metric), "--hold", "5C", "--json"]
    c = json.loads(run_cli([*a, "--outside", "-10"])[1])
    f = json.loads(run_cli([*a, "--outside", "-10", "--units", "us"])[1])
    assert c["design_outside_c"] == pytest.approx(-10.0)
    assert f["design_outside_c"] == pytest.approx((-10 - 32) / 1.8)


def test_a_bare_wind_is_read_in_the_houses_units_and_echoed(tmp_path):
    """On the hoop tunnel (units = "us") "--wind 15" is 15 mph, as "15mph", not 15 m/s."""
    h = _house(tmp_path, HOOP)
    a = ["size", str(h), "--outside", "-10F", "--crop", "lettuce", "--json"]
    runs = {w: assert_contract([*a, "--wind", w], [h], json_out=True) for w in ("15", "15mph")}
    bare, unit = (json.loads(runs[w][1]) for w in ("15", "15mph"))
    # NIST SP 811 (2008), appendix B: 1 mi/h = 0.44704 m/s exactly
    assert bare["wind_m_s"] == unit["wind_m_s"] == pytest.approx(15 * 0.44704, rel=1e-12)
    assert bare["heat_loss_w"] == unit["heat_loss_w"]
    assert "Note: --wind: 15 read as 15 mph" in runs["15"][2] and "Note:" not in runs["15mph"][2]
    metric = _house(tmp_path, GABLE, "metric.toml")
    m = ["size", str(metric), "--outside", "-20C", "--hold", "5C", "--wind", "4", "--json"]
    assert json.loads(assert_contract(m, [metric], json_out=True)[1])["wind_m_s"] == 4.0


def test_houses_with_different_units_need_a_unit_on_a_bare_number(tmp_path):
    us, metric = _house(tmp_path, HOOP, "us.toml"), _house(tmp_path, GABLE, "m.toml")
    argv = ["tonight", str(us), str(metric), "--threshold", "1", "--forecast", NIGHT, *START]
    line = _error(tmp_path, argv, [us, metric])
    assert '"1" has no unit' in line and "1C or 1F" in line


def test_unusual_but_possible_values_warn_and_go_on(tmp_path):
    h = _house(tmp_path, _sub(HOOP, "changes_per_hour = 1.5", "changes_per_hour = 20"))
    argv = ["tonight", str(h), "--crop", "tomato", "--forecast", NIGHT, *START, "--json"]
    rc, _out, err = assert_contract(argv, [h], json_out=True)
    assert rc == 0 and err.startswith("Warning: ") and "air changes" in err


def test_a_house_without_a_site_shows_the_forecast_files_own_clock(tmp_path):
    """Across a clock change in the file, times keep the file's offsets, not UTC."""
    import datetime as dt
    from zoneinfo import ZoneInfo

    text = HOOP.split("[site]")[0]
    h = _house(tmp_path, text)
    zone, t0 = ZoneInfo("America/Toronto"), dt.datetime(2026, 10, 31, 20, tzinfo=dt.UTC)
    rows = ["time,temperature_c"] + [
        f"{(t0 + dt.timedelta(hours=i)).astimezone(zone).isoformat(timespec='minutes')},{-1 - 0.2 * i:.1f}"
        for i in range(30)
    ]
    f = tmp_path / "dst.csv"
    f.write_text("\n".join(rows) + "\n", encoding="utf-8")
    argv = ["tonight", str(h), "--threshold", "-3C", "--forecast", str(f), "--json"]
    argv += ["--start", "2026-10-31T17:00-04:00"]
    rc, out, _err = assert_contract(argv, [h, f], json_out=True)
    offsets = {s["time"][-6:] for s in json.loads(out)["series"]}
    assert offsets == {"-04:00", "-05:00"}  # the file's clock on both sides of the change


def test_non_regular_files_are_refused_before_reading(tmp_path):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    h = _house(tmp_path, GABLE)
    for argv in (
        ["house", str(fifo)],
        ["house", "/dev/zero"],
        ["tonight", str(h), "--crop", "tomato", "--forecast", "/dev/zero"],
        ["tonight", str(h), "--crop", "tomato", "--forecast", str(fifo)],
        ["fit", str(h), "--log", "/dev/zero"],
        ["fit", str(h), "--log", str(fifo)],
    ):
        line = _error(tmp_path, argv, [h])
        assert "not a regular file" in line, line


def test_a_house_file_with_a_byte_order_mark_is_read(tmp_path):
    h = tmp_path / "bom.toml"
    h.write_bytes(b"\xef\xbb\xbf" + GABLE.encode("utf-8"))
    rc, out, _ = run_cli(["house", str(h), "--json"])
    assert rc == 0 and json.loads(out)["floor_area_m2"] == pytest.approx(270.0)


def test_one_blank_outside_reading_in_a_logger_record_is_filled_and_said(tmp_path):
    lines = Path(LOG).read_text(encoding="utf-8").splitlines()
    cells = lines[20].split(";")
    cells[2] = ""
    lines[20] = ";".join(cells)
    log = tmp_path / "log.csv"
    log.write_text("\n".join(lines) + "\n", encoding="utf-8")
    h = _house(tmp_path, GABLE)
    argv = ["fit", str(h), "--log", str(log), "--json"]
    rc, out, err = assert_contract(argv, [h, log], json_out=True)
    assert rc == 0, err
    notes = " ".join(json.loads(out)["notes"])
    assert "1 missing reading(s) filled by linear interpolation" in notes


def test_a_long_forecast_file_is_cut_to_days(tmp_path):
    """stock applies --days to a file: 60 days of hours become the 2 days asked for."""
    import datetime as dt

    t0 = dt.datetime(2026, 12, 3, 16, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
    rows = ["time,temperature_c"] + [
        f"{(t0 + dt.timedelta(hours=i)).isoformat(timespec='minutes')},{-5 + (i % 24) / 4:.2f}"
        for i in range(24 * 60)
    ]
    f = tmp_path / "long.csv"
    f.write_text("\n".join(rows) + "\n", encoding="utf-8")
    h = _house(tmp_path, GABLE)
    argv = ["stock", str(h), "--setpoint", "10C", "--forecast", str(f), "--days", "2"]
    argv += ["--start", "2026-12-03T16:00-05:00", "--json"]
    rc, out, err = assert_contract(argv, [h, f], json_out=True)
    doc = json.loads(out)
    assert rc == 0, err
    assert len(doc["days"]) <= 3  # two days from 16:00 touch three calendar days
    assert any("cut to the" in w for w in doc["forecast"]["warnings"])
