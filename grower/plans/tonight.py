"""`tonight`: with no heat, when does the crop reach its damage temperature?

The night runs from the start (now, or `--start`) to two hours after the next sunrise.
The house floats freely through the forecast (exact stepping of the thermal network);
the plant temperature is the air temperature less the leaf offset of a clear night
under the cover (`grower.plans.model.LEAF_BELOW_AIR_CLEAR_K`). We report the first time
the plants reach the alarm temperature (damage + margin), the coldest air and plant
temperature, hours below the alarm, the heat that holds the plants at the alarm
temperature all night (peak and energy, and the fuel that burns), whether the installed
heater holds it, and the same night a few degrees colder than forecast. Plants already
below the alarm at the start are judged on the heater's recovery (`heated_night`): when
the solver finds the air back at the alarm, whether the plants reached the crop's damage
temperature first, and whether the heater holds them from then on.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Any

import numpy as np

from grower import fuels, safety, solver, vaporisation
from grower.errors import InputError, message_time
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
    """Whether the installed heater holds the alarm temperature.

    `holds`: the plants stay at the alarm all night (within `HOLD_TOLERANCE_K`); or, when
    they start below it, the heater brings them back to it before they reach the damage
    temperature and holds them there from then on. `min_plant_c`, `min_time`: the
    coldest plants of the whole heated night (the start, when they start below).
    """

    output_w: float
    holds: bool
    min_plant_c: float
    min_time: dt.datetime
    energy_kwh: float
    fuel: fuels.FuelAmount | None = None  # the night's fuel for energy_kwh, as the hold's fuel
    #: the plants start below the alarm: when the heater brings them back to it (None:
    #: they start at or above it, or it does not bring them back tonight)
    recovered_at: dt.datetime | None = None
    #: starting below: when they reach the damage temperature before they are back
    damage_at: dt.datetime | None = None
    #: once back at the alarm: the coldest plants from then on (None: not back)
    min_after_c: float | None = None
    min_after_time: dt.datetime | None = None


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
                f"the forecast ends at {message_time(last)}, before now; give a newer forecast or --start",
                where=forecast.source,
            )
        else:
            start = now
    elif not first <= start <= last:
        raise InputError(
            f"--start {message_time(start)} is outside the forecast ({message_time(first)} to {message_time(last)})",
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
            f"the forecast ends at {message_time(last)}, but the night runs to {message_time(end)} "
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


@dataclass(frozen=True)
class Alarm:
    """What the plants are checked against tonight (°C), and where it comes from."""

    threshold_c: float  # the alarm: damage + margin, or the grower's own --threshold
    basis: str  # where the alarm comes from (crop, stage, source), for the report
    damage_c: float | None = None
    margin_k: float = 0.0
    crop: str | None = None
    stage: str | None = None
    crop_origin: str | None = None  # a user's own crop file
    chill_c: float | None = None  # chilling below this harms a chilling-sensitive crop
    chill_hours: float | None = None  # after about this long below `chill_c`


@dataclass(frozen=True)
class Readings:
    """What the grower read now (None: assumed) and the start of the night."""

    inside_c: float | None = None
    soil_c: float | None = None
    start: dt.datetime | None = None  # None: now
    now: dt.datetime | None = None  # None: the clock


@dataclass(frozen=True)
class NightModel:
    """The house's network at tonight's conditions and the forecast on its grid."""

    model: hm.Model
    boundary: hm.Boundary
    pressure_hpa: float | None
    bc: np.ndarray  # (N, 3) the solver's boundary temperatures (`Boundary.solver_boundary`)
    gains: np.ndarray  # (N, n) heat inputs per node (`Boundary.solver_gains`)


@dataclass(frozen=True)
class StartState:
    """The state the night starts from, and what was assumed for it."""

    x0: np.ndarray  # node temperatures [°C]
    inside_c: float
    soil_c: float
    soil_assumed: bool
    notes: tuple[str, ...]


@dataclass(frozen=True)
class FreeRuns:
    """The night with no heat: as forecast, colder, and (two-node) the soil colder."""

    air_c: np.ndarray  # members × N
    forecast: Verdict
    colder: Verdict
    soil_colder: Verdict | None
    free: Any  # the solver's trajectory (for further analyses: chilling)


@dataclass(frozen=True)
class Hold:
    """The heat that holds the plants at the alarm all night, and its fuel."""

    peak_w: float
    energy_j: float
    source: fuels.HeatSource
    unit: str  # the unit the grower buys the fuel in (`fuels.bought_unit`)
    fuel: fuels.FuelAmount


def night_model(
    house: House,
    forecast,
    start: dt.datetime,
    end: dt.datetime,
    kind: hm.ModelKind,
    use_calibration: bool,
) -> NightModel:
    """The network at the night's mean wind and outside air, and the forecast on the
    solver's grid (every `STEP_S` and every forecast sample)."""
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
    return NightModel(mdl, b, pressure, b.solver_boundary(mdl), b.solver_gains(mdl))


