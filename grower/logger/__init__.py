"""Reading a temperature logger's CSV export into a `LoggerRecord`.

A record has a time column and the inside air temperature; optionally the outside air
temperature, the heater's on/off state (or its power) and the sun (global irradiance,
W/m²). Exports from cheap loggers differ; this reader takes the usual variations:

- field separator ``,`` ``;`` or tab; with ``;`` or tab a decimal comma (``3,5``);
- a title line or two before the header row; a units row right under it;
- times in ISO 8601 (``2026-11-20T18:00-05:00``, ``2026-11-20 18:00``), month first
  (``11/20/2026 6:00:00 PM``), day first (``20.11.2026 18:00``, ``20/11/2026 18:00``),
  with or without seconds; or a date column and a time column; an offset in the time
  column's name (``Time, GMT-05:00``) applies to every row;
- °C or °F, from the column name (``Inside (°F)``, ``inside_f``) or the units row;
- heater power in W, kW or Btu/h, or its state (on/off, 1/0, true/false, yes/no, a
  fraction 0–1 or a percentage of the interval it ran);
- irregular intervals and missing cells: a row without an inside temperature is kept
  (NaN) with its heater and outside values, since the heat put in between two readings
  is still what the house did (the fit runs its model through such a row without a
  reading to match, `grower.fit.data`); a blank heater cell is kept as NaN (the heat
  over that interval is not known: the fit splits the record there, it does not hold the
  previous state across it); a short gap in the outside or sun column is filled, a long
  one leaves its rows out. Each is said in the notes with the lines it concerns.

Columns are found by their names (``inside``/``indoor``, ``outside``/``outdoor``/
``ambient``, ``heater``/``burner``, ``sun``/``solar``/``irradiance``; a single column
named just "temperature" is the inside one); ``columns={"inside": "T1"}`` names them
outright. Naive times are clock times in the site's zone: in the autumn's repeated hour
the first 01:30 is daylight time and a repeated one standard time; a clock time that
the spring change skips is an error.

Every problem is one `InputError` line naming the file, the line and the column.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd

from grower.errors import InputError
from grower.logger.columns import (
    HEADER_SEARCH_LINES,
    ROLE_WORDS,
    ROLES,
    TEMPERATURE_WORDS,
    column_roles,
    find_header,
    is_units_row,
    unit_of,
)
from grower.logger.times import offset_in_name, parse_times, to_utc
from grower.logger.values import (
    ASSUMED_C_MEDIAN_MAX,
    MISSING,
    SUN_RANGE_W_M2,
    TEMPERATURE_RANGE_C,
    heater_values,
    sun_values,
    temperature_values,
)

__all__ = [
    "RESAMPLE_STEP_S",
    "resample",
    "ASSUMED_C_MEDIAN_MAX",
    "MISSING",
    "ROLES",
    "ROLE_WORDS",
    "SUN_RANGE_W_M2",
    "TEMPERATURE_RANGE_C",
    "TEMPERATURE_WORDS",
    "LoggerRecord",
    "line_ranges",
    "read_logger_csv",
]


@dataclass(frozen=True, eq=False)
class LoggerRecord:
    """A logger record, SI, one entry per data row kept (a row without an inside
    temperature is kept with NaN there: its heater and outside values still count).

    Attributes
    ----------
    path : the file
    utc_s : (N,) times [s since 1970-01-01 UTC], strictly increasing
    offsets_s : (N,) UTC offset of each row's clock [s]
    inside_c : (N,) inside air temperature [°C], NaN where the row has none
    outside_c : (N,) outside air temperature [°C], NaN where missing; None: no column
    heater_fraction : (N,) share of the time up to the next row the heater ran [0–1],
        NaN where the cell was blank; None: no state column
    heater_w : (N,) heater power up to the next row [W], NaN where blank; None: no
        power column
    sun_w_m2 : (N,) global irradiance [W m-2]; None: no column
    lines : (N,) the file's line number of each row
    columns : role -> the header of the column used
    units : role -> the unit read ("°F", "kW", "on/off", ...)
    time_format : how the times were read ("ISO 8601", "%d.%m.%Y %H:%M")
    timezone : IANA zone of naive times, or None when the file gave offsets
    notes : what was assumed or left out, one sentence each
    """

    path: str
    utc_s: np.ndarray
    offsets_s: np.ndarray
    inside_c: np.ndarray
    outside_c: np.ndarray | None
    heater_fraction: np.ndarray | None
    heater_w: np.ndarray | None
    sun_w_m2: np.ndarray | None
    lines: np.ndarray
    columns: Mapping[str, str]
    units: Mapping[str, str]
    time_format: str
    timezone: str | None
    notes: tuple[str, ...] = field(default=())

    @property
    def n_rows(self) -> int:
        return int(self.utc_s.size)

    @property
    def tz(self) -> dt.tzinfo:
        """The zone for local times: the site's, else the file's single offset, else UTC."""
        if self.timezone:
            return ZoneInfo(self.timezone)
        offs = np.unique(self.offsets_s)
        return dt.timezone(dt.timedelta(seconds=int(offs[0]))) if offs.size == 1 else dt.UTC

    def times(self) -> pd.DatetimeIndex:
        """The rows' times as a tz-aware index in `tz`."""
        micro = np.round(self.utc_s * 1e6).astype("int64")
        return pd.DatetimeIndex(pd.to_datetime(micro, unit="us", utc=True)).tz_convert(self.tz)

    def local(self, i: int) -> dt.datetime:
        """Row `i`'s time as an aware datetime in `tz`."""
        return dt.datetime.fromtimestamp(float(self.utc_s[i]), self.tz)


