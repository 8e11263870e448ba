"""`stock`: the run, the order-by date, the shortfalls, the crop and the vapour check.

Expectations come from hand calculations on the run's own numbers (a constant cold snap
holds a constant heat, so fuel falls in a straight line) and from the published tables
the fuel and vapour modules carry (named in tests/test_vaporisation.py).
"""

from __future__ import annotations

import datetime as dt
import json
import math
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from rich.console import Console

from grower import fuels, house
from grower.cli import main
from grower.plans import stock as plan
from grower.report import stock as report
from tests.conftest import MINIMAL, write_house

SNAP = "examples/forecast-cold-snap.csv"


def run_json(capsys, *argv: str) -> dict:
    code = main([*argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def constant_forecast(path, temp_c: float, days: int, start="2026-12-01T00:00-05:00") -> str:
    t = pd.date_range(start, periods=days * 24 + 1, freq="h")
    rows = ["time,temperature_c,dew_point_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"]
    rows += [f"{x.isoformat(timespec='minutes')},{temp_c},{temp_c - 1},100,0,0" for x in t]
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return str(path)


def test_order_by_on_a_constant_cold_snap(tmp_path, capsys):
    # no [site] (no day and night), no heater (unlimited), the lumped model, a constant
    # −10 °C with no sun: the house held at 10 °C burns at one steady rate all along
    h = write_house(tmp_path, MINIMAL + '\n[stock]\nfuel = "propane"\n')
    fc = constant_forecast(tmp_path / "snap.csv", -10.0, 20)
    d = run_json(
        capsys,
        "stock",
        str(h),
        "--setpoint",
        "10C",
        "--forecast",
        fc,
        "--model",
        "lumped",
        "--on-hand",
        "1 500-gal tank",
        "--fill",
        "60%",
        "--reserve",
        "30%",
        "--lead-time",
        "2",
        "--start",
        "2026-12-01T00:00-05:00",
    )
    span_days = 20.0
    per_day = d["fuel"]["amount"] / span_days  # gal/day, steady
    full_days = [x["fuel_amount"] for x in d["days"][1:-1]]
    assert np.allclose(full_days, per_day, rtol=1e-3), "a constant snap burns evenly"
    # by hand: a 500-gal tank holds 400 gal at the 80 % filling limit; its gauge at 60 %
    # is 300 gal and the refill level (30 % on the gauge) 150 gal
    assert d["on_hand"]["amount"] == pytest.approx(300.0)
    # by hand from the daily totals: the day on which 150 gal have burned, and the
    # share of that day (the Berdahl–Martin sky carries a small diurnal term, so the
    # heat varies by about ±0.2 % over a day: a few minutes on the reserve time)
    burned = np.cumsum([x["fuel_amount"] for x in d["days"]])
    k = int(np.searchsorted(burned, 150.0))
    before = burned[k - 1] if k else 0.0
    reach_days = k + (150.0 - before) / d["days"][k]["fuel_amount"]
    reserve_at = dt.datetime(2026, 12, 1, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
    reserve_at += dt.timedelta(days=reach_days)
    assert dt.datetime.fromisoformat(d["order"]["reserve_at"]) == pytest.approx(
        reserve_at, abs=dt.timedelta(minutes=5)
    )
    assert d["order_by"] == (reserve_at - dt.timedelta(days=2)).date().isoformat()
    assert d["order_amount"] == pytest.approx(400.0 - 150.0)
    assert d["order"]["unit"] == "gal" and not d["order"]["extrapolated"]
    assert d["thermostat_runs"] == 1


def test_order_by_past_the_forecast_is_extrapolated(tmp_path, capsys):
    h = write_house(tmp_path, MINIMAL + '\n[stock]\nfuel = "propane"\n')
    fc = constant_forecast(tmp_path / "snap.csv", -10.0, 3)
    d = run_json(
        capsys,
        "stock",
        str(h),
        "--setpoint",
        "10C",
        "--forecast",
        fc,
        "--model",
        "lumped",
        "--on-hand",
        "1 1000-gal tank",
        "--fill",
        "80%",
        "--start",
        "2026-12-01T00:00-05:00",
    )
    per_day = d["fuel"]["amount"] / 3.0
    # 800 gal on hand, refill level 30 % of 1,000 gal = 300 gal
    reach = dt.datetime.fromisoformat(d["order"]["reserve_at"])
    start = dt.datetime.fromisoformat(d["start"])
    # past the end at the forecast's mean rate: exactly linear by construction
    assert (reach - start).total_seconds() / 86400 == pytest.approx(500.0 / per_day, rel=1e-5)
    assert d["order"]["extrapolated"]


def test_heater_too_small_opens_the_report_never_a_green_line_above(capsys):
    args = [
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--night-setpoint",
        "5C",
        "--forecast",
        SNAP,
        "--on-hand",
        "900 L",
    ]
    d = run_json(capsys, *args)
    kinds = [s["kind"] for s in d["shortfalls"]]
    assert kinds[0] == "heater" and d["hours_below_setpoint"] > 1
    assert d["shortfalls"][0]["value"] == pytest.approx(d["min_air_c"])
    h = house.read("examples/gable-house.toml")
    from grower import weather

    r = plan.stock(
        h,
        weather.read_forecast_csv(SNAP, site=h.site),
        plan.Setpoints(10.0, 5.0),
        plan.FuelPlan(on_hand_text="900 L"),
    )
    con = Console(record=True, width=60, color_system=None)
    report.render_stock(con, r, "metric")
    text = con.export_text()
    first = text.strip().splitlines()[0]
    assert first.startswith("The heater is too small")
    assert text.index("too small") < text.index("lasts the forecast")


def test_fuel_runs_out_is_a_shortfall(capsys):
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
    fuel = [s for s in d["shortfalls"] if s["kind"] == "fuel"]
    assert fuel and fuel[0]["at"] == d["runs_out_at"]
    assert d["order"]["order_now"]


def test_crop_is_checked_when_given(capsys):
    d = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--night-setpoint",
        "5C",
        "--forecast",
        SNAP,
        "--threshold",
        "1C",
    )
    c = d["crop"]
    assert c is not None and c["alarm_c"] == pytest.approx(1.0)
    # the air falls to about −2 °C (the heater is too small): the plants go below 1 °C
    assert c["min_plant_c"] < 1.0 and c["first_below_at"] is not None
    assert d["shortfalls"][0]["kind"] == "crop"
    held = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--forecast",
        SNAP,
        "--threshold",
        "-10C",
    )
    assert held["crop"]["first_below_at"] is None
    assert all(s["kind"] != "crop" for s in held["shortfalls"])


def test_vapour_check_from_two_cylinders(capsys, tmp_path):
    d = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--forecast",
        SNAP,
        "--on-hand",
        "2 100-lb cylinders",
        "--fill",
        "30%",
    )
    v = d["vaporisation"]
    assert v["checked"] and v["container"] == "100-lb cylinder" and v["count"] == 2
    # the heater's nameplate input is 100,000 Btu/h (house file)
    assert v["input_w"] == pytest.approx(100_000 * 1055.05585262 / 3600)
    from grower import vaporisation

    again = vaporisation.supply("100-lb cylinder", 2, v["share_full"], v["outside_c"])
    assert d["vaporisation_w"] == pytest.approx(again.capacity_w)
    assert d["vaporisation_short"] == (d["vaporisation_w"] < v["input_w"])
    assert v["share_full"] <= 0.3  # the fill falls as the fuel burns
    if d["vaporisation_short"]:
        assert any(s["kind"] == "vapour" for s in d["shortfalls"])


