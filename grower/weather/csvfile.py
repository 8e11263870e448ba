"""A forecast from a CSV file, validated line by line.

Errors name the file, the line and the column; a single missing value or row is filled
by linear interpolation and the repair is stated in ``Forecast.warnings``.
"""

from __future__ import annotations

import csv
import datetime as dt
import os
from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from grower.errors import InputError, did_you_mean
from grower.site import Site
from grower.units import M_S_PER_MPH, f_to_c
from grower.weather.forecast import (
    Forecast,
    _check_and_repair,
    _localize,
    _make,
    _parse_time,
    _zone,
    _zone_offsets,
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
_MISSING = {"", "nan", "na", "n/a", "null", "none"}


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
    zone = _zone(zone_name, where) if zone_name else None
    try:
        with open(path, newline="", encoding="utf-8-sig") as handle:
            reader = csv.reader(handle)
            header = next(reader, None)
            rows = [(reader.line_num, row) for row in reader if any(cell.strip() for cell in row)]
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file", where=where) from None
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
        _parse_time(text, f"line {line}", where)
        for text, line in zip(cells["time"], lines, strict=True)
    ]
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
        utc_s, offsets = _localize(times, zone, [f"line {n}, column time" for n in lines], where)

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

    utc_s, offsets, values, warnings = _check_and_repair(
        utc_s,
        offsets,
        values,
        label=lambda i: f"line {lines[i]}",
        name={c: h for c, (h, _) in label_unit.items()},
        raw=raw,
        where=where,
    )
    if zone is not None:
        tz, tz_name = zone, zone_name
        offsets = _zone_offsets(utc_s, zone)
    elif np.unique(offsets).size == 1:
        tz, tz_name = dt.timezone(dt.timedelta(seconds=int(offsets[0]))), None
    else:
        tz, tz_name = dt.UTC, None
    return _make(
        utc_s,
        offsets,
        values,
        set(values),
        tz=tz,
        timezone=tz_name,
        source=f"file {where}",
        warnings=tuple(warnings),
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
    if text.lower() in _MISSING:
        return np.nan
    try:
        return float(text)
    except ValueError:
        raise InputError(f'{label}: "{text}" is not a number', where=where) from None