def start_state(night: NightModel, readings: Readings) -> StartState:
    """The starting temperatures: the readings, else the soil at the deep ground's and
    the air in balance with it and the outside, each assumption said in a note."""
    mdl = night.model
    notes = []
    soil, inside = readings.soil_c, readings.inside_c
    soil_assumed = soil is None
    if soil_assumed:
        soil = mdl.capacities.deep_ground_c
        notes.append(
            Note(
                "soil (top {top}) and water assumed at {soil} now, the deep-ground temperature"
                + (
                    " (itself assumed: set [floor] deep_ground_temperature)"
                    if mdl.capacities.deep_ground_assumed
                    else ""
                )
                + "; measure it at {depth} and give --soil-now",
                top=("cm", 0.10),
                soil=("temp", soil),
                depth=("cm", 0.05),
            )
        )
    if inside is None:
        inside = hm.quasi_steady_air(mdl, night.bc, night.gains, soil)
        notes.append(
            Note(
                "inside air assumed at {air} now (in balance with the soil and the outside); "
                "give --inside-now with a reading",
                air=("temp", inside),
            )
        )
    x0 = hm.initial_state(mdl, inside, soil)
    return StartState(x0, float(inside), float(soil), soil_assumed, tuple(notes))


def free_runs(
    night: NightModel, state: StartState, threshold_c: float, colder_by_k: float
) -> FreeRuns:
    """The night with no heat, run as members at once: as forecast, `colder_by_k`
    colder, and (two-node) the soil `SOIL_COLDER_K` colder than assumed."""
    mdl, b = night.model, night.boundary
    bc = night.bc
    colder = b.shifted(-colder_by_k, mdl)
    members_bc = [bc, colder.solver_boundary(mdl)]
    members_x0 = [state.x0, state.x0]
    two = mdl.kind == "two-node"
    if two:
        members_bc.append(bc)
        members_x0.append(np.array([state.inside_c, state.soil_c - SOIL_COLDER_K]))
    free = runs.free_float(mdl, b.times_s, np.stack(members_bc), np.stack(members_x0), night.gains)
    crossing = solver.analyse(free, threshold_c, b.plant_offset_k)
    air = free.air_c
    return FreeRuns(
        air_c=air,
        forecast=_verdict(b, air[0], crossing, 0),
        colder=_verdict(colder, air[1], crossing, 1),
        soil_colder=_verdict(b, air[2], crossing, 2) if two else None,
        free=free,
    )


def hold(house: House, night: NightModel, state: StartState, threshold_c: float) -> Hold:
    """The heat that holds the plants at the alarm (the air at alarm + leaf offset) all
    night, and the fuel the house's heat source burns for it."""
    mdl, b = night.model, night.boundary
    setpoint = threshold_c + b.plant_offset_k
    held = runs.hold(mdl, b.times_s, night.bc, state.x0, setpoint, night.gains)
    source = fuels.heat_source(house)
    fuel = source.fuel
    unit = fuels.bought_unit(house, fuel)  # the one rule (size and stock use it too)
    energy = float(held.energy_j[0])
    amount = fuels.fuel_amount(energy, fuel, source.efficiency, unit)
    return Hold(float(held.peak_w[0]), energy, source, unit, amount)