def test_vapour_not_checked_for_natural_gas(capsys):
    d = run_json(
        capsys, "stock", "examples/glass-range.toml", "--setpoint", "5C", "--forecast", SNAP
    )
    assert d["vaporisation_w"] is None and d["vaporisation_short"] is None
    assert "natural-gas" in d["vaporisation"]["reason"]


def test_one_run_without_curtain_and_one_per_curtain_change(capsys):
    d = run_json(
        capsys,
        "stock",
        "examples/gable-house.toml",
        "--setpoint",
        "10C",
        "--night-setpoint",
        "5C",
        "--forecast",
        SNAP,
    )
    assert d["thermostat_runs"] == 1, "day and night setpoints run in one thermostat run"
    g = run_json(
        capsys, "stock", "examples/glass-range.toml", "--setpoint", "5C", "--forecast", SNAP
    )
    # the glass range draws its curtain at night: one run per drawing and opening
    assert 5 <= g["thermostat_runs"] <= 12


def test_fill_needs_containers(capsys):
    code = main(
        [
            "stock",
            "examples/gable-house.toml",
            "--setpoint",
            "8C",
            "--forecast",
            SNAP,
            "--on-hand",
            "900 L",
            "--fill",
            "30%",
        ]
    )
    _, err = capsys.readouterr()
    assert code == 2 and err.startswith("Error: --fill") and "containers" in err
    code = main(
        [
            "stock",
            "examples/gable-house.toml",
            "--setpoint",
            "8C",
            "--forecast",
            SNAP,
            "--on-hand",
            "1 500-gal tank",
            "--fill",
            "lots",
        ]
    )
    _, err = capsys.readouterr()
    assert code == 2 and "--fill" in err and "Traceback" not in err


