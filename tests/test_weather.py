"""Forecasts: CSV validation, DST, the forecast-low curve, Open-Meteo over loopback, boundary.

Nothing here leaves the machine: Open-Meteo answers come from pytest-httpserver on
127.0.0.1, serving hand-written documents in the provider's documented shape
(tests/data/openmeteo_*.json, invented values).
"""

from __future__ import annotations

import copy
import datetime as dt
import json
import socket
import subprocess
import sys
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest
from pytest_httpserver import HTTPServer

from grower import sky, weather
from grower.errors import InputError
from grower.site import Site

from .reference_units import UREG as ureg

DATA = Path(__file__).parent / "data"
EXAMPLES = Path(__file__).parent.parent / "examples"
TORONTO = ZoneInfo("America/Toronto")
FARM = Site(44.3, -76.5, 93.0, "America/Toronto", "invented farm")
NEW_YORK = Site(40.71, -74.01, 10.0, "America/New_York", "invented plot")
HEADER = "time,temperature_c,dew_point_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"

#: what the example files and recorded answers give: everything but the low-cloud share
_WITHOUT_LOW_CLOUD = tuple(c for c in weather.COLUMNS if c != "cloud_cover_low_pct")


def _csv(tmp_path: Path, text: str, name: str = "f.csv") -> Path:
    path = tmp_path / name
    path.write_text(text.strip() + "\n", encoding="utf-8")
    return path


def _hourly(start: str, rows: list[str], header: str = HEADER) -> str:
    first = dt.datetime.fromisoformat(start)
    lines = [header]
    for k, rest in enumerate(rows):
        lines.append(f"{(first + dt.timedelta(hours=k)).isoformat(timespec='minutes')},{rest}")
    return "\n".join(lines)


GOOD = ["1.0,-2.0,0,1.0,0", "0.0,-2.5,0,1.0,0", "-1.0,-3.0,0,0.5,0", "-2.0,-3.5,0,0.5,0"]


def _read_error(tmp_path: Path, text: str, **kw) -> str:
    with pytest.raises(InputError) as info:
        weather.read_forecast_csv(_csv(tmp_path, text), **kw)
    message = str(info.value)
    assert "\n" not in message
    assert message.startswith(str(tmp_path / "f.csv"))  # names the file
    return message


# ---------------------------------------------------------------- CSV: good files


def test_example_cold_night_reads_clean():
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-night.csv", site=FARM)
    assert forecast.warnings == ()
    assert forecast.given == _WITHOUT_LOW_CLOUD and not forecast.assumed_clear
    assert forecast.start == pd.Timestamp("2026-12-03 16:00", tz=TORONTO)
    assert forecast.end == pd.Timestamp("2026-12-04 10:00", tz=TORONTO)
    temp = forecast.values("temperature_c")
    assert temp[0] == pytest.approx(3.0) and temp.min() == pytest.approx(-6.0)


def test_example_cold_snap_reads_clean():
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-snap.csv")
    assert forecast.warnings == () and len(forecast.frame) == 120
    daily = forecast.frame["temperature_c"].groupby(forecast.frame.index.date)
    assert daily.min().between(-12.05, -4.95).all() and daily.max().between(-4.05, 2.05).all()
    assert 250 < forecast.frame["shortwave_w_m2"].max() <= 300


def test_offsets_without_site_keep_the_files_offset(tmp_path):
    forecast = weather.read_forecast_csv(_csv(tmp_path, _hourly("2026-12-03T16:00-05:00", GOOD)))
    assert forecast.timezone is None
    assert forecast.frame.index[0].utcoffset() == dt.timedelta(hours=-5)
    assert forecast.source == f"file {tmp_path / 'f.csv'}"
    np.testing.assert_allclose(forecast.times_s, [0, 3600, 7200, 10800])


def test_fahrenheit_mph_and_kmh_columns_convert(tmp_path):
    # independent conversions by pint (°F → °C; mph and km/h → m/s)
    text = _hourly(
        "2026-12-03T16:00-05:00",
        ["41,10", "32,0", "23,36"],
        header="time,temperature_f,wind_speed_mph",
    )
    forecast = weather.read_forecast_csv(_csv(tmp_path, text))
    expected = [ureg.Quantity(f, ureg.degF).to(ureg.degC).magnitude for f in (41, 32, 23)]
    np.testing.assert_allclose(forecast.values("temperature_c"), expected, atol=1e-12)
    mph = [ureg.Quantity(v, "mile/hour").to("m/s").magnitude for v in (10, 0, 36)]
    np.testing.assert_allclose(forecast.values("wind_speed_m_s"), mph, atol=1e-12)
    kmh = weather.read_forecast_csv(
        _csv(
            tmp_path,
            _hourly(
                "2026-12-03T16:00-05:00", ["1,36", "0,18"], "time,temperature_c,wind_speed_km_h"
            ),
        )
    )
    np.testing.assert_allclose(kmh.values("wind_speed_m_s"), [10.0, 5.0])
    assert set(kmh.given) == {"temperature_c", "wind_speed_m_s"} and kmh.assumed_clear
    assert np.isnan(kmh.values("dew_point_c")).all()


