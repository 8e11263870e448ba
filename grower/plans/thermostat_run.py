"""A house on its thermostat through a long forecast or a past winter, in one run.

Shared by `stock` and `winters`. The house is held at the day setpoint from sunrise to
sunset and the night setpoint otherwise by its heater (the installed one, or unlimited);
sun warms it by day, and above the vent temperature ventilation removes the surplus
instead of storing it in the soil. An energy curtain is drawn from sunset to sunrise.

The setpoints are a series inside one exact thermostat run (`grower.solver.thermostat`
takes a setpoint per step); a new run starts only where the network itself changes,
i.e. where a nightly curtain is drawn or opened. The conductances are those at the
forecast's heating-weighted mean wind and air temperature — weighted by the degree-hours
below the setpoint, the hours that burn the fuel (common practice, no source): U-values
rise with wind only above the 15 mph design wind, and the sky conductance with the
cube of the absolute temperature, so one set holds the heating hours to a few percent.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from grower.house import House
from grower.plans import model as hm
from grower.plans import runs
from grower.units import Note

#: solver grid step [s]
STEP_S = 600.0
#: a setpoint no house falls to: the heater never fires [°C]
OFF_C = -273.15


@dataclass(frozen=True)
class Run:
    """The run on its grid: per grid time (N) and per step (N − 1), SI."""

    times: pd.DatetimeIndex  # tz-aware, N
    step_s: np.ndarray  # step lengths [s], N − 1
    outside_c: np.ndarray  # N
    effective_c: np.ndarray  # N: the outside, sky and deep ground as one temperature
    air_c: np.ndarray  # N
    plant_c: np.ndarray  # N: air less the leaf offset
    heat_w: np.ndarray  # N
    setpoint_c: np.ndarray  # N − 1, the value at each step's start
    night: np.ndarray  # N − 1, bool
    step_heat_j: np.ndarray  # N − 1
    step_vent_j: np.ndarray  # N − 1
    model: hm.Model  # the (night) model: K and C for the report
    n_runs: int  # thermostat runs made (1 unless a nightly curtain)
    notes: tuple[str, ...]

    @property
    def energy_j(self) -> float:
        return float(self.step_heat_j.sum())


def segments(
    house: House, start: pd.Timestamp, end: pd.Timestamp
) -> list[tuple[pd.Timestamp, pd.Timestamp, bool]]:
    """(from, to, is_night) between sunrises and sunsets (one night without a site)."""
    if house.site is None:
        return [(start, end, True)]
    from grower import diurnal

    rises, sets = diurnal.sun_events(
        house.site.latitude_deg, house.site.longitude_deg, start.timestamp(), end.timestamp()
    )
    events = sorted([(t, "rise") for t in rises] + [(t, "set") for t in sets])
    t0, t1 = start.timestamp(), end.timestamp()
    # night at the start when the last event before it was a sunset
    night = next((kind == "set" for t, kind in reversed(events) if t <= t0), True)
    out: list[tuple[pd.Timestamp, pd.Timestamp, bool]] = []
    cut = start
    for t, kind in events:
        if t0 < t < t1:
            ts = pd.Timestamp(t, unit="s", tz="UTC").tz_convert(start.tz)
            out.append((cut, ts, night))
            cut, night = ts, kind == "set"
    out.append((cut, end, night))
    return out


def _grid(segs, frame_index: pd.DatetimeIndex) -> tuple[pd.DatetimeIndex, np.ndarray]:
    """The grid over all segments (their cuts included) and each step's night flag."""
    start, end = segs[0][0], segs[-1][1]
    times = hm.grid(start, end, frame_index, STEP_S)
    if len(segs) > 1:
        cuts = pd.DatetimeIndex([a for a, _, _ in segs[1:]]).tz_convert(start.tz)
        times = times.union(cuts).tz_convert(start.tz)
    t = hm.epoch_s(times)
    cut_s = np.array([a.timestamp() for a, _, _ in segs])
    which = np.searchsorted(cut_s, t[:-1], side="right") - 1
    flags = np.array([n for _, _, n in segs], dtype=bool)
    return times, flags[which]


def _weighted(values: np.ndarray, weights: np.ndarray) -> float:
    total = float(weights.sum())
    return float((values * weights).sum() / total) if total > 0 else float(values.mean())