def test_heat_source_one_rule_for_three_plans(tmp_path, capsys):
    text = MINIMAL + (
        '\n[[heater]]\nfuel = "propane"\nappliance = "unit-heater-condensing"\n'
        'input = "60000 BTU/h"\nefficiency = 0.95\n'
    )
    h = write_house(tmp_path, text)
    src = fuels.heat_source(house.read(h))
    assert (
        src.efficiency == 0.95 and src.installed and src.appliance.name == "unit-heater-condensing"
    )
    size = run_json(capsys, "size", str(h), "--outside", "-20C", "--hold", "5C")
    assert size["efficiency"] == 0.95
    fc = constant_forecast(tmp_path / "c.csv", -5.0, 1)
    st = run_json(
        capsys,
        "stock",
        str(h),
        "--setpoint",
        "5C",
        "--forecast",
        fc,
        "--start",
        "2026-12-01T00:00-05:00",
    )
    assert st["fuel"]["efficiency"] == 0.95
    # another fuel than the installed heater's: its usual appliance, said so
    other = fuels.heat_source(house.read(h), "heating-oil")
    assert other.appliance.name == "boiler" and not other.installed and other.notes


def _big_heater_house(tmp_path) -> str:
    """The example house with a heater four times its own (400,000 Btu/h input)."""
    text = Path("examples/gable-house.toml").read_text(encoding="utf-8")
    assert 'input = "100000 BTU/h"' in text
    return str(write_house(tmp_path, text.replace("100000 BTU/h", "400000 BTU/h")))