@dataclass(frozen=True)
class HeatedNight:
    """A heater on its thermostat at the alarm, per member, as the plants see it.

    Times are seconds from the run's start; NaN where there is none. A member whose
    plants start more than `HOLD_TOLERANCE_K` below the alarm is judged on its recovery:
    the instant the air reaches the setpoint (the alarm plus the leaf offset: the plants
    at the alarm), found by the solver as the thermostat's first switch out of full
    output; it holds when that comes before the plants reach the damage temperature
    (when one is known) and the plants stay at the alarm from then on.
    """

    holds: np.ndarray  # (M,) bool
    min_c: np.ndarray  # (M,) coldest plants of the whole run [°C]
    min_time_s: np.ndarray  # (M,) [s]
    start_below: np.ndarray  # (M,) bool
    recovered_s: np.ndarray  # (M,) back at the alarm [s]
    damage_s: np.ndarray  # (M,) at the damage temperature before that [s]
    min_after_c: np.ndarray  # (M,) coldest plants from the recovery on [°C]
    min_after_time_s: np.ndarray  # (M,) [s]
    trajectory: solver.Trajectory


def _member_rows(a: np.ndarray, m: int, single_ndim: int) -> np.ndarray:
    """Member `m`'s series of an input given once for all (`single_ndim`) or per member."""
    a = np.asarray(a, float)
    return a if a.ndim == single_ndim else a[m % a.shape[0]]


def _back_at_alarm(tr: solver.Trajectory, m: int) -> tuple[float, np.ndarray | None]:
    """(time [s], node temperatures) at which member `m`'s thermostat first leaves full
    output: the air at the setpoint. (NaN, None) when it never does."""
    sw = tr.switches
    t_sw, x_sw = np.inf, None
    sel = np.flatnonzero((sw.member == m) & (sw.mode != solver.FULL))
    if sel.size:
        i = sel[np.argmin(sw.time_s[sel])]
        t_sw, x_sw = float(sw.time_s[i]), np.array(sw.state_c[i], float)
    grid = np.flatnonzero(tr.mode[m] != solver.FULL)
    if grid.size and float(tr.times_s[grid[0]]) < t_sw:
        k = int(grid[0])
        return float(tr.times_s[k]), np.array(tr.temps_c[m, k], float)
    return (t_sw, x_sw) if x_sw is not None else (np.nan, None)


def _unsaturated_after(tr: solver.Trajectory, m: int, r: float, off: np.ndarray) -> bool:
    """Member `m`'s thermostat never at full output after `r`, and the leaf offset's
    rise within a step under half the holding tolerance: held for certain from `r`."""
    t = np.asarray(tr.times_s, float)
    o = off[m % off.shape[0]]
    if np.max(np.diff(o), initial=0.0) >= HOLD_TOLERANCE_K / 2:
        return False
    k = int(np.searchsorted(t, r, side="right")) - 1  # the step the recovery is in
    sw = tr.switches
    later = (sw.member == m) & (sw.time_s > r) & (sw.mode == solver.FULL)
    return not later.any() and not (tr.mode[m, k + 1 :] == solver.FULL).any()


