"""`stock`: the fuel a forecast cold spell burns, when the fuel on hand runs out, when to
order, whether the containers can vaporise what the heater draws, and what falls short.

The house runs through the whole forecast on its thermostat (`plans.thermostat_run`).
The steps, each a function of its own: the span of the forecast used, the heat source
(`grower.fuels.heat_source`, the rule tonight and size use too), the fuel on hand and
its fill, the run, the days, the run-out time, the order-by date, the vapour check, the
crop check, and the shortfalls the report opens with.

Order-by date: the day the fuel reaches the refill level (``reserve``, a tank gauge
reading or a share of a full cylinder; the trade orders at 20–30 %, and 30 % — the
earlier date — is the default: common practice, no source) less the delivery lead
time; the amount is what fills the containers again to full (a tank to 80 %, the
filling limit in fuels.toml). Past the forecast's end the date is extrapolated at the
forecast's mean rate and marked so.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from grower import fuels, safety, vaporisation
from grower.errors import InputError, message_time
from grower.house import House
from grower.plans import model as hm
from grower.plans import thermostat_run as tr
from grower.plans.tonight import when
from grower.units import Note

#: refill level when none is given [%]: the cautious end of the trade's 20–30 %
DEFAULT_RESERVE_PCT = 30.0
#: air below the setpoint by more than this counts as not held [K]
HELD_TOL_K = 0.05
#: after a raise of the setpoint (night to day) the air has this long to warm up before
#: the new setpoint counts as not held; meanwhile the one before it holds [s]
#: (common practice, no source: a morning warm-up is a choice of how fast to warm up)
WARM_UP_S = 3600.0


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
class Order:
    """When to order and how much (amounts in the stock's unit)."""

    reserve_pct: float
    lead_time_days: float
    reserve_amount: float  # the refill level
    reserve_at: dt.datetime | None  # when the fuel reaches it
    order_by: dt.date | None
    order_now: bool  # the order-by date is today or already past
    amount: float  # fills the containers to full from the refill level
    unit: str
    extrapolated: bool  # reserve_at lies past the forecast, at its mean rate
    capacity_known: bool  # False: no containers given, the stock taken as full


@dataclass(frozen=True)
class CropAlarm:
    """The alarm to check the plants against, as `tonight` chooses it."""

    label: str  # "tomato (fruiting)" or "your --threshold"
    alarm_c: float
    damage_c: float | None = None
    margin_k: float = 0.0
    basis: str = ""  # where the alarm comes from (crop, stage, source)


@dataclass(frozen=True)
class CropCheck:
    crop: str
    alarm_c: float
    first_at: dt.datetime | None  # first time the plants are below the alarm
    hours_below: float
    min_plant_c: float
    last_at: dt.datetime | None = None  # the end of the last step below the alarm
    damage_c: float | None = None
    margin_k: float = 0.0
    basis: str = ""
    #: the run checked stops heating when the stock is gone (the fuel runs out in the
    #: forecast); False: the heater runs all through
    run_out: bool = False
    #: what takes the plants below the alarm: "heater" (while there is fuel: the heater or
    #: the setpoint falls short), "run_out" (only once the fuel is gone), None (not reached)
    cause: str | None = None


@dataclass(frozen=True)
class Shortfall:
    """One thing that falls short: ``kind`` is "crop", "heater", "fuel" or "vapour"."""

    kind: str
    at: dt.datetime | None  # when it starts
    hours: float | None = None
    value: float | None = None  # crop: min plant °C; heater: min air °C; vapour: W
    extra_w: float | None = None  # heater: more output that would hold the coldest hour
    until: dt.datetime | None = None  # crop, heater: the end of the last step short


@dataclass(frozen=True)
class AfterRunOut:
    """The house once the fuel has run out: the same forecast, the heater off for good."""

    min_air_c: float
    min_plant_c: float
    coldest_at: dt.datetime
    hours_below_setpoint: float
    crop_alarm_at: dt.datetime | None  # the plants first below the crop's alarm, if a crop


@dataclass(frozen=True)
class Heating:
    fuel: fuels.Fuel
    appliance: str  # its label
    appliance_key: str
    efficiency: float
    heater_output_w: float | None  # None: unlimited
    input_w: float | None  # the installed heaters' nameplate input [W]


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
    after_run_out: AfterRunOut | None
    containers: tuple[fuels.ContainerCount, ...]
    price: float | None
    cost: float | None
    hours_below_setpoint: float
    min_air_c: float
    peak_w: float
    order: Order | None
    vapour: vaporisation.VapourCheck
    crop: CropCheck | None
    shortfalls: tuple[Shortfall, ...]
    n_runs: int
    assumptions: tuple[str, ...]
    forecast_source: str
    forecast_attribution: str | None
    forecast_age_s: float | None
    forecast_warnings: tuple[str, ...]
    cautions: tuple[str, ...]
    #: the house file's [calibration] not used (an older format): the line, also in
    #: `assumptions`, that the report shows as a warning
    calibration_warning: str | None = None
    #: the report's fuel unit was asked for (--fuel-unit): screens keep it as it is
    fuel_unit_chosen: bool = False


# ---------------------------------------------------------------- steps


def span(forecast, start, now) -> tuple[dt.datetime, dt.datetime, list[str]]:
    """The stretch of the forecast to run: from now (or its start) to its end."""
    now = now if now is not None else dt.datetime.now(forecast.tz).replace(microsecond=0)
    first, last = forecast.start, forecast.end
    notes: list[str] = []
    if start is None:
        start = now if first <= now <= last else first
        if now < first:
            notes.append(f"the forecast starts later than now: from {first:%a %d %b %H:%M}")
        elif now > last:
            raise InputError(
                f"the forecast ends at {message_time(last)}, before now", where=forecast.source
            )
    if (last - start).total_seconds() < 6 * 3600:
        raise InputError(
            "the forecast covers less than 6 hours from the start", where=forecast.source
        )
    return start, last, notes


def heating(
    house: House, fuel_name: str | None, use_calibration: bool
) -> tuple[Heating, list[str]]:
    """Fuel, appliance and heater limit, by `fuels.heat_source` (the one rule)."""
    src = fuels.heat_source(house, fuel_name)
    notes = list(src.notes)
    q_max = house.heater_output_w if house.heaters else math.inf
    measured = hm.calibrated_heater_output(house, use_calibration) if house.heaters else None
    if measured is not None:
        q_max = measured
        notes.append(Note("heater output {q} as measured by grower fit", q=("power", q_max)))
    if not house.heaters:
        notes.append("no heater in the house file: an unlimited heater holds the setpoints")
    out = None if math.isinf(q_max) else q_max
    heat = Heating(
        src.fuel, src.appliance.label, src.appliance.name, src.efficiency, out, src.input_w
    )
    return heat, notes


def on_hand(
    house: House, fuel: fuels.Fuel, text: str | None, fill: str | None
) -> fuels.FuelStock | None:
    """The fuel on hand (--on-hand, else [stock] on_hand) at its fill (--fill, [stock] fill)."""
    where = "--on-hand" if text is not None else f"{house.path}: stock.on_hand"
    # the house file's stock only when it holds this fuel (fuels.house_on_hand)
    src = text if text is not None else fuels.house_on_hand(house, fuel)
    if fill is None and text is None:
        fill = house.stock.get("fill")
        fill_where = f"{house.path}: stock.fill"
    else:
        fill_where = "--fill"
    if not src:
        if fill is not None and fill_where == "--fill":
            raise InputError("a fill level needs the fuel on hand (--on-hand)", where=fill_where)
        return None
    stock = fuels.parse_amount(src, fuel, where=where)
    if fill is not None:
        stock = fuels.with_fill(stock, fuel, fuels.parse_fill(fill, fill_where), fill_where)
    return stock


def daily(run: tr.Run, j_per_unit: float, eff: float, price: float | None) -> tuple[Day, ...]:
    """Heat, fuel, cost, coldest air and hours not held per local day."""
    dates, idx = tr.local_days(run)
    nd = len(dates)
    heat = np.bincount(idx, run.step_heat_j, nd)
    vent = np.bincount(idx, run.step_vent_j, nd)
    below = not_held(run)
    hours = np.bincount(idx, np.where(below, run.step_s, 0.0), nd) / 3600.0
    first = np.flatnonzero(np.diff(np.concatenate([[-1], idx])))
    cold = np.minimum.reduceat(run.air_c[:-1], first)
    out = []
    for i, date in enumerate(dates):
        amount = heat[i] / (j_per_unit * eff)
        out.append(
            Day(
                date=date,
                heat_kwh=heat[i] / 3.6e6,
                fuel_amount=amount,
                cost=None if price is None else amount * price,
                min_air_c=float(cold[i]),
                hours_below_setpoint=float(hours[i]),
                vented_kwh=vent[i] / 3.6e6,
            )
        )
    return tuple(out)


def not_held(run: tr.Run, warm_up_s: float = WARM_UP_S) -> np.ndarray:
    """Steps (N − 1) whose air is below the setpoint in force by more than `HELD_TOL_K`;
    within `warm_up_s` after a raise the setpoint before the raise is the one in force."""
    level = np.array(run.setpoint_c, dtype=float)
    t = run.utc_s[:-1]
    for k in np.flatnonzero(np.diff(level) > 0) + 1:
        level[(t >= t[k]) & (t < t[k] + warm_up_s)] = run.setpoint_c[k - 1]
    return run.air_c[:-1] < level - HELD_TOL_K


def fuel_left_j(run: tr.Run, stock: fuels.FuelStock, eff: float) -> np.ndarray:
    """Fuel energy left at each grid time [J] (negative once it has run out)."""
    burned = np.concatenate([[0.0], np.cumsum(run.step_heat_j)]) / eff
    return stock.energy_j - burned


def time_of_level(run: tr.Run, left_j: np.ndarray, level_j: float) -> int | None:
    """First time [ns since 1970 UTC] the fuel left falls to `level_j`, inside the step
    where it does (`tr.Run.time` gives it as a datetime)."""
    k = int(np.argmax(left_j <= level_j)) if np.any(left_j <= level_j) else -1
    if k < 0:
        return None
    if k == 0:
        return int(run.times_ns[0])
    drop = left_j[k - 1] - left_j[k]
    frac = (left_j[k - 1] - level_j) / drop if drop > 0 else 0.0
    return int(run.times_ns[k - 1]) + hm.duration_ns(frac * run.step_s[k - 1])


def order(
    run: tr.Run,
    stock: fuels.FuelStock,
    fuel: fuels.Fuel,
    eff: float,
    reserve_pct: float,
    lead_time_days: float,
    start: dt.datetime,
) -> Order:
    """The order-by date and amount (module docstring)."""
    j_per = fuel.j_per(stock.unit)
    known = stock.capacity is not None and stock.container is not None
    full = stock.capacity if known else stock.amount
    level = full * (refill_share(stock, reserve_pct) if known else reserve_pct / 100.0)
    left = fuel_left_j(run, stock, eff)
    at = time_of_level(run, left, level * j_per)
    extrapolated = False
    if at is None:
        seconds = float(run.step_s.sum())
        rate = (left[0] - left[-1]) / seconds if seconds > 0 else 0.0
        if rate > 0:
            at = int(run.times_ns[-1]) + hm.duration_ns((left[-1] - level * j_per) / rate)
            extrapolated = True
    by = None
    now = False
    if at is not None:
        day = dt.datetime.fromtimestamp(
            round((at - hm.duration_ns(lead_time_days * 86400.0)) / 1e9, 6), run.tz
        ).date()
        now = day <= start.date()
        by = max(day, start.date())
    return Order(
        reserve_pct=reserve_pct,
        lead_time_days=lead_time_days,
        reserve_amount=level,
        reserve_at=None if at is None else run.time(at),
        order_by=by,
        order_now=now,
        amount=full - level,
        unit=stock.unit,
        extrapolated=extrapolated,
        capacity_known=known,
    )


def refill_share(stock: fuels.FuelStock, reserve_pct: float) -> float:
    """The refill level as a share of a full fill [0–1]: `reserve_pct` is a tank's gauge
    reading (a full tank reads 80 %, the filling limit) or a cylinder's share of full."""
    c = stock.container
    if c is not None and c.fill_fraction is not None:
        return reserve_pct / (100.0 * c.fill_fraction.value)
    return reserve_pct / 100.0


def vapour(
    run: tr.Run,
    heat: Heating,
    stock: fuels.FuelStock | None,
    withdrawal: str,
    runs_out: dt.datetime | None,
    reserve_pct: float = DEFAULT_RESERVE_PCT,
) -> vaporisation.VapourCheck:
    """The containers' vapour on the day's coldest heated hour (before any run-out) that
    gives least, against the heaters' input (the unlimited one's peak).

    The fill checked is the one left at that hour, but never below the refill level
    (`reserve_pct`, the level the grower orders at and refills or swaps containers by:
    below it a nearly empty container's vapour says nothing the order-by line does not,
    and at the run-out it is zero); when the fill now is at or below the refill level
    already, the fill now. ``fill_basis`` says which: "then", "refill" or "now"."""
    peak_in = float(run.heat_w.max()) / heat.efficiency
    input_w = heat.input_w if heat.input_w else peak_in
    first = vaporisation.check(
        heat.fuel.name, stock, input_w, float(run.outside_c.min()), 1.0, withdrawal=withdrawal
    )
    if not first.applies:
        return first
    left = fuel_left_j(run, stock, heat.efficiency)
    share = (
        stock.share_full * np.clip(left / stock.energy_j, 0.0, 1.0)
        if stock.energy_j > 0
        else 0 * left
    )
    floor = refill_share(stock, reserve_pct)
    if stock.share_full <= floor:
        share = np.full_like(share, stock.share_full)
    basis = np.where(stock.share_full <= floor, "now", np.where(share < floor, "refill", "then"))
    share = np.where(basis == "refill", floor, share)
    firing = run.heat_w > 0
    if runs_out is not None:
        firing &= run.utc_s < runs_out.timestamp()
    if not firing.any():
        firing = np.ones_like(firing)
    dates, idx = tr.local_days(run)
    idx = np.append(idx, idx[-1])
    worst = worst_k = None
    for d in range(len(dates)):
        sel = np.flatnonzero((idx == d) & firing)
        if sel.size == 0:
            continue
        k = sel[np.argmin(run.outside_c[sel])]
        c = vaporisation.check(
            heat.fuel.name,
            stock,
            input_w,
            float(run.outside_c[k]),
            float(share[k]),
            withdrawal=withdrawal,
            at=run.time(run.times_ns[k]),
        )
        if worst is None or c.supply.capacity_w < worst.supply.capacity_w:
            worst, worst_k = c, k
    if worst is None:
        return first
    b = str(basis[worst_k])
    if b == "then" and share[worst_k] >= stock.share_full - 1e-9:
        b = "now"  # the hour checked comes before any fuel is burned
    below = None
    if b == "refill" and not worst.short:
        # the fill goes below the refill level in the forecast: from what fill on the
        # containers starve the heater at that hour (swap or refill before it)
        s = worst.supply
        below = vaporisation.short_below(s.container, s.count, s.outside_c, input_w)
    return replace(
        worst,
        fill_basis=b,
        refill_pct=reserve_pct if b == "refill" else None,
        short_below_share=below,
    )


def crop_check(
    run: tr.Run,
    crop: str | CropAlarm,
    alarm_c: float | None = None,
    *,
    dry: tr.Run | None = None,
    runs_out: dt.datetime | None = None,
) -> CropCheck:
    """Plants (air less the leaf offset) against the crop's alarm temperature.

    With `dry`, the run whose heater stops when the fuel runs out at `runs_out`, the
    plants are checked on it (what the house does with the fuel on hand), and ``cause``
    says whether the heater falls short while there is fuel (`run`, unlimited fuel,
    reaches the alarm before the run-out) or only the run-out takes them there."""
    a = crop if isinstance(crop, CropAlarm) else CropAlarm(crop, float(alarm_c))
    heated = _crop_on(run, a)
    if dry is None:
        return heated
    out = _crop_on(dry, a)
    if out.first_at is None:
        cause = None
    elif heated.first_at is not None and (runs_out is None or heated.first_at < runs_out):
        cause = "heater"
    else:
        cause = "run_out"
    return replace(out, run_out=True, cause=cause)


def _crop_on(run: tr.Run, a: CropAlarm) -> CropCheck:
    below = run.plant_c[:-1] < a.alarm_c
    first = int(np.argmax(below)) if below.any() else None
    return CropCheck(
        crop=a.label,
        alarm_c=a.alarm_c,
        damage_c=a.damage_c,
        margin_k=a.margin_k,
        basis=a.basis,
        first_at=None if first is None else run.time(run.times_ns[first]),
        hours_below=float(run.step_s[below].sum() / 3600.0),
        min_plant_c=float(run.plant_c.min()),
        last_at=_last_end(run, below),
        cause=None if first is None else "heater",
    )


def after_run_out(dry: tr.Run, t_out_ns: int, crop: CropAlarm | None) -> AfterRunOut:
    """What the house does from `t_out_ns` [ns since 1970 UTC] on in `dry`, the run whose
    heater stops there."""
    after = dry.times_ns >= t_out_ns
    k = int(np.flatnonzero(after)[np.argmin(dry.air_c[after])])
    below = not_held(dry) & after[:-1]
    alarm_at = None
    if crop is not None:
        hit = (dry.plant_c[:-1] < crop.alarm_c) & after[:-1]
        if hit.any():
            alarm_at = dry.time(dry.times_ns[int(np.argmax(hit))])
    return AfterRunOut(
        min_air_c=float(dry.air_c[after].min()),
        min_plant_c=float(dry.plant_c[after].min()),
        coldest_at=dry.time(dry.times_ns[k]),
        hours_below_setpoint=float(dry.step_s[below].sum() / 3600.0),
        crop_alarm_at=alarm_at,
    )


def _last_end(run: tr.Run, short: np.ndarray) -> dt.datetime | None:
    """The end of the last step flagged in `short` (N − 1), or None."""
    if not short.any():
        return None
    return run.time(run.times_ns[int(np.flatnonzero(short)[-1]) + 1])


def shortfalls(
    run, crop, runs_out, lasts, vap, extra_w=None, after: AfterRunOut | None = None
) -> tuple[Shortfall, ...]:
    """What falls short, worst first: the crop, the heater, the fuel, the vapour — the
    fuel before the heater when the plants reach their alarm once it has run out (the
    crop then is no shortfall of its own: the fuel's is the one to act on).

    `extra_w`: the output the heater lacks (an unlimited heater's peak less its own);
    `after`: the house once the fuel has run out."""
    out = []
    if crop is not None and crop.first_at is not None and crop.cause != "run_out":
        out.append(
            Shortfall("crop", crop.first_at, crop.hours_below, crop.min_plant_c, until=crop.last_at)
        )
    below = not_held(run)
    if below.any():
        k = int(np.argmax(below))
        out.append(
            Shortfall(
                "heater",
                run.time(run.times_ns[k]),
                float(run.step_s[below].sum() / 3600.0),
                float(run.air_c.min()),
                extra_w,
                until=_last_end(run, below),
            )
        )
    if runs_out is not None:
        fuel = Shortfall("fuel", runs_out, None, lasts)
        if after is not None and after.crop_alarm_at is not None:
            out.insert(1 if out and out[0].kind == "crop" else 0, fuel)
        else:
            out.append(fuel)
    if vap.applies and vap.short:
        out.append(Shortfall("vapour", vap.at, None, vap.supply.capacity_w))
    return tuple(out)


def _holding_peak(run: tr.Run, settle_s: float = 3600.0) -> float:
    """Peak heat [W] outside the hour after each raise of the setpoint (the morning
    warm-up an unlimited heater does at once is left out: that is a choice of how fast
    to warm up, not what holds the house)."""
    t = run.utc_s
    raises = t[1:-1][np.diff(run.setpoint_c) > 0]
    keep = np.ones(t.size, dtype=bool)
    for r in raises:
        keep &= ~((t >= r) & (t < r + settle_s))
    return float(run.heat_w[keep].max()) if keep.any() else float(run.heat_w.max())


# ---------------------------------------------------------------- the plan


@dataclass(frozen=True)
class Setpoints:
    """The thermostat's setpoints [°C]: by day, and from sunset to sunrise."""

    day_c: float
    night_c: float | None = None  # None: the day's

    @property
    def night(self) -> float:
        return self.day_c if self.night_c is None else self.night_c


@dataclass(frozen=True)
class FuelPlan:
    """The fuel side of the question: which fuel, what is on hand, its price, when to order."""

    fuel_name: str | None = None  # None: the house's heater's
    on_hand_text: str | None = None  # --on-hand, else the house file's [stock] on_hand
    fill_text: str | None = None
    price: float | None = None  # per unit of the fuel as bought (the on-hand unit)
    unit: str | None = None  # the unit to report the fuel in
    reserve_pct: float = DEFAULT_RESERVE_PCT
    lead_time_days: float = 0.0


def stock(
    house: House,
    forecast,
    setpoints: Setpoints,
    plan: FuelPlan = FuelPlan(),
    *,
    kind: hm.ModelKind = "two-node",
    start: dt.datetime | None = None,
    now: dt.datetime | None = None,
    use_calibration: bool = True,
    crop: CropAlarm | tuple[str, float] | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> StockResult:
    """Fuel for `house` through `forecast`; see the module docstring.

    `crop` is the alarm to check the plants against (or a tuple: label, alarm [°C]).
    """
    from grower import weather

    setpoint_c, night_set = setpoints.day_c, setpoints.night
    start, end, notes = span(forecast, start, now)
    heat, more = heating(house, plan.fuel_name, use_calibration)
    notes += more
    fuel, eff = heat.fuel, heat.efficiency
    stock_ = on_hand(house, fuel, plan.on_hand_text, plan.fill_text)
    # the unit the grower buys it in: the one rule tonight and size use (fuels.bought_unit)
    out_unit = plan.unit or (stock_.unit if stock_ else fuels.bought_unit(house, fuel))
    price = plan.price
    if (
        price is None
        and house.stock.get("price") is not None
        and plan.on_hand_text is None
        and fuels.house_on_hand(house, fuel) is not None
    ):
        # the house file's price is per unit of its stock's fuel
        price = float(house.stock["price"])

    installed = math.inf if heat.heater_output_w is None else heat.heater_output_w

    def simulate(q_max_w: float = installed, **more) -> tr.Run:
        """The house on its thermostat through this forecast, with heater `q_max_w`."""
        return tr.simulate(
            house,
            forecast,
            start,
            end,
            setpoint_c=setpoint_c,
            night_setpoint_c=night_set,
            q_max_w=q_max_w,
            kind=kind,
            use_calibration=use_calibration,
            **more,
        )

    run = simulate(progress=progress)
    notes += run.notes
    days = daily(run, fuel.j_per(out_unit), eff, price)
    total_j = run.energy_j
    amount = fuels.fuel_amount(total_j, fuel, eff, out_unit)

    runs_out = lasts = None
    the_order = None
    if stock_ is not None:
        t_out = time_of_level(run, fuel_left_j(run, stock_, eff), 0.0)
        if t_out is not None and stock_.energy_j < total_j / eff:
            runs_out = run.time(t_out)
            lasts = (t_out - hm.instant_ns(start)) / 1e9 / 86400.0
        the_order = order(run, stock_, fuel, eff, plan.reserve_pct, plan.lead_time_days, start)
        if not the_order.capacity_known:
            notes.append(
                "the containers are not given: the refill level is taken as a share of the "
                "fuel on hand"
            )
    withdrawal = str(house.stock.get("withdrawal", "vapour"))
    vap = vapour(run, heat, stock_, withdrawal, runs_out, plan.reserve_pct)
    if isinstance(crop, tuple):
        crop = CropAlarm(*crop)
    dry = dry_run = None
    if runs_out is not None:
        # the same forecast with the heater stopping when the fuel is gone
        dry_run = simulate(heat_until_ns=t_out)
        dry = after_run_out(dry_run, t_out, crop)
    # the plants as the fuel on hand keeps them: on the run whose heater stops at run-out
    crop_result = crop_check(run, crop, dry=dry_run, runs_out=runs_out) if crop else None

    notes += list(weather.assumptions(forecast))
    note = hm.calibration_note(house, kind, use_calibration)
    if note:
        notes.append(note)
    peak = float(run.heat_w.max())
    below = not_held(run)
    extra = None
    if below.any() and heat.heater_output_w is not None:
        # the same forecast with an unlimited heater: its peak is the output that holds
        extra = max(_holding_peak(simulate(math.inf)) - heat.heater_output_w, 0.0) or None
    return StockResult(
        house_name=house.name,
        house_path=house.path,
        model=kind,
        calibrated=run.model.calibrated,
        k_w_per_k=run.model.k_w_per_k,
        c_j_per_k=run.model.c_j_per_k,
        setpoint_c=setpoint_c,
        night_setpoint_c=night_set,
        vent_c=house.vent_temperature_c,
        heater_output_w=heat.heater_output_w,
        start=when(start),
        end=when(end),
        days=days,
        energy_kwh=total_j / 3.6e6,
        fuel=amount,
        fuel_label=fuel.label,
        appliance=heat.appliance,
        on_hand=stock_,
        runs_out_at=runs_out,
        lasts_days=lasts,
        after_run_out=dry,
        containers=fuels.containers_needed(amount, fuel),
        price=price,
        cost=None if price is None else float(amount.amount) * price,
        hours_below_setpoint=float(run.step_s[below].sum() / 3600.0),
        min_air_c=float(run.air_c.min()),
        peak_w=peak,
        order=the_order,
        vapour=vap,
        crop=crop_result,
        shortfalls=shortfalls(run, crop_result, runs_out, lasts, vap, extra, dry),
        n_runs=run.n_runs,
        assumptions=tuple(notes),
        forecast_source=forecast.source,
        forecast_attribution=forecast.attribution,
        forecast_age_s=forecast.age_s,
        forecast_warnings=tuple(forecast.warnings),
        cautions=safety.cautions(
            fuel, heat.appliance_key, heat.input_w or (peak / eff or None), short=True
        ),
        calibration_warning=hm.calibration_warning(house, use_calibration),
        fuel_unit_chosen=plan.unit is not None,
    )
