"""Rendering of `grower tonight`: the verdict first, then the numbers behind it."""

from __future__ import annotations

import datetime as dt
from typing import Any

from grower.plans.chance import FORECAST_ERROR_SOURCE
from grower.plans.tonight import SOIL_COLDER_K, TonightResult, Verdict, trip_wire
from grower.report import chart
from grower.report import vapour as vapour_report
from grower.report.common import NARROW, Rows, iso, keep_units, plain, print_line, render_cautions
from grower.report.quantities import (
    capacity_text,
    chance_text,
    conductance_text,
    energy_text,
    fuel_text,
    power_text,
)
from grower.units import Note, UnitSystem, note_text, show_temperature, show_temperature_difference


def tonight_json(r: TonightResult) -> dict[str, Any]:
    """The `grower tonight --json` document (SI, ISO 8601 times with offset)."""
    return {
        "house": r.house_name,
        "file": r.house_path,
        # what to do for the house as equipped: none | heat | short | below
        "action": r.action,
        "alert_status": r.exit_status,
        "check_again": _trip_json(r),
        "model": r.model,
        "calibrated": r.calibrated,
        "calibration_warning": r.calibration_warning,
        "k_w_per_k": r.k_w_per_k,
        "c_j_per_k": r.c_j_per_k,
        "time_constant_h": r.time_constant_h,
        "crop": r.crop,
        "stage": r.stage,
        "threshold_c": r.threshold_c,
        "damage_c": r.damage_c,
        "margin_k": r.margin_k,
        "threshold_basis": r.threshold_basis,
        "start": iso(r.start),
        "end": iso(r.end),
        "sunrise": iso(r.sunrise),
        "safe": r.safe,
        "crossing_time": iso(r.verdict.crossing_time),
        "min_air_c": r.verdict.min_air_c,
        "min_plant_c": r.verdict.min_plant_c,
        "min_time": iso(r.verdict.min_time),
        "hours_below": r.verdict.hours_below,
        "hold_peak_w": r.hold_peak_w,
        "hold_energy_kwh": r.hold_energy_kwh,
        "hold_fuel": {
            "kind": r.hold_fuel.fuel,
            "amount": r.hold_fuel.amount,
            "unit": r.hold_fuel.unit,
            "heating_value_j_per_unit": r.hold_fuel.heating_value_j_per_unit,
            "efficiency": r.hold_fuel.efficiency,
        },
        "heater": None
        if r.heater is None
        else {
            "output_w": r.heater.output_w,
            "holds": r.heater.holds,
            "min_plant_c": r.heater.min_plant_c,
            "min_time": iso(r.heater.min_time),
            "energy_kwh": r.heater.energy_kwh,
            # the plants start below the alarm: when the heater has them back at it, when
            # they reach the damage temperature before that, and the coldest from then on
            "recovered_at": iso(r.heater.recovered_at),
            "damage_at": iso(r.heater.damage_at),
            "min_plant_after_recovery_c": r.heater.min_after_c,
            "min_time_after_recovery": iso(r.heater.min_after_time),
        },
        "colder": {
            "by_c": r.colder_by_k,
            "crossing_time": iso(r.colder.crossing_time),
            "min_plant_c": r.colder.min_plant_c,
            "min_air_c": r.colder.min_air_c,
            "hours_below": r.colder.hours_below,
        },
        "soil_colder": None
        if r.soil_colder is None
        else {
            "by_c": SOIL_COLDER_K,
            "crossing_time": iso(r.soil_colder.crossing_time),
            "min_plant_c": r.soil_colder.min_plant_c,
        },
        "chill": None
        if r.chill is None
        else {
            "threshold_c": r.chill.threshold_c,
            "hours_below": r.chill.hours_below,
            "duration_h": r.chill.duration_h,
            "harmful": r.chill.harmful,
        },
        "initial_air_c": r.initial_air_c,
        "initial_mass_c": r.initial_mass_c,
        "assumptions": list(r.assumptions),
        "forecast": {
            "source": r.forecast_source,
            "issued_at": iso(r.forecast_issued_at),
            "age_s": r.forecast_age_s,
            "attribution": r.forecast_attribution,
            "warnings": list(r.forecast_warnings),
        },
        "cautions": list(r.cautions),
        **({} if r.vapour is None else vapour_report.fields(r.vapour)),
        **chance_json(r.chance),
        "series": [
            {
                "time": iso(t),
                "outside_c": float(o),
                "effective_outside_c": float(e),
                "air_c": float(a),
                "plant_c": float(p),
            }
            for t, o, e, a, p in zip(
                r.times, r.outside_c, r.effective_outside_c, r.air_c, r.plant_c, strict=True
            )
        ],
    }


