"""End-to-end checks of tonight, size and stock on the example farm.

Each JSON answer is checked against an independent hand calculation from the numbers the
report itself gives (K, C, T_eff) and the published heating values in the fuel table.
"""

from __future__ import annotations

import datetime as dt
import json
import math
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import fuels
from grower.cli import main

from .calibration_tables import format2

NIGHT = "examples/forecast-cold-night.csv"
SNAP = "examples/forecast-cold-snap.csv"


def run_json(capsys, *argv: str) -> dict:
    code = main([*argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def run_error(capsys, *argv: str) -> str:
    code = main(list(argv))
    out, err = capsys.readouterr()
    assert code == 2, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: "), err
    assert "Traceback" not in err
    return lines[0]


# ---------------------------------------------------------------- size


@pytest.mark.parametrize("house", ["hoop-tunnel", "gable-house", "glass-range"])
def test_size_heat_loss_is_k_times_difference(capsys, house):
    d = run_json(capsys, "size", f"examples/{house}.toml", "--outside", "-25C", "--hold", "5C")
    # steady state: Q = K·(T_hold − T_eff), exact up to round-off
    assert d["heat_loss_w"] == pytest.approx(
        d["k_w_per_k"] * (d["hold_c"] - d["effective_outside_c"]), rel=1e-9
    )
    assert d["recommended_output_w"] == pytest.approx(d["heat_loss_w"] * d["safety_factor"])
    # unit heaters are rated on input: output = input × efficiency
    assert d["recommended_input_w"] == pytest.approx(d["recommended_output_w"] / d["efficiency"])
    # fuel per hour at full fire = input × 1 h ÷ heating value per unit
    f = d["fuel"]
    assert f["per_hour_at_full_fire"] == pytest.approx(
        d["recommended_input_w"] * 3600 / f["heating_value_j_per_unit"]
    )
    assert d["cautions"], "size always shows the safety cautions"


def test_size_propane_gallon_per_hour_from_eia_figure(capsys):
    # US EIA: propane 91,452 Btu/gal. A 100,000 Btu/h input burns 100000/91452 gal/h.
    # The gable house buys its propane in litres ([stock] on_hand = "900 L"), so size
    # gives litres like tonight and stock: the US gallon is 3.785411784 L exactly (NIST
    # Handbook 44, Appendix C: 231 in³)
    d = run_json(capsys, "size", "examples/gable-house.toml", "--outside", "-20C", "--hold", "5C")
    btu_h = d["recommended_input_w"] / 0.29307107
    assert d["fuel"]["unit"] == "L"
    litres = btu_h / 91452 * 3.785411784
    assert d["fuel"]["per_hour_at_full_fire"] == pytest.approx(litres, rel=2e-3)


def test_size_wind_and_crop(capsys):
    calm = run_json(
        capsys, "size", "examples/hoop-tunnel.toml", "--outside", "-10F", "--hold", "40F"
    )
    windy = run_json(
        capsys,
        "size",
        "examples/hoop-tunnel.toml",
        "--outside",
        "-10F",
        "--hold",
        "40F",
        "--wind",
        "30 mph",
    )
    assert windy["heat_loss_w"] > calm["heat_loss_w"]
    crop = run_json(
        capsys, "size", "examples/hoop-tunnel.toml", "--outside", "-10F", "--crop", "lettuce"
    )
    assert crop["hold_c"] > -2.0  # spring lettuce damage −2 °C + margin + leaf offset
    # a colder design night needs more heat
    colder = run_json(
        capsys, "size", "examples/hoop-tunnel.toml", "--outside", "-20F", "--hold", "40F"
    )
    assert colder["heat_loss_w"] > calm["heat_loss_w"]


def test_size_bad_input(capsys):
    assert "unknown fuel" in run_error(
        capsys,
        "size",
        "examples/gable-house.toml",
        "--outside",
        "-20C",
        "--hold",
        "5C",
        "--fuel",
        "coal",
    )
    assert "--hold" in run_error(
        capsys, "size", "examples/gable-house.toml", "--outside", "-20C", "--hold", "-30C"
    )
    assert "--outside" in run_error(
        capsys, "size", "examples/gable-house.toml", "--outside", "-20 m", "--hold", "5C"
    )


# ---------------------------------------------------------------- tonight


def test_tonight_json_contract(capsys):
    d = run_json(
        capsys, "tonight", "examples/hoop-tunnel.toml", "--crop", "lettuce", "--forecast", NIGHT
    )
    for key in (
        "model",
        "k_w_per_k",
        "c_j_per_k",
        "threshold_c",
        "crossing_time",
        "min_air_c",
        "min_plant_c",
        "min_time",
        "hold_peak_w",
        "hold_energy_kwh",
        "colder",
        "series",
    ):
        assert key in d
    for key in ("by_c", "crossing_time", "min_plant_c"):
        assert key in d["colder"]
    row = d["series"][0]
    assert set(row) == {"time", "outside_c", "effective_outside_c", "air_c", "plant_c"}
    assert row["time"].endswith("-05:00")  # the site's offset in December
    # the plants are never warmer than the air
    assert all(r["plant_c"] <= r["air_c"] + 1e-12 for r in d["series"])
    # fuel = energy ÷ (heating value × efficiency)
    f = d["hold_fuel"]
    assert f["amount"] == pytest.approx(
        d["hold_energy_kwh"] * 3.6e6 / (f["heating_value_j_per_unit"] * f["efficiency"])
    )
    # the colder night is not warmer
    assert d["colder"]["min_plant_c"] < d["min_plant_c"]


def test_tonight_verdict_is_first_line(capsys):
    code = main(["tonight", "examples/hoop-tunnel.toml", "--crop", "lettuce", "--forecast", NIGHT])
    out = capsys.readouterr().out
    assert code == 0
    first = out.splitlines()[0]
    assert first.startswith(
        (
            "NO ACTION",
            "HEAT NEEDED",
            "HEATER TOO SMALL",
            "BELOW THE ALARM NOW",
            "NO HEATER FOR TONIGHT",
        )
    )
    assert "Lane tunnel" in first
    assert "\nWith no heat: " in out  # the no-heat outcome follows the action


def _constant_forecast(tmp_path, temp_c: float = -5.0, hours: int = 30) -> str:
    lines = ["time,temperature_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"]
    for h in range(hours):
        day, hour = divmod(16 + h, 24)
        lines.append(f"2026-12-{3 + day:02d}T{hour:02d}:00-05:00,{temp_c},100,0,0")
    path = tmp_path / "constant.csv"
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def test_lumped_crossing_equals_closed_form(capsys, tmp_path):
    # Constant outside and sky, no sun: the lumped house follows
    # T(t) = T_eff + (T0 − T_eff)·exp(−t/τ), τ = C/K, so it reaches the air temperature
    # T_a = threshold + leaf offset at t* = τ·ln((T0 − T_eff)/(T_a − T_eff)).
    path = _constant_forecast(tmp_path)
    d = run_json(
        capsys,
        "tonight",
        "examples/gable-house.toml",
        "--threshold",
        "0C",
        "--forecast",
        path,
        "--model",
        "lumped",
        "--inside-now",
        "12C",
        "--start",
        "2026-12-03T16:00",
    )
    tau = d["c_j_per_k"] / d["k_w_per_k"]
    t_eff = d["series"][0]["effective_outside_c"]
    offset = d["series"][0]["air_c"] - d["series"][0]["plant_c"]
    assert all(r["effective_outside_c"] == pytest.approx(t_eff) for r in d["series"])
    t_air = d["threshold_c"] + offset
    expected = tau * math.log((12.0 - t_eff) / (t_air - t_eff))
    import datetime as dt

    start = dt.datetime.fromisoformat(d["start"])
    crossing = dt.datetime.fromisoformat(d["crossing_time"])
    # reported to the second
    assert (crossing - start).total_seconds() == pytest.approx(expected, abs=1.0)
    # steady heat to hold the plants at the threshold: K·(T_a − T_eff)
    assert d["hold_peak_w"] == pytest.approx(d["k_w_per_k"] * (t_air - t_eff), rel=1e-6)


def test_tonight_several_houses_most_urgent_first(capsys):
    d = run_json(
        capsys,
        "tonight",
        "examples/glass-range.toml",
        "examples/hoop-tunnel.toml",
        "--crop",
        "lettuce",
        "--forecast",
        NIGHT,
    )
    houses = d["houses"]
    assert {h["house"] for h in houses} == {"Lane tunnel", "Glass range"}
    # most urgent first: the earliest crossing leads, a house that stays safe comes last
    crossings = [h["crossing_time"] for h in houses]
    timed = [c for c in crossings if c is not None]
    assert timed == sorted(timed, key=dt.datetime.fromisoformat)
    assert crossings[: len(timed)] == timed


def test_alert_status_exit_codes(capsys, tmp_path):
    def alert(house: str) -> tuple[int, str]:
        code = main(["tonight", house, "--crop", "tomato", "--forecast", NIGHT, "--alert-status"])
        return code, capsys.readouterr().out

    code, out = alert("examples/hoop-tunnel.toml")
    # the tunnel has no heater: damage expected even with the installed heat (none)
    assert code == 4, out
    assert out.startswith("NO HEATER FOR TONIGHT Lane tunnel")
    code, out = alert("examples/gable-house.toml")
    # the gable house's heater holds the alarm: action needed, the equipment holds
    assert code == 3, out
    assert out.startswith("HEAT NEEDED Propagation house: heat from")
    assert "to spare" in out.split("With no heat")[0]
    warm = _constant_forecast(tmp_path, temp_c=15.0)
    code = main(
        [
            "tonight",
            "examples/hoop-tunnel.toml",
            "--crop",
            "kale",
            "--forecast",
            warm,
            "--alert-status",
            "--start",
            "2026-12-03T16:00",
            "--soil-now",
            "15C",
        ]
    )
    out = capsys.readouterr().out
    assert code == 0, out
    assert out.startswith("NO ACTION")


def test_tonight_bad_input(capsys, tmp_path):
    line = run_error(
        capsys, "tonight", "examples/hoop-tunnel.toml", "--crop", "tomatos-x", "--forecast", NIGHT
    )
    assert "unknown crop" in line
    line = run_error(
        capsys, "tonight", "examples/hoop-tunnel.toml", "--crop", "tomatoe", "--forecast", NIGHT
    )
    assert "did you mean" in line or "tomato" in line
    short = tmp_path / "short.csv"
    short.write_text(
        "time,temperature_c\n2026-12-03T16:00-05:00,2\n2026-12-03T19:00-05:00,0\n2026-12-03T22:00-05:00,-1\n"
    )
    line = run_error(
        capsys, "tonight", "examples/hoop-tunnel.toml", "--crop", "kale", "--forecast", str(short)
    )
    assert "night runs to" in line
    # times in a message are to the minute (sunrise + 2 h is computed to the microsecond)
    import re

    assert re.search(r"night runs to \d{4}-\d\d-\d\dT\d\d:\d\d[+-]\d\d:\d\d \(", line), line


def test_message_times_round_to_the_minute():
    import datetime as dt

    from grower.errors import message_time

    tz = dt.timezone(dt.timedelta(hours=-5))
    t = dt.datetime(2026, 12, 5, 9, 26, 19, 322470, tzinfo=tz)
    assert message_time(t) == "2026-12-05T09:26-05:00"
    assert message_time(t.replace(second=30, microsecond=0)) == "2026-12-05T09:27-05:00"
    assert message_time(t.replace(hour=23, minute=59, second=45)) == "2026-12-06T00:00-05:00"


def test_plot_writes_png(capsys, tmp_path):
    pytest.importorskip("matplotlib")
    png = tmp_path / "night.png"
    code = main(
        [
            "tonight",
            "examples/hoop-tunnel.toml",
            "--crop",
            "kale",
            "--forecast",
            NIGHT,
            "--plot",
            str(png),
        ]
    )
    capsys.readouterr()
    assert code == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# ---------------------------------------------------------------- stock


def test_stock_fuel_from_energy(capsys):
    d = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--night-setpoint",
        "4C",
        "--forecast",
        SNAP,
        "--on-hand",
        "900 L",
    )
    f = d["fuel"]
    # fuel = heat ÷ (heating value × efficiency); NRCan/EIA-based L of propane
    assert f["amount"] == pytest.approx(
        d["energy_kwh"] * 3.6e6 / (f["heating_value_j_per_unit"] * f["efficiency"])
    )
    assert f["unit"] == "L"
    assert sum(day["fuel_amount"] for day in d["days"]) == pytest.approx(f["amount"])
    assert sum(day["heat_kwh"] for day in d["days"]) == pytest.approx(d["energy_kwh"])
    propane = fuels.get_fuel("propane")
    assert f["heating_value_j_per_unit"] == pytest.approx(propane.j_per("L"))
    assert d["cautions"]


def test_stock_runs_out(capsys):
    d = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--forecast",
        SNAP,
        "--on-hand",
        "20 gal",
    )
    assert d["runs_out_at"] is not None
    assert 0 < d["lasts_days"] < 5
    # the stock's heat equals what was delivered up to then: check with the daily totals
    on_hand_heat_kwh = d["on_hand"]["energy_j"] * d["fuel"]["efficiency"] / 3.6e6
    assert on_hand_heat_kwh < d["energy_kwh"]