def _coldest_after(
    mdl: hm.Model,
    tr: solver.Trajectory,
    m: int,
    r: float,
    x_r: np.ndarray,
    boundary_c,
    gains_w,
    setpoint_c: np.ndarray,
    offset_k: np.ndarray,
    threshold_c: float,
    q_max_w: float,
) -> tuple[float, float]:
    """(coldest plants [°C], when [s]) of member `m` from `r` to the end: the same
    thermostat run restarted at `r` from the state there. The inputs are linear between
    the grid times, so a grid point added at `r` with the interpolated values leaves them
    unchanged; the setpoint keeps the value at its step's start, as the run had it."""
    t = np.asarray(tr.times_s, float)
    bc = _member_rows(boundary_c, m, 2)
    g = _member_rows(gains_w, m, 2)
    sp, off = setpoint_c[m % setpoint_c.shape[0]], offset_k[m % offset_k.shape[0]]
    k = min(int(np.searchsorted(t, r, side="right")) - 1, t.size - 2)
    plant_r = float(x_r[0] - np.interp(r, t, off))
    if t[-1] - r < 1e-6:
        return plant_r, r
    if t[k + 1] - r < 1e-6:
        k += 1  # the recovery is at a grid time: the restart takes that step's inputs
    f = max(r - t[k], 0.0) / (t[k + 1] - t[k])

    def restart(a: np.ndarray) -> np.ndarray:
        """`a` from `r` on: its value at `r` (linear in the step), then the grid's."""
        return np.concatenate([(a[k] + f * (a[k + 1] - a[k]))[None], a[k + 1 :]])

    new_t, new_off = restart(t), restart(off)
    new_sp = np.concatenate([[sp[k]], sp[k + 1 :]])  # the value at its step's start
    run = runs.thermostat(mdl, new_t - r, restart(bc), x_r, new_sp, q_max_w, restart(g))
    c = solver.analyse(run, threshold_c, new_off)
    at = float(c.min_c[0]), r + float(c.min_time_s[0])
    return at if at[0] < plant_r else (plant_r, r)


def heated_night(
    mdl: hm.Model,
    times_s: np.ndarray,
    boundary_c: np.ndarray,
    initial_c: np.ndarray,
    threshold_c: float,
    offset_k: np.ndarray,
    q_max_w: float,
    gains_w: np.ndarray,
    *,
    damage_c: float | None = None,
    run: solver.Trajectory | None = None,
    coldest_after: bool = True,
) -> HeatedNight:
    """The heater of output `q_max_w` [W] on its thermostat at the alarm (`threshold_c`
    plus the leaf offset `offset_k`, (N,) or (M, N) [K]), per member of `boundary_c`
    ((N, 3) or (M, N, 3)); `run` is that thermostat run when already made. See
    `HeatedNight` for what is judged and how.

    ``coldest_after=False``: only `holds` is wanted. A member whose thermostat never
    runs at full output again after the recovery, on a night whose leaf offset rises by
    less than half the tolerance within a step, is then held for certain (the air stays
    at or above the setpoint, as `grower.plans.chance` argues for its unsaturated
    members), and its `min_after_c` is left NaN instead of being run again."""
    off = np.atleast_2d(np.asarray(offset_k, float))
    setpoint = threshold_c + off
    given = off if off.shape[0] > 1 else off[0]  # the offset as the solver takes it
    tr = run
    if tr is None:
        tr = runs.thermostat(
            mdl,
            times_s,
            boundary_c,
            initial_c,
            threshold_c + given,
            q_max_w,
            gains_w,
        )
    c = solver.analyse(tr, threshold_c, given)
    mm = tr.n_members
    plant0 = tr.temps_c[:, 0, 0] - np.broadcast_to(off[:, 0], (mm,))
    below = plant0 < threshold_c - HOLD_TOLERANCE_K
    holds = np.asarray(c.min_c >= threshold_c - HOLD_TOLERANCE_K, bool).copy()
    back, damage = np.full(mm, np.nan), np.full(mm, np.nan)
    after, after_t = np.full(mm, np.nan), np.full(mm, np.nan)
    if below.any():
        reach = None
        if damage_c is not None:
            reach = solver.analyse(tr, damage_c, given).time_s
        for m in np.flatnonzero(below):
            r, x_r = _back_at_alarm(tr, int(m))
            back[m] = r
            if reach is not None and np.isfinite(reach[m]) and not reach[m] > r:
                damage[m] = reach[m]  # r NaN (never back) compares False: damage stays
            if x_r is None or np.isfinite(damage[m]):
                holds[m] = False
                continue
            if not coldest_after and _unsaturated_after(tr, int(m), r, off):
                continue  # held for certain: holds[m] = True below
            after[m], after_t[m] = _coldest_after(
                mdl,
                tr,
                int(m),
                r,
                x_r,
                boundary_c,
                gains_w,
                setpoint,
                off,
                threshold_c,
                q_max_w,
            )
            holds[m] = after[m] >= threshold_c - HOLD_TOLERANCE_K
        sure = below & np.isnan(after) & np.isfinite(back) & np.isnan(damage)
        holds[sure] = True
    return HeatedNight(
        holds=holds,
        min_c=np.asarray(c.min_c, float),
        min_time_s=np.asarray(c.min_time_s, float),
        start_below=below,
        recovered_s=back,
        damage_s=damage,
        min_after_c=after,
        min_after_time_s=after_t,
        trajectory=tr,
    )