def simulate(
    house: House,
    forecast,
    start: pd.Timestamp,
    end: pd.Timestamp,
    *,
    setpoint_c: float,
    night_setpoint_c: float,
    q_max_w: float,
    kind: hm.ModelKind = "two-node",
    use_calibration: bool = True,
    progress: Callable[[int, int], None] | None = None,
    heat_until: pd.Timestamp | None = None,
) -> Run:
    """Run `house` through `forecast` from `start` to `end` on its thermostat (see module).

    `heat_until`: the heater stops for good at the first grid time at or after it (the
    fuel ran out there; within one grid step); the setpoints in the result stay the plan's.
    """
    segs = segments(house, start, end)
    times, night = _grid(segs, forecast.frame.index)
    t_s = hm.epoch_s(times)
    step = np.diff(t_s)
    sp = np.where(night, night_setpoint_c, setpoint_c)
    frame = forecast.frame
    pressure = house.site.pressure_hpa if house.site else None

    # conditions of the heating hours (module docstring)
    at = hm.epoch_s(frame.index)
    out_grid = np.interp(t_s, at, frame["temperature_c"].to_numpy(float))
    w = np.maximum(np.append(sp, sp[-1]) - out_grid, 0.0)
    if "wind_speed_m_s" in forecast.given:
        wind_raw = frame["wind_speed_m_s"].to_numpy(float)
        ok = np.isfinite(wind_raw)
        wind_grid = np.interp(t_s, at[ok], wind_raw[ok]) if ok.any() else np.zeros_like(t_s)
    else:
        wind_grid = np.zeros_like(t_s)
    wind = _weighted(wind_grid, w)
    mean_out = _weighted(out_grid, w)
    fire = sp  # the setpoint the heater works to: none once it has stopped for good
    if heat_until is not None:
        fire = np.where(t_s[:-1] >= heat_until.timestamp(), OFF_C, sp)
    curtain_nightly = bool(house.curtain and house.curtain.closed_at_night)
    states = sorted({bool(n) and curtain_nightly for n in night}) if curtain_nightly else [False]

    models, bounds = {}, {}
    for closed in states:
        models[closed] = hm.build(
            house,
            kind=kind,
            wind_m_s=wind,
            curtain_closed=closed,
            mean_radiant_temp_c=mean_out - 5.0,
            air_temp_c=mean_out,
            use_calibration=use_calibration,
        )
        bounds[closed] = hm.boundary(house, models[closed], forecast, times, pressure_hpa=pressure)
    state = (night & curtain_nightly) if curtain_nightly else np.zeros(step.size, dtype=bool)
    ref = models[states[-1]]
    b0 = bounds[states[-1]]

    # blocks of steps with one network: one thermostat run each
    change = np.flatnonzero(np.diff(state.astype(np.int8))) + 1
    edges = np.concatenate([[0], change, [step.size]])
    n = len(t_s)
    air, heat = np.empty(n), np.empty(n)
    plant_off = np.empty(n)
    eff = np.empty(n)
    step_heat, step_vent = np.empty(n - 1), np.empty(n - 1)
    x = None
    notes = []
    for r, (i0, i1) in enumerate(zip(edges[:-1], edges[1:], strict=True)):
        if progress:
            progress(r, len(edges) - 1)
        closed = bool(state[i0])
        mdl, bnd = models[closed], bounds[closed]
        sl = slice(i0, i1 + 1)
        bc = bnd.solver_boundary(mdl)[sl]
        gains = bnd.solver_gains(mdl)[sl]
        if x is None:
            # start in balance with a house held at its setpoint: air at the setpoint,
            # the mass at its steady state with the air there (common practice, no source)
            x = runs.held_steady_state(mdl, bc[0], gains[0], float(sp[0]))
            notes.append("the house is taken to start at its setpoint, the soil in balance with it")
        setp = np.append(fire[i0:i1], fire[i1 - 1])
        res = runs.thermostat(
            mdl, t_s[sl] - t_s[i0], bc, x, setp, q_max_w, gains, house.vent_temperature_c
        )
        x = res.temps_c[0, -1]
        air[sl] = res.air_c[0]
        heat[sl] = res.heat_w[0]
        plant_off[sl] = bnd.plant_offset_k[sl]
        eff[sl] = bnd.effective_c[sl]
        step_heat[i0:i1] = res.step_heat_j[0]
        step_vent[i0:i1] = res.step_vent_j[0]
    if progress:
        progress(len(edges) - 1, len(edges) - 1)
    if "wind_speed_m_s" in forecast.given:
        notes.append(
            Note(
                "conductances at the heating hours' mean wind, {wind}, and air, {air}",
                wind=("speed", wind),
                air=("temp", mean_out),
            )
        )
    return Run(
        times=times,
        step_s=step,
        outside_c=b0.outside_c,
        effective_c=eff,
        air_c=air,
        plant_c=air - plant_off,
        heat_w=heat,
        setpoint_c=sp,
        night=night,
        step_heat_j=step_heat,
        step_vent_j=step_vent,
        model=ref,
        n_runs=len(edges) - 1,
        notes=tuple(notes),
    )


def local_days(run: Run) -> tuple[np.ndarray, np.ndarray]:
    """(dates, index of each step's local date) — the dates computed once, not per day."""
    starts = run.times[:-1]
    keys = starts.tz_localize(None).normalize().as_unit("ns").asi8
    days, inverse = np.unique(keys, return_inverse=True)
    dates = pd.DatetimeIndex(days).date
    return dates, inverse