def chance_json(c: Any) -> dict[str, Any]:
    """The chance-of-damage keys of the tonight document (null without members)."""
    if c is None:
        return {
            "chance_of_damage": None,
            "chance_of_damage_heated": None,
            "members_source": None,
            "members_basis": None,
            "earliest_crossing": None,
            "median_crossing": None,
            "coldest_tenth_min_plant_c": None,
            "members": [],
        }
    return {
        # shares of `members` whose plants reach the alarm: with no heat; with the
        # installed heater on its thermostat (null: no heater)
        "chance_of_damage": c.chance,
        "chance_of_damage_heated": c.chance_heated,
        "members_source": c.source,  # "ensemble" | "drawn"
        "members_basis": {
            "forecast_error_k": c.forecast_error_k,
            "k_spread_95": c.k_spread,
            "k_basis": c.k_basis,
            "seed": c.seed,
            "ensemble": c.ensemble_label,
            "notes": list(c.notes),
        },
        "earliest_crossing": iso(c.earliest_crossing),
        "median_crossing": iso(c.median_crossing),
        "coldest_tenth_min_plant_c": c.coldest_tenth_min_plant_c,
        "members": [
            {
                "crossing_time": iso(m.crossing_time),
                "min_plant_c": m.min_plant_c,
                "heated_damage": m.heated_damage,
                "outside_shift_k": m.outside_shift_k,
                "k_factor": m.k_factor,
            }
            for m in c.members
        ],
    }


def _trip_json(r: TonightResult) -> dict[str, Any] | None:
    w = trip_wire(r)
    if w is None:
        return None
    return {
        "time": iso(w.time),
        "air_below_c": w.air_c,
        "forecast_shift_k": w.shift_k,
        "air_expected_c": w.expected_c,  # the forecast's own inside air then, no heat
    }


