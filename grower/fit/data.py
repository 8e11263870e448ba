"""From a logger record and a house to the segments the fit runs the solver over.

Which rows are used: rows with an inside and an outside temperature (and the heater
and sun values the fit needs); by default only night rows (sun below the horizon at the
house's site, and under `DAYLIGHT_W_M2` where the record logs the sun), since by day the
sun's gain into the house is the least certain part of the model and the vents open;
never rows with the air at or near the vent temperature. The rows fall into segments:
runs of consecutive usable rows no more than `SEGMENT_GAP_S` apart. Each segment is
fitted with its own initial state (see `grower.fit.estimate`: the air's starting
temperature from its first logged value, and in the two-node model the floor's, are
fitted with the rest).

The boundary is the one `tonight` uses (`grower.plans.model.boundary`): outside air,
the sky temperature from it (Swinbank 1963 with no dew point; Berdahl & Martin with
one, from a forecast file), the deep ground. A logged heater state or power holds from
its row to the next (zero-order hold: the solver grid gets a point `HOLD_EDGE_S` before
each change); temperatures and the sun are linear between rows. A row without an
inside reading (the logger missed it) stays on the grid with its heater and outside
values and is not matched; a row without a heater value ends the segment (the heat
there is not known); both are said in the notes with their lines.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from grower.errors import InputError
from grower.house import House
from grower.logger import LoggerRecord, line_ranges
from grower.plans import model as hm

#: a gap longer than this splits the record into segments [s] (the same limit the
#: forecast reader bridges; common practice, no source)
SEGMENT_GAP_S = 3 * 3600.0
#: shortest segment kept [s] and fewest rows in it (common practice, no source)
MIN_SEGMENT_S = 3600.0
MIN_SEGMENT_ROWS = 4
#: least usable record [s]: one night's cooling, about two time constants of a light
#: house (common practice, no source)
MIN_RECORD_S = 6 * 3600.0
#: a record whose inside temperature varies less than this has nothing to teach [K]
#: (common practice, no source: a few times a cheap logger's ±0.2–0.5 K)
MIN_INSIDE_STD_K = 0.5
#: a record whose inside and effective outside (air and sky, `grower.network.effective_outside`)
#: differ less than this on average [K] says nothing about the cover (house open, or the
#: outside sensor indoors) (common practice, no source)
MIN_MEAN_DIFFERENCE_K = 2.0
#: rows with the air this close to the vent temperature are left out [K] (common
#: practice, no source: a thermostat's switching band)
VENT_MARGIN_K = 0.5
#: a heater change is placed this long before the row that logs it [s] (numerical: a
#: near-step for the solver's piecewise-linear inputs; at most a tenth of the row step)
HOLD_EDGE_S = 1.0


@dataclass(frozen=True, eq=False)
class Segment:
    """One stretch of the record fitted with its own initial state.

    Attributes
    ----------
    rows : (R,) indices into the record's rows with an inside reading
    times_s : (G,) the solver grid [s from the segment's first row]: every usable row
        (with or without an inside reading) and the heater's change points
    obs : (R,) grid index of each row with a reading
    inside_c, outside_c, effective_c : (R,) at the rows [°C]
    boundary_c : (G, 3) outside air, sky, deep ground (`grower.plans.model.BOUNDARIES`)
    sun_w : (G,) sensible solar gain into the air at the geometry's coefficient [W]
    heater_on : (G,) share of the time the heater runs, or None
    heater_w : (G,) logged heater power [W], or None
    """

    rows: np.ndarray
    times_s: np.ndarray
    obs: np.ndarray
    inside_c: np.ndarray
    outside_c: np.ndarray
    effective_c: np.ndarray
    boundary_c: np.ndarray
    sun_w: np.ndarray
    heater_on: np.ndarray | None
    heater_w: np.ndarray | None

    @property
    def duration_s(self) -> float:
        return float(self.times_s[-1])

    @property
    def heated(self) -> bool:
        h = self.heater_on if self.heater_on is not None else self.heater_w
        return bool(h is not None and np.any(h > 0))


@dataclass(frozen=True, eq=False)
class FitData:
    """Everything the estimator needs, and what the report says about it."""

    house: House
    record: LoggerRecord
    segments: tuple[Segment, ...]
    lumped: hm.Model  # the geometry's models at the record's conditions
    two_node: hm.Model
    heater: str | None  # "state", "power" or None (not logged, or never on)
    with_days: bool
    outside_source: str
    wind_m_s: float
    notes: tuple[str, ...]
    #: the boundary has a cloud cover: one sky factor for the record, else one per segment
    cloud_given: bool = False

    @property
    def rows(self) -> np.ndarray:
        return np.concatenate([s.rows for s in self.segments])

    @property
    def n_rows(self) -> int:
        return int(sum(s.rows.size for s in self.segments))

    @property
    def duration_s(self) -> float:
        return float(sum(s.duration_s for s in self.segments))


def _forecast_on_rows(record: LoggerRecord, keep: np.ndarray, columns: dict[str, np.ndarray]):
    """A `grower.weather.Forecast` on the record's rows, for `grower.plans.model.boundary`."""
    from grower.weather import COLUMNS, Forecast

    index = record.times()[keep]
    frame = pd.DataFrame(
        {c: columns.get(c, np.full(int(keep.sum()), np.nan))[keep] for c in COLUMNS}, index=index
    )
    frame.index.name = "time"
    frame["utc_offset_s"] = record.offsets_s[keep].astype(np.int64)
    return Forecast(frame=frame, source=f"file {record.path}", given=tuple(columns))


def _outside_columns(
    record: LoggerRecord, outside, notes: list[str], fills: bool = False
) -> tuple[dict[str, np.ndarray], np.ndarray, str]:
    """The boundary's inputs at every record row, the rows they cover, and their source.

    `fills` (a weather archive, `grower.fit.archive`): the record's own outside column is
    kept on every row with a reading (the local truth); `outside` gives the temperature
    only on rows without one, and the dew point only when the record has no outside
    column at all (a dew point from a grid cell beside a local temperature can lie above
    it, and it goes with the temperature it was read with); the rest (cloud, wind, sun)
    comes from `outside`.
    """
    n = record.n_rows
    cols: dict[str, np.ndarray] = {}
    covered = np.ones(n, dtype=bool)
    if outside is not None:
        src_s = outside.utc_s
        covered = (record.utc_s >= src_s[0]) & (record.utc_s <= src_s[-1])
        if not covered.any():
            raise InputError(
                f"the outside file runs {outside.start:%Y-%m-%d %H:%M} to "
                f"{outside.end:%Y-%m-%d %H:%M}, which misses the whole record "
                f"({record.local(0):%Y-%m-%d %H:%M} to {record.local(n - 1):%Y-%m-%d %H:%M})",
                where=outside.source.removeprefix("file "),
            )
        if not covered.all():
            what = "the weather archive" if fills else "the outside file"
            notes.append(f"{int((~covered).sum())} row(s) outside the span of {what} left out")
        for c in outside.given:
            shift = outside.shortwave_offset_s if c == "shortwave_w_m2" else 0.0
            cols[c] = np.interp(record.utc_s, src_s + shift, outside.values(c))
        source = outside.source
        if fills:
            source = _archive_fill(record, outside, cols, covered, notes)
        elif record.outside_c is not None:
            notes.append("outside temperature from the outside file (the record's column ignored)")
    else:
        if record.outside_c is None:
            raise InputError(
                "no outside temperature: the record has no outside column; give --outside FILE "
                "(a forecast or observation CSV for the same days) or --weather-archive",
                where=record.path,
            )
        cols["temperature_c"] = record.outside_c
        source = f"the record's {record.columns['outside']} column"
    if record.sun_w_m2 is not None:
        cols["shortwave_w_m2"] = record.sun_w_m2
    return cols, covered, source


def _archive_fill(
    record: LoggerRecord, outside, cols: dict[str, np.ndarray], covered, notes: list[str]
) -> str:
    """A weather archive beside the record (`_outside_columns`, ``fills``): the record's
    outside temperature kept where it has a reading, the archive's dew point dropped
    beside it; `cols` changed in place; the source line."""
    taken = [c for c in outside.given if c in _WHAT]
    if record.sun_w_m2 is not None and "shortwave_w_m2" in taken:
        taken.remove("shortwave_w_m2")  # the record's own sun column is kept
    if record.outside_c is None:
        names = ", ".join("temperature" if c == "temperature_c" else _WHAT[c] for c in taken)
        return f"{outside.source} ({names}; the record has no outside column)"
    read = np.isfinite(record.outside_c)
    cols.pop("dew_point_c", None)
    taken = [c for c in taken if c not in ("temperature_c", "dew_point_c")]
    if "temperature_c" in cols:
        cols["temperature_c"] = np.where(read, record.outside_c, cols["temperature_c"])
        filled = int((~read & covered).sum())
        if filled:
            taken.append("temperature_c")
            notes.append(
                f"{filled} row(s) without an outside reading take the weather archive's "
                "outside temperature"
            )
    names = ", ".join(_WHAT[c] for c in taken) or "nothing"
    return f"the record's {record.columns['outside']} column; {names} from {outside.source}"


#: how the source line names each column it took from a weather archive
_WHAT = {
    "temperature_c": "temperature (rows without a reading)",
    "dew_point_c": "dew point",
    "cloud_cover_pct": "cloud cover",
    "cloud_cover_low_pct": "low cloud",
    "wind_speed_m_s": "wind",
    "shortwave_w_m2": "sun",
}


def _night(house: House, record: LoggerRecord, sun: np.ndarray | None) -> np.ndarray:
    """Rows at night: the sun below the horizon at the site, and under the daylight level."""
    night = np.ones(record.n_rows, dtype=bool)
    if house.site is not None:
        from grower import diurnal

        t = record.utc_s
        rises, sets = diurnal.sun_events(
            house.site.latitude_deg, house.site.longitude_deg, float(t[0]), float(t[-1])
        )
        events = np.concatenate([rises, sets])
        kinds = np.concatenate([np.zeros(rises.size), np.ones(sets.size)])
        order = np.argsort(events)
        events, kinds = events[order], kinds[order]
        last = np.searchsorted(events, t, side="right") - 1
        night = (last >= 0) & (kinds[np.maximum(last, 0)] == 1)
    if sun is not None:
        night &= ~(sun >= hm.DAYLIGHT_W_M2)
    return night


def _runs(ok: np.ndarray, utc_s: np.ndarray) -> list[np.ndarray]:
    """Runs of consecutive usable rows, split where rows are more than the gap apart."""
    out: list[np.ndarray] = []
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        return out
    breaks = (np.diff(idx) > 1) | (np.diff(utc_s[idx]) > SEGMENT_GAP_S + 1e-6)
    for part in np.split(idx, np.flatnonzero(breaks) + 1):
        out.append(part)
    return out


def _read_runs(run: np.ndarray, measured: np.ndarray, utc_s: np.ndarray) -> list[np.ndarray]:
    """A run of usable rows trimmed to its first and last inside reading, and split where
    two readings are more than `SEGMENT_GAP_S` apart (rows between them without one kept)."""
    read = run[measured[run]]
    if read.size == 0:
        return []
    run = run[(run >= read[0]) & (run <= read[-1])]
    cuts = read[1:][np.diff(utc_s[read]) > SEGMENT_GAP_S + 1e-6]
    return [p for p in np.split(run, np.searchsorted(run, cuts)) if p.size]


def _grid(
    utc_s: np.ndarray, held: np.ndarray | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """Grid times [UTC s], the row positions on it, and the held series on it."""
    if held is None:
        return utc_s, np.arange(utc_s.size), None
    change = np.flatnonzero(np.diff(held) != 0)
    edge = np.minimum(HOLD_EDGE_S, 0.1 * np.diff(utc_s)[change])
    extra = utc_s[change + 1] - edge
    times = np.concatenate([utc_s, extra])
    values = np.concatenate([held, held[change]])
    order = np.argsort(times, kind="stable")
    obs = np.flatnonzero(order < utc_s.size)
    return times[order], obs, values[order]


def prepare(
    house: House,
    record: LoggerRecord,
    *,
    outside=None,
    with_days: bool = False,
    outside_fills: bool = False,
) -> FitData:
    """Select the usable rows, split them into segments and put the boundary on each.

    Parameters
    ----------
    house : the house the record was logged in
    record : from `grower.logger.read_logger_csv`
    outside : a `grower.weather.Forecast` with the outside temperature (and dew point,
        cloud, wind, sun if it has them) for the record's days; None: the record's own
        outside column
    with_days : keep daytime rows too (the sun's gain coefficient is then fitted)
    outside_fills : `outside` is a weather archive that fills in what the record lacks
        (the record's own outside temperature kept where it has one; see
        `_outside_columns`), not a file that replaces the record's outside column

    Raises
    ------
    InputError
        No outside temperature; no way to tell night from day; a record too short or
        too flat to learn from (the message says what to log).
    """
    notes: list[str] = list(record.notes)
    cols, covered, source = _outside_columns(record, outside, notes, outside_fills)
    sun = cols.get("shortwave_w_m2")
    if with_days and sun is None:
        raise InputError(
            "--with-days needs the sun: a sun column (W/m²) in the record or shortwave_w_m2 "
            "in the --outside file; without it, fit nights only",
            where=record.path,
        )
    if not with_days and house.site is None and sun is None:
        raise InputError(
            "cannot tell night from day: add a [site] (latitude, longitude, time zone) to the "
            "house file, or log the sun (W/m²)",
            where=house.path,
        )
    # a row without an inside reading stays in: its heater and outside values are what
    # the house had between the readings around it (no reading is matched there)
    measured = np.isfinite(record.inside_c)
    ok = covered & np.isfinite(cols["temperature_c"])
    if with_days:
        ok &= np.isfinite(sun)
    for c, v in cols.items():  # the boundary is linear between rows: bridge missing values
        good = np.isfinite(v)
        if c != "temperature_c" and good.any() and not good.all():
            cols[c] = np.interp(record.utc_s, record.utc_s[good], v[good])
    sun = cols.get("shortwave_w_m2")
    heater_values = (
        record.heater_fraction if record.heater_fraction is not None else record.heater_w
    )
    if heater_values is not None:
        miss = ~np.isfinite(heater_values) & ok
        if miss.any():
            notes.append(
                f"{int(miss.sum())} row(s) without a heater value ({line_ranges(record.lines[miss])}) "
                "left out: the heat there is not known, so the record is split there"
            )
        ok &= np.isfinite(heater_values)
    if not with_days:
        night = _night(house, record, sun)
        if not (ok & night).any():
            raise InputError(
                "no night rows in the record (sun below the horizon): log at least two clear "
                "nights with the heater off",
                where=record.path,
            )
        ok &= night
        notes.append(
            "nights only: daytime rows left out (the sun's gain is the least certain part of "
            "the model; --with-days fits it with a free factor)"
        )
    vent = record.inside_c >= house.vent_temperature_c - VENT_MARGIN_K
    if (ok & vent).any():
        notes.append(
            f"{int((ok & vent).sum())} row(s) with the air near the vent temperature "
            f"({house.vent_temperature_c:g} °C) left out: the house vents there"
        )
    ok &= ~vent

    runs = [m for r in _runs(ok, record.utc_s) for m in _read_runs(r, measured, record.utc_s)]
    kept = [
        r
        for r in runs
        if measured[r].sum() >= MIN_SEGMENT_ROWS
        and record.utc_s[r[-1]] - record.utc_s[r[0]] >= MIN_SEGMENT_S
    ]
    if len(kept) < len(runs):
        notes.append(f"{len(runs) - len(kept)} stretch(es) shorter than 1 h left out")
    usable_s = sum(record.utc_s[r[-1]] - record.utc_s[r[0]] for r in kept)
    what = "night " if not with_days else ""
    if usable_s < MIN_RECORD_S:
        raise InputError(
            f"only {usable_s / 3600:.1f} h of {what}data usable in the record (6 h are needed): "
            "log at least two clear nights with the heater off",
            where=record.path,
        )
    inputs = np.concatenate(kept)
    rows = inputs[measured[inputs]]
    unread = inputs[~measured[inputs]]
    if unread.size:
        notes.append(
            f"{unread.size} row(s) without an inside reading within the stretches fitted "
            f"({line_ranges(record.lines[unread])}): the model runs through them on their "
            "logged heater and outside values, with no reading to match"
        )
    t_in = record.inside_c[rows]
    t_out = cols["temperature_c"][rows]
    spread = float(np.std(t_in))
    if spread < MIN_INSIDE_STD_K:
        raise InputError(
            f"the inside temperature hardly changes (standard deviation {spread:.2f} K, "
            f"{MIN_INSIDE_STD_K:g} K needed): there is nothing to learn from; log nights when "
            "the house cools, with the heater off or its on/off state logged",
            where=record.path,
        )
    # the geometry's models at the record's conditions (as `tonight` builds them)
    mean_out = float(np.mean(t_out))
    wind = float(np.nanmean(cols["wind_speed_m_s"][rows])) if "wind_speed_m_s" in cols else 0.0
    if "wind_speed_m_s" not in cols:
        notes.append(
            "no wind logged: the geometry is taken at calm (no wind), so the fitted factors are "
            "on the calm house's conductances and the runs apply them at their own wind; on "
            "a windy record they come out high, the cautious side (--weather-archive, or "
            "wind_speed_m_s in an --outside file, gives the wind)"
        )
    kw = dict(
        wind_m_s=wind,
        curtain_closed=True,
        mean_radiant_temp_c=mean_out - 5.0,
        air_temp_c=mean_out,
        use_calibration=False,
    )
    lumped = hm.build(house, kind="lumped", **kw)
    two = hm.build(house, kind="two-node", **kw)
    if with_days and house.curtain is not None:
        notes.append("the energy curtain is taken as drawn all the time (day and night)")

    heater = None
    if record.heater_fraction is not None:
        if np.any(record.heater_fraction[inputs] > 0):
            heater = "state"
        else:
            notes.append("the heater was off on every row used: its output is not fitted")
    elif record.heater_w is not None:
        if np.any(record.heater_w[inputs] > 0):
            heater = "power"
        else:
            notes.append("the logged heater power is zero on every row used")

    fc = _forecast_on_rows(record, np.isfinite(cols["temperature_c"]) & covered, cols)
    grids = []
    for r in kept:
        held = None
        if heater == "state":
            held = record.heater_fraction[r]
        elif heater == "power":
            held = record.heater_w[r]
        grids.append(_grid(record.utc_s[r], held))
    all_t = np.concatenate([g[0] for g in grids])
    micro = np.round(all_t * 1e6).astype("int64")
    index = pd.DatetimeIndex(pd.to_datetime(micro, unit="us", utc=True)).tz_convert(record.tz)
    pressure = house.site.pressure_hpa if house.site else None
    bnd = hm.boundary(house, lumped, fc, index, pressure_hpa=pressure)
    bc_all = bnd.solver_boundary(lumped)
    sun_all = bnd.sun_w if (with_days and sun is not None) else np.zeros(all_t.size)
    segments = []
    start = 0
    for r, (t, obs_all, held) in zip(kept, grids, strict=True):
        sl = slice(start, start + t.size)
        start += t.size
        obs = obs_all[measured[r]]
        r = r[measured[r]]
        segments.append(
            Segment(
                rows=r,
                times_s=t - t[0],
                obs=obs,
                inside_c=record.inside_c[r],
                outside_c=bnd.outside_c[sl][obs],
                effective_c=bnd.effective_c[sl][obs],
                boundary_c=bc_all[sl],
                sun_w=sun_all[sl],
                heater_on=held if heater == "state" else None,
                heater_w=held if heater == "power" else None,
            )
        )
    t_eff = np.concatenate([seg.effective_c for seg in segments])
    diff = float(np.mean(np.abs(t_in - t_eff)))
    if diff < MIN_MEAN_DIFFERENCE_K:
        raise InputError(
            f"inside and outside (air and clear sky together) differ by only {diff:.1f} K on "
            f"average ({MIN_MEAN_DIFFERENCE_K:g} K needed): is the outside sensor indoors, or "
            "was the house open? log clear nights with the house closed",
            where=record.path,
        )
    cloud = "cloud_cover_pct" in cols
    return FitData(
        house=house,
        record=record,
        segments=tuple(segments),
        lumped=lumped,
        two_node=two,
        heater=heater,
        with_days=with_days,
        outside_source=source,
        wind_m_s=wind,
        notes=tuple(notes),
        cloud_given=cloud,
    )
