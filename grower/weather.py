"""Forecasts: tonight's outside boundary from a file, from a forecast low, or live.

Three sources give one result, a `Forecast`: an hourly (or finer) frame with a
time-zone-aware index and the columns of `COLUMNS`, NaN where the source gave nothing.

* `read_forecast_csv` — a CSV file, validated line by line (errors name file, line and
  column; a single missing value or row is filled by linear interpolation and the repair
  is stated in ``Forecast.warnings``).
* `forecast_from_low` — a forecast low (and optionally high) turned into a curve with
  Parton & Logan (1981) and the continuous night of Kimball & Bellamy (1986); see
  `grower.diurnal`.
* `fetch_forecast` — Open-Meteo's forecast API through a persistent requests-cache
  (split into `fetch_openmeteo`, HTTP only, and `parse_openmeteo`, pure).

Then, pure functions on arrays: `prepare_boundary` puts a forecast on the solver's time
grid (piecewise linear between samples) with the sky temperature of `grower.sky`;
`shifted` and `ensemble` give a colder night and members with a correlated error.

Times: inside, every instant is UTC epoch seconds, so durations are right across a DST
change; the index shows local clock times (the site's zone, or the offsets a file gave).

References
----------
Open-Meteo Forecast API documentation, https://open-meteo.com/en/docs (response shape,
``utc_offset_seconds``, ``shortwave_radiation`` as the preceding-hour mean; data under
CC BY 4.0).
"""

from __future__ import annotations

import csv
import datetime as dt
import os
import re
import sqlite3
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

from grower import diurnal, sky
from grower.errors import InputError, did_you_mean
from grower.site import Site
from grower.units import M_S_PER_MPH, f_to_c

#: the frame's variables, SI-ish units in the names
COLUMNS = ("temperature_c", "dew_point_c", "cloud_cover_pct", "wind_speed_m_s", "shortwave_w_m2")
#: accepted range of each variable (inclusive) after conversion to the column's unit
RANGES: dict[str, tuple[float, float]] = {
    "temperature_c": (-60.0, 60.0),
    "dew_point_c": (-60.0, 60.0),
    "cloud_cover_pct": (0.0, 100.0),
    "wind_speed_m_s": (0.0, np.inf),
    "shortwave_w_m2": (0.0, 1400.0),
}
#: longest gap between samples that is bridged (piecewise linear) [s]
MAX_GAP_S = 3 * 3600.0
#: a dew point this far above the air temperature [K] is clipped (with a warning); more is an error
DEW_POINT_EXCESS_K = 0.5
#: high = low + this when no high is given [K]. from memory: a typical clear-day range in
#: the mid-latitudes; not from a source — give the forecast high for a better curve.
DEFAULT_DIURNAL_RANGE_K = 10.0
DEFAULT_FORECAST_URL = "https://api.open-meteo.com"
OPEN_METEO_ATTRIBUTION = "Weather data by Open-Meteo.com (CC BY 4.0)"
_OPEN_METEO_VARS = {
    "temperature_2m": "temperature_c",
    "dew_point_2m": "dew_point_c",
    "cloud_cover": "cloud_cover_pct",
    "wind_speed_10m": "wind_speed_m_s",
    "shortwave_radiation": "shortwave_w_m2",
}
_UNIT_LABEL = {
    "temperature_c": "°C",
    "dew_point_c": "°C",
    "cloud_cover_pct": "%",
    "wind_speed_m_s": "m/s",
    "shortwave_w_m2": "W/m²",
}


def _num(value: float) -> str:
    """A number for messages, with a true minus sign: −4, 2.5."""
    return f"{value:g}".replace("-", "−")


# ---------------------------------------------------------------- the result


