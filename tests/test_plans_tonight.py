"""The check-again time and trip-wire reading (issue 12), checked on the model itself."""

from __future__ import annotations

import csv
import json

import pytest

from grower.cli import main

NIGHT = "examples/forecast-cold-night.csv"


def _tonight(capsys, forecast: str, *extra: str) -> dict:
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", forecast]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", "8C", "--soil-now", "9C", "--json"]
    assert main([*argv, *extra]) == 0
    return json.loads(capsys.readouterr().out)


def _shifted(tmp_path, shift_k: float) -> str:
    with open(NIGHT, newline="") as f:
        rows = list(csv.DictReader(f))
    out = tmp_path / "shifted.csv"
    with open(out, "w", newline="") as f:
        w = csv.DictWriter(f, fieldnames=list(rows[0]))
        w.writeheader()
        for row in rows:
            for key in ("temperature_c", "dew_point_c"):
                row[key] = f"{float(row[key]) + shift_k:.6f}"
            w.writerow(row)
    return str(out)


def test_trip_wire_is_the_night_that_just_touches_the_alarm(capsys, tmp_path):
    doc = _tonight(capsys, NIGHT)
    trip = doc["check_again"]
    assert doc["crossing_time"] is not None and trip is not None
    assert doc["series"][0]["time"] < trip["time"] < doc["crossing_time"]
    # Independent check: run the whole model again (file reader, sky, network, solver) on
    # the forecast with air and dew point shifted by the trip wire's shift. The network is
    # linear, but the sky temperature is not quite (the emissivity and the σT⁴ linearisation
    # move with the temperatures), so the shifted night touches the alarm within a few
    # tenths of a kelvin rather than exactly (without the dew point shifted it was 0.5 K off).
    again = _tonight(capsys, _shifted(tmp_path, trip["forecast_shift_k"]))
    assert again["min_plant_c"] == pytest.approx(doc["threshold_c"], abs=0.3)
    at = next(p for p in again["series"] if p["time"] >= trip["time"])
    # the series is hourly: the reading at the check time lies on the shifted night's air
    assert abs(at["air_c"] - trip["air_below_c"]) < 1.5


def test_no_trip_wire_when_below_the_alarm_now(capsys):
    doc = _tonight(capsys, NIGHT, "--inside-now", "-6C")
    assert doc["action"] == "below" and doc["check_again"] is None


def test_brief_at_60_columns_keeps_numbers_with_units(capsys, monkeypatch):
    import re

    monkeypatch.setenv("COLUMNS", "60")
    argv = ["tonight", "examples/hoop-tunnel.toml", "examples/gable-house.toml"]
    argv += ["--crop", "kale", "--forecast", NIGHT, "--brief", "--units", "us"]
    assert main(argv) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("NO HEATER FOR TONIGHT Lane tunnel")
    assert not any(line.startswith(("air ", "house ", "K =")) for line in lines)  # no table
    assert all(len(line) <= 60 for line in lines)
    unit = re.compile(r"^(°F|°C|K\b|kW|Btu/h|h\b|min\b|L\b|gal\b|therm)")
    for above, below in zip(lines, lines[1:], strict=False):
        # a line that ends in a number is never followed by that number's unit
        assert not (re.search(r"\d$", above) and unit.match(below)), (above, below)
    assert "\u00a0" not in "".join(lines)


def test_an_assumed_start_below_the_alarm_asks_for_a_reading(capsys):
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT]
    argv += ["--start", "2026-12-03T16:00", "--soil-now", "-8C", "--brief"]
    main(argv)
    out = " ".join(capsys.readouterr().out.split())
    assert out.startswith("BELOW THE ALARM NOW")
    # the verdict rests on an assumption: the next line says which reading changes it
    assert "assumed (-3.9 °C), not read" in out and "--inside-now" in out
    main([*argv, "--inside-now", "-6C"])  # read, not assumed: no such line
    assert "not read" not in capsys.readouterr().out


def test_a_read_air_with_an_assumed_soil_asks_for_the_soil(capsys):
    # the two-node house's night rests on the soil as much as on the air: with the air
    # read and the soil assumed, the verdict says which reading is missing (US: 2 in)
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", "8C", "--brief"]
    main(argv)
    out = " ".join(capsys.readouterr().out.split())
    assert "The soil was assumed at the deep-ground temperature: a reading at 5 cm" in out
    main([*argv, "--units", "us"])
    assert "a reading at 2 in (--soil-now)" in " ".join(capsys.readouterr().out.split())
    main([*argv, "--soil-now", "9C"])  # both read: no such line
    assert "assumed" not in capsys.readouterr().out
