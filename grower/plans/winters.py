"""`winters`: the house through each of the last N winters of the site's weather history.

Each winter runs as `stock` runs a forecast (`plans.thermostat_run`: the same thermostat,
setpoints, sun, venting and curtain), from the first to the last hour of its history,
starting at the setpoint with the soil in balance with the first day's mean weather. So
one winter's heat is exactly what `stock` gives on the same hourly series. Per winter:
heat and fuel per month and for the season, its cost, and the hours the installed heater
could not hold the setpoint; over the winters: the median and the coldest (lowest mean
outside temperature).
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from grower import fuels, safety
from grower.house import House
from grower.plans import model as hm
from grower.plans import stock as st
from grower.plans import thermostat_run as tr
from grower.plans.tonight import when


@dataclass(frozen=True)
class Month:
    month: str  # "2024-12"
    energy_kwh: float
    fuel_amount: float
    cost: float | None
    hours_not_held: float


@dataclass(frozen=True)
class Winter:
    label: str  # "2024–25"
    start: dt.datetime
    end: dt.datetime
    energy_kwh: float
    fuel: fuels.FuelAmount
    cost: float | None
    months: tuple[Month, ...]
    hours_not_held: float
    mean_outside_c: float
    mean_effective_outside_c: float  # outside air, sky and deep ground as one [°C]
    min_outside_c: float
    min_air_c: float
    peak_w: float


@dataclass(frozen=True)
class WintersResult:
    house_name: str
    house_path: str
    model: str
    k_w_per_k: float
    setpoint_c: float
    night_setpoint_c: float
    heater_output_w: float | None
    fuel_label: str
    fuel: str  # the fuel's key ("propane"), for the screens' unit conversion
    appliance: str
    efficiency: float
    unit: str
    price: float | None
    winters: tuple[Winter, ...]
    median_energy_kwh: float
    median_fuel_amount: float
    median: Winter  # the winter nearest the median
    coldest: Winter
    source: str
    attribution: str | None
    assumptions: tuple[str, ...]
    cautions: tuple[str, ...]
    #: the house file's [calibration] not used (an older format, a house changed since
    #: the fit): the line, also in `assumptions`, that the report shows as a warning
    calibration_warning: str | None = None
    #: the fuel unit was asked for (--fuel-unit): screens keep it as it is
    fuel_unit_chosen: bool = False


def season(
    house: House,
    forecast,
    heat: st.Heating,
    *,
    setpoint_c: float,
    night_setpoint_c: float,
    unit: str,
    price: float | None,
    kind: hm.ModelKind = "two-node",
    use_calibration: bool = True,
) -> tuple[Winter, tr.Run]:
    """One winter: the thermostat run over the whole of `forecast`."""
    run = tr.simulate(
        house,
        forecast,
        forecast.start,
        forecast.end,
        setpoint_c=setpoint_c,
        night_setpoint_c=night_setpoint_c,
        q_max_w=math.inf if heat.heater_output_w is None else heat.heater_output_w,
        kind=kind,
        use_calibration=use_calibration,
    )
    j_per = heat.fuel.j_per(unit) * heat.efficiency
    dates, idx = tr.local_days(run)
    months = np.array([d.year * 12 + d.month - 1 for d in dates])[idx]
    keys, inv = np.unique(months, return_inverse=True)
    heat_j = np.bincount(inv, run.step_heat_j, keys.size)
    below = st.not_held(run)
    hours = np.bincount(inv, np.where(below, run.step_s, 0.0), keys.size) / 3600.0
    out_months = tuple(
        Month(
            month=f"{k // 12:04d}-{k % 12 + 1:02d}",
            energy_kwh=float(e / 3.6e6),
            fuel_amount=float(e / j_per),
            cost=None if price is None else float(e / j_per * price),
            hours_not_held=float(h),
        )
        for k, e, h in zip(keys, heat_j, hours, strict=True)
    )
    amount = fuels.fuel_amount(run.energy_j, heat.fuel, heat.efficiency, unit)
    first = forecast.start
    label = f"{first.year}–{(first.year + 1) % 100:02d}" if first.month >= 7 else str(first.year)
    w = Winter(
        label=label,
        start=when(forecast.start),
        end=when(forecast.end),
        energy_kwh=run.energy_j / 3.6e6,
        fuel=amount,
        cost=None if price is None else float(amount.amount) * price,
        months=out_months,
        hours_not_held=float(run.step_s[below].sum() / 3600.0),
        mean_outside_c=float(np.average(run.outside_c[:-1], weights=run.step_s)),
        mean_effective_outside_c=float(np.average(run.effective_c[:-1], weights=run.step_s)),
        min_outside_c=float(run.outside_c.min()),
        min_air_c=float(run.air_c.min()),
        peak_w=float(run.heat_w.max()),
    )
    return w, run


def winters(
    house: House,
    seasons: Sequence,
    *,
    setpoint_c: float,
    night_setpoint_c: float | None,
    fuel_name: str | None = None,
    price: float | None = None,
    unit: str | None = None,
    kind: hm.ModelKind = "two-node",
    use_calibration: bool = True,
    source: str = "",
    progress: Callable[[int, int], None] | None = None,
) -> WintersResult:
    """Run `house` through each forecast-shaped winter in `seasons` (see module)."""
    if not seasons:
        raise ValueError("no winters to run")
    night = setpoint_c if night_setpoint_c is None else night_setpoint_c
    heat, notes = st.heating(house, fuel_name, use_calibration)
    stock_ = st.on_hand(house, heat.fuel, None, None)
    out_unit = unit or (stock_.unit if stock_ else heat.fuel.unit)
    if price is None and house.stock.get("price") is not None and stock_ is not None:
        # the house file's price is per unit of its [stock] on_hand
        price = (
            float(house.stock["price"]) * heat.fuel.j_per(out_unit) / heat.fuel.j_per(stock_.unit)
        )
        # the report says the price per the unit it shows the fuel in
        notes.append("price from the house file's [stock] price (per its on_hand unit)")
    done = []
    run = None
    for i, fc in enumerate(seasons):
        if progress:
            progress(i, len(seasons))
        w, run = season(
            house,
            fc,
            heat,
            setpoint_c=setpoint_c,
            night_setpoint_c=night,
            unit=out_unit,
            price=price,
            kind=kind,
            use_calibration=use_calibration,
        )
        done.append(w)
    if progress:
        progress(len(seasons), len(seasons))
    energies = np.array([w.energy_kwh for w in done])
    median = float(np.median(energies))
    near = done[int(np.argmin(np.abs(energies - median)))]
    coldest = min(done, key=lambda w: w.mean_outside_c)
    notes += list(run.notes)
    note = hm.calibration_note(house, kind, use_calibration)
    if note:
        notes.append(note)
    peak_in = heat.input_w or max(w.peak_w for w in done) / heat.efficiency
    return WintersResult(
        house_name=house.name,
        house_path=house.path,
        model=kind,
        k_w_per_k=run.model.k_w_per_k,
        setpoint_c=setpoint_c,
        night_setpoint_c=night,
        heater_output_w=heat.heater_output_w,
        fuel_label=heat.fuel.label,
        appliance=heat.appliance,
        efficiency=heat.efficiency,
        unit=out_unit,
        price=price,
        winters=tuple(done),
        median_energy_kwh=median,
        median_fuel_amount=float(np.median([float(w.fuel.amount) for w in done])),
        median=near,
        coldest=coldest,
        source=source or seasons[0].source,
        attribution=seasons[0].attribution,
        assumptions=tuple(dict.fromkeys(notes)),
        calibration_warning=hm.calibration_warning(house, use_calibration),
        cautions=safety.cautions(heat.fuel, heat.appliance_key, peak_in or None),
        fuel=heat.fuel.name,
        fuel_unit_chosen=unit is not None,
    )
