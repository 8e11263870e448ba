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

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

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

    times_ns: np.ndarray  # N grid times, int64 ns since 1970 UTC
    tz: dt.tzinfo  # the zone local times and dates are in
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

    @property
    def utc_s(self) -> np.ndarray:
        """The grid times as UTC seconds since 1970 (N)."""
        return self.times_ns / 1e9

    @property
    def times(self) -> Any:
        """The grid as a tz-aware pandas DatetimeIndex (imports pandas)."""
        import pandas as pd

        return pd.DatetimeIndex(pd.to_datetime(self.times_ns, unit="ns", utc=True)).tz_convert(
            self.tz
        )

    def time(self, ns: int) -> dt.datetime:
        """The instant `ns` [ns since 1970 UTC] to the second, in the run's zone."""
        return dt.datetime.fromtimestamp(round(round(ns / 1e9, 6)), self.tz)


def _cuts(house: House, start_ns: int, end_ns: int) -> tuple[list[int], list[bool]]:
    """The sunrises and sunsets strictly inside the run [ns] and the night flag of each
    of the ``len(cuts) + 1`` segments between them (one night without a site)."""
    if house.site is None:
        return [], [True]
    from grower import diurnal

    t0, t1 = round(start_ns / 1e9, 6), round(end_ns / 1e9, 6)
    rises, sets = diurnal.sun_events(house.site.latitude_deg, house.site.longitude_deg, t0, t1)
    events = sorted([(t, "rise") for t in rises] + [(t, "set") for t in sets])
    # night at the start when the last event before it was a sunset
    night = next((kind == "set" for t, kind in reversed(events) if t <= t0), True)
    cuts, nights = [], [night]
    for t, kind in events:
        if t0 < t < t1:
            cuts.append(hm.instant_ns(float(t)))
            nights.append(kind == "set")
    return cuts, nights


def segments(house: House, start: Any, end: Any) -> list[tuple[Any, Any, bool]]:
    """(from, to, is_night) between sunrises and sunsets as pandas Timestamps in the
    start's zone (one night without a site); `simulate` runs them as one grid."""
    import pandas as pd

    a, b = pd.Timestamp(start), pd.Timestamp(end)
    cuts, nights = _cuts(house, a.as_unit("ns").value, b.as_unit("ns").value)
    at = [a, *(pd.Timestamp(c, unit="ns", tz="UTC").tz_convert(a.tzinfo) for c in cuts), b]
    return [(at[i], at[i + 1], n) for i, n in enumerate(nights)]


