"""`stock`: the fuel a forecast cold spell burns, and when the fuel on hand runs out.

The house is run through the whole forecast with a thermostat heater (the installed
one, or unlimited when the house file has none) holding the day setpoint from sunrise
to sunset and the night setpoint otherwise; sun warms it by day and above the vent
temperature ventilation removes the surplus instead of storing it in the soil. An
energy curtain is drawn from sunset to sunrise. Each day and each night is its own
segment, with the conductances at that segment's mean wind; the state carries over.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from grower import fuels, safety
from grower.errors import InputError
from grower.house import House
from grower.plans import model as hm
from grower.plans import runs
from grower.plans.tonight import when

#: solver grid step [s]; the run-out time is placed inside a step by its energy
STEP_S = 600.0


@dataclass(frozen=True)
class Day:
    date: dt.date
    heat_kwh: float
    fuel_amount: float
    cost: float | None
    min_air_c: float
    hours_below_setpoint: float
    vented_kwh: float


@dataclass(frozen=True)
class StockResult:
    house_name: str
    house_path: str
    model: str
    calibrated: bool
    k_w_per_k: float
    c_j_per_k: float
    setpoint_c: float
    night_setpoint_c: float
    vent_c: float
    heater_output_w: float | None  # None: unlimited
    start: dt.datetime
    end: dt.datetime
    days: tuple[Day, ...]
    energy_kwh: float
    fuel: fuels.FuelAmount
    fuel_label: str
    appliance: str
    on_hand: fuels.FuelStock | None
    runs_out_at: dt.datetime | None
    lasts_days: float | None
    containers: tuple[fuels.ContainerCount, ...]
    price: float | None
    cost: float | None
    hours_below_setpoint: float
    peak_w: float
    assumptions: tuple[str, ...]
    forecast_source: str
    forecast_attribution: str | None
    forecast_age_s: float | None
    forecast_warnings: tuple[str, ...]
    cautions: tuple[str, ...]


def segments(
    house: House, start: pd.Timestamp, end: pd.Timestamp
) -> list[tuple[pd.Timestamp, pd.Timestamp, bool]]:
    """(from, to, is_night) between sunrises and sunsets (one segment without a site)."""
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


def stock(
    house: House,
    forecast,
    *,
    setpoint_c: float,
    night_setpoint_c: float | None,
    fuel_name: str | None = None,
    on_hand_text: str | None = None,
    price: float | None = None,
    unit: str | None = None,
    kind: hm.ModelKind = "two-node",
    start: pd.Timestamp | None = None,
    now: pd.Timestamp | None = None,
    use_calibration: bool = True,
    progress: Callable[[int, int], None] | None = None,
) -> StockResult:
    """Fuel for `house` through `forecast`; see the module docstring."""
    from grower import weather

    night_set = setpoint_c if night_setpoint_c is None else night_setpoint_c
    now = now if now is not None else pd.Timestamp.now(tz=forecast.start.tz).floor("s")
    first, last = forecast.start, forecast.end
    notes: list[str] = []
    if start is None:
        start = now if first <= now <= last else first
        if now < first:
            notes.append(f"the forecast starts later than now: from {first:%a %d %b %H:%M}")
        elif now > last:
            raise InputError(
                f"the forecast ends at {last.isoformat()}, before now", where=forecast.source
            )
    end = last
    if (end - start).total_seconds() < 6 * 3600:
        raise InputError(
            "the forecast covers less than 6 hours from the start", where=forecast.source
        )

    # fuel and appliance
    heater = house.heaters[0] if house.heaters else None
    fuel_key = fuel_name or house.stock.get("fuel") or (heater.fuel if heater else None)
    if fuel_key is None:
        raise InputError(
            "which fuel? give --fuel (the house file has no heater or [stock] fuel)", where="--fuel"
        )
    fuel = fuels.get_fuel(fuel_key)
    if heater is not None and heater.fuel == fuel.name:
        eff, appliance = heater.efficiency, heater.appliance or fuel.default_appliance
    else:
        appliance = fuel.default_appliance
        eff = fuels.get_appliance(appliance).efficiency
        if heater is not None:
            notes.append(
                f"--fuel {fuel.name} differs from the installed heater's; a {appliance} is assumed"
            )
    q_max = house.heater_output_w if house.heaters else math.inf
    measured = hm.calibrated_heater_output(house, use_calibration) if house.heaters else None
    if measured is not None:
        q_max = measured
        notes.append(f"heater output {q_max / 1e3:.1f} kW as measured by grower fit")
    if not house.heaters:
        notes.append("no heater in the house file: an unlimited heater holds the setpoints")

    on_hand_src = on_hand_text if on_hand_text is not None else house.stock.get("on_hand")
    on_hand = fuels.parse_amount(on_hand_src, fuel, where="--on-hand") if on_hand_src else None
    out_unit = unit or (on_hand.unit if on_hand else fuel.unit)
    if price is None and house.stock.get("price") is not None and on_hand_text is None:
        price = float(house.stock["price"])

    segs = segments(house, start, end)
    pressure = house.site.pressure_hpa if house.site else None
    vent = house.vent_temperature_c
    curtain_nightly = bool(house.curtain and house.curtain.closed_at_night)
    times_all: list[pd.DatetimeIndex] = []
    heat_steps: list[np.ndarray] = []
    vent_steps: list[np.ndarray] = []
    air_all: list[np.ndarray] = []
    set_all: list[np.ndarray] = []
    power_all: list[np.ndarray] = []
    x = None
    model_used = None
    frame = forecast.frame
    for i, (a, b, night) in enumerate(segs):
        if progress:
            progress(i, len(segs))
        times = hm.grid(a, b, frame.index, STEP_S)
        window = frame[
            (frame.index >= a - pd.Timedelta(hours=1)) & (frame.index <= b + pd.Timedelta(hours=1))
        ]
        wind = (
            float(np.nanmean(window["wind_speed_m_s"]))
            if "wind_speed_m_s" in forecast.given
            else 0.0
        )
        mean_out = float(window["temperature_c"].mean())
        mdl = hm.build(
            house,
            kind=kind,
            wind_m_s=wind,
            curtain_closed=curtain_nightly and night,
            mean_radiant_temp_c=mean_out - 5.0,
            air_temp_c=mean_out,
            use_calibration=use_calibration,
        )
        model_used = model_used or mdl
        bnd = hm.boundary(house, mdl, forecast, times, pressure_hpa=pressure)
        bc = bnd.solver_boundary(mdl)
        gains = bnd.solver_gains(mdl)
        sp = night_set if night else setpoint_c
        if x is None:
            # start in balance with a house held at its setpoint: air at the setpoint,
            # the mass at its steady state with the air there (common practice, no source)
            x = runs.held_steady_state(mdl, bc[0], gains[0], sp)
            notes.append("the house is taken to start at its setpoint, the soil in balance with it")
        setpoints = np.full(len(times), sp)
        res = runs.thermostat(mdl, bnd.times_s, bc, x, setpoints, q_max, gains, vent)
        x = res.temps_c[0, -1]
        times_all.append(times)
        heat_steps.append(res.step_heat_j[0])
        vent_steps.append(res.step_vent_j[0])
        air_all.append(res.air_c[0])
        set_all.append(setpoints)
        power_all.append(res.heat_w[0])
    if progress:
        progress(len(segs), len(segs))

    # stitch: step energies are per step; attribute each to its start time's local date
    starts = (
        pd.DatetimeIndex(np.concatenate([t[:-1].as_unit("ns").asi8 for t in times_all]))
        .tz_localize("UTC")
        .tz_convert(start.tz)
    )
    ends_ = (
        pd.DatetimeIndex(np.concatenate([t[1:].as_unit("ns").asi8 for t in times_all]))
        .tz_localize("UTC")
        .tz_convert(start.tz)
    )
    step_j = np.concatenate(heat_steps)
    vent_j = np.concatenate(vent_steps)
    air = np.concatenate([a[:-1] for a in air_all])
    sp_steps = np.concatenate([s[:-1] for s in set_all])
    dur = (ends_.as_unit("ns").asi8 - starts.as_unit("ns").asi8) / 1e9
    below = air < sp_steps - 0.05
    j_per = fuel.j_per(out_unit)
    days = []
    for date in sorted(set(starts.date)):
        sel = starts.date == date
        e = float(step_j[sel].sum())
        amount = e / (j_per * eff)
        days.append(
            Day(
                date=date,
                heat_kwh=e / 3.6e6,
                fuel_amount=amount,
                cost=None if price is None else amount * price,
                min_air_c=float(air[sel].min()),
                hours_below_setpoint=float(dur[sel][below[sel]].sum() / 3600.0),
                vented_kwh=float(vent_j[sel].sum() / 3.6e6),
            )
        )
    total_j = float(step_j.sum())
    amount = fuels.fuel_amount(total_j, fuel, eff, out_unit)
    runs_out = None
    lasts = None
    if on_hand is not None:
        need_j = on_hand.energy_j * eff  # heat the stock delivers
        cum = np.cumsum(step_j)
        k = int(np.searchsorted(cum, need_j))
        if k < len(cum):
            before = cum[k - 1] if k > 0 else 0.0
            frac = (need_j - before) / step_j[k] if step_j[k] > 0 else 0.0
            t_out = starts[k] + pd.Timedelta(seconds=float(frac * dur[k]))
            runs_out = when(t_out)
            lasts = (t_out - start).total_seconds() / 86400.0
    notes += list(weather.assumptions(forecast))
    note = hm.calibration_note(house, kind, use_calibration)
    if note:
        notes.append(note)
    peak = float(max(p.max() for p in power_all))
    return StockResult(
        house_name=house.name,
        house_path=house.path,
        model=kind,
        calibrated=bool(model_used and model_used.calibrated),
        k_w_per_k=model_used.k_w_per_k,
        c_j_per_k=model_used.c_j_per_k,
        setpoint_c=setpoint_c,
        night_setpoint_c=night_set,
        vent_c=vent,
        heater_output_w=None if math.isinf(q_max) else q_max,
        start=when(start),
        end=when(end),
        days=tuple(days),
        energy_kwh=total_j / 3.6e6,
        fuel=amount,
        fuel_label=fuel.label,
        appliance=fuels.get_appliance(appliance).label,
        on_hand=on_hand,
        runs_out_at=runs_out,
        lasts_days=lasts,
        containers=fuels.containers_needed(amount, fuel),
        price=price,
        cost=None if price is None else float(amount.amount) * price,
        hours_below_setpoint=float(dur[below].sum() / 3600.0),
        peak_w=peak,
        assumptions=tuple(notes),
        forecast_source=forecast.source,
        forecast_attribution=forecast.attribution,
        forecast_age_s=forecast.age_s,
        forecast_warnings=tuple(forecast.warnings),
        cautions=safety.cautions(fuel, appliance, (peak / eff) if peak > 0 else None),
    )