@dataclass(frozen=True, eq=False)
class Forecast:
    """A forecast on its own samples.

    Attributes
    ----------
    frame : pandas.DataFrame
        Index: tz-aware DatetimeIndex ("time"), strictly increasing — in the site's zone,
        in the single offset a file gave, or in UTC when a file mixed offsets with no
        zone known. Columns: `COLUMNS` (NaN where the source gave nothing) and
        ``utc_offset_s``, the UTC offset of each row's local clock [s].
    source : str
        "file examples/x.csv", "forecast low −4 °C", "Open-Meteo".
    given : tuple of str
        The columns of `COLUMNS` the source gave.
    issued_at, retrieved_at : datetime or None
        When the forecast was issued (None: not known) and obtained (UTC).
    from_cache : bool
        Served from the local cache.
    age_s : float or None
        Seconds since `retrieved_at` at the time of use.
    attribution : str or None
        Credit the report must show (CC BY data).
    warnings : tuple of str
        Repairs made and stale data used, one sentence each.
    timezone : str or None
        IANA zone of the index, None for fixed offsets.
    shortwave_offset_s : float
        A shortwave value labelled t describes time t + offset: −1800 for preceding-hour
        means (Open-Meteo), 0 for instantaneous or centred values (files).
    assumed_clear : bool
        No cloud data: the sky is taken as clear (the cautious side); reports say so.
    """

    frame: pd.DataFrame
    source: str
    given: tuple[str, ...]
    issued_at: dt.datetime | None = None
    retrieved_at: dt.datetime | None = None
    from_cache: bool = False
    age_s: float | None = None
    attribution: str | None = None
    warnings: tuple[str, ...] = ()
    timezone: str | None = None
    shortwave_offset_s: float = 0.0
    assumed_clear: bool = field(init=False)

    def __post_init__(self) -> None:
        index = self.frame.index
        if not isinstance(index, pd.DatetimeIndex) or index.tz is None:
            raise ValueError("frame must have a tz-aware DatetimeIndex")
        if len(index) < 2 or not index.is_monotonic_increasing or not index.is_unique:
            raise ValueError("frame index must hold two or more strictly increasing times")
        missing = [c for c in (*COLUMNS, "utc_offset_s") if c not in self.frame.columns]
        if missing or not set(self.given) <= set(COLUMNS) or "temperature_c" not in self.given:
            raise ValueError(f"frame lacks columns {missing} or given is wrong: {self.given}")
        object.__setattr__(self, "assumed_clear", "cloud_cover_pct" not in self.given)

    @property
    def start(self) -> pd.Timestamp:
        return self.frame.index[0]

    @property
    def end(self) -> pd.Timestamp:
        return self.frame.index[-1]

    @property
    def utc_s(self) -> NDArray[np.float64]:
        """Each sample as seconds since 1970-01-01 UTC."""
        return _epoch_seconds(self.frame.index)

    @property
    def times_s(self) -> NDArray[np.float64]:
        """Seconds since the first sample (from UTC: right across DST changes)."""
        utc = self.utc_s
        return utc - utc[0]

    def values(self, column: str) -> NDArray[np.float64]:
        """One column as a float array (NaN where not given)."""
        return self.frame[column].to_numpy(dtype=float)

    def local_times(self) -> list[dt.datetime]:
        """Each sample as an aware datetime in its local offset (for reports and JSON)."""
        offsets = self.frame["utc_offset_s"].to_numpy()
        if self.timezone is None and np.unique(offsets).size > 1:  # index in UTC
            return [
                dt.datetime.fromtimestamp(t, dt.timezone(dt.timedelta(seconds=int(off))))
                for t, off in zip(self.utc_s, offsets, strict=True)
            ]
        return [ts.to_pydatetime() for ts in self.frame.index]


def assumptions(forecast: Forecast) -> tuple[str, ...]:
    """What the boundary assumes for what the forecast did not give, one line each."""
    notes = []
    if forecast.assumed_clear:
        notes.append("no cloud cover given: clear sky assumed (the cautious side)")
    if "dew_point_c" not in forecast.given:
        notes.append(
            "no dew point given: sky temperature from air temperature alone (Swinbank 1963)"
        )
    if "wind_speed_m_s" not in forecast.given:
        notes.append("no wind speed given")
    if "shortwave_w_m2" not in forecast.given:
        notes.append("no solar radiation given: no solar gain counted")
    return tuple(notes)


def _epoch_seconds(index: pd.DatetimeIndex) -> NDArray[np.float64]:
    delta = index - pd.Timestamp(0, tz="UTC")
    return np.asarray(delta / pd.Timedelta(seconds=1), dtype=float)


def _index(utc_s: NDArray[np.float64], tz: Any) -> pd.DatetimeIndex:
    micro = np.round(np.asarray(utc_s) * 1e6).astype("int64")
    return pd.DatetimeIndex(pd.to_datetime(micro, unit="us", utc=True), name="time").tz_convert(tz)


def _zone(name: str, where: str) -> ZoneInfo:
    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise InputError(
            f'unknown time zone "{name}" (use an IANA name such as America/Toronto)', where=where
        ) from None


def _make(utc_s, offsets_s, values, given, *, tz, timezone, **meta) -> Forecast:
    frame = pd.DataFrame(
        {c: values.get(c, np.full(len(utc_s), np.nan)) for c in COLUMNS}, index=_index(utc_s, tz)
    )
    frame["utc_offset_s"] = np.asarray(offsets_s, dtype=np.int64)
    return Forecast(
        frame=frame, given=tuple(c for c in COLUMNS if c in given), timezone=timezone, **meta
    )


# ---------------------------------------------------------------- validation (shared)