def test_stock_higher_setpoint_burns_more(capsys):
    lo = run_json(
        capsys, "stock", "examples/glass-range.toml", "--setpoint", "5C", "--forecast", SNAP
    )
    hi = run_json(
        capsys, "stock", "examples/glass-range.toml", "--setpoint", "12C", "--forecast", SNAP
    )
    assert hi["energy_kwh"] > lo["energy_kwh"] > 0


def test_stock_bad_input(capsys):
    line = run_error(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--forecast",
        SNAP,
        "--on-hand",
        "200 kWh",
    )
    assert "--on-hand" in line
    line = run_error(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--forecast",
        SNAP,
        "--fuel",
        "unobtainium",
    )
    assert "unknown fuel" in line
    line = run_error(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "2C",
        "--forecast",
        SNAP,
        "--crop",
        "basil",
    )
    assert "below" in line


# (every command's help: tests/test_cli.py, derived from the parser)


# ---------------------------------------------------------------- live forecast, loopback


def test_tonight_live_forecast_from_loopback(capsys, httpserver, monkeypatch, tmp_path):
    # A response we wrote in Open-Meteo's documented shape (tests/data), served locally.
    from pathlib import Path

    doc = json.loads((Path(__file__).parent / "data" / "openmeteo_kingston.json").read_text())
    httpserver.expect_request("/v1/forecast").respond_with_json(doc)
    monkeypatch.setenv("GROWER_FORECAST_URL", httpserver.url_for("/"))
    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    argv = ["tonight", "examples/hoop-tunnel.toml", "--crop", "kale", "--start", "2026-12-03T17:00"]
    d = run_json(capsys, *argv)
    assert d["forecast"]["attribution"] and "Open-Meteo" in d["forecast"]["attribution"]
    assert d["start"] == "2026-12-03T17:00:00-05:00"
    # second run: served from the cache, the server sees one request
    run_json(capsys, *argv)
    assert len(httpserver.log) == 1
    # the report names the source and credits it
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "Open-Meteo" in out