def heater_check(
    house: House,
    night: NightModel,
    state: StartState,
    threshold_c: float,
    heat: Hold,
    use_calibration: bool,
    damage_c: float | None = None,
) -> tuple[HeaterCheck | None, tuple[str, ...]]:
    """The installed heater on its thermostat at the alarm: does it hold the plants, or,
    when they start below the alarm, bring them back before `damage_c` and hold them?
    (None without a heater.) The note says when fit's measured output is used."""
    if not house.heaters:
        return None, ()
    mdl, b = night.model, night.boundary
    notes = ()
    q = house.heater_output_w
    measured = hm.calibrated_heater_output(house, use_calibration)
    if measured is not None:
        q = measured
        notes = (Note("installed heater output {q} as measured by grower fit", q=("power", q)),)
    h = heated_night(
        mdl,
        b.times_s,
        night.bc,
        state.x0,
        threshold_c,
        b.plant_offset_k,
        q,
        night.gains,
        damage_c=damage_c,
    )
    energy = float(h.trajectory.heat_j[0])

    def at(seconds: float) -> dt.datetime | None:
        return None if np.isnan(seconds) else _at(b, seconds)

    check = HeaterCheck(
        output_w=q,
        # the thermostat holds the plants *at* the alarm: allow for round-off
        holds=bool(h.holds[0]),
        min_plant_c=float(h.min_c[0]),
        min_time=_at(b, h.min_time_s[0]),
        energy_kwh=energy / 3.6e6,
        fuel=fuels.fuel_amount(energy, heat.source.fuel, heat.source.efficiency, heat.unit),
        recovered_at=at(h.recovered_s[0]),
        damage_at=at(h.damage_s[0]),
        min_after_c=None if np.isnan(h.min_after_c[0]) else float(h.min_after_c[0]),
        min_after_time=at(h.min_after_time_s[0]),
    )
    return check, notes


def chilling(runs_: FreeRuns, alarm: Alarm, b: hm.Boundary) -> Chill | None:
    """Hours the plants spend below the crop's chilling temperature with no heat."""
    if alarm.chill_c is None or alarm.chill_c <= alarm.threshold_c:
        return None
    c = solver.analyse(runs_.free, alarm.chill_c, b.plant_offset_k)
    hours = float(c.hours_below[0])
    if hours <= 0:
        return None
    harmful = alarm.chill_hours is None or hours >= alarm.chill_hours
    return Chill(alarm.chill_c, hours, alarm.chill_hours, harmful)


def night_cautions(verdict: Verdict, check: HeaterCheck | None, heat: Hold) -> tuple[str, ...]:
    """The short cautions when heat is needed or installed: for the installed nameplate
    (the opening serves the heater as fitted), else for the input that holds the alarm."""
    if verdict.crossing_time is None and check is None:
        return ()
    src = heat.source
    nameplate = src.input_w if src.installed else None
    need = heat.peak_w / src.efficiency if heat.peak_w > 0 else None
    return safety.cautions(src.fuel, src.appliance.name, nameplate or need, short=True)