# ---------------------------------------------------------------- the file


def read_logger_csv(
    path: str | os.PathLike[str],
    *,
    timezone: str | None = None,
    columns: Mapping[str, str] | None = None,
    day_first: bool | None = None,
) -> LoggerRecord:
    """Read a logger's CSV export.

    Parameters
    ----------
    path : the CSV file
    timezone : IANA zone of naive clock times (the house's site zone); None when the file
        gives UTC offsets
    columns : role -> header, for columns the names do not give away (roles: `ROLES`)
    day_first : for dates like 05/11/2026: True day first, False month first, None from
        the data

    Returns
    -------
    LoggerRecord

    Raises
    ------
    InputError
        One line naming the file, the line and the column, for anything unreadable.
    """
    from grower import files

    with files.no_gc():
        return _read(path, os.fspath(path), [], timezone, columns, day_first)


def _read(path, where: str, notes: list[str], timezone, columns, day_first) -> LoggerRecord:
    """`read_logger_csv`'s work (see there)."""
    text = _decode(path, where, notes)
    lines = text[: 1 << 16].splitlines()  # the head is enough to find the separator
    if not text.strip():
        raise InputError(
            "empty file (a header row with a time and an inside column is expected)", where=where
        )
    delimiter = _delimiter(lines)
    decimal_comma = delimiter != ","
    try:
        # csv.reader's own numbering counts physical lines; rows here are one per line
        rows = [
            (n, cells)
            for n, row in enumerate(csv.reader(io.StringIO(text), delimiter=delimiter), start=1)
            if any(cells := [c.strip() for c in row])
        ]
    except csv.Error as exc:
        raise InputError(f"not a readable CSV file ({exc})", where=where) from None
    del text
    head_at, header = find_header(rows, columns, where)
    if head_at > 0:
        notes.append(f"the first {head_at} line(s) before the header were skipped")
    roles = column_roles(header, columns or {}, where, rows[head_at][0])
    body = rows[head_at + 1 :]
    units_row: list[str] | None = None
    if body and is_units_row(body[0][1], header, roles, day_first):
        units_row = body[0][1]
        body = body[1:]
    if not body:
        raise InputError("no data rows", where=where)
    width = len(header)
    for n, row in body:
        if len(row) > width and not any(row[width:]):
            row[:] = row[:width]
        if len(row) != width:
            raise InputError(f"line {n}: {len(row)} fields, the header has {width}", where=where)
    line_no = np.array([n for n, _ in body])

    def cells(role: str) -> list[str]:
        return [row[roles[role]] for _, row in body]

    units = {
        r: unit_of(header[j], units_row[j] if units_row else "", r, where)
        for r, j in roles.items()
        if r != "time" and r != "date"
    }
    # times
    if "date" in roles:
        time_text = [f"{d} {t}" for d, t in zip(cells("date"), cells("time"), strict=True)]
        time_col = f"{header[roles['date']]} + {header[roles['time']]}"
    else:
        time_text = cells("time")
        time_col = header[roles["time"]]
    naive, fmt = parse_times(time_text, line_no, time_col, where, day_first)
    header_offset = offset_in_name(header[roles["time"]])
    utc_s, offsets, zone_used = to_utc(naive, header_offset, timezone, line_no, time_col, where)
    # values
    inside = temperature_values(
        cells("inside"), units["inside"], line_no, header[roles["inside"]], where, decimal_comma
    )
    read = np.isfinite(inside)
    if not read.any():
        raise InputError(f"column {header[roles['inside']]}: no inside temperatures", where=where)
    if (~read).any():
        notes.append(
            f"{int((~read).sum())} row(s) without an inside temperature "
            f"({line_ranges(line_no[~read])}): kept for their other columns, no reading there"
        )
    keep = np.ones(inside.size, dtype=bool)
    outside = heater_frac = heater_w = sun = None
    if "outside" in roles:
        outside = temperature_values(
            cells("outside"),
            units["outside"],
            line_no,
            header[roles["outside"]],
            where,
            decimal_comma,
        )
    if "heater" in roles:
        heater_frac, heater_w, units["heater"] = heater_values(
            cells("heater"), units["heater"], line_no, header[roles["heater"]], where, decimal_comma
        )
    if "sun" in roles:
        sun = sun_values(
            cells("sun"), units["sun"], line_no, header[roles["sun"]], where, decimal_comma, notes
        )
    # loggers drop readings: a short gap in a secondary column is filled, a longer one
    # leaves its rows out (an all-empty column is not used); each said in the notes
    if outside is not None:
        outside, keep = _fill_or_drop(
            outside, utc_s, keep, line_no, header[roles["outside"]], notes, interpolate=True
        )
    if sun is not None:
        sun, keep = _fill_or_drop(
            sun, utc_s, keep, line_no, header[roles["sun"]], notes, interpolate=True
        )
    # a blank heater cell stays NaN: the heat over that interval is not known, and
    # holding the previous state across it would be a guess (the fit splits there)
    for heat in (heater_w, heater_frac):
        if heat is not None:
            blank = keep & ~np.isfinite(heat)
            if blank.all():
                notes.append(f"column {header[roles['heater']]} has no readings: not used")
                heater_w = heater_frac = None
            elif blank.any():
                notes.append(
                    f"column {header[roles['heater']]}: {int(blank.sum())} row(s) without a "
                    f"reading ({line_ranges(line_no[blank])}): the heat there is not known"
                )
    if not (keep & read).any():
        raise InputError(
            "no row has every column it needs (inside, and the outside or heater columns found)",
            where=where,
        )
    order_bad = np.flatnonzero(np.diff(utc_s) <= 0)
    if order_bad.size:
        i = order_bad[0] + 1
        raise InputError(
            f"line {line_no[i]}, column {time_col}: time is not after the previous row's "
            f"(line {line_no[i - 1]}); times must increase",
            where=where,
        )

    def kept(a: np.ndarray | None) -> np.ndarray | None:
        return None if a is None else a[keep]

    used = {r: header[j] for r, j in roles.items() if r not in ("time", "date")}
    used["time"] = time_col
    unused = [h for j, h in enumerate(header) if j not in roles.values() and h]
    if unused:
        notes.append("column(s) not used: " + ", ".join(unused))
    if "inside" in units and units["inside"] == "":
        notes.append(f"no unit for {header[roles['inside']]}: °C assumed")
        units["inside"] = "°C"
    if "outside" in units and units["outside"] == "":
        notes.append(f"no unit for {header[roles['outside']]}: °C assumed")
        units["outside"] = "°C"
    return LoggerRecord(
        path=where,
        utc_s=utc_s[keep],
        offsets_s=offsets[keep],
        inside_c=inside[keep],
        outside_c=kept(outside),
        heater_fraction=kept(heater_frac),
        heater_w=kept(heater_w),
        sun_w_m2=kept(sun),
        lines=line_no[keep],
        columns=used,
        units={r: u for r, u in units.items()},
        time_format=fmt,
        timezone=zone_used,
        notes=tuple(notes),
    )