def test_dead_network_no_cache_is_one_line(capsys, monkeypatch, tmp_path):
    # nothing listens on this loopback port
    import socket

    s = socket.socket()
    s.bind(("127.0.0.1", 0))
    port = s.getsockname()[1]
    s.close()
    monkeypatch.setenv("GROWER_FORECAST_URL", f"http://127.0.0.1:{port}/")
    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    line = run_error(capsys, "tonight", "examples/hoop-tunnel.toml", "--crop", "kale")
    assert "forecast" in line


def test_already_below_at_start_says_so(capsys, tmp_path):
    path = _constant_forecast(tmp_path, temp_c=-8.0)
    code = main(
        [
            "tonight",
            "examples/hoop-tunnel.toml",
            "--crop",
            "kale",
            "--forecast",
            path,
            "--start",
            "2026-12-03T16:00",
            "--inside-now",
            "-6C",
        ]
    )
    out = capsys.readouterr().out
    assert code == 0
    assert out.startswith("BELOW THE ALARM NOW Lane tunnel")
    assert "at or below" in out.splitlines()[0]


@pytest.mark.parametrize(
    ("conduction", "sky"),
    [(0.34, 0.34), (0.8, 1.0), (1.0, 0.5), (1.5, 1.5), (1.3, 0.6), (0.9, 2.0)],
)
def test_size_never_shrinks_the_heater_on_a_fitted_k(capsys, tmp_path, conduction, sky):
    # A fitted part below the geometry's applied to the design night undersizes the heater
    # (a one-factor fit of 0.34× recommended 34.7 kW for a house losing 62.5 kW); a fit may
    # raise the loss, never lower it below the geometry's (common practice, no source:
    # size for the worse of two estimates): the conductance to outside air and sky
    # together and the clear sky's depression are each kept at least the geometry's, and
    # a floored sky part's conductance is not added on top of the conduction again.
    argv = ("--outside", "-20C", "--hold", "10C")
    plain = run_json(capsys, "size", "examples/gable-house.toml", *argv)
    text = Path("examples/gable-house.toml").read_text(encoding="utf-8")
    fitted = tmp_path / "fitted.toml"
    fitted.write_text(format2(text, conduction=conduction, sky=sky), encoding="utf-8")
    d = run_json(capsys, "size", str(fitted), *argv)
    # the steady loss by hand from the uncalibrated parts:
    # Q = f_k·K_out·(T_hold − T_out) + f_s·K_sky·(T_hold − T_sky)
    dt, dt_sky = plain["hold_c"] - plain["design_outside_c"], plain["hold_c"] - plain["sky_c"]
    k_out, k_sky = plain["k_conduction_w_per_k"], plain["k_sky_w_per_k"]
    assert plain["heat_loss_w"] == pytest.approx(k_out * dt + k_sky * dt_sky, rel=1e-9)
    # Q = max(f_k·K_out + f_s·K_sky, K_out + K_sky)·(T_hold − T_out)
    #     + max(f_s, 1)·K_sky·(T_out − T_sky)
    k_c = max(conduction * k_out + sky * k_sky, k_out + k_sky)
    fs = max(sky, 1.0)
    depression = plain["design_outside_c"] - plain["sky_c"]
    assert d["heat_loss_w"] == pytest.approx(k_c * dt + fs * k_sky * depression, rel=1e-4)
    assert d["calibration"]["fitted"]["conduction_factor"] == pytest.approx(conduction, rel=1e-9)
    applied = d["calibration"]["applied"]
    assert applied["sky_factor"] == fs
    assert applied["conduction_factor"] == pytest.approx((k_c - fs * k_sky) / k_out, rel=1e-4)
    assert d["heat_loss_w"] == pytest.approx(
        d["handbook_loss_w"]
        + d["wind_allowance_w"]
        + d["calibration_allowance_w"]
        + d["sky_allowance_w"],
        rel=1e-9,
    )
    if conduction < 1 or sky < 1:
        assert any("not sized below the handbook" in n for n in d["notes"])
    assert d["recommended_output_w"] >= plain["recommended_output_w"] * (1 - 1e-9)


