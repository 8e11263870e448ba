"""A forecast from a CSV file, validated line by line.

Errors name the file, the line and the column; a single missing value or row is filled
by linear interpolation and the repair is stated in ``Forecast.warnings``.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import os
from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from grower import arrays, files, limits
from grower.errors import InputError, did_you_mean, warn
from grower.site import Site
from grower.units import M_S_PER_MPH, f_to_c
from grower.weather.forecast import (
    Forecast,
    check_and_repair,
    localize,
    make_forecast,
    parse_time,
    zone_info,
    zone_offsets,
)

#: CSV column -> (frame column, conversion to the frame's unit, unit label)
_CSV_COLUMNS: dict[str, tuple[str, Callable[[NDArray[np.float64]], NDArray[np.float64]], str]] = {
    "temperature_c": ("temperature_c", lambda v: v, "°C"),
    "temperature_f": ("temperature_c", f_to_c, "°F"),
    "dew_point_c": ("dew_point_c", lambda v: v, "°C"),
    "dew_point_f": ("dew_point_c", f_to_c, "°F"),
    "cloud_cover_pct": ("cloud_cover_pct", lambda v: v, "%"),
    "cloud_cover_low_pct": ("cloud_cover_low_pct", lambda v: v, "%"),
    "wind_speed_m_s": ("wind_speed_m_s", lambda v: v, "m/s"),
    "wind_speed_mph": ("wind_speed_m_s", lambda v: v * M_S_PER_MPH, "mph"),
    "wind_speed_km_h": ("wind_speed_m_s", lambda v: v / 3.6, "km/h"),
    "shortwave_w_m2": ("shortwave_w_m2", lambda v: v, "W/m²"),
}
#: words some programs write for "no value": refused like NaN (a forecast with NaN is bad
#: input); only an empty cell counts as missing, and a single one is filled and stated
_NOT_A_VALUE = {"nan", "-nan", "+nan", "na", "n/a", "null", "none"}


def read_forecast_csv(
    path: str | os.PathLike[str], *, site: Site | None = None, timezone: str | None = None
) -> Forecast:
    """Read and validate a forecast CSV file.

    Columns: ``time`` (ISO 8601, with a UTC offset, or naive local clock times in the
    site's zone) and ``temperature_c`` or ``temperature_f``; optional ``dew_point_c`` /
    ``dew_point_f``, ``cloud_cover_pct`` [%], ``wind_speed_m_s`` / ``wind_speed_mph`` /
    ``wind_speed_km_h`` (10 m wind), ``shortwave_w_m2`` (global horizontal irradiance,
    instantaneous or centred on the row's time) [W m-2].

    Naive times take the zone `timezone` (else ``site.timezone``). In the fall-back hour
    an ambiguous clock time is resolved by order: the first 01:30 is daylight time, a
    repeated one standard time. A clock time skipped by spring-forward is an error.

    Returns
    -------
    Forecast
        Indexed in the zone when one is known, else in the file's offset(s).

    Raises
    ------
    InputError
        One line naming the file, the line and the column: unknown or duplicate
        columns, times out of order or over 3 h apart, values out of range, two or more
        missing values in a row, a dew point more than 0.5 K above the air.
    """
    where = os.fspath(path)
    zone_name = timezone or (site.timezone if site else None)
    zone = zone_info(zone_name, where) if zone_name else None
    text = files.read_text(path, files.FORECAST_FILE_MAX_BYTES, where, what="UTF-8 text")
    try:
        reader = csv.reader(io.StringIO(text, newline=""))
        header = next(reader, None)
        with files.no_gc():
            rows = [(reader.line_num, row) for row in reader if any(c.strip() for c in row)]
    except csv.Error as exc:
        raise InputError(f"not a readable CSV file ({exc})", where=where) from None
    if not header or not any(h.strip() for h in header):
        raise InputError(
            "empty file (a header row with time and temperature_c is expected)", where=where
        )
    header = [h.strip() for h in header]
    columns = _csv_header(header, where)
    if not rows:
        raise InputError("no data rows", where=where)
    lines = [line for line, _ in rows]
    for line, row in rows:
        if len(row) != len(header):
            raise InputError(
                f"line {line}: {len(row)} fields, the header has {len(header)}", where=where
            )
    cells = {h: [row[j].strip() for _, row in rows] for j, h in enumerate(header)}

    times = [
        parse_time(text, f"line {line}", where)
        for text, line in zip(cells["time"], lines, strict=True)
    ]
    lo_year, hi_year = limits.YEARS
    for t, line in zip(times, lines, strict=True):
        if not lo_year <= t.year <= hi_year:
            raise InputError(
                f"line {line}, column time: the year {t.year} is outside {lo_year}–{hi_year}",
                where=where,
            )
    aware = [t.tzinfo is not None for t in times]
    if any(aware) and not all(aware):
        i = aware.index(not aware[0])
        raise InputError(
            f"line {lines[i]}, column time: some times carry a UTC offset and some do not",
            where=where,
        )
    if not aware[0] and zone is None:
        raise InputError(
            "times have no UTC offset and no time zone is known: write offsets (2026-12-03T16:00-05:00) or give the site's time zone",
            where=where,
        )
    if aware[0]:
        utc_s = np.array([t.timestamp() for t in times])
        offsets = np.array([int(t.utcoffset().total_seconds()) for t in times])
    else:
        utc_s, offsets = localize(times, zone, [f"line {n}, column time" for n in lines], where)

    values, label_unit = {}, {}
    for head, (col, convert, unit) in columns.items():
        values[col] = convert(
            np.array(
                [
                    _parse_number(t, f"line {n}, column {head}", where)
                    for t, n in zip(cells[head], lines, strict=True)
                ]
            )
        )
        label_unit[col] = (head, unit)

    def raw(col: str, i: int) -> str:
        head, unit = label_unit[col]
        return f"{cells[head][i]} {unit}"

    _check_wind(values, label_unit, cells, lines, where)
    utc_s, offsets, values, warnings = check_and_repair(
        utc_s,
        offsets,
        values,
        label=lambda i: f"line {lines[i]}",
        name={c: h for c, (h, _) in label_unit.items()},
        raw=raw,
        where=where,
    )
    _check_fahrenheit(values, label_unit, where)
    if site is not None and "shortwave_w_m2" in values:
        check_sun(utc_s, values["shortwave_w_m2"], site, where)
    elif "shortwave_w_m2" in values:
        _warn_night_sun(utc_s, offsets, values["shortwave_w_m2"], where)
    if zone is not None:
        tz, tz_name = zone, zone_name
        offsets = zone_offsets(utc_s, zone)
    elif arrays.unique(offsets).size == 1:
        tz, tz_name = dt.timezone(dt.timedelta(seconds=int(offsets[0]))), None
    else:
        # offsets change inside the file (a clock change) and no site zone is known: show
        # times on the file's own clock, through a zone that keeps exactly those offsets
        tz, tz_name = _zone_keeping(utc_s, offsets), None
        if tz is dt.UTC:
            warnings = [
                *warnings,
                "the file's UTC offsets change in a way no time zone does: times shown in UTC",
            ]
    return make_forecast(
        utc_s,
        offsets,
        values,
        set(values),
        tz=tz,
        timezone=tz_name,
        source=f"file {where}",
        warnings=tuple(warnings),
    )


def _zone_keeping(utc_s, offsets) -> dt.tzinfo:
    """An IANA zone whose clock has exactly `offsets` at `utc_s`, else UTC."""
    from zoneinfo import ZoneInfo, available_timezones

    change = np.flatnonzero(np.diff(offsets))
    probe = arrays.unique(np.concatenate(([0, offsets.size - 1], change, change + 1)))
    for name in sorted(available_timezones()):
        try:
            zone = ZoneInfo(name)
        except Exception:  # a broken tzdata entry
            continue
        if all(
            dt.datetime.fromtimestamp(float(utc_s[i]), zone).utcoffset().total_seconds()
            == offsets[i]
            for i in probe
        ) and np.array_equal(zone_offsets(utc_s, zone), offsets):
            return zone
    return dt.UTC


def _check_wind(values, label_unit, cells, lines, where: str) -> None:
    """The wind's physical bound (the shared range check only refuses a negative one)."""
    wind = values.get("wind_speed_m_s")
    if wind is not None:
        b = limits.WIND_M_S
        bad = np.flatnonzero(np.isfinite(wind) & (wind > b.hi))
        if bad.size:
            i = int(bad[0])
            head = label_unit["wind_speed_m_s"][0]
            raise InputError(
                f'line {lines[i]}, column {head}: "{cells[head][i]}" is outside the possible '
                f"wind speed range, 0…{b.hi:g} m/s: {b.basis}",
                where=where,
            )


def _check_fahrenheit(values, label_unit, where: str) -> None:
    """°F numbers under a °C header: a warning when the column's median is hot."""
    temp = values["temperature_c"]
    head = label_unit["temperature_c"][0]
    if head == "temperature_c" and np.isfinite(temp).any():
        median = arrays.median(temp[~np.isnan(temp)])
        if median > CELSIUS_MEDIAN_WARN_C:
            warn(
                f"column temperature_c has a median of {median:.1f} °C, hot for a frost or fuel "
                "plan: if these are °F, name the column temperature_f",
                where=where,
            )


#: a temperature_c column whose median is above this may hold °F (a warning) [°C]
#: (common practice, no source: frost and fuel plans are for nights below ~20 °C)
CELSIUS_MEDIAN_WARN_C = 30.0
#: the solar constant [W m-2] (Kopp & Lean 2011, Geophys. Res. Lett. 38:L01706)
SOLAR_CONSTANT_W_M2 = 1361.0
#: slack on the sun's elevation [°] and on the irradiance [W m-2] before sun in a file
#: is called impossible (see `check_sun`; common practice, no source)
SUN_SLACK_DEG = 30.0
SUN_OFFSET_W_M2 = 100.0


def solar_elevation_deg(utc_s, latitude_deg: float, longitude_deg: float):
    """Approximate solar elevation [°] at UTC epoch seconds `utc_s` (vectorised).

    Declination and the equation of time from Spencer's Fourier series, hour angle from
    the longitude; no refraction. Good to about 0.5° — for plausibility checks only.

    References
    ----------
    Spencer, J. W. (1971). Fourier series representation of the position of the sun.
    *Search*, 2(5), 172.
    """
    t = np.asarray(utc_s, dtype=float)
    days = t / 86400.0
    year_start = np.array(
        [dt.datetime(y, 1, 1, tzinfo=dt.UTC).timestamp() for y in range(1900, 2201)]
    )
    idx = np.clip(np.searchsorted(year_start, t, side="right") - 1, 0, year_start.size - 1)
    day_of_year = (t - year_start[idx]) / 86400.0  # 0 at 1 January 00:00 UTC
    g = 2.0 * np.pi * day_of_year / 365.0
    decl = (
        0.006918
        - 0.399912 * np.cos(g)
        + 0.070257 * np.sin(g)
        - 0.006758 * np.cos(2 * g)
        + 0.000907 * np.sin(2 * g)
        - 0.002697 * np.cos(3 * g)
        + 0.00148 * np.sin(3 * g)
    )
    eot_min = 229.18 * (
        0.000075
        + 0.001868 * np.cos(g)
        - 0.032077 * np.sin(g)
        - 0.014615 * np.cos(2 * g)
        - 0.040849 * np.sin(2 * g)
    )
    utc_h = (days % 1.0) * 24.0
    solar_h = utc_h + longitude_deg / 15.0 + eot_min / 60.0
    hour_angle = np.radians(15.0 * (solar_h - 12.0))
    lat = np.radians(latitude_deg)
    sin_el = np.sin(lat) * np.sin(decl) + np.cos(lat) * np.cos(decl) * np.cos(hour_angle)
    return np.degrees(np.arcsin(np.clip(sin_el, -1.0, 1.0)))


def check_sun(
    utc_s, shortwave, site: Site, where: str, column: str = "column shortwave_w_m2"
) -> None:
    """Refuse sun the sky cannot give: more than the solar constant on a horizontal
    surface with the sun `SUN_SLACK_DEG` higher than it is (about two hours of the sun's
    motion: slack for a clock an hour or two out, hour means and crude synthetic days)
    plus `SUN_OFFSET_W_M2` of sensor offset and twilight. Sun at midnight fails."""
    elevation = solar_elevation_deg(utc_s, site.latitude_deg, site.longitude_deg)
    lifted = np.clip(np.sin(np.radians(elevation + SUN_SLACK_DEG)), 0, 1)
    ceiling = SOLAR_CONSTANT_W_M2 * lifted + SUN_OFFSET_W_M2
    bad = np.flatnonzero(np.isfinite(shortwave) & (shortwave > ceiling))
    if bad.size:
        i = int(bad[0])
        when = dt.datetime.fromtimestamp(float(utc_s[i]), dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
        raise InputError(
            f"{column}: {shortwave[i]:g} W/m² at {when}, when the sun is "
            f"{abs(elevation[i]):.0f}° {'below' if elevation[i] < 0 else 'above'} the site's "
            f"horizon (at most {ceiling[i]:.0f} W/m² then): are the times in the right zone?",
            where=where,
        )


#: with no site to place the sun: strong sun between 23:00 and 03:59 on the file's
#: clock is warned about [W m-2] (the midnight sun of the polar summer stays low, under
#: ~150 W/m²; common practice, no source)
NIGHT_SUN_WARN_W_M2 = 300.0


def _warn_night_sun(utc_s, offsets, shortwave, where: str) -> None:
    local_h = ((np.asarray(utc_s) + np.asarray(offsets)) % 86400.0) // 3600.0
    night = (local_h >= 23) | (local_h < 4)
    bad = np.flatnonzero(night & np.isfinite(shortwave) & (shortwave > NIGHT_SUN_WARN_W_M2))
    if bad.size:
        i = int(bad[0])
        warn(
            f"column shortwave_w_m2: {shortwave[i]:g} W/m² at {int(local_h[i]):02d}:00 on the "
            "file's clock: are the times in the right zone? (add a [site] to check the sun)",
            where=where,
        )


def _csv_header(header: list[str], where: str) -> dict[str, tuple]:
    known = ("time", *_CSV_COLUMNS)
    seen: dict[str, str] = {}
    for j, head in enumerate(header):
        if not head:
            raise InputError(f"line 1: column {j + 1} has no name", where=where)
        if head not in known:
            raise InputError(
                f'line 1: unknown column "{head}"{did_you_mean(head, known)} (known: {", ".join(known)})',
                where=where,
            )
        target = "time" if head == "time" else _CSV_COLUMNS[head][0]
        if target in seen:
            raise InputError(
                f'line 1: columns "{seen[target]}" and "{head}" give the same quantity', where=where
            )
        seen[target] = head
    if "time" not in seen:
        raise InputError('line 1: no "time" column', where=where)
    if "temperature_c" not in seen:
        raise InputError(
            'line 1: no temperature column ("temperature_c" or "temperature_f")', where=where
        )
    return {h: _CSV_COLUMNS[h] for h in header if h != "time"}


def _parse_number(text: str, label: str, where: str) -> float:
    if not text:
        return np.nan
    if text.lower() in _NOT_A_VALUE:
        raise InputError(
            f'{label}: "{text}" is not a value (leave the cell empty where one value is missing)',
            where=where,
        )
    try:
        return float(text)
    except ValueError:
        raise InputError(f'{label}: "{text}" is not a number', where=where) from None