def test_single_missing_value_is_interpolated_and_stated(tmp_path):
    rows = ["1.0,-2.0,0,1.0,0", ",-2.5,0,1.0,0", "-3.0,-3.5,0,0.5,0"]
    forecast = weather.read_forecast_csv(_csv(tmp_path, _hourly("2026-12-03T16:00-05:00", rows)))
    assert forecast.values("temperature_c")[1] == pytest.approx(-1.0)
    assert any("line 3, column temperature_c: missing value filled" in w for w in forecast.warnings)


def test_single_missing_row_in_an_hourly_series_is_inserted(tmp_path):
    text = "\n".join(
        [HEADER, "2026-12-03T16:00-05:00,2.0,-2,0,1,0", "2026-12-03T17:00-05:00,1.0,-2,0,1,0",
         "2026-12-03T19:00-05:00,-1.0,-3,0,1,0", "2026-12-03T20:00-05:00,-2.0,-3,0,1,0"]
    )  # fmt: skip
    forecast = weather.read_forecast_csv(_csv(tmp_path, text))
    assert len(forecast.frame) == 5
    assert forecast.frame["temperature_c"].iloc[2] == pytest.approx(0.0)
    assert forecast.frame.index[2] == pd.Timestamp("2026-12-03T18:00-05:00")
    assert (
        "1 missing row(s) between line 3 and line 4 filled by linear interpolation"
        in forecast.warnings
    )


def test_small_dew_point_excess_is_clipped_with_a_stated_repair(tmp_path):
    rows = ["1.0,1.3,0,1,0", "0.0,-1,0,1,0"]
    forecast = weather.read_forecast_csv(_csv(tmp_path, _hourly("2026-12-03T16:00-05:00", rows)))
    assert forecast.values("dew_point_c")[0] == pytest.approx(1.0)
    assert any("set equal to the air temperature" in w and "line 2" in w for w in forecast.warnings)


# ---------------------------------------------------------------- CSV: one test per error


def test_error_unknown_column_suggests(tmp_path):
    msg = _read_error(tmp_path, "time,temprature_c\n2026-12-03T16:00-05:00,1")
    assert 'line 1: unknown column "temprature_c" (did you mean "temperature_c"?)' in msg


def test_error_no_temperature_column(tmp_path):
    msg = _read_error(tmp_path, "time,dew_point_c\n2026-12-03T16:00-05:00,1")
    assert 'no temperature column ("temperature_c" or "temperature_f")' in msg


def test_error_two_columns_for_one_quantity(tmp_path):
    msg = _read_error(tmp_path, "time,temperature_c,temperature_f\n2026-12-03T16:00-05:00,1,34")
    assert 'columns "temperature_c" and "temperature_f" give the same quantity' in msg


def test_error_empty_file(tmp_path):
    assert "empty file" in _read_error(tmp_path, " ")


def test_error_header_only(tmp_path):
    assert "no data rows" in _read_error(tmp_path, "time,temperature_c")


def test_error_wrong_field_count(tmp_path):
    msg = _read_error(
        tmp_path, "time,temperature_c\n2026-12-03T16:00-05:00,1\n2026-12-03T17:00-05:00,1,2"
    )
    assert "line 3: 3 fields, the header has 2" in msg


def test_error_bad_time(tmp_path):
    msg = _read_error(tmp_path, "time,temperature_c\n2026-12-03T16:00-05:00,1\nyesterday,2")
    assert 'line 3, column time: "yesterday" is not an ISO 8601 time' in msg


def test_error_not_a_number(tmp_path):
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", ["1,-2,0,1,0", "warm,-2,0,1,0"]))
    assert 'line 3, column temperature_c: "warm" is not a number' in msg


@pytest.mark.parametrize("word", ["NaN", "nan", "NA", "null"])
def test_error_nan_in_a_forecast_names_the_cell(tmp_path, word):
    # a forecast with NaN is bad input (the project's rules); only an empty cell is a
    # missing value, filled when single (test_single_missing_value_is_interpolated_and_stated)
    rows = ["1,-2,0,1,0", f"{word},-2,0,1,0", "-1,-3,0,1,0"]
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", rows))
    assert f'line 3, column temperature_c: "{word}" is not a value' in msg


def test_error_times_not_increasing(tmp_path):
    text = f"{HEADER}\n2026-12-03T17:00-05:00,1,-2,0,1,0\n2026-12-03T16:00-05:00,1,-2,0,1,0"
    msg = _read_error(tmp_path, text)
    assert "line 3: time is not after the previous row's (line 2)" in msg


def test_error_gap_over_three_hours(tmp_path):
    text = f"{HEADER}\n2026-12-03T16:00-05:00,1,-2,0,1,0\n2026-12-03T20:00-05:00,0,-2,0,1,0"
    msg = _read_error(tmp_path, text)
    assert "line 3: 4 h after the previous row (line 2); gaps over 3 h are not bridged" in msg


