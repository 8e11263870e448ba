"""The check-again time and trip-wire reading (issue 12), checked on the model itself."""

from __future__ import annotations

import csv
import json

import numpy as np
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


def test_the_check_again_line_says_what_the_forecast_expects_then(capsys):
    # the forecast's own inside air at the check time, no heat: the night's series there
    # (a grid time, or between two), and below the trip-wire reading on a night that
    # reaches the alarm (the trip wire's night is the warmer one that just touches it)
    import datetime as dt

    doc = _tonight(capsys, NIGHT)
    trip = doc["check_again"]
    when = dt.datetime.fromisoformat(trip["time"]).timestamp()
    ts = [dt.datetime.fromisoformat(p["time"]).timestamp() for p in doc["series"]]
    air = [p["air_c"] for p in doc["series"]]
    assert trip["air_expected_c"] == pytest.approx(float(np.interp(when, ts, air)), abs=1e-9)
    assert trip["air_expected_c"] < trip["air_below_c"]
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", "8C", "--soil-now", "9C"]
    clock = trip["time"][11:16]
    f = trip["air_expected_c"] * 1.8 + 32.0  # °F = °C·1.8 + 32 (exact, by definition)
    for units, shown in (("metric", f"{trip['air_expected_c']:.1f} °C"), ("us", f"{f:.1f} °F")):
        assert main([*argv, "--brief", "--units", units]) == 0
        out = " ".join(capsys.readouterr().out.split())
        assert f"Check again at {clock} (the forecast has the inside air at {shown} then)" in out


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


# ------------------------------------------- plants below the alarm at the start (issue)


def _overcast(tmp_path, temp_c: float = -5.0, hours: int = 30) -> str:
    """A constant overcast night, no wind, no sun: the leaf offset is 0 and the lumped
    house sees one constant effective outside temperature."""
    lines = ["time,temperature_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"]
    for h in range(hours):
        day, hour = divmod(16 + h, 24)
        lines.append(f"2026-12-{3 + day:02d}T{hour:02d}:00-05:00,{temp_c},100,0,0")
    path = tmp_path / "overcast.csv"
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def _seconds(doc: dict, key_time: str) -> float:
    import datetime as dt

    start = dt.datetime.fromisoformat(doc["start"])
    return (dt.datetime.fromisoformat(key_time) - start).total_seconds()


