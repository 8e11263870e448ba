"""`tonight`: with no heat, when does the crop reach its damage temperature?

The night runs from the start (now, or `--start`) to two hours after the next sunrise.
The house floats freely through the forecast (exact stepping of the thermal network);
the plant temperature is the air temperature less the leaf offset of a clear night
under the cover (`grower.plans.model.LEAF_BELOW_AIR_CLEAR_K`). We report the first time
the plants reach the alarm temperature (damage + margin), the coldest air and plant
temperature, hours below the alarm, the heat that holds the plants at the alarm
temperature all night (peak and energy, and the fuel that burns), whether the installed
heater holds it, and the same night a few degrees colder than forecast.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Any

import numpy as np

from grower import fuels, safety, solver, vaporisation
from grower.errors import InputError
from grower.house import House
from grower.plans import model as hm
from grower.plans import runs
from grower.units import Note

#: step of the solver's grid [s]; the forecast's own samples are added to it. The
#: solution is exact for piecewise-linear inputs, so the step only sets the resolution of
#: the reported series and of the minimum.
STEP_S = 600.0
#: the night ends this long after sunrise [s]
AFTER_SUNRISE_S = 2 * 3600.0
#: without a site (no sunrise), the night is this long [s]
NIGHT_WITHOUT_SITE_S = 16 * 3600.0
#: "the same night colder than forecast" [K] (common practice, no source: forecast lows
#: are often 2 °C off in valley bottoms on clear nights)
COLDER_BY_K = 2.0
#: a heater that keeps the plants within this of the alarm holds it [K]
HOLD_TOLERANCE_K = 0.05
#: how much colder a soil than assumed is tried, to show what the assumption is worth [K]
#: (common practice, no source: a spread of readings across a house floor)
SOIL_COLDER_K = 3.0


@dataclass(frozen=True)
class Verdict:
    """One run's answer."""

    crossing_time: dt.datetime | None
    min_air_c: float
    min_plant_c: float
    min_time: dt.datetime
    hours_below: float


@dataclass(frozen=True)
class HeaterCheck:
    """Whether the installed heater holds the alarm temperature."""

    output_w: float
    holds: bool
    min_plant_c: float
    min_time: dt.datetime
    energy_kwh: float
    fuel: fuels.FuelAmount | None = None  # the night's fuel for energy_kwh, as the hold's fuel


@dataclass(frozen=True)
class Chill:
    """Chilling: a milder warning than damage."""

    threshold_c: float
    hours_below: float
    duration_h: float | None  # exposure that matters, where published
    harmful: bool


