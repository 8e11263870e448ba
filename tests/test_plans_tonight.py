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


OLDER_CALIBRATION = (
    '\n[calibration]\nmodel = "two-node"\nk_w_per_k = 969.0\nc_j_per_k = 9.0e7\n'
    'record = "logger-gable-house.csv"\n'
)


def test_an_older_calibration_is_refused_and_tonight_runs_on_the_geometry(capsys, tmp_path):
    """A table from the one-factor fit (no `format`): not used; the verdict is the
    geometry's; one line says what was found, why not, and how to refit."""
    from pathlib import Path

    path = tmp_path / "old.toml"
    text = Path("examples/gable-house.toml").read_text(encoding="utf-8")
    path.write_text(text + OLDER_CALIBRATION, encoding="utf-8")
    plain = _tonight(capsys, NIGHT)
    argv = ["tonight", str(path), "--crop", "tomato", "--forecast", NIGHT]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", "8C", "--soil-now", "9C"]
    assert main([*argv, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["calibrated"] is False and d["k_w_per_k"] == plain["k_w_per_k"]
    assert plain["calibration_warning"] is None
    assert d["min_plant_c"] == plain["min_plant_c"]
    [note] = [a for a in d["assumptions"] if "[calibration]" in a]
    assert "older grower fit" in note and "understate K" in note
    assert d["calibration_warning"] == note
    assert f"grower fit {path} --log logger-gable-house.csv --write" in note
    assert main(argv) == 0
    cap = capsys.readouterr()
    text = " ".join(cap.out.split())
    assert text.count("[calibration] is from an older grower fit") == 1
    assert "! the house file's [calibration] is from an older" in text
    assert main([*argv, "--no-calibration", "--json"]) == 0
    [ignored] = [a for a in json.loads(capsys.readouterr().out)["assumptions"] if "[cal" in a]
    assert "ignored (--no-calibration)" in ignored


def test_time_to_the_alarm_agrees_with_the_clock_times_shown(capsys, monkeypatch):
    # "reaches … at 18:28, 2 h 28 min after the start (16:00)": the span is the difference
    # of the two clock times on the screen (both cut to the minute), never a minute more
    import datetime as dt
    import re

    monkeypatch.setenv("COLUMNS", "200")
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT]
    assert main([*argv, "--start", "2026-12-03T16:00"]) == 0
    out = capsys.readouterr().out
    m = re.search(
        r"at (\d\d):(\d\d), (?:(\d+)\s+h\s+)?(\d+)\s+min after the start \((\d\d):(\d\d)\)", out
    )
    assert m, out
    hh, mm, h, mi, sh, sm = (int(g or 0) for g in m.groups())
    shown = dt.timedelta(hours=hh, minutes=mm) - dt.timedelta(hours=sh, minutes=sm)
    assert shown == dt.timedelta(hours=h, minutes=mi)
    doc = _tonight(capsys, NIGHT, "--inside-now", "3C", "--soil-now", "6C")
    crossing = dt.datetime.fromisoformat(doc["crossing_time"])
    assert crossing.strftime("%H:%M") == f"{hh:02d}:{mm:02d}" and crossing.second > 30
