"""Logger CSV exports: the usual formats, units, time zones, and one-line errors.

The records here are hand-written (invented values). Times are checked against UTC
instants written out by hand; unit conversions against pint, an independent units
library (°F → °C, Btu/h → W).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pytest

from grower.errors import InputError
from grower.logger import read_logger_csv

from .reference_units import UREG as ureg

TORONTO = "America/Toronto"


def _utc(*args: int) -> float:
    return dt.datetime(*args, tzinfo=dt.UTC).timestamp()


def _write(tmp_path: Path, text: str, name: str = "log.csv", encoding: str = "utf-8") -> Path:
    path = tmp_path / name
    path.write_bytes(text.strip("\n").encode(encoding) + b"\n")
    return path


def _error(tmp_path: Path, text: str, **kw) -> str:
    path = _write(tmp_path, text)
    with pytest.raises(InputError) as info:
        read_logger_csv(path, **kw)
    msg = str(info.value)
    assert "\n" not in msg
    assert msg.startswith(str(path))  # names the file
    return msg


def _f_to_c(value_f: float) -> float:
    return ureg.Quantity(value_f, ureg.degF).to(ureg.degC).magnitude


# 2026-11-20 18:00 in Toronto is EST (UTC−5): 23:00 UTC
EVENING_UTC = [_utc(2026, 11, 20, 23, 0), _utc(2026, 11, 20, 23, 10), _utc(2026, 11, 20, 23, 20)]

FORMATS = {
    "iso with offset": (
        "time,inside_c,outside_c\n"
        "2026-11-20T18:00-05:00,12.5,3.1\n"
        "2026-11-20T18:10-05:00,12.3,3.0\n"
        "2026-11-20T18:20-05:00,12.1,2.9\n",
        {},
    ),
    "iso with Z": (
        "timestamp,inside,outside\n"
        "2026-11-20T23:00:00Z,12.5,3.1\n"
        "2026-11-20T23:10:00Z,12.3,3.0\n"
        "2026-11-20T23:20:00Z,12.1,2.9\n",
        {},
    ),
    "naive with space": (
        "Time,Inside,Outside\n2026-11-20 18:00,12.5,3.1\n2026-11-20 18:10,12.3,3.0\n2026-11-20 18:20,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "naive with seconds": (
        "Time,Inside,Outside\n2026-11-20 18:00:00,12.5,3.1\n2026-11-20 18:10:00,12.3,3.0\n2026-11-20 18:20:00,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "month first, AM/PM, seconds": (
        "Date Time,Inside Temp,Outside Temp\n"
        "11/20/2026 6:00:00 PM,12.5,3.1\n"
        "11/20/2026 6:10:00 PM,12.3,3.0\n"
        "11/20/2026 6:20:00 PM,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "month first, AM/PM, no seconds, mixed": (
        "Date Time,Inside Temp,Outside Temp\n"
        "11/20/2026 6:00 PM,12.5,3.1\n"
        "11/20/2026 6:10:00 PM,12.3,3.0\n"
        "11/20/2026 6:20 pm,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "day first with dots, semicolons, decimal comma": (
        "Datum/Zeit time;Inside;Outside\n20.11.2026 18:00;12,5;3,1\n20.11.2026 18:10;12,3;3,0\n20.11.2026 18:20;12,1;2,9\n",
        {"timezone": TORONTO},
    ),
    "day first with dots and seconds, tabs": (
        "time\tinside\toutside\n20.11.2026 18:00:00\t12,5\t3,1\n20.11.2026 18:10:00\t12,3\t3,0\n20.11.2026 18:20:00\t12,1\t2,9\n",
        {"timezone": TORONTO},
    ),
    "day first with slashes (day above 12)": (
        "time,inside,outside\n20/11/2026 18:00,12.5,3.1\n20/11/2026 18:10,12.3,3.0\n20/11/2026 18:20,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "separate date and time columns": (
        "Date,Time,Inside,Outside\n2026-11-20,18:00,12.5,3.1\n2026-11-20,18:10,12.3,3.0\n2026-11-20,18:20,12.1,2.9\n",
        {"timezone": TORONTO},
    ),
    "offset in the time column's name": (
        "Date Time GMT-05:00,Inside,Outside\n11/20/26 06:00:00 PM,12.5,3.1\n11/20/26 06:10:00 PM,12.3,3.0\n11/20/26 06:20:00 PM,12.1,2.9\n",
        {},
    ),
    "title lines and a units row": (
        "Propagation house logger\nexported 2026-11-25\n"
        "Date/time;Inside;Outside\n;°C;°C\n"
        "20.11.2026 18:00;12,5;3,1\n20.11.2026 18:10;12,3;3,0\n20.11.2026 18:20;12,1;2,9\n",
        {"timezone": TORONTO},
    ),
}


@pytest.mark.parametrize("name", list(FORMATS))
def test_each_format_gives_the_same_record(tmp_path, name):
    text, kw = FORMATS[name]
    rec = read_logger_csv(_write(tmp_path, text), **kw)
    np.testing.assert_allclose(rec.utc_s, EVENING_UTC)
    np.testing.assert_allclose(rec.inside_c, [12.5, 12.3, 12.1])
    np.testing.assert_allclose(rec.outside_c, [3.1, 3.0, 2.9])


def test_fahrenheit_from_column_names(tmp_path):
    text = (
        "Time,Inside (°F),Outside (°F)\n"
        "11/20/2026 6:00 PM,54.5,37.6\n11/20/2026 6:10 PM,54.1,37.4\n11/20/2026 6:20 PM,53.6,37.2\n"
    )
    rec = read_logger_csv(_write(tmp_path, text), timezone=TORONTO)
    np.testing.assert_allclose(rec.inside_c, [_f_to_c(v) for v in (54.5, 54.1, 53.6)], atol=1e-12)
    np.testing.assert_allclose(rec.outside_c, [_f_to_c(v) for v in (37.6, 37.4, 37.2)], atol=1e-12)
    assert rec.units["inside"] == "°F"


def test_fahrenheit_from_a_units_row_and_cp1252_degree_sign(tmp_path):
    text = "time,inside,outside\n,°F,°F\n2026-11-20 18:00,54.5,37.6\n2026-11-20 18:10,54.1,37.4\n"
    path = _write(tmp_path, text, encoding="cp1252")
    rec = read_logger_csv(path, timezone=TORONTO)
    np.testing.assert_allclose(rec.inside_c, [_f_to_c(54.5), _f_to_c(54.1)], atol=1e-12)
    assert any("Windows-1252" in n for n in rec.notes)


def test_fahrenheit_suffix_names(tmp_path):
    text = "time,inside_f,outside_f\n2026-11-20T18:00-05:00,50,32\n2026-11-20T18:10-05:00,41,23\n"
    rec = read_logger_csv(_write(tmp_path, text))
    np.testing.assert_allclose(rec.inside_c, [10.0, 5.0])
    np.testing.assert_allclose(rec.outside_c, [0.0, -5.0])


def test_heater_state_words_numbers_and_shares(tmp_path):
    text = (
        "time,inside,outside,heater\n"
        "2026-11-20T18:00-05:00,12,3,off\n"
        "2026-11-20T18:10-05:00,12,3,ON\n"
        "2026-11-20T18:20-05:00,12,3,1\n"
        "2026-11-20T18:30-05:00,12,3,0\n"
        "2026-11-20T18:40-05:00,12,3,0.25\n"
        "2026-11-20T18:50-05:00,12,3,true\n"
    )
    rec = read_logger_csv(_write(tmp_path, text))
    np.testing.assert_allclose(rec.heater_fraction, [0, 1, 1, 0, 0.25, 1])
    assert rec.heater_w is None


def test_heater_percent_of_the_interval(tmp_path):
    text = "time,inside,outside,heater (%)\n2026-11-20T18:00-05:00,12,3,40\n2026-11-20T18:10-05:00,12,3,100\n"
    rec = read_logger_csv(_write(tmp_path, text))
    np.testing.assert_allclose(rec.heater_fraction, [0.4, 1.0])


@pytest.mark.parametrize(
    ("head", "unit", "values"),
    [
        ("Heater (W)", ureg.W, [0.0, 2500.0]),
        ("heater_kw", ureg.kW, [0.0, 2.5]),
        ("Heater [Btu/h]", ureg.Btu_it / ureg.hour, [0.0, 80000.0]),
    ],
)
def test_heater_power_units(tmp_path, head, unit, values):
    text = f"time,inside,outside,{head}\n2026-11-20T18:00-05:00,12,3,{values[0]}\n2026-11-20T18:10-05:00,12,3,{values[1]}\n"
    rec = read_logger_csv(_write(tmp_path, text))
    # the International Table Btu (pint: Btu_it), as grower.units defines it
    want = [ureg.Quantity(v, unit).to(ureg.W).magnitude for v in values]
    np.testing.assert_allclose(rec.heater_w, want, rtol=1e-12)
    assert rec.heater_fraction is None


def test_sun_column_and_slightly_negative_night_readings(tmp_path):
    text = "time,inside,outside,solar (W/m²)\n2026-11-20T18:00-05:00,12,3,-2\n2026-11-20T18:10-05:00,12,3,150\n"
    rec = read_logger_csv(_write(tmp_path, text))
    np.testing.assert_allclose(rec.sun_w_m2, [0.0, 150.0])
    assert any("negative" in n for n in rec.notes)


def test_a_single_temperature_column_is_the_inside(tmp_path):
    text = (
        "time,Temperature,RH (%)\n2026-11-20T18:00-05:00,12.5,80\n2026-11-20T18:10-05:00,12.3,81\n"
    )
    rec = read_logger_csv(_write(tmp_path, text))
    np.testing.assert_allclose(rec.inside_c, [12.5, 12.3])
    assert rec.outside_c is None
    assert any("RH" in n for n in rec.notes)


def test_columns_named_outright(tmp_path):
    text = "when,T1,T2\n2026-11-20T18:00-05:00,12.5,3.1\n2026-11-20T18:10-05:00,12.3,3.0\n"
    rec = read_logger_csv(
        _write(tmp_path, text), columns={"time": "when", "inside": "T1", "outside": "t2"}
    )
    np.testing.assert_allclose(rec.outside_c, [3.1, 3.0])
    assert rec.columns["outside"] == "T2"


def test_irregular_intervals_and_missing_inside_values(tmp_path):
    text = (
        "time,inside,outside\n"
        "2026-11-20T18:00-05:00,12.5,3.1\n"
        "2026-11-20T18:07-05:00,,3.0\n"
        "2026-11-20T18:31-05:00,12.1,2.9\n"
        "2026-11-20T22:40-05:00,10.0,1.0\n"
    )
    rec = read_logger_csv(_write(tmp_path, text))
    # the row without an inside reading is kept (its outside value still counts), NaN
    assert rec.n_rows == 4 and np.isnan(rec.inside_c[1])
    np.testing.assert_allclose(np.diff(rec.utc_s), [7 * 60, 24 * 60, (4 * 60 + 9) * 60])
    np.testing.assert_array_equal(rec.lines, [2, 3, 4, 5])
    assert any("1 row(s) without an inside temperature (line 3)" in n for n in rec.notes)


def test_fall_back_hour_is_read_in_order(tmp_path):
    # Toronto leaves daylight time on 2026-11-01 at 02:00 EDT: 01:00–01:59 happens twice
    text = (
        "time,inside,outside\n"
        "2026-11-01 00:30,10,2\n2026-11-01 01:00,10,2\n2026-11-01 01:30,10,2\n"
        "2026-11-01 01:00,10,2\n2026-11-01 01:30,10,2\n2026-11-01 02:00,10,2\n"
    )
    rec = read_logger_csv(_write(tmp_path, text), timezone=TORONTO)
    want = [
        _utc(2026, 11, 1, 4, 30),  # 00:30 EDT
        _utc(2026, 11, 1, 5, 0),  # 01:00 EDT
        _utc(2026, 11, 1, 5, 30),  # 01:30 EDT
        _utc(2026, 11, 1, 6, 0),  # 01:00 EST
        _utc(2026, 11, 1, 6, 30),  # 01:30 EST
        _utc(2026, 11, 1, 7, 0),  # 02:00 EST
    ]
    np.testing.assert_allclose(rec.utc_s, want)
    np.testing.assert_array_equal(rec.offsets_s, [-14400] * 3 + [-18000] * 3)


def test_spring_forward_gap_is_an_error(tmp_path):
    text = "time,inside,outside\n2026-03-08 01:30,10,2\n2026-03-08 02:30,10,2\n"
    msg = _error(tmp_path, text, timezone=TORONTO)
    assert "line 3, column time" in msg and "does not exist" in msg


def test_ambiguous_day_and_month_needs_a_choice(tmp_path):
    text = "time,inside,outside\n05/11/2026 18:00,12,3\n05/11/2026 18:10,12,3\n"
    msg = _error(tmp_path, text, timezone=TORONTO)
    assert "--day-first" in msg and "--month-first" in msg
    rec = read_logger_csv(tmp_path / "log.csv", timezone=TORONTO, day_first=True)
    assert rec.local(0).month == 11 and rec.local(0).day == 5
    rec = read_logger_csv(tmp_path / "log.csv", timezone=TORONTO, day_first=False)
    assert rec.local(0).month == 5 and rec.local(0).day == 11


def test_day_and_month_told_apart_by_increasing_times(tmp_path):
    # read month first, 12/01 would come before 01/02; only day first moves forward
    text = "time,inside,outside\n30/11/2026 23:50,12,3\n01/12/2026 00:00,12,3\n"
    rec = read_logger_csv(_write(tmp_path, text), timezone=TORONTO)
    assert rec.local(1).month == 12 and rec.local(1).day == 1


@pytest.mark.parametrize(
    ("text", "expect"),
    [
        (
            "time,inside,outside\n2026-11-20T18:00-05:00,12.5,3\n2026-11-20T18:10-05:00,warm,3\n",
            'line 3, column inside: "warm" is not a number',
        ),
        (
            "time,inside,outside\n2026-11-20T18:00-05:00,12.5,3\nyesterday,12,3\n",
            "line 3, column time",
        ),
        ("time,inside,outside\nsoon,12.5,3\n", "line 2, column time"),
        (
            "time,inside,outside\n2026-11-20T18:10-05:00,12.5,3\n2026-11-20T18:00-05:00,12,3\n",
            "line 3, column time: time is not after the previous row",
        ),
        (
            "time,inside,outside\n2026-11-20T18:00-05:00,12.5,3\n2026-11-20T18:10-05:00,12,3,7\n",
            "line 3: 4 fields, the header has 3",
        ),
        ("time,inside,outside\n2026-11-20T18:00-05:00,75,3\n", "line 2, column inside"),
        ("time,inside,outside,heater\n2026-11-20T18:00-05:00,12,3,1500\n", "line 2, column heater"),
        ("time,outside\n2026-11-20T18:00-05:00,3\n", "no inside temperature column"),
        ("inside,outside\n12,3\n", "no header row with a time column"),
        (
            "time,inside (°C),outside\n,°F,\n2026-11-20T18:00-05:00,12,3\n",
            "the name says °C, the units row says °F",
        ),
        ("time,inside,outside\n,kelvins,\n2026-11-20T18:00-05:00,12,3\n", 'unknown unit "kelvins"'),
        ("time,inside,outside\n2026-11-20 18:00,12,3\n", "no UTC offset"),
        (
            "time,inside,outside\n2026-11-20T18:00-05:00,12,3\n2026-11-20 18:10,12,3\n",
            "some times carry a UTC offset",
        ),
        ("time,inside,outside,solar\n2026-11-20T18:00-05:00,12,3,2000\n", "line 2, column solar"),
        ("time,inside,inside air\n2026-11-20T18:00-05:00,12,3\n", "several inside columns"),
        ("time,inside,outside\n", "no data rows"),
        ("", "empty file"),
    ],
)
def test_bad_files_give_one_line_naming_line_and_column(tmp_path, text, expect):
    path = tmp_path / "log.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as info:
        read_logger_csv(path)
    msg = str(info.value)
    assert "\n" not in msg and msg.startswith(str(path))
    assert expect in msg


def test_fahrenheit_numbers_without_a_unit_hint_at_the_fix(tmp_path):
    msg = _error(tmp_path, "time,inside,outside\n2026-11-20T18:00-05:00,54.5,37.6\n")
    assert "line 2, column inside" in msg and "°F" in msg


def test_binary_file_is_refused(tmp_path):
    path = tmp_path / "log.csv"
    path.write_bytes(b"\x00\x01\x02PK\x03\x04")
    with pytest.raises(InputError, match="not a text file"):
        read_logger_csv(path)


def test_unknown_role_named_in_columns(tmp_path):
    path = _write(tmp_path, "time,inside\n2026-11-20T18:00-05:00,12\n")
    with pytest.raises(InputError, match="--column"):
        read_logger_csv(path, columns={"humidity": "x"})


def test_example_record_reads(examples):
    rec = read_logger_csv(examples / "logger-gable-house.csv", timezone=TORONTO)
    assert rec.units == {"inside": "°C", "outside": "°C", "heater": "on/off"}
    assert rec.time_format.startswith("%d.%m.%Y")
    # invented: 4 days of 10-minute rows from 20 Nov 14:00 to 24 Nov 10:00, five rows
    # lost to a read-out and one inside value missing (that row kept, NaN)
    assert rec.n_rows == (4 * 24 - 4) * 6 + 1 - 5
    assert np.isnan(rec.inside_c).sum() == 1
    assert rec.heater_fraction.max() == 1.0 and rec.heater_fraction.min() == 0.0


# ---------------------------------------------------------------- dropped readings, resampling


def _record_text(n: int = 12, step_min: int = 10, blank_outside=(), blank_heater=()) -> str:
    lines = ["time,inside,outside,heater", ",°C,°C,on/off"]
    t0 = dt.datetime(2026, 11, 20, 18, 0)
    for i in range(n):
        t = t0 + dt.timedelta(minutes=step_min * i)
        out = "" if i in blank_outside else f"{-2 - 0.1 * i:.2f}"
        heat = "" if i in blank_heater else ("on" if i % 4 == 0 else "off")
        lines.append(f"{t:%Y-%m-%d %H:%M},{8 - 0.2 * i:.2f},{out},{heat}")
    return "\n".join(lines) + "\n"


def test_a_single_blank_outside_reading_is_filled_linearly(tmp_path):
    p = tmp_path / "r.csv"
    p.write_text(_record_text(blank_outside={5}), encoding="utf-8")
    r = read_logger_csv(p, timezone="America/Toronto")
    assert r.n_rows == 12 and np.isfinite(r.outside_c).all()
    assert r.outside_c[5] == pytest.approx(-2.5)  # halfway between −2.4 and −2.6
    assert any("1 missing reading(s) filled" in n and "line 8" in n for n in r.notes)


def test_a_long_outside_gap_leaves_rows_out_and_a_blank_heater_stays_unknown(tmp_path):
    p = tmp_path / "r.csv"
    # 10-minute rows: a run of 7 blanks spans 80 min between good readings (> 60 min)
    p.write_text(_record_text(n=20, blank_outside=set(range(5, 12)), blank_heater={15}), "utf-8")
    r = read_logger_csv(p, timezone="America/Toronto")
    assert r.n_rows == 20 - 7
    assert np.isfinite(r.outside_c).all()
    # the blank heater cell is not the previous row's state: unknown (the fit splits there)
    assert np.isnan(r.heater_fraction).sum() == 1 and np.isnan(r.heater_fraction[15 - 7])
    assert any("7 row(s) without a reading left out (lines 8–14)" in n for n in r.notes)
    assert any("1 row(s) without a reading (line 18)" in n for n in r.notes)


def test_line_ranges_names_runs_of_lines():
    from grower.logger import line_ranges

    assert line_ranges(np.array([7])) == "line 7"
    assert line_ranges(np.array([7, 8, 9, 40])) == "lines 7–9, 40"
    assert line_ranges(np.array([1, 3, 5, 7, 8])) == "lines 1, 3, 5 and 1 more"


def test_an_empty_outside_column_is_not_used(tmp_path):
    p = tmp_path / "r.csv"
    p.write_text(_record_text(blank_outside=set(range(12))), encoding="utf-8")
    r = read_logger_csv(p, timezone="America/Toronto")
    assert r.outside_c is None and any("has no readings" in n for n in r.notes)


def test_resample_averages_fine_records_and_keeps_coarse_ones(tmp_path):
    from grower.logger import resample

    p = tmp_path / "fine.csv"
    lines = ["time,inside,outside,heater"]
    t0 = dt.datetime(2026, 11, 20, 18, 0, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
    for i in range(1800):  # 30 min of 1-second readings; heater on the first minute of five
        t = t0 + dt.timedelta(seconds=i)
        lines.append(f"{t.isoformat()},{8 - i / 1800:.4f},-2,{'1' if i % 300 < 60 else '0'}")
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    r = read_logger_csv(p)
    s = resample(r)
    assert s.n_rows == 6
    # each 5-minute mean: the mean time and temperature of its 300 rows (exact means)
    assert s.utc_s[0] == pytest.approx(r.utc_s[:300].mean())
    assert s.inside_c[0] == pytest.approx(r.inside_c[:300].mean())
    assert s.heater_fraction == pytest.approx(np.full(6, 0.2))
    assert "averaged into 6 means of 5 min" in s.notes[-1]
    assert resample(s) is s  # already coarse: unchanged


def test_years_outside_1900_2200_are_refused(tmp_path):
    p = tmp_path / "r.csv"
    p.write_text(_record_text().replace("2026-11-20 19:00", "3026-11-20 19:00"), "utf-8")
    with pytest.raises(InputError, match="the year 3026 is outside 1900–2200"):
        read_logger_csv(p, timezone="America/Toronto")


def test_a_device_is_refused_before_reading():
    with pytest.raises(InputError, match="not a regular file"):
        read_logger_csv("/dev/zero")


@pytest.mark.parametrize("zone_name", ["America/Toronto", "Australia/Lord_Howe", "Europe/Berlin"])
def test_fast_localisation_agrees_with_zoneinfo_row_by_row(zone_name):
    """Across both clock changes of 2026 (Lord Howe's is half an hour), every 7 minutes:
    the quarter-hour lookup gives what zoneinfo gives row by row (reference: the
    standard library's zoneinfo, fold=0 on the first pass of a repeated hour)."""
    from zoneinfo import ZoneInfo

    from grower.logger.times import _localize_fast

    zone = ZoneInfo(zone_name)
    utc0 = [
        dt.datetime(2026, m, d, tzinfo=dt.UTC)
        for m, d in ((3, 27), (4, 3), (10, 23), (10, 30), (11, 1))
    ]
    instants = sorted(
        {u + dt.timedelta(minutes=7 * i) for u in utc0 for i in range(0, 3 * 24 * 60 // 7)}
    )
    local = [u.astimezone(zone) for u in instants]
    naive = [t.replace(tzinfo=None) for t in local]
    utc, offs = _localize_fast(naive, zone, zone_name, np.arange(len(naive)), "time", "test")
    assert utc == pytest.approx([u.timestamp() for u in instants], abs=1e-6)
    assert list(offs) == [int(t.utcoffset().total_seconds()) for t in local]