def test_no_shortfall_opens_with_the_stock_lasting(tmp_path, capsys):
    # a heater four times the example's holds the cold snap: no shortfall, and the
    # morning warm-up from the night to the day setpoint is not one either
    path = _big_heater_house(tmp_path)
    args = ["stock", path, "--setpoint", "10C", "--night-setpoint", "5C", "--forecast", SNAP]
    d = run_json(capsys, *args, "--crop", "tomato")
    assert d["shortfalls"] == [] and d["hours_below_setpoint"] == 0
    assert d["crop"]["reached"] is False and d["crop"]["min_plant_c"] > d["crop"]["alarm_c"]
    assert main([*args, "--crop", "tomato"]) == 0
    out = capsys.readouterr().out
    assert out.splitlines()[0].startswith("The 900 L on hand lasts the forecast")
    assert "Crop alarm not reached — tomato (fruiting)" in out
    # no fuel on hand given ([stock] on_hand taken out): the verdict is the heater's
    text = Path(path).read_text(encoding="utf-8").replace('on_hand = "900 L"\n', "")
    bare = write_house(tmp_path, text, "bare.toml")
    assert main(["stock", str(bare), *args[2:]]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert first.startswith("No shortfall: the heater holds the setpoints")


def test_crop_alarm_against_scipy_on_the_lumped_model(tmp_path, capsys):
    # a steady −10 °C overcast calm night, no site, the lumped model and a heater too
    # small to hold 10 °C: the air decays from the setpoint towards T_eff + Q/K. The
    # same first-order balance C·dT/dt = K·(T_eff − T) + Q is integrated here by scipy's
    # solve_ivp (an independent solver), with the run's own K, C and effective outside
    # temperature, and the crossing of a 2 °C alarm found by its event finder
    from scipy.integrate import solve_ivp

    from grower import weather
    from grower.plans import thermostat_run as tr

    heater = (
        '\n[[heater]]\nname = "small"\nfuel = "propane"\n'
        'appliance = "unit-heater-power-vented"\ninput = "60000 BTU/h"\n'
    )
    path = write_house(tmp_path, MINIMAL + heater)
    fc = constant_forecast(tmp_path / "snap.csv", -10.0, 3)
    start = "2026-12-01T00:00-05:00"
    args = ["stock", str(path), "--setpoint", "10C", "--forecast", fc, "--model", "lumped"]
    d = run_json(capsys, *args, "--threshold", "2C", "--start", start)
    k, c, q = d["k_w_per_k"], d["c_j_per_k"], d["heater_output_w"]
    h = house.read(str(path))
    f = weather.read_forecast_csv(fc, site=h.site)
    t0 = pd.Timestamp(start)
    run = tr.simulate(
        h, f, t0, f.end, setpoint_c=10.0, night_setpoint_c=10.0, q_max_w=q, kind="lumped"
    )
    assert np.allclose(run.air_c, run.plant_c)  # overcast: no leaf offset
    ts = (run.times - t0).total_seconds().to_numpy()

    def rhs(t, y):
        return [(k * (np.interp(t, ts, run.effective_c) - y[0]) + q) / c]

    def cross(t, y):
        return y[0] - 2.0

    cross.terminal = False
    sol = solve_ivp(rhs, (0.0, ts[-1]), [10.0], events=cross, rtol=1e-9, atol=1e-9)
    assert sol.t_events[0].size == 1
    t_cross = float(sol.t_events[0][0])
    first = dt.datetime.fromisoformat(d["crop"]["first_below_at"])
    step = float(run.step_s.max())
    # the report names the first grid time below the alarm: within one step after it
    lag = (first - t0.to_pydatetime()).total_seconds() - t_cross
    assert 0.0 <= lag <= step + 1.0
    assert d["crop"]["hours_below"] == pytest.approx((ts[-1] - t_cross) / 3600.0, abs=step / 3600)
    assert d["crop"]["min_plant_c"] == pytest.approx(float(sol.y[0].min()), abs=0.005)
    # and it is the first shortfall, the heater's second, with the same coldest value
    kinds = [s["kind"] for s in d["shortfalls"]]
    assert kinds == ["crop", "heater"]
    assert d["crop"]["cause"] == "heater" and d["crop"]["heater_stops_at_run_out"] is False
    assert d["shortfalls"][0]["min_c"] == pytest.approx(d["crop"]["min_plant_c"])
    assert d["shortfalls"][0]["to"] == d["crop"]["last_below_at"] == d["end"]
    assert main([*args, "--threshold", "2C", "--start", start]) == 0
    first_line = capsys.readouterr().out.splitlines()[0]
    assert first_line.startswith("Crop alarm reached — your --threshold")


def test_after_the_fuel_runs_out_the_house_cools_as_scipy_integrates(tmp_path, capsys):
    # a steady −10 °C overcast calm night, the lumped model, a heater that holds 10 °C and
    # 30 L of propane: once the fuel is gone the heater stops and the air decays from the
    # setpoint towards T_eff, C·dT/dt = K·(T_eff − T), integrated here by scipy's
    # solve_ivp (an independent solver) with the run's own K, C and effective outside
    # temperature; the 2 °C alarm's crossing found by its event finder
    from scipy.integrate import solve_ivp

    from grower import weather
    from grower.plans import thermostat_run as tr

    heater = (
        '\n[[heater]]\nname = "big"\nfuel = "propane"\n'
        'appliance = "unit-heater-power-vented"\ninput = "300000 BTU/h"\n'
    )
    path = write_house(tmp_path, MINIMAL + heater)
    fc = constant_forecast(tmp_path / "snap.csv", -10.0, 3)
    start = "2026-12-01T00:00-05:00"
    args = ["stock", str(path), "--setpoint", "10C", "--forecast", fc, "--model", "lumped"]
    d = run_json(capsys, *args, "--threshold", "2C", "--start", start, "--on-hand", "30 L")
    assert d["hours_below_setpoint"] == 0  # the heater holds while there is fuel
    out_at = dt.datetime.fromisoformat(d["runs_out_at"])
    after = d["after_run_out"]
    k, c = d["k_w_per_k"], d["c_j_per_k"]
    h = house.read(str(path))
    f = weather.read_forecast_csv(fc, site=h.site)
    t0 = pd.Timestamp(start)
    run = tr.simulate(
        h, f, t0, f.end, setpoint_c=10.0, night_setpoint_c=10.0, q_max_w=1e9, kind="lumped"
    )
    ts = (run.times - t0).total_seconds().to_numpy()
    step = float(run.step_s.max())
    # the heater stops at the first grid time at or after the run-out
    t_off = float(np.ceil((out_at - t0.to_pydatetime()).total_seconds() / step) * step)

    def rhs(t, y):
        return [k * (np.interp(t, ts, run.effective_c) - y[0]) / c]

    def cross(t, y):
        return y[0] - 2.0

    sol = solve_ivp(
        rhs, (t_off, ts[-1]), [10.0], events=cross, rtol=1e-10, atol=1e-10, dense_output=True
    )
    # the coldest air after the run-out, on the run's grid (T_eff drifts a few hundredths
    # of a kelvin over the days, so it need not be at the end)
    grid = ts[ts >= t_off]
    ref = sol.sol(grid)[0]
    assert after["min_air_c"] == pytest.approx(float(ref.min()), abs=0.005)
    coldest = dt.datetime.fromisoformat(after["coldest_at"])
    assert (coldest - t0.to_pydatetime()).total_seconds() == pytest.approx(
        float(grid[np.argmin(ref)]), abs=3 * 3600
    )  # a flat minimum: its time is loose
    t_alarm = float(sol.t_events[0][0])
    alarm_at = dt.datetime.fromisoformat(after["crop_alarm_at"])
    lag = (alarm_at - t0.to_pydatetime()).total_seconds() - t_alarm
    assert 0.0 <= lag <= step + 1.0  # the first grid time below the alarm
    assert after["hours_below_setpoint"] == pytest.approx((ts[-1] - t_off) / 3600.0, abs=0.2)
    # the fuel shortfall comes first: the crop is hurt only because the fuel runs out
    assert [s["kind"] for s in d["shortfalls"]] == ["fuel"]
    assert main([*args, "--threshold", "2C", "--start", start, "--on-hand", "30 L"]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert first.startswith("The fuel runs out")


def test_stock_on_an_older_calibration_runs_on_the_geometry(capsys, tmp_path):
    """No `format` in [calibration]: the one-factor fit's table is not used (stock's fuel
    is the geometry's), and the notes say why with the command to refit."""
    from tests.calibration_tables import format2

    text = MINIMAL + '\n[stock]\nfuel = "propane"\n'
    fc = constant_forecast(tmp_path / "snap.csv", -10.0, 2)
    argv = ["--setpoint", "10C", "--forecast", fc, "--start", "2026-12-01T00:00-05:00"]
    plain = run_json(capsys, "stock", str(write_house(tmp_path, text, "a.toml")), *argv)
    old = write_house(tmp_path, text + "\n[calibration]\nk_w_per_k = 969.0\n", "b.toml")
    d = run_json(capsys, "stock", str(old), *argv)
    assert d["calibrated"] is False and d["energy_kwh"] == plain["energy_kwh"]
    [note] = [a for a in d["assumptions"] if "[calibration]" in a]
    assert "older grower fit" in note and f"grower fit {old} --log RECORD.csv --write" in note
    assert d["calibration_warning"] == note and plain["calibration_warning"] is None
    # a format-2 table is used, and a leakier fit burns more fuel: the conduction × 1.3
    # (sky × 1) raises the heat, by less than 1.3 × (the sky's share is not scaled)
    fitted = write_house(tmp_path, format2(text, conduction=1.3), "c.toml")
    f = run_json(capsys, "stock", str(fitted), *argv)
    assert f["calibrated"] is True
    assert plain["energy_kwh"] < f["energy_kwh"] < 1.3 * plain["energy_kwh"]


@pytest.mark.parametrize(
    ("house_file", "setpoint", "expected"),
    [
        # the hoop tunnel's file says units = "us" and vents at 78.8 °F (26 °C)
        (
            "examples/hoop-tunnel.toml",
            "30C",
            "86.0 °F is not below the house's vent temperature (78.8 °F)",
        ),
        (
            "examples/gable-house.toml",
            "27C",
            "27.0 °C is not below the house's vent temperature (26.0 °C)",
        ),
        ("examples/hoop-tunnel.toml", "40C", "−5…35 °C"),
    ],
)
def test_setpoint_errors_speak_the_reports_units(capsys, house_file, setpoint, expected):
    code = main(["stock", house_file, "--forecast", SNAP, "--setpoint", setpoint])
    err = capsys.readouterr().err
    assert code == 2
    assert expected in err and err.count("\n") == 1


@pytest.mark.parametrize(("units", "fuel_unit"), [("us", "L"), ("metric", "gal"), ("us", "kg")])
def test_fuel_unit_asked_for_is_kept_on_either_screen(capsys, units, fuel_unit):
    # --fuel-unit is the user's choice: neither screen converts it to its own system; with
    # no choice each screen shows its own (L on a metric screen, gal on a US one)
    argv = ["stock", "examples/gable-house.toml", "--setpoint", "8C", "--forecast", SNAP]
    assert main([*argv, "--units", units, "--fuel-unit", fuel_unit]) == 0
    first = capsys.readouterr().out
    assert f" {fuel_unit} of propane" in first
    assert main([*argv, "--units", units]) == 0
    plain = capsys.readouterr().out
    assert (" gal of propane" if units == "us" else " L of propane") in plain
    doc = run_json(capsys, *argv, "--fuel-unit", fuel_unit)
    assert doc["fuel"]["unit"] == fuel_unit


def test_cost_line_gives_the_price_per_the_unit_shown(capsys, monkeypatch):
    # the example's price is 0.85 per litre; a US screen shows the amounts in gallons, so
    # the price is per gallon too: 1 US gal = 3.785411784 L exactly (NIST SP 811, B.8),
    # 0.85 × 3.785411784 = 3.2176. The cost itself does not depend on the screen.
    argv = ["stock", "examples/gable-house.toml", "--setpoint", "8C", "--forecast", SNAP]
    monkeypatch.setenv("COLUMNS", "200")  # the cost line on one line
    costs = {}
    for units, price in (("metric", "0.85 per L"), ("us", "3.22 per gal")):
        assert main([*argv, "--units", units]) == 0
        out = capsys.readouterr().out
        assert f"at {price}" in out
        costs[units] = out.split(", cost ")[1].split(" at ")[0]
    assert costs["metric"] == costs["us"]


RUN_OUT = [
    "stock",
    "examples/gable-house.toml",
    "--setpoint",
    "10C",
    "--night-setpoint",
    "5C",
    "--forecast",
    SNAP,
    "--start",
    "2026-12-05T00:00",
    "--on-hand",
    "2 100-lb cylinders",
    "--fill",
    "50%",
    "--crop",
    "tomato",
]


def test_the_crop_line_describes_the_run_out(capsys):
    # two half-full 100-lb cylinders run out on the second night: the crop check is the
    # run whose heater stops then, so the crop, the fuel line and after_run_out agree
    d = run_json(capsys, *RUN_OUT)
    c, after = d["crop"], d["after_run_out"]
    assert d["runs_out_at"] is not None and after["crop_alarm_at"] is not None
    assert c["reached"] is True and c["heater_stops_at_run_out"] is True
    assert c["cause"] == "run_out"
    assert c["first_below_at"] == after["crop_alarm_at"]
    assert c["min_plant_c"] == pytest.approx(after["min_plant_c"])
    assert c["first_below_at"] > d["runs_out_at"]
    # the run-out is the one shortfall to act on for the crop: no crop shortfall of its own
    assert [s["kind"] for s in d["shortfalls"]][0] == "fuel"
    assert all(s["kind"] != "crop" for s in d["shortfalls"])
    assert main(RUN_OUT) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "Crop alarm not reached" not in out
    assert "Crop alarm reached once the fuel runs out — tomato (fruiting)" in out
    first = f"{dt.datetime.fromisoformat(c['first_below_at']):%a %d %b %H:%M}"
    assert first.startswith("Sun 06 Dec")  # the second night, after the run-out
    assert f"pass the tomato (fruiting) alarm at {first}" in out
    assert f"fall below -0.1 °C from {first}" in out


def test_the_crop_with_fuel_enough_is_the_heated_run(capsys):
    # 900 L (the house file's stock) lasts the snap: the crop check is the heated run
    argv = [a for a in RUN_OUT if a not in ("--on-hand", "2 100-lb cylinders", "--fill", "50%")]
    d = run_json(capsys, *argv)
    assert d["runs_out_at"] is None and d["after_run_out"] is None
    assert d["crop"]["heater_stops_at_run_out"] is False
    assert d["crop"]["reached"] is False and d["crop"]["cause"] is None


def test_vapour_is_checked_at_the_refill_level_not_at_the_run_out(capsys):
    # the same two half-full cylinders: the coldest heated hour before the run-out is
    # Sun 06 Dec 03:20, when almost nothing is left; the check takes the 30 % refill
    # level there (the grower refills or swaps by then), never the empty cylinder
    d = run_json(capsys, *RUN_OUT)
    v = d["vaporisation"]
    assert v["fill_basis"] == "refill" and v["refill_pct"] == 30.0
    assert v["share_full"] == pytest.approx(0.30) and v["gauge_pct"] == pytest.approx(30.0)
    assert v["at"] < d["runs_out_at"]
    assert not v["extrapolated"]
    # by hand from the published table (Flame Engineering, "Propane Information: Propane
    # Vaporization Chart", the same as Kohler TP-6727 Appendix D Figure 1): 30 lb of
    # propane, 45,000 Btu/h at 0 °F and 66,000 at 20 °F, linear between; °F = °C × 9/5 +
    # 32 exactly; 1 Btu/h = 1055.05585262 J / 3600 s (the International Table Btu)
    t_f = v["outside_c"] * 9 / 5 + 32
    assert 0 <= t_f <= 20
    per = (45_000 + (66_000 - 45_000) * t_f / 20) * 1055.05585262 / 3600
    assert v["per_container_w"] == pytest.approx(per, rel=1e-9)
    assert d["vaporisation_w"] == pytest.approx(2 * per, rel=1e-9)
    assert d["vaporisation_short"] is False  # about 38 kW against the 29.3 kW input
    assert all(s["kind"] != "vapour" for s in d["shortfalls"])
    # below the refill level the cylinders run low in the forecast: the fill from which
    # they starve the heater at that hour, where the 20 lb row's 36,000 and 51,000 Btu/h
    # at 0 and 20 °F give about half the 100,000 Btu/h input each: about 20 %
    below = v["short_below_share"]
    from grower import vaporisation

    at = vaporisation.supply("100-lb cylinder", 2, below, v["outside_c"]).capacity_w
    assert at == pytest.approx(v["input_w"], rel=1e-6)
    assert below == pytest.approx(0.20, abs=0.01)
    assert main(RUN_OUT) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "Two 100-lb cylinders at 30 % full (the refill level; less is left then)" in out
    assert "below 20 % full they fall short at that temperature: refill or swap before." in out
    assert not re.search(r"(?<![\d.])0 % full", out)


def test_vapour_above_the_refill_level_is_the_fill_left_then(capsys):
    # a full pair: the fill left at the coldest hour it reaches before the 30 % floor
    argv = [("100%" if a == "50%" else a) for a in RUN_OUT]
    d = run_json(capsys, *argv)
    v = d["vaporisation"]
    assert v["fill_basis"] in ("then", "refill") and v["share_full"] >= 0.30 - 1e-12
    from grower import vaporisation

    again = vaporisation.supply("100-lb cylinder", 2, v["share_full"], v["outside_c"])
    assert d["vaporisation_w"] == pytest.approx(again.capacity_w)


def test_the_soil_starts_at_the_mean_of_days_like_the_first(tmp_path, monkeypatch):
    # The start's soil is the steady state under the first day's mean weather with the
    # air at the setpoint. For a linear network with the air held, that is exactly the
    # time-mean of the periodic state (the derivative of a periodic state averages to
    # zero over its period: a property of any linear system, no source needed). Check:
    # the same day ten times over, an unlimited heater holding 22 °C all day (it never
    # stops: no venting, no float), the soil's mean over the last day against the start.
    from grower import weather
    from grower.plans import runs
    from grower.plans import thermostat_run as tr

    t = pd.date_range("2026-12-01T00:00-05:00", periods=10 * 24 + 1, freq="h")
    hour = t.hour.to_numpy()
    temp = -4.0 + 4.0 * np.sin(2 * np.pi * (hour - 9) / 24)
    sun = np.clip(300.0 * np.sin(np.pi * (hour - 7.5) / 9), 0.0, None)
    cloud = np.where((hour >= 8) & (hour <= 16), 30, 0)
    rows = ["time,temperature_c,dew_point_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"]
    rows += [
        f"{x.isoformat(timespec='minutes')},{a:.3f},{a - 4:.3f},{c},2.0,{s:.1f}"
        for x, a, c, s in zip(t, temp, cloud, sun, strict=True)
    ]
    path = tmp_path / "days.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    h = house.read("examples/gable-house.toml")
    f = weather.read_forecast_csv(str(path), site=h.site)
    seen = {}
    start_state, thermostat = tr._start_state, runs.thermostat

    def spy_start(*args, **kw):
        seen["args"] = args
        seen["x0"] = start_state(*args, **kw)
        return seen["x0"]

    def spy_run(*args, **kw):
        seen["run"] = thermostat(*args, **kw)
        return seen["run"]

    monkeypatch.setattr(tr, "_start_state", spy_start)
    monkeypatch.setattr(tr.runs, "thermostat", spy_run)
    run = tr.simulate(h, f, t[0], t[-1], setpoint_c=22.0, night_setpoint_c=22.0, q_max_w=math.inf)
    assert run.heat_w.min() > 0 and run.step_vent_j.sum() == 0  # held all through
    assert run.n_runs == 1
    soil = seen["run"].temps_c[0, :, 1]
    ts = run.utc_s
    last = ts >= ts[-1] - 86400.0
    mean = np.trapezoid(soil[last], ts[last]) / 86400.0
    assert seen["x0"][0] == 22.0
    # 5-minute grid: the trapezoid mean of a smooth state is good to ~1e-3 K
    assert seen["x0"][1] == pytest.approx(mean, abs=0.01)
    assert soil[0] == seen["x0"][1]  # the run starts from it
    # the balance with the start hour's clear midnight sky alone (the start before) is
    # well below the days' mean
    mdl, bnd = seen["args"][:2]
    hour0 = runs.held_steady_state(mdl, bnd.solver_boundary(mdl)[0], bnd.solver_gains(mdl)[0], 22.0)
    assert hour0[1] < mean - 0.5  # 10.9 against 11.7 °C here