@pytest.mark.parametrize(
    ("row", "fragment"),
    [
        ("75,-2,0,1,0", "line 3, column temperature_c: 75 °C is outside −60…60 °C"),
        ("-61,-70,0,1,0", "line 3, column temperature_c: -61 °C is outside −60…60 °C"),
        ("1,-2,120,1,0", "line 3, column cloud_cover_pct: 120 % is outside 0…100 %"),
        ("1,-2,0,-0.5,0", "line 3, column wind_speed_m_s: -0.5 m/s is a negative wind speed"),
        ("1,-2,0,1,1500", "line 3, column shortwave_w_m2: 1500 W/m² is outside 0…1400 W/m²"),
        ("1,-2,0,1,-3", "line 3, column shortwave_w_m2: -3 W/m² is outside 0…1400 W/m²"),
        ("inf,-2,0,1,0", "line 3, column temperature_c: inf °C is not a finite number"),
    ],
)
def test_error_value_out_of_range(tmp_path, row, fragment):
    assert fragment in _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", ["1,-2,0,1,0", row]))


def test_error_fahrenheit_out_of_range_shows_the_files_value(tmp_path):
    text = _hourly("2026-12-03T16:00-05:00", ["40", "150"], header="time,temperature_f")
    assert "line 3, column temperature_f: 150 °F is outside −60…60 °C" in _read_error(
        tmp_path, text
    )


def test_error_dew_point_well_above_air(tmp_path):
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", ["1,-2,0,1,0", "0,2,0,1,0"]))
    assert "line 3, column dew_point_c: dew point 2 °C is 2 K above the air temperature" in msg


def test_error_two_missing_values_in_a_row(tmp_path):
    rows = ["1,-2,0,1,0", "1,,0,1,0", "1,,0,1,0", "1,-2,0,1,0"]
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", rows))
    assert "line 3 to line 4, column dew_point_c: 2 missing values in a row" in msg


def test_error_missing_value_at_the_end(tmp_path):
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00-05:00", ["1,-2,0,1,0", "1,-2,,1,0"]))
    assert "line 3, column cloud_cover_pct: missing value at the end" in msg


def test_error_naive_times_without_zone(tmp_path):
    msg = _read_error(tmp_path, _hourly("2026-12-03T16:00", GOOD))
    assert "times have no UTC offset and no time zone is known" in msg


def test_error_mixed_naive_and_offset_times(tmp_path):
    text = f"{HEADER}\n2026-12-03T16:00-05:00,1,-2,0,1,0\n2026-12-03T17:00,1,-2,0,1,0"
    assert "line 3, column time: some times carry a UTC offset and some do not" in _read_error(
        tmp_path, text
    )


def test_error_spring_forward_time_does_not_exist(tmp_path):
    text = f"{HEADER}\n2026-03-08T01:30,1,-2,0,1,0\n2026-03-08T02:30,1,-2,0,1,0"
    msg = _read_error(tmp_path, text, site=FARM)
    assert "line 3, column time: 2026-03-08T02:30:00 does not exist in America/Toronto" in msg


# ---------------------------------------------------------------- DST


def _local_day_rows(forecast: weather.Forecast, day: str) -> pd.DataFrame:
    zone = forecast.frame.index.tz
    lo = pd.Timestamp(day).tz_localize(zone)
    hi = (pd.Timestamp(day) + pd.Timedelta(days=1)).tz_localize(zone)
    return forecast.frame[(forecast.frame.index >= lo) & (forecast.frame.index < hi)]


def _naive_day(day: dt.date, skip: str | None = None, repeat: str | None = None) -> str:
    rows = [HEADER]
    for h in range(25):
        clock = dt.datetime.combine(day, dt.time()) + dt.timedelta(hours=h)
        text = clock.isoformat(timespec="minutes")
        if text == skip:
            continue
        rows.append(f"{text},1,-2,0,1,0")
        if text == repeat:
            rows.append(f"{text},1,-2,0,1,0")
    return "\n".join(rows)


def test_fall_back_night_has_25_rows_and_true_durations(tmp_path):
    text = _naive_day(dt.date(2026, 11, 1), repeat="2026-11-01T01:00")
    forecast = weather.read_forecast_csv(_csv(tmp_path, text), site=FARM)
    assert forecast.warnings == ()
    day = _local_day_rows(forecast, "2026-11-01")
    assert len(day) == 25
    # first 01:00 is daylight time (−04:00), the repeated one standard time (−05:00)
    ones = [t for t in forecast.local_times() if t.hour == 1 and t.day == 1]
    assert [t.utcoffset() for t in ones] == [dt.timedelta(hours=-4), dt.timedelta(hours=-5)]
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)
    utc_span = dt.datetime(2026, 11, 2, 5, tzinfo=dt.UTC) - dt.datetime(
        2026, 11, 1, 4, tzinfo=dt.UTC
    )
    assert forecast.times_s[-1] == utc_span.total_seconds()


