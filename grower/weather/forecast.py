"""The forecast result and what its sources share: checks, repairs and times.

A `Forecast` is an hourly (or finer) frame with a time-zone-aware index and the columns
of `COLUMNS`, NaN where the source gave nothing. Each source (`grower.weather.csvfile`,
`grower.weather.low`, `grower.weather.openmeteo`) builds one with `_make` after
`_check_and_repair` has checked order, ranges, gaps and dew point and filled a single
missing value or row by linear interpolation, stating each repair.

Times: inside, every instant is UTC epoch seconds, so durations are right across a DST
change; the index shows local clock times (the site's zone, or the offsets a file gave).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from grower.errors import InputError
from grower.units import Note

#: the frame's variables, SI-ish units in the names
COLUMNS = (
    "temperature_c",
    "dew_point_c",
    "cloud_cover_pct",
    "cloud_cover_low_pct",
    "wind_speed_m_s",
    "shortwave_w_m2",
)
#: accepted range of each variable (inclusive) after conversion to the column's unit
RANGES: dict[str, tuple[float, float]] = {
    "temperature_c": (-60.0, 60.0),
    "dew_point_c": (-60.0, 60.0),
    "cloud_cover_pct": (0.0, 100.0),
    "cloud_cover_low_pct": (0.0, 100.0),
    "wind_speed_m_s": (0.0, np.inf),
    "shortwave_w_m2": (0.0, 1400.0),
}
#: longest gap between samples that is bridged (piecewise linear) [s]
MAX_GAP_S = 3 * 3600.0
#: a dew point this far above the air temperature [K] is clipped (with a warning); more is an error
DEW_POINT_EXCESS_K = 0.5
_UNIT_LABEL = {
    "temperature_c": "°C",
    "dew_point_c": "°C",
    "cloud_cover_pct": "%",
    "cloud_cover_low_pct": "%",
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
    elif (
        "cloud_cover_low_pct" not in forecast.given
        and np.nanmax(forecast.values("cloud_cover_pct")) > 0.0
    ):
        notes.append(
            Note(
                "cloud height not given: cloud taken with its base at {base}, an overcast "
                "about {colder} colder than low stratus (the cautious side)",
                base=("km", 2000.0),
                colder=("delta", 4.0, 0),
            )
        )
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


# ---------------------------------------------------------------- times (shared)


def _parse_time(text: str, label: str, where: str) -> dt.datetime:
    try:
        return dt.datetime.fromisoformat(text)
    except ValueError:
        shown = f'"{text}"' if text else "empty"
        raise InputError(
            f"{label}, column time: {shown} is not an ISO 8601 time (e.g. 2026-12-03T16:00-05:00)",
            where=where,
        ) from None


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