def test_size_refuses_an_older_calibration_and_sizes_on_the_geometry(capsys, tmp_path):
    """A table from the one-factor fit (no `format`) is not used: size runs on the
    geometry and says why, with the command to refit; --json carries it in notes."""
    argv = ("--outside", "-20C", "--hold", "10C")
    plain = run_json(capsys, "size", "examples/gable-house.toml", *argv)
    text = Path("examples/gable-house.toml").read_text(encoding="utf-8")
    old = tmp_path / "old.toml"
    old.write_text(
        text + '\n[calibration]\nmodel = "two-node"\nk_w_per_k = 969.0\nc_j_per_k = 9.0e7\n'
        'record = "logger.csv"\n',
        encoding="utf-8",
    )
    d = run_json(capsys, "size", str(old), *argv)
    assert d["heat_loss_w"] == pytest.approx(plain["heat_loss_w"], rel=1e-12)
    assert d["calibration"] is None
    [note] = [n for n in d["notes"] if "[calibration]" in n]
    assert "older grower fit (K × " in note and "understate K" in note
    assert f"grower fit {old} --log logger.csv --write" in note
    assert d["calibration_warning"] == note
    assert main(["size", str(old), *argv]) == 0
    out = capsys.readouterr().out
    assert f"! {note[:40]}" in " ".join(out.split())


