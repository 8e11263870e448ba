"""Reading the time column of a logger record: formats, offsets, the site's zone.

ISO 8601 first; then a date form (year first, month first or day first, with ``/``,
``.`` or ``-``) followed by any clock form (with or without seconds, 24 h or AM/PM), so
rows may differ in their clock part. Month first and day first are told apart by the
data (a day above 12, or times that only move forward one way), else by the caller.
Naive clock times are placed in the site's zone with the autumn's repeated hour read in
order; a time the spring change skips is an error.
"""

from __future__ import annotations

import datetime as dt
import re
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np

from grower.errors import InputError

# time formats tried after ISO 8601 (strptime); day-first and month-first are told apart
# by the data (a day above 12, or times that only increase one way)
_CLOCKS = ("%H:%M:%S", "%H:%M", "%I:%M:%S %p", "%I:%M %p")
_DATES = {
    "ymd": ("%Y/%m/%d",),
    "mdy": ("%m/%d/%Y", "%m/%d/%y", "%m-%d-%Y"),
    "dmy": ("%d/%m/%Y", "%d/%m/%y", "%d.%m.%Y", "%d.%m.%y", "%d-%m-%Y"),
}
_EXAMPLES = "ISO 8601, 2026-11-20 18:00, 11/20/2026 6:00:00 PM or 20.11.2026 18:00"


def _clean_time(text: str) -> str:
    t = " ".join(text.strip().split())
    t = re.sub(r"(?i)\b([ap])\.?m\.?$", lambda m: m.group(1).upper() + "M", t)
    return t


def _families(day_first: bool | None) -> list[tuple[str, tuple[str, ...]]]:
    """(date order, formats) candidates: one date form with any of the clock forms
    (with or without seconds, 24 h or AM/PM), so rows may differ in their clock part."""
    orders = ["ymd", "mdy", "dmy"]
    if day_first is True:
        orders.remove("mdy")
    elif day_first is False:
        orders.remove("dmy")
    return [(o, tuple(f"{d} {c}" for c in _CLOCKS)) for o in orders for d in _DATES[o]]


def _iso(text: str) -> dt.datetime | None:
    try:
        return dt.datetime.fromisoformat(text)
    except ValueError:
        return None


def _strptime(text: str, formats: tuple[str, ...]) -> dt.datetime | None:
    for f in formats:
        try:
            return dt.datetime.strptime(text, f)
        except ValueError:
            continue
    return None


def try_time(text: str) -> dt.datetime | None:
    t = _clean_time(text)
    got = _iso(t)
    if got is not None:
        return got
    for _o, formats in _families(None):
        got = _strptime(t, formats)
        if got is not None:
            return got
    return None


def _parse_all(
    texts: list[str], formats: tuple[str, ...] | None
) -> tuple[list[dt.datetime], int | None]:
    """Parse every text with one family (None: ISO 8601); (times, index of first failure)."""
    out = []
    order = list(formats or ())
    for i, t in enumerate(texts):
        got = _iso(t) if formats is None else _strptime(t, tuple(order))
        if got is None:
            return out, i
        out.append(got)
    return out, None


def parse_times(
    raw: list[str], lines: np.ndarray, col: str, where: str, day_first: bool | None
) -> tuple[list[dt.datetime], str]:
    texts = [_clean_time(t) for t in raw]
    empty = [i for i, t in enumerate(texts) if not t]
    if empty:
        raise InputError(f"line {lines[empty[0]]}, column {col}: no time", where=where)
    candidates: list[tuple[str, tuple[str, ...] | None]] = [("iso", None), *_families(day_first)]
    # families that read the first row, then the whole column
    alive = [(o, f) for o, f in candidates if _parse_all(texts[:1], f)[1] is None]
    if not alive:
        raise InputError(
            f'line {lines[0]}, column {col}: "{raw[0]}" is not a date and time ({_EXAMPLES})',
            where=where,
        )
    best_fail, best_fmt, results = -1, None, []
    for o, f in alive:
        times, fail = _parse_all(texts, f)
        if fail is None:
            results.append((o, f, times))
        elif fail > best_fail:
            best_fail, best_fmt = fail, f
    if not results:
        i = best_fail
        shape = "ISO 8601" if best_fmt is None else best_fmt[0].split(" ")[0] + " + a clock time"
        raise InputError(
            f'line {lines[i]}, column {col}: "{raw[i]}" is not a time in the file\'s format ({shape})',
            where=where,
        )
    orders = {o for o, _f, _t in results}
    if {"mdy", "dmy"} <= orders:
        # both readings work: keep the one whose times only move forward
        rising = [r for r in results if all(b > a for a, b in zip(r[2], r[2][1:], strict=False))]
        if len({o for o, _f, _t in rising}) == 1:
            results = rising
        else:
            raise InputError(
                f'column {col}: dates like "{raw[0]}" read both day first and month first; '
                "give --day-first or --month-first",
                where=where,
            )
    _o, f, times = results[0]
    return times, "ISO 8601" if f is None else f[0].split(" ")[0] + " and a clock time"


