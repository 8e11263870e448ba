"""`winters` and its weather history: a constant winter against the steady heat balance,
one winter against `stock` on the same hours, and the history service on a loopback
server in Open-Meteo's documented shape (with the cache and a dead network).
"""

from __future__ import annotations

import datetime as dt
import json
import math

import numpy as np
import pandas as pd
import pytest
from pytest_httpserver import HTTPServer
from werkzeug.wrappers import Response

from grower import fuels, house, weather
from grower.cli import main
from grower.errors import InputError
from grower.plans import stock as stock_plan
from grower.plans import winters as plan
from grower.site import Site
from grower.units import J_PER_BTU
from grower.weather import history
from tests.conftest import MINIMAL, write_house
from tests.openmeteo_archive import archive_response
from tests.reference_units import Q_

GLASS = MINIMAL.replace('"double-poly"', '"single-glass"').replace(
    '"twin-wall-polycarbonate-8mm"', '"single-glass"'
)


def run_json(capsys, *argv: str) -> dict:
    code = main([*argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def history_csv(path, start: str, days: int, temp=None, tz="-05:00") -> str:
    t = pd.date_range(f"{start}T00:00{tz}", periods=days * 24 + 1, freq="h")
    h = np.arange(len(t))
    if temp is None:
        temp_c = -6 + 5 * np.sin(2 * np.pi * (h % 24 - 9) / 24) + 4 * np.sin(h / 53.0)
        cloud = 50 + 40 * np.sin(h / 13.0)
        wind = 3 + 2 * np.sin(h / 11.0)
        sun = np.maximum(0, 300 * np.sin(2 * np.pi * (h % 24 - 7) / 24))
    else:
        temp_c, cloud, wind, sun = np.full(len(t), temp), np.full(len(t), 100.0), 0 * h, 0 * h
    rows = [
        "time,temperature_c,dew_point_c,cloud_cover_pct,cloud_cover_low_pct,"
        "wind_speed_m_s,shortwave_w_m2"
    ]
    low = 100.0 if temp is not None else 0.0  # a low overcast for the constant winter
    for x, a, c, w, s in zip(t, temp_c, cloud, wind, sun, strict=True):
        rows.append(
            f"{x.isoformat(timespec='minutes')},{a:.2f},{a - 1:.2f},{c:.0f},{min(low, c):.0f},"
            f"{w:.1f},{s:.0f}"
        )
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return str(path)


def test_constant_winter_is_k_times_difference_times_hours(tmp_path, capsys):
    # A glass house, no [site], the lumped model, an unlimited heater at 10 °C, a
    # constant −5 °C under a low overcast and no sun, 120 days from 1 November: the
    # steady loss K·(T_set − T_eff) every hour, so the season is K·ΔT·hours.
    h = write_house(tmp_path, GLASS)
    csv = history_csv(tmp_path / "w.csv", "2025-11-01", 121, temp=-5.0)
    d = run_json(
        capsys,
        "winters",
        str(h),
        "--setpoint",
        "10C",
        "--history",
        csv,
        "--winters",
        "1",
        "--model",
        "lumped",
        "--fuel",
        "propane",
    )
    (w,) = d["winters"]
    hours = 120 * 24
    k = d["k_w_per_k"]
    # ΔT against the effective outside temperature, in which the network's sky and deep
    # ground join the outside air (K·T_eff = Σ K_b·T_b); constant here, and within a few
    # kelvin of the air (the glass faces see a sky a little below it, the ground is warmer)
    t_eff = w["mean_effective_outside_c"]
    assert abs(t_eff - -5.0) < 3.0
    heat_j = k * (10.0 - t_eff) * hours * 3600.0
    # propane 91,452 Btu/gal (U.S. EIA, in grower/data/fuels.toml); a power-vented unit
    # heater at 80 % (Manitoba Hydro, "Types of unit heaters")
    gal = heat_j / (0.8 * 91452 * J_PER_BTU)
    assert w["fuel"]["unit"] == "gal" and w["fuel"]["efficiency"] == 0.8
    assert w["fuel"]["amount"] == pytest.approx(gal, rel=0.01)
    assert w["energy_kwh"] == pytest.approx(heat_j / 3.6e6, rel=0.01)
    assert d["median_energy_kwh"] == pytest.approx(w["energy_kwh"])
    assert sum(m["fuel_amount"] for m in w["months"]) == pytest.approx(w["fuel"]["amount"])
    assert [m["month"] for m in w["months"]] == ["2025-11", "2025-12", "2026-01", "2026-02"]
    assert w["start"].startswith("2025-11-01T00:00") and w["end"].startswith("2026-03-01T00:00")


def test_one_winter_equals_stock_on_the_same_hours(tmp_path):
    h = house.read("examples/gable-house.toml")
    csv = history_csv(tmp_path / "w.csv", "2025-11-01", 21)
    record = weather.read_forecast_csv(csv, site=h.site)
    (win,) = history.winter_windows(record.start.date(), record.end.date(), (11, 1), 20, 1)
    season = history.season_of(record, *win)
    r = plan.winters(h, [season], setpoint_c=10.0, night_setpoint_c=5.0)
    s = stock_plan.stock(
        h, season, stock_plan.Setpoints(10.0, 5.0), start=season.start, now=season.start
    )
    assert r.winters[0].energy_kwh == pytest.approx(s.energy_kwh, rel=1e-12)
    assert r.winters[0].hours_not_held == pytest.approx(s.hours_below_setpoint, rel=1e-12)


def test_median_and_coldest_of_several(tmp_path, capsys):
    csv = history_csv(tmp_path / "w.csv", "2022-10-30", 3 * 365 + 130)
    png = tmp_path / "fuel.png"
    d = run_json(
        capsys,
        "winters",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--history",
        csv,
        "--winters",
        "3",
        "--season-days",
        "20",
        "--plot",
        str(png),
    )
    e = [w["energy_kwh"] for w in d["winters"]]
    assert len(e) == 3 and d["median_energy_kwh"] == pytest.approx(float(np.median(e)))
    coldest = min(d["winters"], key=lambda w: w["mean_outside_c"])
    assert d["coldest_winter"] == coldest["label"]
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_history_too_short_is_one_line(tmp_path, capsys):
    csv = history_csv(tmp_path / "w.csv", "2025-11-05", 10)
    code = main(["winters", "examples/gable-house.toml", "--setpoint", "8C", "--history", csv])
    _, err = capsys.readouterr()
    assert code == 2 and len(err.strip().splitlines()) == 1 and "no whole season" in err


# ---------------------------------------------------------------- the history service


def archive_answer(request) -> Response:
    """An answer in the documented shape of Open-Meteo's /v1/archive (hourly block,
    hourly_units, utc_offset_seconds, local times without offset)."""
    a = dt.date.fromisoformat(request.args["start_date"])
    b = dt.date.fromisoformat(request.args["end_date"])
    hours = ((b - a).days + 1) * 24
    times = [
        (dt.datetime.combine(a, dt.time()) + dt.timedelta(hours=i)).strftime("%Y-%m-%dT%H:%M")
        for i in range(hours)
    ]
    i = np.arange(hours)
    hourly = {
        "time": times,
        "temperature_2m": list(np.round(-4 + 4 * np.sin(i / 7.0), 1)),
        "dew_point_2m": list(np.round(-6 + 4 * np.sin(i / 7.0), 1)),
        "cloud_cover": [60] * hours,
        "wind_speed_10m": [2.5] * hours,
        "shortwave_radiation": [0.0] * hours,
    }
    return archive_response(
        hourly,
        latitude=44.3,
        longitude=-76.5,
        timezone="America/Toronto",
        abbreviation="EST",
        elevation=95.0,
    )


@pytest.fixture
def env(monkeypatch, tmp_path):
    def set_url(url: str) -> None:
        monkeypatch.setenv("GROWER_HISTORY_URL", url.rstrip("/"))

    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    return set_url


SITE = Site(name="test", latitude_deg=44.3, longitude_deg=-76.5, timezone="America/Toronto")


def test_fetch_then_cache_then_dead_network(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/archive").respond_with_handler(archive_answer)
    a, b = dt.date(2024, 11, 1), dt.date(2024, 11, 3)
    got = history.fetch_history(SITE, a, b)
    assert len(got.frame) == 72 and not got.from_cache
    req = httpserver.log[0][0]
    assert req.args["start_date"] == "2024-11-01" and req.args["end_date"] == "2024-11-03"
    assert "temperature_2m" in req.args["hourly"]
    again = history.fetch_history(SITE, a, b)
    assert again.from_cache and len(httpserver.log) == 1, "past weather is asked for once"
    httpserver.stop()  # the network is dead from here on
    try:
        cached = history.fetch_history(SITE, a, b)
        assert cached.from_cache
        assert cached.frame["temperature_c"].equals(got.frame["temperature_c"])
        with pytest.raises(InputError) as exc:
            history.fetch_history(SITE, dt.date(2023, 11, 1), dt.date(2023, 11, 2))
    finally:
        httpserver.start()
    text = str(exc.value)
    assert "cannot reach the weather history service" in text and "\n" not in text


def test_winters_from_the_service(httpserver: HTTPServer, env, capsys):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/archive").respond_with_handler(archive_answer)
    d = run_json(
        capsys,
        "winters",
        "examples/gable-house.toml",
        "--setpoint",
        "8C",
        "--winters",
        "2",
        "--season-days",
        "10",
    )
    assert len(d["winters"]) == 2 and len(httpserver.log) == 2
    starts = [dt.datetime.fromisoformat(w["start"]) for w in d["winters"]]
    assert starts[0] < starts[1] and all(s.month == 11 and s.day == 1 for s in starts)
    for w in d["winters"]:
        assert w["fuel"]["kind"] == "propane" and w["energy_kwh"] > 0
    assert d["attribution"] and "Open-Meteo" in d["attribution"]


def test_winters_dead_network_is_one_line(env, capsys):
    env("http://127.0.0.1:9")
    code = main(["winters", "examples/gable-house.toml", "--setpoint", "8C", "--winters", "1"])
    _, err = capsys.readouterr()
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "history" in err and "Traceback" not in err


def test_fuel_table_heating_value_used():
    # the J per gal the winter's fuel uses is the table's (EIA 91,452 Btu/gal)
    assert fuels.get_fuel("propane").j_per("gal") == pytest.approx(91452 * J_PER_BTU)
    assert math.isclose(fuels.get_fuel("propane").j_per("gal"), 91452 * J_PER_BTU)


def test_winters_on_an_older_calibration_runs_on_the_geometry(tmp_path, capsys):
    """An older [calibration] (no `format`): not used; the season is the geometry's and
    the report shows the one line that says why, as a warning."""
    csv = history_csv(tmp_path / "w.csv", "2025-11-01", 121, temp=-5.0)
    argv = ["--setpoint", "10C", "--history", csv, "--winters", "1", "--model", "lumped"]
    plain = run_json(capsys, "winters", str(write_house(tmp_path, GLASS, "a.toml")), *argv)
    old = write_house(tmp_path, GLASS + "\n[calibration]\nk_w_per_k = 500.0\n", "b.toml")
    d = run_json(capsys, "winters", str(old), *argv)
    assert d["median_energy_kwh"] == plain["median_energy_kwh"]
    [note] = [a for a in d["assumptions"] if "[calibration]" in a]
    assert "older grower fit" in note and "refit" in note
    assert d["calibration_warning"] == note
    assert main(["winters", str(old), *argv]) == 0
    assert "! the house file's [calibration] is from an older" in " ".join(
        capsys.readouterr().out.split()
    )


def test_winters_screen_shows_fuel_in_its_own_system(tmp_path, capsys):
    # the gable house keeps its propane in litres ([stock] on_hand = "900 L"): a US screen
    # shows gallons (pint's US gallon: 3.785411784 L), a metric one litres, --fuel-unit as asked
    csv = history_csv(tmp_path / "w.csv", "2024-10-30", 40)
    argv = ["winters", "examples/gable-house.toml", "--setpoint", "8C", "--history", csv]
    argv += ["--winters", "1", "--season-days", "20"]
    litres = run_json(capsys, *argv)["median_fuel_amount"]
    assert main([*argv, "--units", "us"]) == 0
    out = capsys.readouterr().out
    gallons = f"{Q_(litres, 'L').to('gallon').magnitude:,.0f} gal of"
    assert gallons in out and " L " not in out
    assert main([*argv, "--units", "metric"]) == 0
    assert f"{litres:,.0f} L of" in capsys.readouterr().out
    assert main([*argv, "--units", "us", "--fuel-unit", "L"]) == 0
    assert f"{litres:,.0f} L of" in capsys.readouterr().out