def test_recovery_from_below_the_alarm_is_the_closed_form(capsys, tmp_path):
    # One node, constant boundary, heater at full output q: the air follows
    # T(t) = T_inf + (T0 − T_inf)·exp(−t/τ), T_inf = T_eff + q/K, τ = C/K (the one-node
    # closed form), so it is back at the alarm air T_a at t = τ·ln((T0 − T_inf)/(T_a − T_inf)).
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--model", "lumped"]
    argv += ["--forecast", _overcast(tmp_path), "--start", "2026-12-03T16:00", "--draws", "0"]
    assert main([*argv, "--inside-now", "-0.3C", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    s0 = d["series"][0]
    offset = s0["air_c"] - s0["plant_c"]
    # the premise: below the alarm, above the damage temperature, on a constant boundary
    assert d["damage_c"] < s0["plant_c"] < d["threshold_c"]
    assert all(
        r["effective_outside_c"] == pytest.approx(s0["effective_outside_c"]) for r in d["series"]
    )
    k, c, q = d["k_w_per_k"], d["c_j_per_k"], d["heater"]["output_w"]
    t_inf = s0["effective_outside_c"] + q / k
    t_a = d["threshold_c"] + offset
    expected = c / k * np.log((s0["air_c"] - t_inf) / (t_a - t_inf))
    assert expected > 300.0  # a real wait, several minutes
    h = d["heater"]
    assert _seconds(d, h["recovered_at"]) == pytest.approx(expected, abs=1.0)  # to the second
    assert h["holds"] and h["damage_at"] is None
    assert h["min_plant_after_recovery_c"] >= d["threshold_c"] - 0.05
    assert d["action"] == "below" and d["alert_status"] == 3
    # the screen says so: heat now, back by the clock minute after the recovery
    assert main([*argv, "--inside-now", "-0.3C", "--brief"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    by = f"16:{int(np.ceil(expected / 60)):02d}"
    assert f"heat now; the installed heater brings it back above -0.1 °C by {by}" in out


def test_recovery_of_the_two_node_house_against_solve_ivp(capsys, tmp_path):
    # An independent integration (scipy's RK45, rtol 1e-10) of the two-node equations as
    # grower.network writes them, the heater's full output on the air node, from a start
    # below the alarm: the instant the air is back at the alarm air (an event) against the
    # solver's recovery, to the second.
    import datetime as dt

    from scipy.integrate import solve_ivp

    from grower import house
    from grower.plans import model as hm

    from .test_plans_model import _constant_night, _odes, _sky_of_series

    path = _constant_night(tmp_path)  # −5 °C, dew point −8 °C, clear, wind 1 m/s
    argv = ["tonight", "examples/gable-house.toml", "--threshold", "1C", "--forecast", path]
    argv += ["--inside-now", "0C", "--soil-now", "9C", "--start", "2026-12-03T16:00"]
    assert main([*argv, "--json", "--draws", "0", "--alert-status"]) == 3
    d = json.loads(capsys.readouterr().out)
    h = house.read("examples/gable-house.toml")
    mdl = hm.build(h, wind_m_s=1.0, mean_radiant_temp_c=-10.0, air_temp_c=-5.0)
    ts, skies = _sky_of_series(d, mdl)
    free = _odes(mdl.conductances, mdl.capacities, -5.0, lambda t: np.interp(t, ts, skies))
    q, c_air = d["heater"]["output_w"], mdl.capacities.air_j_per_k
    offsets = [r["air_c"] - r["plant_c"] for r in d["series"]]
    t_a = d["threshold_c"] + offsets[0]

    def heated(t, x):
        da, dm = free(t, x)
        return [da + q / c_air, dm]

    def back(_t, x):
        return x[0] - t_a

    back.terminal, back.direction = True, 1
    sol = solve_ivp(heated, (0, 3600.0), [0.0, 9.0], events=back, rtol=1e-10, atol=1e-10)
    expected = float(sol.t_events[0][0])
    got = _seconds(d, d["heater"]["recovered_at"])
    # the leaf offset moves by under 1e-3 K in the first minutes: the alarm air is its start's
    assert abs(offsets[1] - offsets[0]) < 1e-3
    assert got == pytest.approx(expected, abs=1.0)  # printed to the second
    assert d["heater"]["holds"] and d["action"] == "below"
    assert dt.datetime.fromisoformat(d["heater"]["recovered_at"]) > dt.datetime.fromisoformat(
        d["start"]
    )


def _cold_night(extra: list[str]) -> list[str]:
    argv = ["tonight", "examples/gable-house.toml", "--crop", "tomato", "--forecast", NIGHT]
    return [*argv, "--start", "2026-12-03T16:00", *extra]


def test_below_the_alarm_but_recoverable_exits_3_not_4(capsys):
    # the reviewer's night: the air read at 0 °C, plants -0.5 °C, between the damage
    # temperature (-1.1 °C) and the alarm (-0.1 °C); the installed heater holds the alarm
    assert main(_cold_night(["--inside-now", "0C", "--alert-status"])) == 3
    out = " ".join(capsys.readouterr().out.split())
    assert out.startswith("BELOW THE ALARM NOW Propagation house:")
    assert "heat now; the installed heater brings it back above -0.1 °C by 16:01" in out
    assert "does not hold it" not in out and "fall to" not in out
    assert "brings it back above -0.1 °C by 16:01, then holds it" in out  # the heater's row
    # the chance with the heater judges each night the same way: not every night is lost
    assert main(_cold_night(["--inside-now", "0C", "--json", "--alert-status"])) == 3
    d = json.loads(capsys.readouterr().out)
    assert d["alert_status"] == 3 and d["action"] == "below"
    assert d["chance_of_damage"] > 0.99 and d["chance_of_damage_heated"] < 0.2
    assert d["heater"]["min_plant_c"] == pytest.approx(d["series"][0]["plant_c"])  # the start
    assert d["heater"]["min_time"] == d["start"]


def test_below_the_damage_temperature_at_the_start_stays_4(capsys):
    # air -1 °C: plants -1.5 °C, below the damage temperature already; the heater brings
    # them back, but too late: damage expected even with the installed heat
    assert main(_cold_night(["--inside-now", "-1C", "--json", "--alert-status"])) == 4
    d = json.loads(capsys.readouterr().out)
    h = d["heater"]
    assert d["series"][0]["plant_c"] < d["damage_c"]
    assert not h["holds"] and h["damage_at"] == d["start"] and h["recovered_at"] is not None
    assert d["chance_of_damage_heated"] > 0.99
    assert main(_cold_night(["--inside-now", "-1C", "--brief", "--alert-status"])) == 4
    out = " ".join(capsys.readouterr().out.split())
    assert "heat now; the plants are below the damage temperature -1.1 °C too" in out


@pytest.mark.parametrize("soil", ["6C", "-2C"])
def test_a_heater_too_small_to_hold_it_stays_4(capsys, tmp_path, soil):
    # 1.2 kW against the night's 15 kW: the warm soil (6 °C) brings the air back within
    # minutes and the plants fall later; a cold soil (-2 °C) does not, and the plants reach
    # the damage temperature on the way down. Either way, damage expected: 4
    from pathlib import Path

    text = Path("examples/gable-house.toml").read_text(encoding="utf-8")
    small = tmp_path / "small.toml"
    small.write_text(text.replace('input = "100000 BTU/h"', 'input = "5000 BTU/h"'))
    argv = ["tonight", str(small), "--crop", "tomato", "--forecast", NIGHT, "--draws", "0"]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", "0C", "--soil-now", soil]
    argv += ["--alert-status"]
    assert main([*argv, "--json"]) == 4
    d = json.loads(capsys.readouterr().out)
    h = d["heater"]
    assert not h["holds"] and d["alert_status"] == 4
    assert main([*argv, "--brief"]) == 4
    out = " ".join(capsys.readouterr().out.split())
    if soil == "6C":
        assert h["recovered_at"] is not None and h["damage_at"] is None
        assert h["min_plant_after_recovery_c"] < d["damage_c"]
        # the run restarted at the recovery (a grid point added there, the state carried)
        # and the whole night's analysis find the same coldest hour: the restart is exact
        assert h["min_plant_after_recovery_c"] == pytest.approx(h["min_plant_c"], abs=1e-9)
        assert h["min_time_after_recovery"] == h["min_time"]
        assert "at full output the plants are back above -0.1 °C by 16:0" in out
        assert "then fall to -6.1 °C at 07:04 Fri; needs" in out
    else:
        assert h["recovered_at"] is None and h["damage_at"] is not None
        assert _seconds(d, h["damage_at"]) > 0
        assert "even at full output the plants reach the damage temperature -1.1 °C at" in out


# ------------------------------------ one bare number, houses of different units (issue)

MIXED = ["tonight", "examples/hoop-tunnel.toml", "examples/gable-house.toml", "--crop", "kale"]


@pytest.mark.parametrize(
    ("extra", "option"),
    [
        (["--low", "-4"], "--low"),
        (["--low", "-4C", "--high", "50"], "--high"),
        (["--low", "-4C", "--dew-point", "-9"], "--dew-point"),
        (["--forecast", NIGHT, "--inside-now", "3"], "--inside-now"),
        (["--forecast", NIGHT, "--threshold", "1"], "--threshold"),
        (["--forecast", NIGHT, "--colder", "3"], "--colder"),
    ],
)
def test_a_bare_number_is_refused_when_the_houses_disagree_on_units(capsys, extra, option):
    # the tunnel's [site] says us, the gable house's metric: "-4" would be -4 °F for one
    # and -4 °C for the other. One line naming the option, exit 2, nothing on stdout
    code = main([*MIXED, *extra, "--start", "2026-12-03T16:00"])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"Error: {option}: "), err
    assert "different units" in lines[0] and "Traceback" not in err
    value = extra[-1]
    assert f"write {value}" in lines[0]  # e.g. "write -4C or -4F"


def test_a_written_unit_reads_the_same_for_every_house(capsys):
    # -4C is -4 °C for both houses: the two nights are the same curve, whatever the screen
    argv = [*MIXED, "--low", "-4C", "--start", "2026-12-03T16:00", "--json", "--draws", "0"]
    assert main(argv) == 0
    out, err = capsys.readouterr()
    docs = json.loads(out)["houses"]
    lows = {d["house"]: min(p["outside_c"] for p in d["series"]) for d in docs}
    assert set(lows) == {"Lane tunnel", "Propagation house"}
    assert all(v == pytest.approx(-4.0, abs=0.05) for v in lows.values()), lows
    assert "read as" not in err  # nothing was bare


def test_a_bare_number_with_units_given_is_read_once_and_said_once(capsys):
    argv = [*MIXED, "--low", "25", "--units", "us", "--start", "2026-12-03T16:00"]
    assert main([*argv, "--json", "--draws", "0"]) == 0
    out, err = capsys.readouterr()
    assert err.count("--low: 25 read as 25 °F") == 1, err
    lows = [min(p["outside_c"] for p in d["series"]) for d in json.loads(out)["houses"]]
    # 25 °F = -3.89 °C for both houses (pint: tests/reference_units.py)
    from .reference_units import UREG

    expected = UREG.Quantity(25.0, "degF").to("degC").magnitude
    assert lows == pytest.approx([expected, expected], abs=0.05)


@pytest.mark.parametrize("inside", ["1C", "3C"])
def test_a_heater_that_holds_only_at_full_output_has_nothing_to_spare(capsys, inside):
    # the lumped gable house at a 2 °C alarm: the coldest hour needs 23.50 kW of the
    # heater's 23.45 kW; the thermostat keeps the plants within the holding tolerance
    # (0.05 K), so it holds, but no margin is shown as "-0.1 kW to spare"
    argv = ["tonight", "examples/gable-house.toml", "--threshold", "2C", "--forecast", NIGHT]
    argv += ["--start", "2026-12-03T16:00", "--inside-now", inside, "--model", "lumped"]
    argv += ["--draws", "0", "--alert-status"]
    assert main([*argv, "--json"]) == 3
    d = json.loads(capsys.readouterr().out)
    assert d["hold_peak_w"] > d["heater"]["output_w"] and d["heater"]["holds"]
    assert main([*argv, "--brief"]) == 3
    out = " ".join(capsys.readouterr().out.split())
    assert "at its full output, with nothing to spare" in out
    assert "-0.1 kW" not in out and "-0 Btu/h" not in out
    if inside == "1C":  # below the alarm at the start, no crop: "them", the plants
        assert "the installed heater brings them back above 2.0 °C by 17:16 and holds them" in out