_OFFSET_NAME = re.compile(r"(?i)\b(?:gmt|utc)\s*([+-])\s*(\d{1,2})(?::?(\d{2}))?")


def offset_in_name(name: str) -> dt.timezone | None:
    m = _OFFSET_NAME.search(name)
    if not m:
        return None
    sign = -1 if m.group(1) == "-" else 1
    minutes = int(m.group(2)) * 60 + int(m.group(3) or 0)
    return dt.timezone(dt.timedelta(minutes=sign * minutes))


def to_utc(
    times: list[dt.datetime],
    header_offset: dt.timezone | None,
    zone_name: str | None,
    lines: np.ndarray,
    col: str,
    where: str,
) -> tuple[np.ndarray, np.ndarray, str | None]:
    from grower import limits

    lo_year, hi_year = limits.YEARS
    for t, n in zip(times, lines, strict=True):
        if not lo_year <= t.year <= hi_year:
            raise InputError(
                f"line {n}, column {col}: the year {t.year} is outside {lo_year}–{hi_year}",
                where=where,
            )
    aware = [t.tzinfo is not None for t in times]
    if any(aware) and not all(aware):
        i = aware.index(not aware[0])
        raise InputError(
            f"line {lines[i]}, column {col}: some times carry a UTC offset and some do not",
            where=where,
        )
    if aware[0] or header_offset is not None:
        fixed = [t if t.tzinfo is not None else t.replace(tzinfo=header_offset) for t in times]
        utc = np.array([t.timestamp() for t in fixed])
        offs = np.array([int(t.utcoffset().total_seconds()) for t in fixed])
        return utc, offs, zone_name
    if not zone_name:
        raise InputError(
            f"column {col}: the times have no UTC offset and the house file has no [site] "
            "time zone; add a [site] with a timezone, or write offsets (2026-11-20T18:00-05:00)",
            where=where,
        )
    try:
        zone = ZoneInfo(zone_name)
    except (ZoneInfoNotFoundError, ValueError):
        raise InputError(f'unknown time zone "{zone_name}"', where=where) from None
    return (*_localize_fast(times, zone, zone_name, lines, col, where), zone_name)


#: clock changes fall on whole quarter hours: within one, a zone's offsets are fixed
_QUARTER_S = 900


def _localize_fast(times, zone, zone_name, lines, col, where):
    """Naive clock times in `zone` → (UTC seconds, offsets), linear in the rows.

    The zone is asked once per quarter hour the record touches (clock changes fall on
    quarter hours), not once per row; only rows in the autumn's repeated hour are
    walked one by one: the first pass is daylight time, a repeat standard time. A
    clock time the spring change skips is an error naming its line.
    """
    naive_s = np.array(times, dtype="datetime64[us]").astype(np.int64) / 1e6
    keys, inverse = np.unique(np.floor(naive_s / _QUARTER_S).astype(np.int64), return_inverse=True)
    early_off = np.empty(keys.size)
    late_off = np.empty(keys.size)
    exists = np.empty(keys.size, dtype=bool)
    epoch = dt.datetime(1970, 1, 1)
    for j, k in enumerate(keys):
        t = epoch + dt.timedelta(seconds=int(k) * _QUARTER_S)
        early, late = t.replace(tzinfo=zone, fold=0), t.replace(tzinfo=zone, fold=1)
        early_off[j] = early.utcoffset().total_seconds()
        late_off[j] = late.utcoffset().total_seconds()
        exists[j] = early.astimezone(dt.UTC).astimezone(zone).replace(tzinfo=None) == t
    bad = np.flatnonzero(~exists[inverse])
    if bad.size:
        i = int(bad[0])
        raise InputError(
            f"line {lines[i]}, column {col}: {times[i]:%Y-%m-%d %H:%M} does not exist in "
            f"{zone_name} (the clocks spring forward); fix the row or write UTC offsets",
            where=where,
        )
    off_e, off_l = early_off[inverse], late_off[inverse]
    utc = naive_s - off_e
    offs = off_e.copy()
    for i in np.flatnonzero(off_e != off_l):  # the repeated hour, in order
        previous = utc[i - 1] if i > 0 else -np.inf
        if naive_s[i] - off_e[i] <= previous:
            utc[i], offs[i] = naive_s[i] - off_l[i], off_l[i]
    return utc, offs.astype(np.int64)