def test_spring_forward_night_has_23_rows_and_true_durations(tmp_path):
    text = _naive_day(dt.date(2026, 3, 8), skip="2026-03-08T02:00")
    forecast = weather.read_forecast_csv(_csv(tmp_path, text), site=FARM)
    assert forecast.warnings == ()
    assert len(_local_day_rows(forecast, "2026-03-08")) == 23
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)


def test_offsets_across_a_dst_change_without_site(tmp_path):
    text = "\n".join(
        [HEADER, "2026-11-01T00:30-04:00,1,-2,0,1,0", "2026-11-01T01:30-04:00,1,-2,0,1,0",
         "2026-11-01T01:30-05:00,0,-2,0,1,0", "2026-11-01T02:30-05:00,0,-2,0,1,0"]
    )  # fmt: skip
    forecast = weather.read_forecast_csv(_csv(tmp_path, text))
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)
    assert [t.isoformat() for t in forecast.local_times()][1:3] == [
        "2026-11-01T01:30:00-04:00",
        "2026-11-01T01:30:00-05:00",
    ]


# ---------------------------------------------------------------- forecast low


def test_forecast_low_curve_reaches_the_low_at_the_models_minimum():
    start = dt.datetime(2026, 12, 3, 16, 0)  # naive: the site's clock
    forecast = weather.forecast_from_low(FARM, -6.0, start, high_c=3.0, step_s=900.0)
    temp = forecast.frame["temperature_c"]
    assert forecast.start == pd.Timestamp("2026-12-03 16:00", tz=TORONTO)
    assert temp.min() >= -6.0 - 1e-9 and temp.max() <= 3.0 + 1e-9
    # the sampled minimum is the 15-min sample nearest sunrise − 0.17 h (about 07:15 here)
    assert temp.idxmin().hour == 7 and temp.min() == pytest.approx(-6.0, abs=0.01)
    assert forecast.source == "forecast low −6 °C, high 3 °C"
    assert forecast.assumed_clear and forecast.warnings == ()
    assert np.allclose(np.diff(forecast.times_s), 900.0)
    # default length: until 3 h after the first sunrise after the start
    assert (
        pd.Timestamp("2026-12-04 10:20", tz=TORONTO)
        <= forecast.end
        <= pd.Timestamp("2026-12-04 10:45", tz=TORONTO)
    )


def test_forecast_low_default_high_is_stated():
    start = dt.datetime(2026, 12, 3, 18, 0, tzinfo=TORONTO)
    forecast = weather.forecast_from_low(FARM, -4.0, start, cloud_pct=20.0, wind_m_s=1.5, hours=12)
    assert "high taken as the low + 10 K = 6 °C" in forecast.warnings[0]
    assert "from memory" in forecast.warnings[0]
    assert forecast.frame["temperature_c"].max() <= 6.0
    assert not forecast.assumed_clear
    assert set(forecast.given) == {"temperature_c", "cloud_cover_pct", "wind_speed_m_s"}
    assert len(forecast.frame) == 13


def test_forecast_low_caps_a_dew_point_above_the_air():
    start = dt.datetime(2026, 12, 3, 18, 0, tzinfo=TORONTO)
    forecast = weather.forecast_from_low(FARM, -4.0, start, high_c=2.0, dew_point_c=-3.0)
    dew, temp = forecast.values("dew_point_c"), forecast.values("temperature_c")
    assert np.all(dew <= temp) and dew.max() == -3.0
    assert any("capped at the air temperature" in w for w in forecast.warnings)


def test_forecast_low_across_fall_back_keeps_durations():
    start = dt.datetime(2026, 10, 31, 18, 0, tzinfo=TORONTO)
    forecast = weather.forecast_from_low(FARM, 2.0, start, high_c=12.0)
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)
    clocks = [t.strftime("%H%z") for t in forecast.local_times()]
    assert "01-0400" in clocks and "01-0500" in clocks


@pytest.mark.parametrize(
    ("kwargs", "fragment"),
    [
        ({"low_c": -6.0, "high_c": -8.0}, "forecast high −8 °C is below the low −6 °C"),
        ({"low_c": -70.0}, "forecast low −70 °C is outside −60…60 °C"),
        ({"low_c": -6.0, "cloud_pct": 130.0}, "cloud cover 130 % is outside 0…100 %"),
    ],
)
def test_forecast_low_bad_input(kwargs, fragment):
    with pytest.raises(InputError, match=fragment):
        weather.forecast_from_low(
            FARM, start=dt.datetime(2026, 12, 3, 16, tzinfo=TORONTO), **kwargs
        )


def test_forecast_low_in_polar_night():
    svalbard = Site(78.2, 15.6, 0.0, "Arctic/Longyearbyen")
    with pytest.raises(InputError, match="polar day or night"):
        weather.forecast_from_low(svalbard, -20.0, dt.datetime(2026, 12, 3, 16))


# ---------------------------------------------------------------- Open-Meteo: parse (pure)