def by_urgency(docs: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """Most urgent first: earliest crossing, then the smallest margin above threshold."""

    def key(d: dict[str, Any]):
        crossing = d["crossing_time"]
        return (crossing is None, crossing or "", d["min_plant_c"] - d["threshold_c"])

    return sorted(docs, key=key)


def _span(t: dt.datetime, ref: dt.datetime) -> str:
    """ "2 h 28 min" from `ref` to `t`, between the clock minutes the screen shows (both cut
    to the minute, as `_clock` writes them): 16:00 and 18:28 are 2 h 28 min apart on the
    screen even when the crossing is at 18:28:40."""
    cut = lambda x: x.replace(second=0, microsecond=0)  # noqa: E731
    minutes = int((cut(t) - cut(ref)).total_seconds() // 60)
    h, m = divmod(minutes, 60)
    return f"{h}\u00a0h\u00a0{m:02d}\u00a0min" if h else f"{m}\u00a0min"  # never split


def _clock(t: dt.datetime, start: dt.datetime) -> str:
    day = "" if t.date() == start.date() else t.strftime(" %a")
    return t.strftime("%H:%M") + day


def _by(t: dt.datetime, start: dt.datetime) -> str:
    """ "16:01": the clock minute by which `t` has come (16:00:44 is by 16:01)."""
    cut = t.replace(second=0, microsecond=0)
    return _clock(cut if cut == t else cut + dt.timedelta(minutes=1), start)


def _what(r: TonightResult) -> str:
    return f"{r.crop} ({r.stage})" if r.crop else "the plants"


def _does(r: TonightResult, singular: str, plural: str) -> str:
    """`_what(r)` with its verb: "tomato (fruiting) reaches", "the plants reach"."""
    return f"{_what(r)} {singular if r.crop else plural}"


#: line 1's words, ours: what to do tonight for the house as equipped
ACTION_WORDS = {
    "none": ("NO ACTION", "bold green"),
    "heat": ("HEAT NEEDED", "bold yellow"),
    "short": ("HEATER TOO SMALL", "bold red"),
    "below": ("BELOW THE ALARM NOW", "bold red"),
    "unheated": ("NO HEATER FOR TONIGHT", "bold red"),
}


def action_line(r: TonightResult, system: UnitSystem) -> str:
    """Line 1: what to do and by when, for the house as equipped."""
    return keep_units(_action_line(r, system))


def _action_line(r: TonightResult, system: UnitSystem) -> str:
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    word, style = ACTION_WORDS["unheated" if r.action == "short" and r.heater is None else r.action]
    head = f"[{style}]{word}[/{style}] [bold]{r.house_name}[/bold]: "
    v, h = r.verdict, r.heater
    if r.action == "none":
        return head + f"{_does(r, 'stays', 'stay')} above {T(r.threshold_c)} tonight with no heat"
    if r.action == "heat":
        fuel = f"; about {_fuel(h.fuel, system)} of {r.hold_fuel_label} tonight" if h.fuel else ""
        return (
            head + f"heat from [bold]{_clock(v.crossing_time, r.start)}[/bold]; the installed "
            f"heater holds {T(r.threshold_c)} {_spare(r, system)}{fuel}"
        )
    if r.action == "below":
        return (
            head + f"{_does(r, 'is', 'are')} at or below {T(r.threshold_c)} already — "
            f"[bold]heat now[/bold]{_below_tail(r, system)}"
        )
    if h is None:
        return (
            head + f"no heater installed; {_does(r, 'reaches', 'reach')} {T(r.threshold_c)} at "
            f"[bold]{_clock(v.crossing_time, r.start)}[/bold]; "
            f"{power_text(r.hold_peak_w, system)} holds it"
        )
    more = max(r.hold_peak_w - h.output_w, 0.0)
    need = f"; needs {power_text(more, system)} more" if more > 0 else "; heat earlier or add heat"
    return (
        head + f"at full output the plants reach [bold]{T(h.min_plant_c)}[/bold] at "
        f"{_clock(h.min_time, r.start)}{need}"
    )


#: a margin under this shows as "0.0 kW" (or below): said as none [W]
NO_SPARE_W = 50.0


def _spare(r: TonightResult, system: UnitSystem) -> str:
    """ "with 8.2 kW to spare", or, a heater that holds within the tolerance only at its
    full output (the coldest hour needs a little more than it gives), no margin."""
    spare = r.heater.output_w - r.hold_peak_w
    if spare < NO_SPARE_W:
        return "at its full output, with nothing to spare"
    return f"with {power_text(spare, system)} to spare"


def heater_outcome(r: TonightResult) -> str:
    """The installed heater's case, one rule for the verdict, its table row and the
    several-house cell: "holds"; "back" (the plants start below the alarm; brought back
    and held); "too late" (below the damage temperature at the start); "too slow" (damage
    before they are back); "not back"; "falls after" (back, then not held); "falls"."""
    h = r.heater
    if h.holds:
        return "back" if h.recovered_at is not None else "holds"
    if h.damage_at is not None:
        return "too late" if _at_start(h.damage_at, r) else "too slow"
    if h.recovered_at is None:
        return "not back" if r.below_now else "falls"
    return "falls after"


def _below_tail(r: TonightResult, system: UnitSystem) -> str:
    """What the installed heater does for plants that start below the alarm."""
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    h = r.heater
    if h is None:
        return ""
    case = heater_outcome(r)
    if case == "holds":  # at the alarm within its tolerance: held
        return f"; the installed heater holds {T(r.threshold_c)}"
    if case == "back":
        them = "it" if r.crop else "them"
        return (
            f"; the installed heater brings {them} back above {T(r.threshold_c)} by "
            f"[bold]{_by(h.recovered_at, r.start)}[/bold] and holds {them} {_spare(r, system)}"
        )
    if case == "too late":
        return f"; the plants are below the damage temperature {T(r.damage_c)} too"
    if case == "too slow":
        return (
            f"; even at full output the plants reach the damage temperature "
            f"{T(r.damage_c)} at {_clock(h.damage_at, r.start)}, before they are back above "
            f"{T(r.threshold_c)}"
        )
    if case == "not back":
        return (
            f"; at full output the heater does not bring it back above {T(r.threshold_c)} tonight"
        )
    more = max(r.hold_peak_w - h.output_w, 0.0)
    need = f"; needs {power_text(more, system)} more" if more > 0 else ""
    return (
        f"; at full output the plants are back above {T(r.threshold_c)} by "
        f"{_by(h.recovered_at, r.start)}, then fall to {T(h.min_after_c)} at "
        f"{_clock(h.min_after_time, r.start)}{need}"
    )


def _at_start(t: dt.datetime, r: TonightResult) -> bool:
    return abs((t - r.start).total_seconds()) < 1.0


def heater_text(r: TonightResult, system: UnitSystem) -> str:
    """The "installed heater" row: does it hold the alarm (or bring the plants back)?"""
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    h = r.heater
    q = power_text(h.output_w, system)
    case = heater_outcome(r)
    if case == "back":
        return (
            f"[green]brings it back[/green] above {T(r.threshold_c)} by "
            f"{_by(h.recovered_at, r.start)}, then holds it, with {q} output"
        )
    if case == "holds":
        return f"[green]holds it[/green] with {q} output"
    if case == "too late":
        back = f"; back above {T(r.threshold_c)} by {_by(h.recovered_at, r.start)}"
        return (
            f"[bold red]too late[/bold red]: the plants start below the damage temperature "
            f"{T(r.damage_c)}{back if h.recovered_at is not None else ''}"
        )
    if case == "too slow":
        back = f" (back at {_by(h.recovered_at, r.start)})" if h.recovered_at is not None else ""
        return (
            f"[bold red]too slow[/bold red]: at its full {q} the plants reach the damage "
            f"temperature {T(r.damage_c)} at {_clock(h.damage_at, r.start)}, before they are "
            f"back above {T(r.threshold_c)}{back}"
        )
    if case == "not back":
        return (
            f"[bold red]does not bring it back[/bold red]: at its full {q} the plants stay "
            f"below {T(r.threshold_c)}; coldest {T(h.min_plant_c)} at {_clock(h.min_time, r.start)}"
        )
    if case == "falls after":
        return (
            f"[bold red]does not hold it[/bold red]: back above {T(r.threshold_c)} by "
            f"{_by(h.recovered_at, r.start)}, then at its full {q} the plants fall to "
            f"{T(h.min_after_c)} at {_clock(h.min_after_time, r.start)}"
        )
    return (
        f"[bold red]does not hold it[/bold red]: at its full {q} "
        f"the plants fall to {T(h.min_plant_c)} at {_clock(h.min_time, r.start)}"
    )


def verdict_line(r: TonightResult, system: UnitSystem, now: dt.datetime | None = None) -> str:
    """Line 2: the outcome with no heat (heater failure, power cut, unheated tunnel)."""
    return keep_units(_verdict_line(r, system, now))


def _verdict_line(r: TonightResult, system: UnitSystem, now: dt.datetime | None = None) -> str:
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    v = r.verdict
    now = now or dt.datetime.now(r.start.tzinfo)
    if v.crossing_time is None:
        return (
            f"With no heat: coldest plants {T(v.min_plant_c)} at "
            f"{_clock(v.min_time, r.start)}, above the alarm {T(r.threshold_c)}"
        )
    if r.below_now:
        start_air = "assumed" if _air_assumed(r) else "given"
        return (
            f"With no heat: at or below {T(r.threshold_c)} at the start "
            f"({_clock(r.start, r.start)}; inside air {start_air} at {T(r.initial_air_c)})"
        )
    ref = now if abs((r.start - now).total_seconds()) < 600 else r.start
    rel = "from now" if ref is now else f"after the start ({_clock(r.start, r.start)})"
    return (
        f"With no heat: {_does(r, 'reaches', 'reach')} {T(r.threshold_c)} at "
        f"{_clock(v.crossing_time, r.start)}, "
        f"{_span(v.crossing_time, ref)} {rel}; coldest plants "
        f"{T(v.min_plant_c)}"
    )


def trip_wire_line(r: TonightResult, system: UnitSystem) -> str | None:
    """ "Check again at 22:00 (the forecast has the inside air at 1.8 °C then): if it is
    below 3.0 °C, …"."""
    w = trip_wire(r)
    if w is None:
        return None
    T = show_temperature(w.air_c, system).text(1)
    act = (
        "make sure the heater is on"
        if r.heater is not None and r.heater.holds
        else "light the heater or cover the crop"
        if r.heater is not None
        else "heat or cover the crop"
    )
    at = _clock(w.time, r.start)
    if w.expected_c is None:
        return keep_units(f"Check again at {at}: if the inside air is below {T} then, {act}.")
    expected = show_temperature(w.expected_c, system).text(1)
    return keep_units(
        f"Check again at {at} (the forecast has the inside air at {expected} then): "
        f"if it is below {T}, {act}."
    )


def _air_assumed(r: TonightResult) -> bool:
    return any(a.startswith("inside air assumed") for a in r.assumptions)


def reading_line(r: TonightResult, system: UnitSystem) -> str | None:
    """When the start was assumed, which reading would change the answer."""
    if r.safe:
        return None
    if not _air_assumed(r):
        if r.soil_assumed and r.model == "two-node":
            return Note(
                "The soil was assumed at the deep-ground temperature: a reading at {depth} "
                "(--soil-now) can change this answer.",
                depth=("cm", 0.05),
            ).text(system)
        return None
    if r.below_now:
        T = show_temperature(r.initial_air_c, system).text(1)
        return keep_units(
            f"The inside air now was assumed ({T}), not read: read a thermometer at the "
            "plants; if they are above the alarm, rerun with --inside-now for tonight's "
            "answer."
        )
    return (
        "The inside air at the start was assumed: a reading (--inside-now, --soil-now) "
        "can change this answer."
    )


def alarm_text(r: TonightResult, system: UnitSystem) -> str:
    """ "alarm 31.8 °F = damage 30.0 °F + 1.8 °F margin — strawberry (…): source"."""
    return alarm_words(r.threshold_c, r.damage_c, r.margin_k, r.threshold_basis, system)


def alarm_words(
    alarm_c: float, damage_c: float | None, margin_k: float, basis: str, system: UnitSystem
) -> str:
    """The alarm, how it is made up and its source, in `system` (tonight and stock)."""
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    text = f"alarm {T(alarm_c)}"
    if damage_c is not None and margin_k:
        margin = show_temperature_difference(margin_k, system).text(1)
        text += f" = damage {T(damage_c)} + {margin} margin"
    elif damage_c is not None:
        text += f" (damage {T(damage_c)})"
    return f"{text} — {basis}" if basis else text


def _fuel(amount, system: UnitSystem) -> str:
    return fuel_text(float(amount.amount), amount.unit, amount.fuel, system)


def _verdict_text(v: Verdict, r: TonightResult, system: UnitSystem) -> str:
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    if v.crossing_time is None:
        return f"safe, coldest plants {T(v.min_plant_c)}"
    return f"reaches {T(r.threshold_c)} at {_clock(v.crossing_time, r.start)}, coldest plants {T(v.min_plant_c)}"


def render_tonight(console, r: TonightResult, system: UnitSystem) -> None:

    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    print_verdict(console, r, system)
    plain(console, f"{alarm_text(r, system)}", "dim")
    how = members_line(r, system)
    if how:
        print_line(console, f"[dim]{how}[/dim]")
        for note in r.chance.notes:
            plain(console, f"! {note}", "yellow")
    console.print()
    v = r.verdict
    table = Rows()
    table.add_row(
        "night",
        f"{r.start:%a %d %b %H:%M} to {_clock(r.end, r.start)}"
        + (f" (sunrise {_clock(r.sunrise, r.start)})" if r.sunrise else ""),
    )
    table.add_row(
        "coldest",
        f"air {T(v.min_air_c)}, plants {T(v.min_plant_c)} at {_clock(v.min_time, r.start)}",
    )
    if v.hours_below > 0:
        table.add_row("below the alarm", f"{v.hours_below:.1f} h")
    fuel = r.hold_fuel
    table.add_row(
        "heat to hold the alarm",
        f"[bold]{power_text(r.hold_peak_w, system)}[/bold] at the coldest hour; "
        f"{energy_text(r.hold_energy_kwh * 3.6e6, system)} over the night = {_fuel(fuel, system)} of "
        f"{r.hold_fuel_label} in a {r.hold_appliance} ({fuel.efficiency:.0%})",
    )
    if r.heater is not None:
        table.add_row("installed heater", heater_text(r, system))
    d = show_temperature_difference(r.colder_by_k, system).text(1).replace(".0 ", " ")
    table.add_row(f"{d} colder than forecast", _verdict_text(r.colder, r, system))
    if r.soil_colder is not None and r.soil_assumed:
        d_soil = show_temperature_difference(SOIL_COLDER_K, system).text(1).replace(".0 ", " ")
        table.add_row(f"soil {d_soil} colder", _verdict_text(r.soil_colder, r, system))
    if r.chill is not None:
        c = r.chill
        dur = f"; harm after about {c.duration_h:g} h" if c.duration_h else ""
        style = "yellow" if c.harmful else "dim"
        table.add_row(
            "chilling",
            f"[{style}]{c.hours_below:.1f} h below {T(c.threshold_c)}{dur}[/{style}]",
        )
    table.add_row(
        "house",
        f"K = {conductance_text(r.k_w_per_k, system)}, C = {capacity_text(r.c_j_per_k, system)}, "
        f"τ = {r.time_constant_h:.1f} h ({r.model}"
        + (", calibrated" if r.calibrated else "")
        + ")",
    )
    console.print(table)
    console.print()

    unit = show_temperature(0, system).unit
    conv = (lambda a: a * 1.8 + 32.0) if system == "us" else (lambda a: a)
    rows = chart.layout(
        list(r.times),
        [
            # symbols told apart at a glance, in any font (issue 12: · ∙ • were not)
            chart.Series("outside", conv(r.outside_c), "+", "blue"),
            chart.Series("effective outside", conv(r.effective_outside_c), ":", "cyan"),
            chart.Series("air", conv(r.air_c), "o", "green"),
            chart.Series("plants", conv(r.plant_c), "*", "bold yellow"),
        ],
        threshold=conv(r.threshold_c),
        threshold_label="alarm",
        marker_time=r.verdict.crossing_time,
        unit=unit,
        columns=console.width,
    )
    chart.render(console, rows)
    console.print()
    vapour_report.render(console, r.vapour, system)
    src = f"Forecast: {note_text(r.forecast_source, system)}"
    if r.forecast_issued_at:
        src += f", issued {r.forecast_issued_at:%d %b %H:%M}"
    if r.forecast_age_s is not None:
        src += f", fetched {r.forecast_age_s / 60:.0f} min ago"
    plain(console, f"{src}", "dim")
    if r.forecast_attribution:
        plain(console, f"{r.forecast_attribution}", "dim")
    for w in r.forecast_warnings:
        plain(console, f"! {note_text(w, system)}", "yellow")
    for a in r.assumptions:
        if a == r.calibration_warning:
            plain(console, f"! {note_text(a, system)}", "yellow")
        else:
            plain(console, f"· {note_text(a, system)}", "dim")
    render_cautions(console, r.cautions, system)


def chance_lines(r: TonightResult, system: UnitSystem) -> list[str]:
    """The chance of damage with no heat and heated, and when and how cold (two lines)."""
    c = r.chance
    if c is None:
        return []
    T = lambda x: show_temperature(x, system).text(1)  # noqa: E731
    of = (
        f"of {c.count} drawn nights"
        if c.source == "drawn"
        else f"of the {c.count} {c.ensemble_label} ensemble members"
    )
    heated = (
        f", {chance_text(c.damaged_heated, c.count)} with the installed heater" if c.heater else ""
    )
    first = f"Chance of damage: [bold]{chance_text(c.damaged, c.count)}[/bold] with no heat{heated} ({of})"
    cold = f"the coldest tenth of nights: plants {T(c.coldest_tenth_min_plant_c)} or colder"
    if c.damaged and not r.below_now:  # below now: every night starts at the alarm
        start = r.start
        second = (
            f"With no heat, the alarm comes at {_clock(c.earliest_crossing, start)} at the "
            f"earliest, {_clock(c.median_crossing, start)} at the median; {cold}"
        )
    else:
        second = cold[0].upper() + cold[1:]
    return [keep_units(first), keep_units(second)]


def members_line(r: TonightResult, system: UnitSystem) -> str | None:
    """How the members were made, in one short line."""
    c = r.chance
    if c is None:
        return None
    k = f"K ±{c.k_spread:.0%}".replace("%", " %") + (
        " (the fit's 95 % interval)" if c.k_basis == "fit" else " (handbook)"
    )
    if c.source == "ensemble":
        return keep_units(
            f"Nights: the {c.count} {c.ensemble_label} ensemble members (Open-Meteo), {k}"
        )
    sigma = show_temperature_difference(c.forecast_error_k, system).text(1)
    return keep_units(
        f"Nights drawn: forecast error σ {sigma} ({FORECAST_ERROR_SOURCE}), {k}, seed {c.seed}"
    )


def print_verdict(console, r: TonightResult, system: UnitSystem) -> None:
    """The verdict lines: what to do, the night with no heat, the chance of damage, when
    to check, what to read."""
    print_line(console, action_line(r, system))
    print_line(console, verdict_line(r, system))
    for line in chance_lines(r, system):
        print_line(console, line)
    for line in (trip_wire_line(r, system), reading_line(r, system)):
        if line:
            print_line(console, f"[yellow]{line}[/yellow]")


def render_brief(console, results: list[TonightResult], system: UnitSystem) -> None:
    """`--brief`: the verdict lines of each house, most urgent first."""
    order = sorted(results, key=lambda r: (-r.exit_status, r.safe, not r.below_now))
    for r in order:
        print_verdict(console, r, system)


#: a margin below this shows yellow, not green: within the model's own uncertainty
#: (common practice, no source: the crops' alarm margin is 1 K)
CLOSE_MARGIN_K = 1.0


def margin_k(r: TonightResult) -> float:
    """Coldest plants above the alarm with no heat [K] (negative: below it)."""
    return r.verdict.min_plant_c - r.threshold_c


def _margin_text(margin_k: float, system: UnitSystem) -> str:
    text = show_temperature_difference(round(margin_k, 2) + 0.0, system).text(1)
    style = "red" if margin_k < 0 else "yellow" if margin_k < CLOSE_MARGIN_K else "green"
    return f"[{style}]{text}[/{style}]"


def _chance_cell(c: Any) -> str:
    if c is None:
        return "—"
    text = chance_text(c.damaged, c.count)
    return f"{text} ({chance_text(c.damaged_heated, c.count)})" if c.heater else text


def _heater_cell(r: TonightResult, slim: bool, system: UnitSystem) -> str:
    """The summary's heater cell: holds, back (by when), or the coldest plants with it."""
    h = r.heater
    if h is None:
        return "—"
    case = heater_outcome(r)
    if case in ("holds", "back"):
        return "holds" if case == "holds" else f"back {_by(h.recovered_at, r.start)}"
    if case in ("too late", "too slow", "not back"):
        return "[red]not back[/red]"
    coldest = h.min_after_c if h.min_after_c is not None else h.min_plant_c
    return f"[red]{'' if slim else 'falls to '}{show_temperature(coldest, system).text(1)}[/red]"


def render_summary(console, results: list[TonightResult], system: UnitSystem) -> None:
    """Several houses: one table, most urgent first."""
    from rich.table import Table

    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    order = sorted(results, key=lambda r: (margin_k(r), -r.exit_status))
    # the worst status leads; of equal ones, a house below the alarm already
    frost = sorted(
        (r for r in order if not r.safe), key=lambda r: (-r.exit_status, not r.below_now)
    )
    if frost:
        print_line(console, action_line(frost[0], system))
        print_line(console, verdict_line(frost[0], system))
        for line in chance_lines(frost[0], system):
            print_line(console, line)
        if len(frost) > 1:
            console.print(
                f"[bold red]{len(frost)} of {len(results)} houses reach the alarm tonight with no heat[/bold red]"
            )
    else:
        console.print(
            f"[bold green]NO ACTION[/bold green]: all {len(results)} houses stay above the alarm tonight with no heat"
        )
    from rich import box

    narrow = console.width < 90
    table = Table(
        box=box.SIMPLE_HEAD if narrow else box.HEAVY_HEAD,
        pad_edge=not narrow,
        padding=(0, 1) if not narrow else (0, 0, 0, 1),
    )
    # wide enough for the longest word of a name (to 16), so a name wraps between words
    longest_word = max((len(w) for r in order for w in r.house_name.split()), default=0)
    table.add_column("house", min_width=max(10, min(longest_word, 16)), overflow="fold")
    table.add_column("reaches", justify="right", no_wrap=True)
    table.add_column("coldest", justify="right", no_wrap=True)
    table.add_column("to hold", justify="right", no_wrap=True)
    # under 72 columns the heater's cell is one temperature and the margin column goes
    # (the order, smallest margin first, still says it)
    slim = console.width < NARROW
    table.add_column("heater", no_wrap=slim)
    if not slim:
        table.add_column("margin", justify="right", no_wrap=True)
    # the chance of damage, with the installed heater in brackets, where it fits
    odds = console.width >= 96 and any(r.chance is not None for r in order)
    if odds:
        table.add_column("chance (heated)", justify="right", no_wrap=True)
    for r in order:
        when = (
            "[green]no[/green]"
            if r.safe
            else f"[bold red]{_clock(r.verdict.crossing_time, r.start)}[/bold red]"
        )
        heater = _heater_cell(r, slim, system)
        cells = [
            r.house_name,
            when,
            T(r.verdict.min_plant_c),
            power_text(r.hold_peak_w, system, with_btu=False),  # the report's system only
            heater,
        ]
        if not slim:
            cells.append(_margin_text(margin_k(r), system))
        if odds:
            cells.append(_chance_cell(r.chance))
        table.add_row(*cells)
    console.print(table)
    plain(
        console,
        f"alarm {T(order[0].threshold_c)} ({order[0].threshold_basis}); coldest: plants with "
        "no heat; to hold: peak heat that holds the alarm; "
        + (
            "heater: holds the alarm, or the coldest plants with it; smallest margin above "
            "the alarm with no heat first"
            if slim
            else "margin: coldest plants above the alarm with no heat, smallest first"
        )
        + (
            "; chance: of reaching the alarm with no heat (with the installed heater)"
            if odds
            else ""
        ),
        "dim",
    )
    for r in order:
        for w in r.forecast_warnings:
            plain(console, f"! {r.house_name}: {note_text(w, system)}", "yellow")
    attributions = {r.forecast_attribution for r in order if r.forecast_attribution}
    for a in sorted(attributions):
        plain(console, f"{a}", "dim")
    # one set per house (a natural-gas house is not told about LP storage); houses whose
    # sets are the same share one
    sets: dict[tuple[str, ...], list[str]] = {}
    for r in order:
        if r.cautions:
            sets.setdefault(tuple(r.cautions), []).append(r.house_name)
    for cautions, names in sets.items():
        render_cautions(console, cautions, system, ", ".join(names))


def write_image(path: str, r: TonightResult, system: UnitSystem) -> None:
    from grower.report.image import write_plot

    conv = (lambda a: a * 1.8 + 32.0) if system == "us" else (lambda a: a)
    write_plot(
        path,
        list(r.times),
        {
            "outside": conv(r.outside_c),
            "effective outside": conv(r.effective_outside_c),
            "air": conv(r.air_c),
            "plants": conv(r.plant_c),
            "air, colder night": conv(r.colder_air_c),
        },
        threshold=conv(r.threshold_c),
        crossing=r.verdict.crossing_time,
        unit=show_temperature(0, system).unit,
        title=f"{r.house_name} — {r.crop or 'your alarm'}: tonight with no heat",
    )