@dataclass(frozen=True)
class TonightResult:
    house_name: str
    house_path: str
    model: str
    calibrated: bool
    k_w_per_k: float
    c_j_per_k: float
    time_constant_h: float
    crop: str | None
    stage: str | None
    crop_origin: str | None
    threshold_c: float
    damage_c: float | None
    margin_k: float
    threshold_basis: str
    start: dt.datetime
    end: dt.datetime
    sunrise: dt.datetime | None
    verdict: Verdict
    colder_by_k: float
    colder: Verdict
    hold_peak_w: float
    hold_energy_kwh: float
    hold_fuel: fuels.FuelAmount
    hold_fuel_label: str
    hold_appliance: str
    heater: HeaterCheck | None
    chill: Chill | None
    soil_colder: Verdict | None  # the same night with the soil SOIL_COLDER_K colder
    soil_assumed: bool
    initial_air_c: float
    initial_mass_c: float | None
    assumptions: tuple[str, ...]
    forecast_source: str
    forecast_attribution: str | None
    forecast_issued_at: dt.datetime | None
    forecast_age_s: float | None
    forecast_warnings: tuple[str, ...]
    times: tuple[dt.datetime, ...]
    outside_c: np.ndarray
    effective_outside_c: np.ndarray
    air_c: np.ndarray
    plant_c: np.ndarray
    colder_air_c: np.ndarray
    cautions: tuple[str, ...]
    vapour: Any = None  # grower.vaporisation.VapourCheck at the night's coldest hour
    chance: Any = None  # grower.plans.chance.Chance: the members of the night, or None
    #: the house file's [calibration] not used (an older format): the line, also in
    #: `assumptions`, that the report shows as a warning
    calibration_warning: str | None = None

    @property
    def safe(self) -> bool:
        return self.verdict.crossing_time is None

    @property
    def below_now(self) -> bool:
        """The plants are at or below the alarm at the start of the night."""
        c = self.verdict.crossing_time
        return c is not None and (c - self.start).total_seconds() < 1.0

    @property
    def action(self) -> str:
        """What to do, for the house as equipped: one of `ACTIONS`.

        ``none`` (no heat needed), ``heat`` (heat needed and the installed heater holds
        the alarm), ``short`` (heat needed and the installed heater, or none, cannot hold
        it), ``below`` (the plants are at the alarm already).
        """
        if self.safe:
            return "none"
        if self.below_now:
            return "below"
        if self.heater is not None and self.heater.holds:
            return "heat"
        return "short"

    @property
    def exit_status(self) -> int:
        """``--alert-status``: 0 safe, 3 action needed and the heater holds, 4 damage expected."""
        from grower.errors import EXIT_ACTION, EXIT_DAMAGE, EXIT_OK

        if self.safe:
            return EXIT_OK
        if self.heater is not None and self.heater.holds:
            return EXIT_ACTION
        return EXIT_DAMAGE


def after(t: dt.datetime, seconds: float) -> dt.datetime:
    """`seconds` after the aware time `t` (elapsed time, right across a clock change)."""
    return dt.datetime.fromtimestamp(t.timestamp() + seconds, t.tzinfo)


def night_window(
    house: House, forecast, start: dt.datetime | None, now: dt.datetime
) -> tuple[dt.datetime, dt.datetime, dt.datetime | None, list[str]]:
    """(start, end, sunrise, notes): from `start` (or now) to 2 h after the next sunrise."""
    from grower import diurnal

    notes: list[str] = []
    first, last = forecast.start, forecast.end
    if start is None:
        if after(first, -300.0) <= now < first:
            start = first  # a curve built "now" starts a moment after the plan's now
        elif now < first:
            start = first
            notes.append(
                f"the forecast starts later than now: the night is taken from {first:%a %H:%M}"
            )
        elif now > last:
            raise InputError(
                f"the forecast ends at {last.isoformat()}, before now; give a newer forecast or --start",
                where=forecast.source,
            )
        else:
            start = now
    elif not first <= start <= last:
        raise InputError(
            f"--start {start.isoformat()} is outside the forecast ({first.isoformat()} to {last.isoformat()})",
            where="--start",
        )
    sunrise = None
    if house.site is not None:
        s0 = start.timestamp()
        rises, _sets = diurnal.sun_events(
            house.site.latitude_deg, house.site.longitude_deg, s0, s0 + 2 * 86400.0
        )
        nxt = rises[rises > s0 + 1800.0]  # sunrise in the next half hour is this morning's
        sunrise = dt.datetime.fromtimestamp(float(nxt[0]), start.tzinfo)
        end = after(sunrise, AFTER_SUNRISE_S)
    else:
        end = after(start, NIGHT_WITHOUT_SITE_S)
        notes.append("no [site] in the house file: the night is taken as 16 h (no sunrise known)")
    if end > last:
        raise InputError(
            f"the forecast ends at {last.isoformat()}, but the night runs to {end.isoformat()} "
            "(2 h after sunrise); give a longer forecast",
            where=forecast.source,
        )
    return start, end, sunrise, notes


def _at(b: hm.Boundary, seconds: float) -> dt.datetime:
    """The time `seconds` after the start, to the second, in the start's zone."""
    return dt.datetime.fromtimestamp(round(float(b.utc_s[0]) + float(seconds)), b.tz)