#: a gap in a secondary column (outside, sun) up to this long is filled linearly [s]
#: (common practice, no source: air temperature changes little within the hour)
FILL_GAP_S = 3600.0


def _fill_or_drop(
    values: np.ndarray,
    utc_s: np.ndarray,
    keep: np.ndarray,
    lines: np.ndarray,
    column: str,
    notes: list[str],
    *,
    interpolate: bool,
) -> tuple[np.ndarray | None, np.ndarray]:
    """Missing readings of one column among the kept rows: filled or left out.

    Returns the column (None when it has no readings at all) and the new `keep` mask.
    """
    values = values.astype(float, copy=True)
    missing = keep & ~np.isfinite(values)
    if not missing.any():
        return values, keep
    good = keep & np.isfinite(values)
    if not good.any():
        notes.append(f"column {column} has no readings: not used")
        return None, keep
    filled = np.zeros_like(keep)
    if interpolate:
        t_good, v_good = utc_s[good], values[good]
        idx = np.flatnonzero(missing)
        after = np.searchsorted(t_good, utc_s[idx], side="right")
        inside = (after > 0) & (after < t_good.size)
        span = np.full(idx.size, np.inf)
        span[inside] = t_good[after[inside]] - t_good[after[inside] - 1]
        ok = inside & (span <= FILL_GAP_S)
        values[idx[ok]] = np.interp(utc_s[idx[ok]], t_good, v_good)
        filled[idx[ok]] = True
    dropped = missing & ~filled
    if filled.any():
        notes.append(
            f"column {column}: {int(filled.sum())} missing reading(s) filled by linear "
            f"interpolation (gaps up to {FILL_GAP_S / 60:.0f} min; first: line {lines[filled][0]})"
        )
    if dropped.any():
        notes.append(
            f"column {column}: {int(dropped.sum())} row(s) without a reading left out "
            f"({line_ranges(lines[dropped])})"
        )
    return values, keep & ~dropped