def _grid(
    house: House, start_ns: int, end_ns: int, samples_ns: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """The grid [ns] over all segments (their cuts included) and each step's night flag."""
    cuts, nights = _cuts(house, start_ns, end_ns)
    times = hm.grid_ns(start_ns, end_ns, samples_ns, STEP_S, cuts)
    t = times / 1e9
    cut_s = np.array([round(c / 1e9, 6) for c in [start_ns, *cuts]])
    which = np.searchsorted(cut_s, t[:-1], side="right") - 1
    return times, np.array(nights, dtype=bool)[which]


def _start_state(mdl, bnd, t_s: np.ndarray, sp: np.ndarray, day_s: float = 86400.0):
    """Node temperatures [°C] at the start: the air at the setpoint in force, the other
    nodes (soil, water) at their steady state with the air held at the mean setpoint and
    the time-mean boundary (outside air, sky, deep ground) and sun over the run's first
    `day_s` seconds (all of it when shorter).

    The mean of a linear network's periodic state is exactly its steady state under the
    mean inputs (the derivative of a periodic state averages to zero over its period), so
    this is the soil of a house held at its setpoints through days like the first one:
    the days before the forecast are taken to be like its first. The soil (τ about half a
    day) is not in balance with the hour it starts at: one clear hour's sky, −20 °C, held
    for days would put it below both the air and the deep ground.
    (common practice, no source: building simulation runs its first day over and over
    before the period it reports, for the same reason)"""
    end = min(t_s[0] + day_s, t_s[-1])
    keep = int(np.searchsorted(t_s, end, side="right"))
    t = t_s[:keep]
    w = np.zeros(keep)
    dt_ = np.diff(t)
    w[:-1] += dt_ / 2.0
    w[1:] += dt_ / 2.0
    w = w / w.sum() if w.sum() > 0 else np.full(keep, 1.0 / keep)
    bc = np.asarray(bnd.solver_boundary(mdl))[:keep]
    gains = np.asarray(bnd.solver_gains(mdl))[:keep]
    level = np.append(sp, sp[-1])[:keep]
    x = runs.held_steady_state(mdl, w @ bc, w @ gains, float(w @ level))
    x[0] = float(sp[0])
    return x


def _weighted(values: np.ndarray, weights: np.ndarray) -> float:
    total = float(weights.sum())
    return float((values * weights).sum() / total) if total > 0 else float(values.mean())


def simulate(
    house: House,
    forecast,
    start: dt.datetime,
    end: dt.datetime,
    *,
    setpoint_c: float,
    night_setpoint_c: float,
    q_max_w: float,
    kind: hm.ModelKind = "two-node",
    use_calibration: bool = True,
    progress: Callable[[int, int], None] | None = None,
    heat_until_ns: int | None = None,
) -> Run:
    """Run `house` through `forecast` from `start` to `end` on its thermostat (see module).

    `heat_until_ns` [ns since 1970 UTC]: the heater stops for good at the first grid time
    at or after it (the fuel ran out there; within one grid step); the setpoints in the
    result stay the plan's.
    """
    times, night = _grid(
        house, hm.instant_ns(start), hm.instant_ns(end), hm.samples_ns(forecast.utc_s)
    )
    t_s = times / 1e9
    step = np.diff(t_s)
    sp = np.where(night, night_setpoint_c, setpoint_c)
    pressure = house.site.pressure_hpa if house.site else None

    # conditions of the heating hours (module docstring)
    at = forecast.utc_s
    out_grid = np.interp(t_s, at, forecast.values("temperature_c"))
    w = np.maximum(np.append(sp, sp[-1]) - out_grid, 0.0)
    if "wind_speed_m_s" in forecast.given:
        wind_raw = forecast.values("wind_speed_m_s")
        ok = np.isfinite(wind_raw)
        wind_grid = np.interp(t_s, at[ok], wind_raw[ok]) if ok.any() else np.zeros_like(t_s)
    else:
        wind_grid = np.zeros_like(t_s)
    wind = _weighted(wind_grid, w)
    mean_out = _weighted(out_grid, w)
    fire = sp  # the setpoint the heater works to: none once it has stopped for good
    if heat_until_ns is not None:
        fire = np.where(times[:-1] >= heat_until_ns, OFF_C, sp)
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
        bounds[closed] = hm.boundary(
            house, models[closed], forecast, t_s, pressure_hpa=pressure, tz=start.tzinfo
        )
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
            x = _start_state(mdl, bnd, t_s, sp)
            span_h = (t_s[-1] - t_s[0]) / 3600.0
            notes.append(
                "the house is taken to start at its setpoint, the soil in balance with it "
                + (
                    "and the first day's mean weather (the days before taken to be like it)"
                    if span_h >= 24.0
                    else f"and the mean weather of the forecast's {span_h:.0f} h (the days "
                    "before taken to be like them: with no day in them, the cautious side)"
                )
            )
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
        times_ns=times,
        tz=start.tzinfo,
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
    tz = run.tz
    days = np.fromiter(
        (dt.datetime.fromtimestamp(t, tz).toordinal() for t in run.utc_s[:-1]), dtype=np.int64
    )
    keys, inverse = np.unique(days, return_inverse=True)
    dates = np.array([dt.date.fromordinal(int(k)) for k in keys], dtype=object)
    return dates, inverse