def _check_and_repair(
    utc_s: NDArray[np.float64],
    offsets: NDArray[np.int64],
    values: dict[str, NDArray[np.float64]],
    *,
    label: Callable[[int], str],
    name: Mapping[str, str],
    raw: Callable[[str, int], str],
    where: str,
) -> tuple[NDArray[np.float64], NDArray[np.int64], dict[str, NDArray[np.float64]], list[str]]:
    """Order, ranges, missing values, dew point and gaps; returns the repaired series."""
    warnings: list[str] = []
    back = np.flatnonzero(np.diff(utc_s) <= 0) + 1
    if back.size:
        i = back[0]
        raise InputError(
            f"{label(i)}: time is not after the previous row's ({label(i - 1)}); times must be strictly increasing",
            where=where,
        )
    for col, v in values.items():
        lo, hi = RANGES[col]
        bad = np.flatnonzero(~np.isnan(v) & ((v < lo) | (v > hi)))
        if bad.size:
            i = bad[0]
            if np.isinf(v[i]):
                what = "is not a finite number"
            elif col == "wind_speed_m_s":
                what = "is a negative wind speed"
            else:
                what = f"is outside {_num(lo)}…{_num(hi)} {_UNIT_LABEL[col]}"
            raise InputError(f"{label(i)}, column {name[col]}: {raw(col, i)} {what}", where=where)
    n = utc_s.size
    if n < 2:
        raise InputError("a forecast needs at least two rows", where=where)
    for col, v in values.items():
        missing = np.isnan(v)
        if not missing.any():
            continue
        edges = np.diff(np.concatenate(([0], missing.astype(int), [0])))
        for s, e in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1, strict=True):
            if s == 0 or e == n - 1:
                raise InputError(
                    f"{label(s)}, column {name[col]}: missing value at the {'start' if s == 0 else 'end'} (only a value between two good ones is filled)",
                    where=where,
                )
            if e > s:
                raise InputError(
                    f"{label(s)} to {label(e)}, column {name[col]}: {e - s + 1} missing values in a row (only a single one between two good values is filled)",
                    where=where,
                )
            frac = (utc_s[s] - utc_s[s - 1]) / (utc_s[s + 1] - utc_s[s - 1])
            v[s] = v[s - 1] + frac * (v[s + 1] - v[s - 1])
            warnings.append(
                f"{label(s)}, column {name[col]}: missing value filled by linear interpolation ({v[s]:.4g})"
            )
    if "dew_point_c" in values:
        temp, dew = values["temperature_c"], values["dew_point_c"]
        excess = dew - temp
        bad = np.flatnonzero(excess > DEW_POINT_EXCESS_K + 1e-9)
        if bad.size:
            i = bad[0]
            raise InputError(
                f"{label(i)}, column {name['dew_point_c']}: dew point {raw('dew_point_c', i)} is {excess[i]:.2g} K above the air temperature (more than {DEW_POINT_EXCESS_K:g} K)",
                where=where,
            )
        clip = np.flatnonzero(excess > 0)
        if clip.size:
            dew[clip] = temp[clip]
            warnings.append(
                f"dew point above the air temperature by up to {excess[clip].max():.2g} K on {clip.size} row(s) (first: {label(clip[0])}): set equal to the air temperature (saturated air)"
            )
    gaps = np.diff(utc_s)
    wide = np.flatnonzero(gaps > MAX_GAP_S + 1e-6)
    if wide.size:
        i = wide[0]
        raise InputError(
            f"{label(i + 1)}: {gaps[i] / 3600:.3g} h after the previous row ({label(i)}); gaps over {MAX_GAP_S / 3600:g} h are not bridged",
            where=where,
        )
    steps, counts = np.unique(np.round(gaps), return_counts=True)
    step = steps[np.argmax(counts)]
    fill = np.round(gaps / step)
    holes = np.flatnonzero((fill >= 2) & (np.abs(gaps - fill * step) < 1e-3))
    if holes.size:
        times, offs = [utc_s], [offsets]
        for i in holes:
            extra = utc_s[i] + step * np.arange(1, fill[i])
            times.append(extra)
            offs.append(np.full(extra.size, offsets[i]))
            warnings.append(
                f"{int(fill[i]) - 1} missing row(s) between {label(i)} and {label(i + 1)} filled by linear interpolation"
            )
        new = np.concatenate(times)
        order = np.argsort(new)
        values = {c: np.interp(new[order], utc_s, v) for c, v in values.items()}
        utc_s, offsets = new[order], np.concatenate(offs)[order]
    return utc_s, offsets, values, warnings


# ---------------------------------------------------------------- file