def when(start: dt.datetime, seconds: float = 0.0) -> dt.datetime:
    """`seconds` after the aware time `start`, to the second, in its zone."""
    t0 = start.timestamp() + float(seconds)
    return dt.datetime.fromtimestamp(round(t0), start.tzinfo)


def _verdict(b: hm.Boundary, air: np.ndarray, crossing, member: int) -> Verdict:
    """One member's answer from the solver's exact analysis (`solver.Crossing`)."""
    t = crossing.time_s[member]
    return Verdict(
        crossing_time=None if np.isnan(t) else _at(b, t),
        min_air_c=float(air.min()),
        min_plant_c=float(crossing.min_c[member]),
        min_time=_at(b, crossing.min_time_s[member]),
        hours_below=float(crossing.hours_below[member]),
    )


def tonight(
    house: House,
    forecast,
    *,
    threshold_c: float,
    threshold_basis: str,
    damage_c: float | None = None,
    margin_k: float = 0.0,
    crop: str | None = None,
    stage: str | None = None,
    crop_origin: str | None = None,
    chill_c: float | None = None,
    chill_hours: float | None = None,
    kind: hm.ModelKind = "two-node",
    inside_now_c: float | None = None,
    soil_now_c: float | None = None,
    start: dt.datetime | None = None,
    now: dt.datetime | None = None,
    colder_by_k: float = COLDER_BY_K,
    use_calibration: bool = True,
    members: Any = None,
) -> TonightResult:
    """Tonight's frost verdict for one house; see the module docstring.

    `members` (a `grower.plans.chance.Spec`) asks for the chance of damage: the night
    run as drawn members or as the live ensemble's, with no heat and heated.
    """
    from grower import weather

    now = now if now is not None else dt.datetime.now(forecast.tz).replace(microsecond=0)
    start, end, sunrise, notes = night_window(house, forecast, start, now)
    times = (
        hm.grid_ns(hm.instant_ns(start), hm.instant_ns(end), hm.samples_ns(forecast.utc_s), STEP_S)
        / 1e9
    )
    utc = forecast.utc_s
    window = (utc >= start.timestamp() - 3600.0) & (utc <= end.timestamp())
    wind = (
        float(np.nanmean(forecast.values("wind_speed_m_s")[window]))
        if "wind_speed_m_s" in forecast.given
        else 0.0
    )
    mean_out = float(np.nanmean(forecast.values("temperature_c")[window]))
    pressure = house.site.pressure_hpa if house.site else None
    mdl = hm.build(
        house,
        kind=kind,
        wind_m_s=wind,
        curtain_closed=True,
        mean_radiant_temp_c=mean_out - 5.0,
        air_temp_c=mean_out,
        use_calibration=use_calibration,
    )
    b = hm.boundary(house, mdl, forecast, times, pressure_hpa=pressure, tz=start.tzinfo)
    bc = b.solver_boundary(mdl)
    gains = b.solver_gains(mdl)

    assumptions = list(notes)
    deep = mdl.capacities.deep_ground_c
    soil_assumed = soil_now_c is None
    if soil_assumed:
        soil_now_c = deep
        assumptions.append(
            Note(
                "soil (top {top}) and water assumed at {soil} now, the deep-ground temperature"
                + (
                    " (itself assumed: set [floor] deep_ground_temperature)"
                    if mdl.capacities.deep_ground_assumed
                    else ""
                )
                + "; measure it at {depth} and give --soil-now",
                top=("cm", 0.10),
                soil=("temp", soil_now_c),
                depth=("cm", 0.05),
            )
        )
    if inside_now_c is None:
        inside_now_c = hm.quasi_steady_air(mdl, bc, gains, soil_now_c)
        assumptions.append(
            Note(
                "inside air assumed at {air} now (in balance with the soil and the outside); "
                "give --inside-now with a reading",
                air=("temp", inside_now_c),
            )
        )
    for note in weather.assumptions(forecast):
        assumptions.append(note)
    note = hm.calibration_note(house, kind, use_calibration)
    if note:
        assumptions.append(note)
    x0 = hm.initial_state(mdl, inside_now_c, soil_now_c)

    # free float as members run at once: this forecast; the night colder; the soil colder
    colder = b.shifted(-colder_by_k, mdl)
    members_bc = [bc, colder.solver_boundary(mdl)]
    members_x0 = [x0, x0]
    if kind == "two-node":
        members_bc.append(bc)
        members_x0.append(np.array([inside_now_c, soil_now_c - SOIL_COLDER_K]))
    free = runs.free_float(mdl, b.times_s, np.stack(members_bc), np.stack(members_x0), gains)
    crossing = solver.analyse(free, threshold_c, b.plant_offset_k)
    air = free.air_c
    verdict = _verdict(b, air[0], crossing, 0)
    cold = _verdict(colder, air[1], crossing, 1)
    soil_colder = _verdict(b, air[2], crossing, 2) if kind == "two-node" else None

    # heat that holds the plants at the alarm temperature: the air at alarm + leaf offset
    setpoint = threshold_c + b.plant_offset_k
    held = runs.hold(mdl, b.times_s, bc, x0, setpoint, gains)
    hold_peak_w, hold_j = float(held.peak_w[0]), float(held.energy_j[0])
    source = fuels.heat_source(house)
    fuel, appliance, eff = source.fuel, source.appliance.name, source.efficiency
    assumptions.extend(source.notes)
    # in the unit the grower buys it in, when the house file says so ([stock] on_hand)
    unit = None
    if house.stock.get("on_hand") and fuels.get_fuel(house.stock.get("fuel") or fuel.name) == fuel:
        unit = fuels.parse_amount(
            house.stock["on_hand"], fuel, where=f"{house.path}: stock.on_hand"
        ).unit
    amount = fuels.fuel_amount(hold_j, fuel, eff, unit)

    check = None
    if house.heaters:
        q = house.heater_output_w
        measured = hm.calibrated_heater_output(house, use_calibration)
        if measured is not None:
            q = measured
            assumptions.append(
                Note("installed heater output {q} as measured by grower fit", q=("power", q))
            )
        run = runs.thermostat(mdl, b.times_s, bc, x0, setpoint, q, gains)
        c = solver.analyse(run, threshold_c, b.plant_offset_k)
        check = HeaterCheck(
            output_w=q,
            # the thermostat holds the plants *at* the alarm: allow for round-off
            holds=bool(c.min_c[0] >= threshold_c - HOLD_TOLERANCE_K),
            min_plant_c=float(c.min_c[0]),
            min_time=_at(b, c.min_time_s[0]),
            energy_kwh=float(run.heat_j[0]) / 3.6e6,
            fuel=fuels.fuel_amount(float(run.heat_j[0]), fuel, eff, unit),
        )

    odds = None
    if members is not None:
        from grower.plans import chance

        odds = chance.run(
            members,
            house=house,
            kind=kind,
            use_calibration=use_calibration,
            mdl=mdl,
            b=b,
            initial_c=x0,
            threshold_c=threshold_c,
            heater_w=check.output_w if check is not None else None,
            pressure_hpa=pressure,
        )

    chill = None
    if chill_c is not None and chill_c > threshold_c:
        c = solver.analyse(free, chill_c, b.plant_offset_k)
        hours = float(c.hours_below[0])
        if hours > 0:
            harmful = chill_hours is None or hours >= chill_hours
            chill = Chill(chill_c, hours, chill_hours, harmful)

    cautions: tuple[str, ...] = ()
    if verdict.crossing_time is not None or check is not None:
        # the installed nameplate when there is one (the opening serves the heater as
        # fitted), else the input that would hold tonight's alarm
        nameplate = source.input_w if source.installed else None
        need = hold_peak_w / eff if hold_peak_w > 0 else None
        cautions = safety.cautions(fuel, appliance, nameplate or need, short=True)

    local = b.local_times()
    return TonightResult(
        house_name=house.name,
        house_path=house.path,
        model=kind,
        calibrated=mdl.calibrated,
        k_w_per_k=mdl.k_w_per_k,
        c_j_per_k=mdl.c_j_per_k,
        time_constant_h=mdl.time_constant_h,
        crop=crop,
        stage=stage,
        crop_origin=crop_origin,
        threshold_c=threshold_c,
        damage_c=damage_c,
        margin_k=margin_k,
        threshold_basis=threshold_basis,
        start=when(start),
        end=when(end),
        sunrise=when(sunrise) if sunrise is not None else None,
        verdict=verdict,
        colder_by_k=colder_by_k,
        colder=cold,
        hold_peak_w=hold_peak_w,
        hold_energy_kwh=hold_j / 3.6e6,
        hold_fuel=amount,
        hold_fuel_label=fuel.label,
        hold_appliance=fuels.get_appliance(appliance).label,
        heater=check,
        chill=chill,
        soil_colder=soil_colder,
        soil_assumed=soil_assumed,
        initial_air_c=float(inside_now_c),
        initial_mass_c=None if kind == "lumped" else float(soil_now_c),
        assumptions=tuple(assumptions),
        forecast_source=forecast.source,
        forecast_attribution=forecast.attribution,
        forecast_issued_at=forecast.issued_at,
        forecast_age_s=forecast.age_s,
        forecast_warnings=tuple(forecast.warnings),
        times=tuple(local),
        outside_c=b.outside_c,
        effective_outside_c=b.effective_c,
        air_c=air[0],
        plant_c=air[0] - b.plant_offset_k,
        calibration_warning=hm.calibration_warning(house, use_calibration),
        colder_air_c=air[1],
        cautions=cautions,
        vapour=vaporisation.house_check(
            house,
            source,
            float(b.outside_c.min()),
            burned_j=hold_j / eff,
            at=local[int(np.argmin(b.outside_c))],
        ),
        chance=odds,
    )