def _doc(name: str = "openmeteo_kingston.json") -> dict:
    return json.loads((DATA / name).read_text(encoding="utf-8"))


def test_parse_openmeteo_document():
    forecast = weather.parse_openmeteo(_doc(), site=FARM)
    assert forecast.source == "Open-Meteo"
    assert forecast.attribution == "Weather data by Open-Meteo.com (CC BY 4.0)"
    assert forecast.given == _WITHOUT_LOW_CLOUD and forecast.shortwave_offset_s == -1800.0
    assert forecast.start == pd.Timestamp("2026-12-03T00:00-05:00")
    assert forecast.values("temperature_c")[5] == _doc()["hourly"]["temperature_2m"][5]


def test_parse_openmeteo_across_fall_back_uses_the_fixed_offset():
    forecast = weather.parse_openmeteo(_doc("openmeteo_newyork_fallback.json"), site=NEW_YORK)
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)
    assert len(_local_day_rows(forecast, "2026-11-01")) == 25
    # "2026-11-01T02:00" is labelled with the response's one offset (−04:00): 06:00 UTC,
    # which is 01:00 EST on the site's clock
    i = _doc("openmeteo_newyork_fallback.json")["hourly"]["time"].index("2026-11-01T02:00")
    assert forecast.frame.index[i] == pd.Timestamp("2026-11-01T06:00Z")
    assert forecast.local_times()[i].isoformat() == "2026-11-01T01:00:00-05:00"


def test_parse_openmeteo_fills_one_null_and_drops_empty_ends():
    doc = _doc()
    doc["hourly"]["temperature_2m"][10] = None
    for var in ("temperature_2m", "dew_point_2m"):
        doc["hourly"][var][-2:] = [None, None]
    forecast = weather.parse_openmeteo(doc, site=FARM)
    assert len(forecast.frame) == 46
    t = _doc()["hourly"]["temperature_2m"]
    assert forecast.values("temperature_c")[10] == pytest.approx((t[9] + t[11]) / 2)
    assert any("2 hour(s) without data" in w for w in forecast.warnings)


def test_parse_openmeteo_converts_units():
    doc = _doc()
    doc["hourly_units"]["temperature_2m"] = "°F"
    doc["hourly"]["temperature_2m"] = [32.0] * len(doc["hourly"]["time"])
    doc["hourly"]["dew_point_2m"] = [-5.0] * len(doc["hourly"]["time"])
    np.testing.assert_allclose(
        weather.parse_openmeteo(doc).values("temperature_c"), 0.0, atol=1e-12
    )
    doc["hourly_units"]["wind_speed_10m"] = "°C"
    with pytest.raises(InputError, match='hourly_units.wind_speed_10m is "°C", expected m/s'):
        weather.parse_openmeteo(doc)


def test_parse_openmeteo_error_document():
    with pytest.raises(InputError, match="Latitude must be in range"):
        weather.parse_openmeteo(_doc("openmeteo_error_400.json"))


# ---------------------------------------------------------------- Open-Meteo: loopback


QUERY = {
    "latitude": "44.3000",
    "longitude": "-76.5000",
    "hourly": "temperature_2m,dew_point_2m,cloud_cover,wind_speed_10m,shortwave_radiation,"
    "cloud_cover_low",
    "timezone": "auto",
    "forecast_days": "2",
    "wind_speed_unit": "ms",
}


@pytest.fixture
def env(monkeypatch, tmp_path):
    def point_at(url: str) -> None:
        monkeypatch.setenv("GROWER_FORECAST_URL", url.rstrip("/"))

    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    return point_at


def _dead_url() -> str:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    return f"http://127.0.0.1:{port}"


def test_first_fetch_then_cache(httpserver: HTTPServer, env, tmp_path):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/forecast", query_string=QUERY).respond_with_json(_doc())
    lines: list[str] = []
    first = weather.fetch_forecast(FARM, days=2, status=lines.append)
    assert not first.from_cache and first.age_s < 60 and first.warnings == ()
    assert first.attribution == weather.OPEN_METEO_ATTRIBUTION and len(first.frame) == 48
    assert lines and httpserver.url_for("/").rstrip("/") in lines[0]
    assert (tmp_path / "cache" / "forecast-cache.sqlite").exists()
    second = weather.fetch_forecast(FARM, days=2)
    assert second.from_cache and second.warnings == ()
    assert len(httpserver.log) == 1  # the second run never reached the server
    np.testing.assert_array_equal(first.values("temperature_c"), second.values("temperature_c"))


def test_server_down_with_stale_cache_warns_and_answers(env):
    import requests_cache

    server = HTTPServer(host="127.0.0.1", port=0)
    server.start()
    try:
        env(server.url_for("/"))
        server.expect_request("/v1/forecast").respond_with_json(_doc())
        weather.fetch_forecast(FARM, days=2)
    finally:
        server.stop()
    # age the cached answer: written two hours ago, expired one hour ago
    cache = requests_cache.SQLiteCache(str(weather.cache_file()))
    for key in list(cache.responses.keys()):
        response = cache.responses[key]
        response.created_at -= dt.timedelta(hours=2)
        response.expires = response.created_at + dt.timedelta(hours=1)
        cache.responses[key] = response
    cache.close()
    stale = weather.fetch_forecast(FARM, days=2)
    assert stale.from_cache and len(stale.frame) == 48
    assert stale.age_s == pytest.approx(7200, abs=120)
    assert "could not be reached: using the forecast cached 2.0 h ago" in stale.warnings[0]