def line_ranges(lines: np.ndarray, most: int = 3) -> str:
    """File lines as runs: "line 7", "lines 7–9, 40", "lines 7–9, 40, 52–60 and 4 more"."""
    lines = np.asarray(lines, dtype=np.int64)
    if lines.size == 0:
        return "no lines"
    cut = np.flatnonzero(np.diff(lines) != 1) + 1
    runs = np.split(lines, cut)
    text = [f"{r[0]}" if r.size == 1 else f"{r[0]}–{r[-1]}" for r in runs[:most]]
    more = f" and {len(runs) - most} more" if len(runs) > most else ""
    word = "line" if lines.size == 1 else "lines"
    return f"{word} {', '.join(text)}{more}"


def _decode(path, where: str, notes: list[str]) -> str:
    from grower import files

    raw = files.read_bytes(path, files.LOGGER_FILE_MAX_BYTES, where)
    if b"\x00" in raw[:4096]:
        raise InputError("not a text file (a CSV export is expected)", where=where)
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        # older exports write "°" as the single byte 0xB0 (Windows-1252 / Latin-1)
        notes.append("the file is not UTF-8: read as Windows-1252")
        return raw.decode("cp1252", errors="replace")


def _delimiter(lines: Sequence[str]) -> str:
    """';' or tab when the header-ish lines use it (then ',' is a decimal comma), else ','."""
    sample = [line for line in lines[:HEADER_SEARCH_LINES] if line.strip()]
    for d in (";", "\t"):
        if sum(line.count(d) >= 1 for line in sample) >= max(1, len(sample) // 2):
            return d
    return ","


#: a record logged finer than this is averaged into bins of this length before a fit
#: [s]. The fitted houses have time constants of hours; 5-minute means keep every
#: feature the model can follow and cut a month of 1-second readings (2.6 M rows) to
#: 8,640 (common practice, no source).
RESAMPLE_STEP_S = 300.0


def resample(record: LoggerRecord, step_s: float = RESAMPLE_STEP_S) -> LoggerRecord:
    """The record averaged into bins of `step_s` when its median interval is shorter.

    Each bin's time is the mean time of its rows; every value column is the mean of its
    rows (the heater's share of time on stays a share; a bin with a blank heater cell has
    no known heat, NaN), the inside temperature the mean of the rows that have one; the
    line number is the bin's first row's. A record already as coarse as `step_s` is
    returned as it is. Linear in the number of rows.
    """
    if record.n_rows < 3:
        return record
    median = float(np.median(np.diff(record.utc_s)))
    if median >= step_s:
        return record
    bins = np.floor((record.utc_s - record.utc_s[0]) / step_s).astype(np.int64)
    starts = np.flatnonzero(np.concatenate(([True], bins[1:] != bins[:-1])))
    counts = np.diff(np.concatenate((starts, [bins.size])))

    def mean(a: np.ndarray | None) -> np.ndarray | None:
        if a is None:
            return None
        return np.add.reduceat(a.astype(float), starts) / counts

    def mean_of_readings(a: np.ndarray) -> np.ndarray:
        """A bin's mean of the rows that have a reading (NaN where none has)."""
        good = np.isfinite(a)
        total = np.add.reduceat(np.where(good, a, 0.0), starts)
        n = np.add.reduceat(good.astype(float), starts)
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(n > 0, total / n, np.nan)

    notes = (
        *record.notes,
        f"{record.n_rows:,} rows about {median:g} s apart averaged into {starts.size:,} "
        f"means of {step_s / 60:g} min before the fit",
    )
    return LoggerRecord(
        path=record.path,
        utc_s=mean(record.utc_s),
        offsets_s=record.offsets_s[starts],
        inside_c=mean_of_readings(record.inside_c),
        outside_c=mean(record.outside_c),
        heater_fraction=mean(record.heater_fraction),
        heater_w=mean(record.heater_w),
        sun_w_m2=mean(record.sun_w_m2),
        lines=record.lines[starts],
        columns=record.columns,
        units=record.units,
        time_format=record.time_format,
        timezone=record.timezone,
        notes=notes,
    )
