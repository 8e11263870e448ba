"""The forecast result and what its sources share: checks, repairs and times.

A `Forecast` is an hourly (or finer) frame with a time-zone-aware index and the columns
of `COLUMNS`, NaN where the source gave nothing. Each source (`grower.weather.csvfile`,
`grower.weather.low`, `grower.weather.openmeteo`) builds one with `make_forecast` after
`check_and_repair` has checked order, ranges, gaps and dew point and filled a single
missing value or row by linear interpolation, stating each repair.

Times: inside, every instant is UTC epoch seconds, so durations are right across a DST
change; the index shows local clock times (the site's zone, or the offsets a file gave).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable, Mapping, Sequence
from dataclasses import InitVar, dataclass, field, fields
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
from numpy.typing import NDArray

from grower import arrays, limits
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
    # the command line's limits (`grower.limits`: Earth's records), so a forecast file
    # and --low/--dew-point accept the same temperatures
    "temperature_c": (limits.OUTSIDE_AIR_C.lo, limits.OUTSIDE_AIR_C.hi),
    "dew_point_c": (limits.DEW_POINT_C.lo, limits.DEW_POINT_C.hi),
    "cloud_cover_pct": (0.0, 100.0),
    "cloud_cover_low_pct": (0.0, 100.0),
    "wind_speed_m_s": (0.0, np.inf),
    "shortwave_w_m2": (0.0, 1400.0),
}
#: longest gap between samples that is bridged (piecewise linear) [s]
MAX_GAP_S = 3 * 3600.0
#: a dew point this far above the air temperature [K] is clipped (with a warning); more is an error
DEW_POINT_EXCESS_K = 0.5
UNIT_LABEL = {
    "temperature_c": "°C",
    "dew_point_c": "°C",
    "cloud_cover_pct": "%",
    "cloud_cover_low_pct": "%",
    "wind_speed_m_s": "m/s",
    "shortwave_w_m2": "W/m²",
}


def signed_number(value: float) -> str:
    """A number for messages, with a true minus sign: −4, 2.5."""
    return f"{value:g}".replace("-", "−")


# ---------------------------------------------------------------- the result


@dataclass(frozen=True, eq=False)
class Samples:
    """A forecast's samples as plain arrays: what every computation reads.

    Attributes
    ----------
    utc_s : numpy.ndarray
        Each sample as seconds since 1970-01-01 UTC, strictly increasing (to the
        microsecond, as the times are kept).
    utc_offset_s : numpy.ndarray
        The UTC offset of each sample's local clock [s] (int).
    values : mapping of str to numpy.ndarray
        Each column of `COLUMNS` (NaN where the source gave nothing).
    tz : datetime.tzinfo
        The zone local times are shown in (the site's zone, the file's single offset, or
        a zone keeping the file's own offsets).

    The arrays are read-only: a forecast is a value.
    """

    utc_s: NDArray[np.float64]
    utc_offset_s: NDArray[np.int64]
    values: Mapping[str, NDArray[np.float64]]
    tz: dt.tzinfo

    def __post_init__(self) -> None:
        for a in (self.utc_s, self.utc_offset_s, *self.values.values()):
            a.setflags(write=False)

    def rows(self, first: int, stop: int) -> Samples:
        """Rows ``first:stop`` (as a slice)."""
        return Samples(
            self.utc_s[first:stop].copy(),
            self.utc_offset_s[first:stop].copy(),
            {c: v[first:stop].copy() for c, v in self.values.items()},
            self.tz,
        )


def _samples(utc_s, offsets_s, values: Mapping[str, Any], tz: dt.tzinfo) -> Samples:
    """Samples with times kept to the microsecond (as a pandas index keeps them)."""
    micro = np.round(np.asarray(utc_s, dtype=float) * 1e6).astype(np.int64)
    n = micro.size
    cols = {c: np.array(values.get(c, np.full(n, np.nan)), dtype=float) for c in COLUMNS}
    # ns / 1e9, exactly as `pandas.DatetimeIndex.asi8 / 1e9` gives it
    return Samples((micro * 1000) / 1e9, np.asarray(offsets_s, dtype=np.int64).copy(), cols, tz)


@dataclass(frozen=True, eq=False)
class Forecast:
    """A forecast on its own samples.

    Attributes
    ----------
    samples : Samples
        Times, offsets and columns as arrays (what the computations read; no pandas).
    frame : pandas.DataFrame
        The same as a frame, built on first use (pandas is imported then). Index:
        tz-aware DatetimeIndex ("time"), strictly increasing — in the site's zone, in
        the single offset a file gave, or in UTC when a file mixed offsets with no zone
        known. Columns: `COLUMNS` (NaN where the source gave nothing) and
        ``utc_offset_s``, the UTC offset of each row's local clock [s]. A forecast may
        also be made from a frame: ``Forecast(frame=..., source=..., given=...)``.
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

    frame: InitVar[Any] = None
    source: str = ""
    given: tuple[str, ...] = ()
    issued_at: dt.datetime | None = None
    retrieved_at: dt.datetime | None = None
    from_cache: bool = False
    age_s: float | None = None
    attribution: str | None = None
    warnings: tuple[str, ...] = ()
    timezone: str | None = None
    shortwave_offset_s: float = 0.0
    samples: Samples | None = None
    assumed_clear: bool = field(init=False)

    def __post_init__(self, frame: Any) -> None:
        cached = getattr(self.samples, "_frame", None)
        if frame is not None and frame is not cached:
            object.__setattr__(self, "samples", _from_frame(frame))
        elif self.samples is None:
            raise ValueError("a Forecast needs samples or a frame")
        s = self.samples
        if s.utc_s.ndim != 1 or s.utc_s.size < 2 or np.any(np.diff(s.utc_s) <= 0):
            raise ValueError("frame index must hold two or more strictly increasing times")
        missing = [c for c in COLUMNS if c not in s.values]
        if missing or not set(self.given) <= set(COLUMNS) or "temperature_c" not in self.given:
            raise ValueError(f"frame lacks columns {missing} or given is wrong: {self.given}")
        object.__setattr__(self, "assumed_clear", "cloud_cover_pct" not in self.given)

    def _frame(self) -> Any:
        """The samples as a pandas frame (built once, on first use)."""
        s = self.samples
        cached = getattr(s, "_frame", None)
        if cached is None:
            import pandas as pd

            cached = pd.DataFrame(dict(s.values), index=time_index(s.utc_s, s.tz))
            cached["utc_offset_s"] = np.asarray(s.utc_offset_s, dtype=np.int64)
            object.__setattr__(s, "_frame", cached)
        return cached

    @property
    def tz(self) -> dt.tzinfo:
        """The zone local times are shown in (`Samples.tz`)."""
        return self.samples.tz

    @property
    def start(self) -> dt.datetime:
        """The first sample, an aware datetime in `tz`."""
        return local_time(self.samples.utc_s[0], self.samples.tz)

    @property
    def end(self) -> dt.datetime:
        """The last sample, an aware datetime in `tz`."""
        return local_time(self.samples.utc_s[-1], self.samples.tz)

    @property
    def utc_s(self) -> NDArray[np.float64]:
        """Each sample as seconds since 1970-01-01 UTC (read-only)."""
        return self.samples.utc_s

    @property
    def times_s(self) -> NDArray[np.float64]:
        """Seconds since the first sample (from UTC: right across DST changes)."""
        utc = self.utc_s
        return utc - utc[0]

    def values(self, column: str) -> NDArray[np.float64]:
        """One column as a float array (NaN where not given; read-only)."""
        return self.samples.values[column]

    def local_times(self) -> list[dt.datetime]:
        """Each sample as an aware datetime in its local offset (for reports and JSON)."""
        s = self.samples
        offsets = s.utc_offset_s
        if self.timezone is None and arrays.unique(offsets).size > 1:  # index in UTC
            return [
                dt.datetime.fromtimestamp(t, dt.timezone(dt.timedelta(seconds=int(off))))
                for t, off in zip(s.utc_s, offsets, strict=True)
            ]
        return [local_time(t, s.tz) for t in s.utc_s]

    def with_samples(self, samples: Samples, **changes: Any) -> Forecast:
        """The same forecast on other samples (and other fields in `changes`).

        ``dataclasses.replace`` works too, but builds the pandas frame to pass it on.
        """
        kept = {f.name: getattr(self, f.name) for f in fields(self) if f.init}
        return Forecast(**{**kept, **changes, "samples": samples})

    def between(self, first: int, stop: int, **changes: Any) -> Forecast:
        """Rows ``first:stop`` of the forecast (as a slice), other fields in `changes`."""
        return self.with_samples(self.samples.rows(first, stop), **changes)


# `frame` is an init-only argument (a forecast may be made from a frame) and, once made,
# a property that builds the frame from the samples on first use
Forecast.frame = property(Forecast._frame)  # type: ignore[assignment,method-assign]


def local_time(utc_s: float, tz: dt.tzinfo) -> dt.datetime:
    """UTC seconds (kept to the microsecond) as an aware datetime in `tz`."""
    micro = int(round(float(utc_s) * 1e6))
    whole, frac = divmod(micro, 1_000_000)
    return (_EPOCH + dt.timedelta(seconds=whole, microseconds=frac)).astimezone(tz)


_EPOCH = dt.datetime(1970, 1, 1, tzinfo=dt.UTC)


def _from_frame(frame: Any) -> Samples:
    import pandas as pd

    index = frame.index
    if not isinstance(index, pd.DatetimeIndex) or index.tz is None:
        raise ValueError("frame must have a tz-aware DatetimeIndex")
    if len(index) < 2 or not index.is_monotonic_increasing or not index.is_unique:
        raise ValueError("frame index must hold two or more strictly increasing times")
    missing = [c for c in (*COLUMNS, "utc_offset_s") if c not in frame.columns]
    if missing:
        raise ValueError(f"frame lacks columns {missing}")
    samples = Samples(
        np.array(_epoch_seconds(index), dtype=float),
        frame["utc_offset_s"].to_numpy(dtype=np.int64).copy(),
        {c: frame[c].to_numpy(dtype=float).copy() for c in COLUMNS},
        index.tz,
    )
    object.__setattr__(samples, "_frame", frame)
    return samples


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


def _epoch_seconds(index: Any) -> NDArray[np.float64]:
    """UTC seconds of a tz-aware pandas DatetimeIndex."""
    import pandas as pd

    delta = index - pd.Timestamp(0, tz="UTC")
    return np.asarray(delta / pd.Timedelta(seconds=1), dtype=float)


def time_index(utc_s: NDArray[np.float64], tz: Any) -> Any:
    """UTC seconds as a pandas DatetimeIndex ("time") in `tz`."""
    import pandas as pd

    micro = np.round(np.asarray(utc_s) * 1e6).astype("int64")
    return pd.DatetimeIndex(pd.to_datetime(micro, unit="us", utc=True), name="time").tz_convert(tz)


def zone_info(name: str, where: str) -> ZoneInfo:
    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise InputError(
            f'unknown time zone "{name}" (use an IANA name such as America/Toronto)', where=where
        ) from None


def make_forecast(utc_s, offsets_s, values, given, *, tz, timezone, **meta) -> Forecast:
    return Forecast(
        samples=_samples(utc_s, offsets_s, values, tz),
        given=tuple(c for c in COLUMNS if c in given),
        timezone=timezone,
        **meta,
    )


# ---------------------------------------------------------------- validation (shared)


def check_and_repair(
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
                what = f"is outside {signed_number(lo)}…{signed_number(hi)} {UNIT_LABEL[col]}"
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


def parse_time(text: str, label: str, where: str) -> dt.datetime:
    try:
        return dt.datetime.fromisoformat(text)
    except ValueError:
        shown = f'"{text}"' if text else "empty"
        raise InputError(
            f"{label}, column time: {shown} is not an ISO 8601 time (e.g. 2026-12-03T16:00-05:00)",
            where=where,
        ) from None


def localize(
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


def zone_offsets(utc_s: NDArray[np.float64], zone: Any) -> NDArray[np.int64]:
    return np.array(
        [int(dt.datetime.fromtimestamp(t, zone).utcoffset().total_seconds()) for t in utc_s]
    )