#: CSV column -> (frame column, conversion to the frame's unit, unit label)
_CSV_COLUMNS: dict[str, tuple[str, Callable[[NDArray[np.float64]], NDArray[np.float64]], str]] = {
    "temperature_c": ("temperature_c", lambda v: v, "°C"),
    "temperature_f": ("temperature_c", f_to_c, "°F"),
    "dew_point_c": ("dew_point_c", lambda v: v, "°C"),
    "dew_point_f": ("dew_point_c", f_to_c, "°F"),
    "cloud_cover_pct": ("cloud_cover_pct", lambda v: v, "%"),
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


def _parse_time(text: str, label: str, where: str) -> dt.datetime:
    try:
        return dt.datetime.fromisoformat(text)
    except ValueError:
        shown = f'"{text}"' if text else "empty"
        raise InputError(
            f"{label}, column time: {shown} is not an ISO 8601 time (e.g. 2026-12-03T16:00-05:00)",
            where=where,
        ) from None


def _parse_number(text: str, label: str, where: str) -> float:
    if text.lower() in _MISSING:
        return np.nan
    try:
        return float(text)
    except ValueError:
        raise InputError(f'{label}: "{text}" is not a number', where=where) from None


def _localize(
    naive: Sequence[dt.datetime], zone: ZoneInfo, labels: Sequence[str], where: str | None
) -> tuple[NDArray[np.float64], NDArray[np.int64]]:
    """Naive clock times in `zone` → UTC seconds and offsets; ambiguous ones by order."""
    utc, offsets, previous = [], [], -np.inf
    for t, label in zip(naive, labels, strict=True):
        early, late = t.replace(tzinfo=zone, fold=0), t.replace(tzinfo=zone, fold=1)
        if early.astimezone(dt.UTC).astimezone(zone).replace(tzinfo=None) != t:
            raise InputError(
                f"{label}: {t.isoformat()} does not exist in {zone.key} (the clocks spring forward); write the UTC offset",
                where=where,
            )
        chosen = (
            early if early.timestamp() > previous or early.utcoffset() == late.utcoffset() else late
        )
        previous = chosen.timestamp()
        utc.append(previous)
        offsets.append(int(chosen.utcoffset().total_seconds()))
    return np.array(utc), np.array(offsets)


def _zone_offsets(utc_s: NDArray[np.float64], zone: Any) -> NDArray[np.int64]:
    return np.array(
        [int(dt.datetime.fromtimestamp(t, zone).utcoffset().total_seconds()) for t in utc_s]
    )


# ---------------------------------------------------------------- from a forecast low


def forecast_from_low(
    site: Site,
    low_c: float,
    start: dt.datetime,
    *,
    high_c: float | None = None,
    dew_point_c: float | None = None,
    cloud_pct: float | None = None,
    wind_m_s: float | None = None,
    hours: float | None = None,
    step_s: float = 3600.0,
) -> Forecast:
    """Tonight's curve from a forecast low (Parton & Logan 1981; Kimball & Bellamy 1986).

    Parameters
    ----------
    site : Site
        Position (for sunrise and sunset, astral 3.x) and time zone.
    low_c : float
        Forecast low [°C]; reached at each morning's sunrise + c (c = −0.17 h).
    start : datetime
        "Now": the first sample (naive: the site's clock). The curve's value there is
        the starting temperature.
    high_c : float, optional
        Forecast high [°C]; default ``low_c + DEFAULT_DIURNAL_RANGE_K`` (10 K, from
        memory), stated in the warnings. The same low and high are used every day.
    dew_point_c, cloud_pct, wind_m_s : float, optional
        Constants over the night [°C, %, m/s]; None: not given (sky from Swinbank;
        clear sky, the cautious side). A dew point above the curve is capped at the air
        temperature (saturated air), with a warning.
    hours : float, optional
        Length [h]; default: until 3 h after the first sunrise after `start`.
    step_s : float
        Sample spacing [s], e.g. 900 for 15 minutes.

    Returns
    -------
    Forecast
        Samples at ``start + k·step_s`` (UTC arithmetic: right across DST changes).

    References
    ----------
    Parton & Logan (1981), *Agric. Meteorol.* 23:205–216; Kimball & Bellamy (1986),
    *Energy in Agriculture* 5:185–197 (see `grower.diurnal`).
    """
    zone = _zone(site.timezone, "site")
    if start.tzinfo is None:
        start_s = float(_localize([start], zone, ["start time"], None)[0][0])
    else:
        start_s = start.timestamp()
    warnings = []
    source = f"forecast low {_num(low_c)} °C"
    _check_range(low_c, "temperature_c", "forecast low")
    if high_c is None:
        high_c = low_c + DEFAULT_DIURNAL_RANGE_K
        warnings.append(
            f"no forecast high given: high taken as the low + {DEFAULT_DIURNAL_RANGE_K:g} K = "
            f"{_num(high_c)} °C (a typical day's range, from memory)"
        )
    else:
        source += f", high {_num(high_c)} °C"
    _check_range(high_c, "temperature_c", "forecast high")
    if high_c < low_c:
        raise InputError(f"forecast high {_num(high_c)} °C is below the low {_num(low_c)} °C")
    _check_range(dew_point_c, "dew_point_c", "dew point")
    _check_range(cloud_pct, "cloud_cover_pct", "cloud cover")
    _check_range(wind_m_s, "wind_speed_m_s", "wind speed")
    if not 0 < step_s <= MAX_GAP_S:
        raise InputError(f"time step {step_s:g} s: must be above 0 and at most {MAX_GAP_S:g} s")
    if hours is not None and not 0 < hours <= 24 * 14:
        raise InputError(f"curve length {hours:g} h: must be above 0 and at most 14 days")

    lat, lon = site.latitude_deg, site.longitude_deg
    rise, fall = diurnal.sun_events(lat, lon, start_s, start_s + 2 * 86400.0)
    end_s = rise[rise > start_s][0] + 3 * 3600.0 if hours is None else start_s + hours * 3600.0
    rise, fall = diurnal.sun_events(lat, lon, start_s, end_s)
    count = int(np.ceil((end_s - start_s) / step_s - 1e-9)) + 1
    utc_s = start_s + step_s * np.arange(count)
    temp = diurnal.diurnal_temperature(utc_s, rise, fall, low_c, high_c)
    values = {"temperature_c": temp}
    if dew_point_c is not None:
        values["dew_point_c"] = np.minimum(dew_point_c, temp)
        if dew_point_c > temp.min():
            warnings.append(
                f"dew point {_num(dew_point_c)} °C is above the air temperature at times: "
                "capped at the air temperature there (saturated air)"
            )
    for value, col in ((cloud_pct, "cloud_cover_pct"), (wind_m_s, "wind_speed_m_s")):
        if value is not None:
            values[col] = np.full(count, float(value))
    offsets = _zone_offsets(utc_s, zone)
    return _make(
        utc_s,
        offsets,
        values,
        set(values),
        tz=zone,
        timezone=site.timezone,
        source=source,
        warnings=tuple(warnings),
    )


def _check_range(value: float | None, col: str, what: str) -> None:
    lo, hi = RANGES[col]
    if value is not None and not (np.isfinite(value) and lo <= value <= hi):
        unit = _UNIT_LABEL[col]
        raise InputError(f"{what} {_num(value)} {unit} is outside {_num(lo)}…{_num(hi)} {unit}")


# ---------------------------------------------------------------- Open-Meteo


def forecast_url() -> str:
    """Base URL of the forecast service: ``GROWER_FORECAST_URL`` or Open-Meteo's."""
    return (os.environ.get("GROWER_FORECAST_URL") or DEFAULT_FORECAST_URL).rstrip("/")


def cache_file() -> Path:
    """The forecast cache (SQLite): in ``GROWER_CACHE_DIR`` or the user cache dir."""
    folder = os.environ.get("GROWER_CACHE_DIR")
    if not folder:
        from platformdirs import user_cache_dir

        folder = user_cache_dir("grower")
    return Path(folder) / "forecast-cache.sqlite"


@dataclass(frozen=True)
class Fetched:
    """A forecast document as fetched: the JSON and where and when it came from."""

    document: dict[str, Any]
    url: str
    retrieved_at: dt.datetime
    from_cache: bool
    stale: bool
    age_s: float


def _is_forecast(response: Any) -> bool:
    """Cache only 200 answers that are JSON objects with hourly data."""
    try:
        return response.status_code == 200 and isinstance(response.json().get("hourly"), dict)
    except Exception:
        return False


def _reason(exc: Exception) -> str:
    text = str(exc)
    match = re.search(r"\[Errno -?\d+\] ([^'\")]+)", text)
    return match.group(1).strip() if match else type(exc).__name__


def fetch_openmeteo(
    site: Site,
    *,
    days: int = 3,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Fetched:
    """GET Open-Meteo's hourly forecast for the site, through the persistent cache.

    A cached answer younger than `expire_after_s` is used without asking the service.
    When the service cannot be reached (or answers with an error) an expired cached
    answer is used instead (``stale=True``). Base URL: `forecast_url`; cache:
    `cache_file`. `status`, when given, is called with a short progress line.

    Raises
    ------
    InputError
        One line: unreachable with nothing cached, HTTP 400 (with the service's reason)
        or another error status, an answer that is not JSON.
    """
    import requests
    import requests_cache

    if not 1 <= days <= 16:
        raise ValueError("days must be within 1…16")
    base = forecast_url()
    path = cache_file()
    params = {
        "latitude": f"{site.latitude_deg:.4f}",
        "longitude": f"{site.longitude_deg:.4f}",
        "hourly": ",".join(_OPEN_METEO_VARS),
        "timezone": "auto",
        "forecast_days": str(days),
        "wind_speed_unit": "ms",
    }
    if status:
        status(f"fetching the forecast from {base}")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        session = requests_cache.CachedSession(
            str(path),
            backend="sqlite",
            expire_after=expire_after_s,
            stale_if_error=True,
            allowable_codes=(200,),
            filter_fn=_is_forecast,
        )
    except Exception as exc:  # sqlite3 / OS errors opening the cache
        raise InputError(
            f"cannot open the forecast cache {path} ({exc}); delete the file or set GROWER_CACHE_DIR to another folder"
        ) from None
    from grower import __version__

    with session:
        try:
            response = session.get(
                f"{base}/v1/forecast",
                params=params,
                timeout=timeout,
                headers={"User-Agent": f"grower/{__version__}"},
            )
        except requests.exceptions.Timeout:
            raise InputError(
                f"cannot reach the forecast service at {base} (no answer within {timeout:g} s) and no cached forecast for this site"
            ) from None
        except requests.exceptions.RequestException as exc:
            raise InputError(
                f"cannot reach the forecast service at {base} ({_reason(exc)}) and no cached forecast for this site"
            ) from None
        except sqlite3.Error as exc:
            raise InputError(
                f"the forecast cache {path} cannot be used ({exc}); delete it or set GROWER_CACHE_DIR"
            ) from None
    if response.status_code == 400:
        try:
            reason = response.json().get("reason") or "no reason given"
        except Exception:
            reason = "no reason given"
        raise InputError(f"the forecast service at {base} refused the request: {reason}")
    if response.status_code != 200:
        raise InputError(
            f"the forecast service at {base} answered HTTP {response.status_code} {response.reason or ''} and no cached forecast for this site"
        )
    try:
        document = response.json()
    except ValueError:
        raise InputError(
            f"the forecast service at {base} sent an answer that is not JSON ({response.text[:40]!r})"
        ) from None
    if not isinstance(document, dict):
        raise InputError(f"the forecast service at {base} sent JSON that is not an object")
    created = getattr(response, "created_at", None) or dt.datetime.now(dt.UTC)
    created = created if created.tzinfo else created.replace(tzinfo=dt.UTC)
    now = now or dt.datetime.now(dt.UTC)
    from_cache = bool(getattr(response, "from_cache", False))
    return Fetched(
        document,
        base,
        created,
        from_cache,
        stale=from_cache and bool(getattr(response, "is_expired", False)),
        age_s=max(0.0, (now - created).total_seconds()),
    )


def parse_openmeteo(
    document: Mapping[str, Any], *, site: Site | None = None, url: str = DEFAULT_FORECAST_URL
) -> Forecast:
    """An Open-Meteo forecast document (JSON as a dict) → `Forecast` (pure).

    Local times in ``hourly.time`` carry the single offset ``utc_offset_seconds``; they
    are converted to UTC with it, then shown in the site's zone (else the document's).
    Nulls are missing values (one between two good ones is filled; rows without data
    at the ends are dropped). Units are read from ``hourly_units``.

    Raises
    ------
    InputError
        An error document, a missing or malformed field or variable.
    """
    where = f"forecast from {url}"
    if document.get("error"):
        raise InputError(
            f"the service reported an error: {document.get('reason') or 'no reason given'}",
            where=where,
        )
    hourly, offset = document.get("hourly"), document.get("utc_offset_seconds")
    if not isinstance(hourly, Mapping) or not isinstance(hourly.get("time"), list):
        raise InputError("the answer has no hourly.time list", where=where)
    if not isinstance(offset, int | float) or isinstance(offset, bool):
        raise InputError("the answer has no utc_offset_seconds", where=where)
    stamps = hourly["time"]
    units = document.get("hourly_units") or {}
    values: dict[str, NDArray[np.float64]] = {}
    for var, col in _OPEN_METEO_VARS.items():
        series = hourly.get(var)
        if not isinstance(series, list):
            raise InputError(f"the answer has no hourly.{var}", where=where)
        if len(series) != len(stamps):
            raise InputError(
                f"hourly.{var} has {len(series)} values for {len(stamps)} times", where=where
            )
        try:
            numbers = np.array([np.nan if x is None else float(x) for x in series])
        except (TypeError, ValueError):
            raise InputError(
                f"hourly.{var} holds a value that is not a number", where=where
            ) from None
        if np.isnan(numbers).all():
            raise InputError(f"hourly.{var} has no values", where=where)
        values[col] = _convert_unit(numbers, units.get(var), var, where)
    utc_s = np.empty(len(stamps))
    for i, text in enumerate(stamps):
        when = _parse_time(str(text), f"hourly.time[{i}]", where)
        utc_s[i] = (
            when.timestamp() if when.tzinfo else when.replace(tzinfo=dt.UTC).timestamp() - offset
        )
    labels = [f"hourly.time[{i}] ({text})" for i, text in enumerate(stamps)]
    utc_s, values, warnings = _trim_empty_ends(utc_s, values, labels)
    if utc_s.size == 0:
        raise InputError("no hour has all variables", where=where)
    raw = {c: v.copy() for c, v in values.items()}
    utc_s, _, values, more = _check_and_repair(
        utc_s,
        np.full(utc_s.size, int(offset)),
        values,
        label=labels.__getitem__,
        name={c: v for v, c in _OPEN_METEO_VARS.items()},
        raw=lambda c, i: f"{raw[c][i]:g} {_UNIT_LABEL[c]}",
        where=where,
    )
    warnings += more
    zone_name = site.timezone if site else document.get("timezone")
    try:
        tz: Any = ZoneInfo(zone_name) if zone_name else None
    except (ZoneInfoNotFoundError, ValueError):
        tz = None
    if tz is None:
        zone_name, tz = None, dt.timezone(dt.timedelta(seconds=int(offset)))
    return _make(
        utc_s,
        _zone_offsets(utc_s, tz),
        values,
        set(values),
        tz=tz,
        timezone=zone_name,
        source="Open-Meteo",
        attribution=OPEN_METEO_ATTRIBUTION,
        warnings=tuple(warnings),
        shortwave_offset_s=-1800.0,
    )


def _trim_empty_ends(
    utc_s: NDArray[np.float64], values: dict[str, NDArray[np.float64]], labels: list[str]
) -> tuple[NDArray[np.float64], dict[str, NDArray[np.float64]], list[str]]:
    """Drop leading and trailing hours where any variable is null (a service's horizon)."""
    ok = np.all([~np.isnan(v) for v in values.values()], axis=0)
    if not ok.any():
        return utc_s[:0], values, []
    first, last = np.flatnonzero(ok)[[0, -1]]
    dropped = first + ok.size - 1 - last
    if not dropped:
        return utc_s, values, []
    keep = slice(first, last + 1)
    del labels[last + 1 :]
    del labels[:first]
    note = f"{dropped} hour(s) without data at the ends of the forecast dropped"
    return utc_s[keep], {c: v[keep] for c, v in values.items()}, [note]


_UNITS = {
    "°C": lambda v: v,
    "°F": f_to_c,
    "%": lambda v: v,
    "m/s": lambda v: v,
    "km/h": lambda v: v / 3.6,
    "mp/h": lambda v: v * M_S_PER_MPH,
    "mph": lambda v: v * M_S_PER_MPH,
    "kn": lambda v: v * 1852.0 / 3600.0,
    "W/m²": lambda v: v,
}
_EXPECTED = {
    "temperature_2m": "°C",
    "dew_point_2m": "°C",
    "cloud_cover": "%",
    "wind_speed_10m": "m/s",
    "shortwave_radiation": "W/m²",
}


def _convert_unit(
    values: NDArray[np.float64], unit: Any, var: str, where: str
) -> NDArray[np.float64]:
    unit = _EXPECTED[var] if unit is None else str(unit)
    kind = {
        "°C": "t",
        "°F": "t",
        "%": "%",
        "m/s": "v",
        "km/h": "v",
        "mp/h": "v",
        "mph": "v",
        "kn": "v",
        "W/m²": "e",
    }
    if unit not in _UNITS or kind[unit] != kind[_EXPECTED[var]]:
        raise InputError(f'hourly_units.{var} is "{unit}", expected {_EXPECTED[var]}', where=where)
    return _UNITS[unit](values)


def fetch_forecast(
    site: Site,
    *,
    days: int = 3,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Forecast:
    """Live forecast for the site from Open-Meteo, cached; see `fetch_openmeteo`.

    When an expired cached forecast stands in for an unreachable service, a warning
    naming its age is the first entry of ``Forecast.warnings``.
    """
    got = fetch_openmeteo(
        site, days=days, timeout=timeout, status=status, expire_after_s=expire_after_s, now=now
    )
    forecast = parse_openmeteo(got.document, site=site, url=got.url)
    warnings = forecast.warnings
    if got.stale:
        when = got.retrieved_at.astimezone(forecast.frame.index.tz).isoformat(timespec="minutes")
        warnings = (
            f"the forecast service at {got.url} could not be reached: using the forecast cached {_age_text(got.age_s)} ago (retrieved {when})",
            *warnings,
        )
    return replace(
        forecast,
        retrieved_at=got.retrieved_at,
        from_cache=got.from_cache,
        age_s=got.age_s,
        warnings=warnings,
    )


def _age_text(seconds: float) -> str:
    if seconds < 5400:
        return f"{seconds / 60:.0f} min"
    if seconds < 2 * 86400:
        return f"{seconds / 3600:.1f} h"
    return f"{seconds / 86400:.1f} days"


# ---------------------------------------------------------------- boundary on the solver grid


@dataclass(frozen=True, eq=False)
class Boundary:
    """The outside boundary on the solver's grid (arrays of one length).

    Attributes
    ----------
    start : pandas.Timestamp
        Time of ``times_s == 0``.
    times_s : numpy.ndarray
        Grid [s since `start`].
    temperature_c, dew_point_c : numpy.ndarray
        Air temperature and dew point [°C]; dew point NaN where not given.
    cloud_fraction : numpy.ndarray
        Cloud [0–1]; 0 (clear, the cautious side) where not given.
    wind_speed_m_s : numpy.ndarray
        10 m wind [m/s]; NaN where not given (the network chooses its design wind).
    shortwave_w_m2 : numpy.ndarray
        Global horizontal irradiance [W m-2]; 0 where not given (no solar gain).
    sky_c : numpy.ndarray
        Sky temperature [°C] (`grower.sky.sky_temperature`).
    given : tuple of str
        Columns the forecast gave.
    assumed_clear : bool
        The forecast had no cloud data.
    """

    start: pd.Timestamp
    times_s: NDArray[np.float64]
    temperature_c: NDArray[np.float64]
    dew_point_c: NDArray[np.float64]
    cloud_fraction: NDArray[np.float64]
    wind_speed_m_s: NDArray[np.float64]
    shortwave_w_m2: NDArray[np.float64]
    sky_c: NDArray[np.float64]
    given: tuple[str, ...]
    assumed_clear: bool

    @property
    def index(self) -> pd.DatetimeIndex:
        """The grid as times in the start's zone."""
        return _index(
            _epoch_seconds(pd.DatetimeIndex([self.start]))[0] + self.times_s, self.start.tz
        )


def prepare_boundary(
    forecast: Forecast,
    times_s: ArrayLike,
    *,
    start: dt.datetime | None = None,
    pressure_hpa: float | None = None,
    hour_term: bool = True,
    cloud_model: sky.CloudModel = "one-layer",
) -> Boundary:
    """Sample a forecast on a solver grid, piecewise linear between its samples.

    Parameters
    ----------
    forecast : Forecast
    times_s : array_like
        Non-decreasing grid [s since `start`] inside the forecast's span.
    start : datetime, optional
        Time of ``times_s == 0`` (aware); default the forecast's first sample.
    pressure_hpa : float, optional
        Station pressure for the Martin & Berdahl pressure term (``Site.pressure_hpa``).
    hour_term : bool
        Apply the Martin & Berdahl diurnal term, at local clock hours.
    cloud_model : {"one-layer", "unsworth-monteith"}
        The sky's cloud correction (`grower.sky`).

    Returns
    -------
    Boundary
        Shortwave given as preceding-hour means (``shortwave_offset_s = −1800``) is
        placed at the half hour before its label, then interpolated; the first and last
        values are held beyond the ends.

    References
    ----------
    See `grower.sky` for the sky temperature.
    """
    grid = np.asarray(times_s, dtype=float)
    if grid.ndim != 1 or grid.size == 0 or np.any(np.diff(grid) < 0) or not np.isfinite(grid).all():
        raise ValueError("times_s must be a non-empty, finite, non-decreasing 1-D array")
    utc = forecast.utc_s
    t0 = utc[0] if start is None else pd.Timestamp(start).timestamp()
    t = t0 + grid
    if t[0] < utc[0] - 1e-6 or t[-1] > utc[-1] + 1e-6:
        raise ValueError(f"times_s runs outside the forecast ({forecast.start} to {forecast.end})")
    n = t.size

    def column(name: str, missing: float) -> NDArray[np.float64]:
        if name not in forecast.given:
            return np.full(n, missing)
        shift = forecast.shortwave_offset_s if name == "shortwave_w_m2" else 0.0
        return np.interp(t, utc + shift, forecast.values(name))

    temp, dew = column("temperature_c", np.nan), column("dew_point_c", np.nan)
    cloud = column("cloud_cover_pct", 0.0) / 100.0
    hour = None
    if hour_term:
        offsets = forecast.frame["utc_offset_s"].to_numpy(dtype=float)
        local = t + offsets[np.clip(np.searchsorted(utc, t, side="right") - 1, 0, utc.size - 1)]
        hour = (local % 86400.0) / 3600.0
    sky_c = sky.sky_temperature(
        temp,
        dew,
        np.clip(cloud, 0.0, 1.0),
        hour=hour,
        pressure_hpa=pressure_hpa,
        cloud_model=cloud_model,
    )
    return Boundary(
        start=_index(np.array([t0]), forecast.frame.index.tz)[0],
        times_s=grid,
        temperature_c=temp,
        dew_point_c=dew,
        cloud_fraction=cloud,
        wind_speed_m_s=column("wind_speed_m_s", np.nan),
        shortwave_w_m2=column("shortwave_w_m2", 0.0),
        sky_c=sky_c,
        given=forecast.given,
        assumed_clear=forecast.assumed_clear,
    )


def sky_temperature(forecast: Forecast, *, pressure_hpa: float | None = None) -> pd.Series:
    """Sky temperature [°C] at the forecast's own samples, as a Series on its index."""
    bound = prepare_boundary(forecast, forecast.times_s, pressure_hpa=pressure_hpa)
    return pd.Series(bound.sky_c, index=forecast.frame.index, name="sky_c")


# ---------------------------------------------------------------- forecast error


def shifted(forecast: Forecast, delta_k: float) -> Forecast:
    """The same forecast `delta_k` warmer (negative: colder) [K].

    Air temperature and dew point move together (the same air mass, the same dew-point
    depression), so a colder night also has a colder, drier sky.
    """
    frame = forecast.frame.copy()
    frame["temperature_c"] += delta_k
    frame["dew_point_c"] += delta_k
    way = "colder" if delta_k < 0 else "warmer"
    return replace(forecast, frame=frame, source=f"{forecast.source}, {abs(delta_k):g} K {way}")


def ar1_errors(
    times_s: ArrayLike,
    members: int,
    sigma_k: float,
    correlation_s: float,
    rng: np.random.Generator,
) -> NDArray[np.float64]:
    """Gaussian errors with standard deviation `sigma_k` and correlation exp(−Δt/τ).

    Each member is a stationary first-order autoregressive (AR(1)) series, i.e. an
    Ornstein–Uhlenbeck process sampled exactly at arbitrary times:
    ``e₀ ~ N(0, σ²)``, ``e_k = ρ_k·e_{k−1} + σ·√(1 − ρ_k²)·z_k`` with
    ``ρ_k = exp(−(t_k − t_{k−1})/τ)`` and z_k standard normal.

    Parameters
    ----------
    times_s : array_like
        Non-decreasing sample times [s].
    members : int
        Number of members M (>= 1).
    sigma_k : float
        Standard deviation [K] (>= 0).
    correlation_s : float
        e-folding time τ of the correlation [s]; 0: independent, inf: one offset per member.
    rng : numpy.random.Generator

    Returns
    -------
    numpy.ndarray
        Shape (M, N) [K].

    References
    ----------
    Gillespie, D. T. (1996). Exact numerical simulation of the Ornstein–Uhlenbeck
    process and its integral. *Physical Review E*, 54(2), 2084–2091.
    doi:10.1103/PhysRevE.54.2084
    """
    t = np.asarray(times_s, dtype=float)
    if t.ndim != 1 or np.any(np.diff(t) < 0):
        raise ValueError("times_s must be a non-decreasing 1-D array")
    if int(members) != members or members < 1:
        raise ValueError("members must be a positive integer")
    if not sigma_k >= 0 or not correlation_s >= 0:
        raise ValueError("sigma_k and correlation_s must be >= 0")
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = np.exp(-np.diff(t) / correlation_s) if correlation_s > 0 else np.zeros(t.size - 1)
    rho = np.where(np.diff(t) == 0, 1.0, rho)
    z = rng.standard_normal((int(members), t.size))
    errors = np.empty_like(z)
    errors[:, 0] = z[:, 0]
    scale = np.sqrt(1.0 - rho**2)
    for k in range(1, t.size):
        errors[:, k] = rho[k - 1] * errors[:, k - 1] + scale[k - 1] * z[:, k]
    return sigma_k * errors


def ensemble(
    forecast: Forecast,
    members: int,
    sigma_k: float,
    correlation_hours: float,
    seed: int | None = None,
    *,
    times_s: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Outside-temperature members: the forecast plus a correlated Gaussian error.

    Parameters
    ----------
    forecast : Forecast
    members : int
        M members.
    sigma_k : float
        Error standard deviation [K].
    correlation_hours : float
        e-folding time of the error's autocorrelation [h] (see `ar1_errors`).
    seed : int, optional
        Seed for numpy's default generator (same seed, same members).
    times_s : array_like, optional
        Grid [s since the first sample]; default the forecast's own samples.

    Returns
    -------
    numpy.ndarray
        Shape (M, N): air temperature [°C] of each member at each time.

    References
    ----------
    Gillespie (1996), *Phys. Rev. E* 54:2084 (exact AR(1)/Ornstein–Uhlenbeck sampling).
    """
    grid = forecast.times_s if times_s is None else np.asarray(times_s, dtype=float)
    base = np.interp(grid, forecast.times_s, forecast.values("temperature_c"))
    errors = ar1_errors(
        grid, members, sigma_k, correlation_hours * 3600.0, np.random.default_rng(seed)
    )
    return base[np.newaxis, :] + errors