def test_server_down_without_cache_is_one_line(env):
    url = _dead_url()
    env(url)
    with pytest.raises(InputError) as info:
        weather.fetch_forecast(FARM, days=2, timeout=2.0)
    message = str(info.value)
    assert message.startswith(f"cannot reach the forecast service at {url} (")
    assert message.endswith("and no cached forecast for this site") and "\n" not in message


def test_http_500(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/forecast").respond_with_data("oops", status=500)
    with pytest.raises(InputError, match="answered HTTP 500"):
        weather.fetch_forecast(FARM, days=2)


def test_http_400_reason(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/forecast").respond_with_json(
        _doc("openmeteo_error_400.json"), status=400
    )
    with pytest.raises(
        InputError, match="refused the request: Latitude must be in range of -90 to 90°"
    ):
        weather.fetch_forecast(FARM, days=2)


def test_malformed_json_is_not_cached(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/forecast").respond_with_data(
        '{"hourly": [1, 2', content_type="application/json"
    )
    for _ in range(2):
        with pytest.raises(InputError, match="sent an answer that is not JSON"):
            weather.fetch_forecast(FARM, days=2)
    assert len(httpserver.log) == 2


def test_missing_variable(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    doc = _doc()
    del doc["hourly"]["dew_point_2m"]
    httpserver.expect_request("/v1/forecast").respond_with_json(doc)
    with pytest.raises(InputError, match="the answer has no hourly.dew_point_2m"):
        weather.fetch_forecast(FARM, days=2)


def test_fetched_dst_response_converted_to_the_site_zone(httpserver: HTTPServer, env):
    env(httpserver.url_for("/"))
    httpserver.expect_request("/v1/forecast").respond_with_json(
        _doc("openmeteo_newyork_fallback.json")
    )
    forecast = weather.fetch_forecast(NEW_YORK, days=3)
    assert forecast.timezone == "America/New_York"
    assert len(_local_day_rows(forecast, "2026-11-01")) == 25
    np.testing.assert_allclose(np.diff(forecast.times_s), 3600.0)


def test_requests_cache_is_imported_lazily():
    code = "import sys, grower.weather; sys.exit(int('requests_cache' in sys.modules))"
    assert subprocess.run([sys.executable, "-c", code], check=False).returncode == 0


# ---------------------------------------------------------------- boundary, shifts, ensembles


def test_boundary_is_piecewise_linear_with_sky():
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-night.csv", site=FARM)
    grid = np.arange(0.0, forecast.times_s[-1] + 1, 1800.0)
    bound = weather.prepare_boundary(forecast, grid, pressure_hpa=FARM.pressure_hpa)
    temp = forecast.values("temperature_c")
    np.testing.assert_allclose(bound.temperature_c[::2], temp)
    np.testing.assert_allclose(bound.temperature_c[1::2], (temp[:-1] + temp[1:]) / 2)
    assert np.all(bound.sky_c < bound.temperature_c)
    local_hour = np.array([t.hour + t.minute / 60 for t in bound.index])
    expected = sky.sky_temperature(
        bound.temperature_c, bound.dew_point_c, bound.cloud_fraction, hour=local_hour,
        pressure_hpa=FARM.pressure_hpa,
    )  # fmt: skip
    np.testing.assert_allclose(bound.sky_c, expected)
    assert bound.index[0] == forecast.start and not bound.assumed_clear


def test_boundary_fills_what_was_not_given():
    start = dt.datetime(2026, 12, 3, 18, 0, tzinfo=TORONTO)
    forecast = weather.forecast_from_low(FARM, -4.0, start, high_c=2.0, hours=6)
    bound = weather.prepare_boundary(forecast, [0.0, 3600.0], hour_term=False)
    assert bound.assumed_clear and np.all(bound.cloud_fraction == 0.0)
    assert np.isnan(bound.wind_speed_m_s).all() and np.all(bound.shortwave_w_m2 == 0.0)
    np.testing.assert_allclose(bound.sky_c, sky.swinbank_sky_temperature(bound.temperature_c))


def test_boundary_places_preceding_hour_means_at_the_half_hour():
    forecast = weather.parse_openmeteo(_doc(), site=FARM)
    sw = forecast.values("shortwave_w_m2")
    i = int(np.argmax(sw))
    bound = weather.prepare_boundary(forecast, [forecast.times_s[i] - 1800.0])
    assert bound.shortwave_w_m2[0] == pytest.approx(sw[i])


def test_boundary_outside_the_forecast_is_a_value_error():
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-night.csv")
    with pytest.raises(ValueError, match="outside the forecast"):
        weather.prepare_boundary(forecast, [0.0, forecast.times_s[-1] + 60.0])


def test_shifted_is_colder_and_leaves_the_original():
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-night.csv")
    colder = weather.shifted(forecast, -2.0)
    np.testing.assert_allclose(colder.values("temperature_c"), forecast.values("temperature_c") - 2)
    np.testing.assert_allclose(colder.values("dew_point_c"), forecast.values("dew_point_c") - 2)
    assert colder.source.endswith(", 2 K colder")
    assert forecast.values("temperature_c")[0] == pytest.approx(3.0)


def test_ensemble_spread_and_correlation():
    # stationary AR(1) / Ornstein–Uhlenbeck sampling (Gillespie 1996): standard deviation
    # sigma at every time and lag correlation exp(−Δt/τ). Tolerances: with M = 4000
    # members the standard error of a sample s.d. is ≈ σ/√(2M) ≈ 1.1 % and of a
    # correlation ≈ (1 − ρ²)/√M < 0.016, so 5 % and 0.05 are > 3 standard errors.
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-snap.csv")
    members = weather.ensemble(forecast, 4000, 1.5, 6.0, seed=7)
    assert members.shape == (4000, len(forecast.frame))
    errors = members - forecast.values("temperature_c")
    np.testing.assert_allclose(errors.std(axis=0)[[0, 50, 119]], 1.5, rtol=0.05)
    for lag in (1, 6, 12):
        rho = np.corrcoef(errors[:, 30], errors[:, 30 + lag])[0, 1]
        assert rho == pytest.approx(np.exp(-lag / 6.0), abs=0.05)
    np.testing.assert_array_equal(members, weather.ensemble(forecast, 4000, 1.5, 6.0, seed=7))


def test_ensemble_independent_and_fully_correlated_limits():
    t = np.arange(0.0, 10 * 3600.0, 3600.0)
    rng = np.random.default_rng(3)
    white = weather.ar1_errors(t, 3000, 1.0, 0.0, rng)
    assert abs(np.corrcoef(white[:, 2], white[:, 3])[0, 1]) < 0.06
    offset = weather.ar1_errors(t, 10, 2.0, np.inf, rng)
    np.testing.assert_allclose(offset, offset[:, :1] * np.ones((1, t.size)))
    with pytest.raises(ValueError, match="members"):
        weather.ar1_errors(t, 0, 1.0, 3600.0, rng)


def test_forecast_rejects_a_naive_frame():
    frame = pd.DataFrame({c: [0.0, 1.0] for c in (*weather.COLUMNS, "utc_offset_s")},
                         index=pd.date_range("2026-12-03", periods=2, freq="h"))  # fmt: skip
    with pytest.raises(ValueError, match="tz-aware"):
        weather.Forecast(frame=frame, source="x", given=("temperature_c",))


def test_copy_of_document_is_not_modified_by_parse():
    doc = _doc()
    before = copy.deepcopy(doc)
    weather.parse_openmeteo(doc, site=FARM)
    assert doc == before


# ---------------------------------------------------------------- hostile files and answers


def _hostile_csv(tmp_path, rows, header="time,temperature_c,shortwave_w_m2"):
    p = tmp_path / "f.csv"
    p.write_text(header + "\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return p


def _hostile_hours(n=6, start="2026-12-03T20:00-05:00"):
    t0 = dt.datetime.fromisoformat(start)
    return [(t0 + dt.timedelta(hours=i)).isoformat(timespec="minutes") for i in range(n)]


def test_solar_elevation_agrees_with_astral():
    # reference: astral 3.x (NOAA solar equations); Spencer's series is good to ~0.5°
    import astral
    import astral.sun

    from grower.weather.csvfile import solar_elevation_deg

    obs = astral.Observer(latitude=44.3, longitude=-76.5)
    for iso in (
        "2026-12-03T17:00:00+00:00",
        "2026-06-21T16:30:00+00:00",
        "2026-03-20T05:00:00+00:00",
    ):
        t = dt.datetime.fromisoformat(iso)
        ours = float(solar_elevation_deg([t.timestamp()], 44.3, -76.5)[0])
        ref = astral.sun.elevation(obs, t, with_refraction=False)
        assert ours == pytest.approx(ref, abs=1.0)


def test_sun_at_midnight_is_refused_with_a_site(tmp_path):
    site = FARM
    rows = [f"{t},-3,{1400 if i == 4 else 0}" for i, t in enumerate(_hostile_hours())]
    with pytest.raises(InputError, match="1400 W/m².*below the site's horizon"):
        weather.read_forecast_csv(_hostile_csv(tmp_path, rows), site=site)
    # the same file is accepted by day
    day = [
        f"{t},-3,{300 if i == 3 else 0}"
        for i, t in enumerate(_hostile_hours(start="2026-12-03T09:00-05:00"))
    ]
    weather.read_forecast_csv(_hostile_csv(tmp_path, day), site=site)


def test_wind_beyond_the_record_and_years_out_of_range(tmp_path):
    rows = [f"{t},-3,{1e6 if i == 2 else 3}" for i, t in enumerate(_hostile_hours())]
    with pytest.raises(InputError, match="line 4, column wind_speed_m_s.*113 m/s"):
        weather.read_forecast_csv(_hostile_csv(tmp_path, rows, "time,temperature_c,wind_speed_m_s"))
    rows = [f"{t.replace('2026', '3000')},-3,0" for t in _hostile_hours()]
    with pytest.raises(InputError, match="line 2, column time: the year 3000"):
        weather.read_forecast_csv(_hostile_csv(tmp_path, rows))


def test_fahrenheit_under_a_celsius_header_warns(tmp_path):
    from grower.errors import InputWarning

    rows = [f"{t},{41 + i},0" for i, t in enumerate(_hostile_hours())]
    with pytest.warns(InputWarning, match="temperature_f"):
        weather.read_forecast_csv(_hostile_csv(tmp_path, rows))


def test_mixed_offsets_with_no_site_keep_the_files_clock(tmp_path):
    zone = ZoneInfo("America/Toronto")
    t0 = dt.datetime(2026, 11, 1, 3, tzinfo=dt.UTC)
    rows = [
        f"{(t0 + dt.timedelta(hours=i)).astimezone(zone).isoformat(timespec='minutes')},-3,0"
        for i in range(6)
    ]
    fc = weather.read_forecast_csv(_hostile_csv(tmp_path, rows))
    shown = [t.isoformat()[-6:] for t in fc.frame.index]
    assert shown[2:4] == ["-04:00", "-05:00"] and fc.timezone is None  # 06:00 UTC: EST


@pytest.mark.parametrize(
    ("change", "words"),
    [
        (lambda d: d.update(hourly_units=["°C"]), "hourly_units is a JSON list"),
        (lambda d: d.update(utc_offset_seconds=1e20), "beyond any clock"),
        (lambda d: d["hourly"]["temperature_2m"].__setitem__(1, "5"), "not a number"),
        (lambda d: d["hourly"]["wind_speed_10m"].__setitem__(3, 1e6), "strongest gust"),
        (
            lambda d: d["hourly"].update(
                time=[t.replace("2026", "3000") for t in d["hourly"]["time"]]
            ),
            "the year 3000",
        ),
    ],
)
def test_live_answers_of_the_wrong_shape_are_one_line(change, words):
    doc = json.loads((DATA / "openmeteo_kingston.json").read_text(encoding="utf-8"))
    change(doc)
    with pytest.raises(InputError, match=words):
        weather.parse_openmeteo(doc)
    with pytest.raises(InputError, match="a JSON list, not an object"):
        weather.parse_openmeteo([doc])


def test_forecast_samples_and_frame_are_the_same_forecast():
    # the arrays every computation reads, and the pandas frame built from them on demand
    forecast = weather.read_forecast_csv(EXAMPLES / "forecast-cold-night.csv", site=FARM)
    s = forecast.samples
    frame = forecast.frame
    assert list(frame.columns) == [*weather.COLUMNS, "utc_offset_s"]
    np.testing.assert_array_equal(
        forecast.utc_s, (frame.index - pd.Timestamp(0, tz="UTC")) / pd.Timedelta(seconds=1)
    )
    for c in weather.COLUMNS:
        np.testing.assert_array_equal(s.values[c], frame[c].to_numpy(float))
    assert forecast.start == frame.index[0] and forecast.end == frame.index[-1]
    assert forecast.local_times() == [t.to_pydatetime() for t in frame.index]
    assert forecast.tz == frame.index.tz
    with pytest.raises(ValueError):
        s.values["temperature_c"][0] = 99.0  # a forecast is a value: read-only arrays
    # made from a frame, a forecast gives back the same arrays and the same frame
    again = weather.Forecast(frame=frame, source="x", given=forecast.given)
    np.testing.assert_array_equal(again.utc_s, forecast.utc_s)
    assert again.frame is frame
    # a part of it, by rows; dataclasses.replace keeps the samples
    part = forecast.between(2, 5, source="part")
    assert part.source == "part" and part.warnings == forecast.warnings
    np.testing.assert_array_equal(part.values("temperature_c"), s.values["temperature_c"][2:5])
    import dataclasses

    moved = dataclasses.replace(forecast, source="moved")
    np.testing.assert_array_equal(moved.utc_s, forecast.utc_s)
    assert moved.source == "moved"


def test_local_time_and_time_index_are_one_instant():
    # the pandas index (built on demand) and the stdlib datetimes show the same instants
    from grower.weather.forecast import local_time, time_index

    utc = np.array([1796338327.5, 1796341927.25])
    idx = time_index(utc, TORONTO)
    assert [local_time(x, TORONTO) for x in utc] == [t.to_pydatetime() for t in idx]
    assert local_time(utc[0], TORONTO).utcoffset() == dt.timedelta(hours=-5)