@settings(max_examples=40, deadline=None, derandomize=True)
@given(
    conduction=st.floats(0.05, 5.0),
    sky=st.floats(0.0, 5.0),
    more=st.floats(0.0, 1.0),
)
def test_sizing_with_two_fitted_parts_never_goes_below_the_geometry(conduction, sky, more):
    """The design loss is at least the geometry's for any fitted pair of factors, and
    does not fall when either factor rises (common practice, no source: size for the
    worse of two estimates; Q = f_k·K_out·ΔT + f_s·K_sky·(T_hold − T_sky), both terms
    positive at a design night)."""
    from grower import house
    from grower.plans.size import design_heat_loss, sizing_factors

    h = house.read("examples/gable-house.toml")

    def loss(fk: float, fs: float) -> float:
        kw = dict(conduction_factor=fk, sky_factor=fs, curtain_closed=False)
        return design_heat_loss(h, -20.0, 10.0, 6.7, **kw).total_w

    geometry = loss(1.0, 1.0)
    cond = design_heat_loss(h, -20.0, 10.0, 6.7, curtain_closed=False).conductances
    parts = (cond.outside_w_per_k, cond.sky_w_per_k)
    for rule in ((), parts):  # each factor floored; the conductance and depression floored
        sized = loss(*sizing_factors(conduction, sky, *rule))
        assert sized >= geometry * (1 - 1e-12)
        assert loss(*sizing_factors(conduction + more, sky, *rule)) >= sized * (1 - 1e-12)
        assert loss(*sizing_factors(conduction, sky + more, *rule)) >= sized * (1 - 1e-12)