@dataclass(frozen=True)
class TripWire:
    """When to look again, and the inside-air reading that means the alarm will be reached.

    ``air_c`` is the air at ``time`` on the night that just touches the alarm, for the
    forecast shifted uniformly by ``shift_k`` (negative: colder than forecast). The network
    is linear, so a uniform shift of the outside temperature moves the air by
    ``shift_k·g(t)``, with g the response the `colder` run measured; the shift that makes
    the coldest plants equal the alarm is found by bisection.
    """

    time: dt.datetime
    air_c: float
    shift_k: float


def trip_wire(r: TonightResult) -> TripWire | None:
    """The check-again time and reading for `r`, or None when the alarm is reached now.

    The time is halfway from the start to the crossing (or, on a safe night, to the
    coldest hour), on the quarter hour and at least 30 min after the start.
    """
    air, plant = np.asarray(r.air_c, float), np.asarray(r.plant_c, float)
    if r.below_now or len(air) < 2 or r.colder_by_k <= 0:
        return None
    g = (air - np.asarray(r.colder_air_c, float)) / r.colder_by_k  # K of air per K colder
    g = np.clip(g, 0.0, None)

    def lowest(shift: float) -> float:  # coldest plants with the outside shift K colder
        return float(np.min(plant - shift * g))

    lo, hi = -30.0, 30.0
    if not lowest(lo) >= r.threshold_c >= lowest(hi):
        return None
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if lowest(mid) >= r.threshold_c else (lo, mid)
    shift = 0.5 * (lo + hi)
    target = r.verdict.crossing_time or r.verdict.min_time
    span = (target - r.start).total_seconds()
    if span < 3600.0:
        return None
    at = r.start + dt.timedelta(seconds=max(1800.0, span / 2))
    at = at.replace(second=0, microsecond=0)
    at -= dt.timedelta(minutes=at.minute % 15)
    secs = np.array([(t - r.start).total_seconds() for t in r.times])
    x = (at - r.start).total_seconds()
    air_at = float(np.interp(x, secs, air - shift * g))
    return TripWire(time=at, air_c=air_at, shift_k=-shift)