def tonight(
    house: House,
    forecast,
    alarm: Alarm,
    readings: Readings = Readings(),
    *,
    kind: hm.ModelKind = "two-node",
    colder_by_k: float = COLDER_BY_K,
    use_calibration: bool = True,
    members: Any = None,
) -> TonightResult:
    """Tonight's frost verdict for one house; see the module docstring.

    The steps: the night's span, the network and boundary, the starting state, the
    free-floating runs, the heat that holds the alarm, the installed heater, the
    members (`members`, a `grower.plans.chance.Spec`: the chance of damage), chilling,
    the cautions.
    """
    from grower import weather

    now = readings.now or dt.datetime.now(forecast.tz).replace(microsecond=0)
    start, end, sunrise, span_notes = night_window(house, forecast, readings.start, now)
    night = night_model(house, forecast, start, end, kind, use_calibration)
    mdl, b = night.model, night.boundary
    state = start_state(night, readings)
    free = free_runs(night, state, alarm.threshold_c, colder_by_k)
    heat = hold(house, night, state, alarm.threshold_c)
    check, heater_notes = heater_check(
        house, night, state, alarm.threshold_c, heat, use_calibration, alarm.damage_c
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
            initial_c=state.x0,
            threshold_c=alarm.threshold_c,
            heater_w=check.output_w if check is not None else None,
            pressure_hpa=night.pressure_hpa,
            damage_c=alarm.damage_c,
        )
    calibration = hm.calibration_note(house, kind, use_calibration)
    assumptions = (
        *span_notes,
        *state.notes,
        *weather.assumptions(forecast),
        *((calibration,) if calibration else ()),
        *heat.source.notes,
        *heater_notes,
    )
    src, eff = heat.source, heat.source.efficiency
    local = b.local_times()
    return TonightResult(
        house_name=house.name,
        house_path=house.path,
        model=kind,
        calibrated=mdl.calibrated,
        k_w_per_k=mdl.k_w_per_k,
        c_j_per_k=mdl.c_j_per_k,
        time_constant_h=mdl.time_constant_h,
        crop=alarm.crop,
        stage=alarm.stage,
        crop_origin=alarm.crop_origin,
        threshold_c=alarm.threshold_c,
        damage_c=alarm.damage_c,
        margin_k=alarm.margin_k,
        threshold_basis=alarm.basis,
        start=when(start),
        end=when(end),
        sunrise=when(sunrise) if sunrise is not None else None,
        verdict=free.forecast,
        colder_by_k=colder_by_k,
        colder=free.colder,
        hold_peak_w=heat.peak_w,
        hold_energy_kwh=heat.energy_j / 3.6e6,
        hold_fuel=heat.fuel,
        hold_fuel_label=src.fuel.label,
        hold_appliance=src.appliance.label,
        heater=check,
        chill=chilling(free, alarm, b),
        soil_colder=free.soil_colder,
        soil_assumed=state.soil_assumed,
        initial_air_c=state.inside_c,
        initial_mass_c=None if kind == "lumped" else state.soil_c,
        assumptions=assumptions,
        forecast_source=forecast.source,
        forecast_attribution=forecast.attribution,
        forecast_issued_at=forecast.issued_at,
        forecast_age_s=forecast.age_s,
        forecast_warnings=tuple(forecast.warnings),
        times=tuple(local),
        outside_c=b.outside_c,
        effective_outside_c=b.effective_c,
        air_c=free.air_c[0],
        plant_c=free.air_c[0] - b.plant_offset_k,
        calibration_warning=hm.calibration_warning(house, use_calibration),
        colder_air_c=free.air_c[1],
        cautions=night_cautions(free.forecast, check, heat),
        vapour=vaporisation.house_check(
            house,
            src,
            float(b.outside_c.min()),
            burned_j=heat.energy_j / eff,
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
    #: the inside air the forecast itself expects at ``time`` with no heat [°C]
    expected_c: float | None = None


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
    expected = float(np.interp(x, secs, air))
    return TripWire(time=at, air_c=air_at, shift_k=-shift, expected_c=expected)
