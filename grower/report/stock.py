"""Rendering of `grower stock`."""

from __future__ import annotations

from typing import Any

from grower.plans.stock import Order, Shortfall, StockResult
from grower.report import vapour
from grower.report.common import data_table, iso, plain, render_cautions
from grower.report.quantities import fuel_text, fuel_value
from grower.units import J_PER_THERM, UnitSystem, note_text, show_temperature


def stock_json(r: StockResult) -> dict[str, Any]:
    """The `grower stock --json` document (SI; fuel in its purchase unit)."""
    return {
        "house": r.house_name,
        "file": r.house_path,
        "model": r.model,
        "calibrated": r.calibrated,
        "calibration_warning": r.calibration_warning,
        "k_w_per_k": r.k_w_per_k,
        "c_j_per_k": r.c_j_per_k,
        "setpoint_c": r.setpoint_c,
        "night_setpoint_c": r.night_setpoint_c,
        "vent_c": r.vent_c,
        "heater_output_w": r.heater_output_w,
        "start": iso(r.start),
        "end": iso(r.end),
        "energy_kwh": r.energy_kwh,
        "peak_w": r.peak_w,
        "hours_below_setpoint": r.hours_below_setpoint,
        "fuel": {
            "kind": r.fuel.fuel,
            "amount": float(r.fuel.amount),
            "unit": r.fuel.unit,
            "heating_value_j_per_unit": r.fuel.heating_value_j_per_unit,
            "efficiency": r.fuel.efficiency,
        },
        "on_hand": None
        if r.on_hand is None
        else {
            "amount": r.on_hand.amount,
            "unit": r.on_hand.unit,
            "energy_j": r.on_hand.energy_j,
            "container": None if r.on_hand.container is None else r.on_hand.container.name,
            "count": r.on_hand.count,
            "share_full": r.on_hand.share_full,
        },
        "runs_out_at": iso(r.runs_out_at),
        "lasts_days": r.lasts_days,
        "price": r.price,
        "cost": r.cost,
        "containers": [
            {"container": c.container.name, "count": c.count, "exact": c.exact}
            for c in r.containers
        ],
        "days": [
            {
                "date": d.date.isoformat(),
                "heat_kwh": d.heat_kwh,
                "fuel_amount": d.fuel_amount,
                "cost": d.cost,
                "min_air_c": d.min_air_c,
                "hours_below_setpoint": d.hours_below_setpoint,
                "vented_kwh": d.vented_kwh,
            }
            for d in r.days
        ],
        "assumptions": list(r.assumptions),
        "forecast": {
            "source": r.forecast_source,
            "attribution": r.forecast_attribution,
            "age_s": r.forecast_age_s,
            "warnings": list(r.forecast_warnings),
        },
        "min_air_c": r.min_air_c,
        "order_by": None
        if r.order is None or r.order.order_by is None
        else r.order.order_by.isoformat(),
        "order_amount": None if r.order is None else r.order.amount,
        "order": None if r.order is None else _order_json(r.order),
        **_vapour_fields(r),
        "crop": None
        if r.crop is None
        else {
            "crop": r.crop.crop,
            "alarm_c": r.crop.alarm_c,
            "first_below_at": iso(r.crop.first_at),
            "hours_below": r.crop.hours_below,
            "min_plant_c": r.crop.min_plant_c,
            "last_below_at": iso(r.crop.last_at),
            "reached": r.crop.first_at is not None,
            # true: checked on the run whose heater stops when the stock is gone
            "heater_stops_at_run_out": r.crop.run_out,
            "cause": r.crop.cause,
            "damage_c": r.crop.damage_c,
            "margin_k": r.crop.margin_k,
            "threshold_basis": r.crop.basis,
        },
        "shortfalls": [
            {
                "kind": f.kind,
                "at": iso(f.at),
                "from": iso(f.at),
                "to": iso(f.until),
                # the coldest plants (crop) or inside air (heater) [°C]
                "min_c": f.value if f.kind in ("crop", "heater") else None,
                "hours": f.hours,
                "value": f.value,
                "extra_w": f.extra_w,
            }
            for f in r.shortfalls
        ],
        # the same forecast with the heater off from the run-out on (null: the fuel lasts)
        "after_run_out": None
        if r.after_run_out is None
        else {
            "min_air_c": r.after_run_out.min_air_c,
            "min_plant_c": r.after_run_out.min_plant_c,
            "coldest_at": iso(r.after_run_out.coldest_at),
            "hours_below_setpoint": r.after_run_out.hours_below_setpoint,
            "crop_alarm_at": iso(r.after_run_out.crop_alarm_at),
        },
        "thermostat_runs": r.n_runs,
        "cautions": list(r.cautions),
    }


def _vapour_fields(r: StockResult) -> dict[str, Any]:
    """The vapour check's JSON, with the fill it was made at: `fill_basis` "now" (the fill
    given), "then" (the fill left at the hour checked) or "refill" (the refill level,
    `refill_pct`: less is left then), null when not checked."""
    out = vapour.fields(r.vapour)
    out["vaporisation"]["fill_basis"] = r.vapour.fill_basis
    out["vaporisation"]["refill_pct"] = r.vapour.refill_pct
    # below this share of full the containers fall short at the hour checked (null: n/a)
    out["vaporisation"]["short_below_share"] = r.vapour.short_below_share
    return out


def _order_json(o: Order) -> dict[str, Any]:
    return {
        "reserve_pct": o.reserve_pct,
        "lead_time_days": o.lead_time_days,
        "reserve_amount": o.reserve_amount,
        "reserve_at": iso(o.reserve_at),
        "order_by": None if o.order_by is None else o.order_by.isoformat(),
        "order_now": o.order_now,
        "amount": o.amount,
        "unit": o.unit,
        "extrapolated": o.extrapolated,
        "capacity_known": o.capacity_known,
    }


def _when(t) -> str:
    return f"{t:%a %d %b %H:%M}"


def shortfall_line(f: Shortfall, r: StockResult, system: UnitSystem) -> str:
    """One plain sentence for a shortfall, in the report's words."""
    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    if f.kind == "crop":
        c = r.crop
        span = f"from {_when(f.at)}" + (f" to {_when(f.until)}" if f.until else "")
        return (
            f"Crop alarm reached — {c.crop}: the plants fall below {T(c.alarm_c)} "
            f"{span}, {f.hours:.1f} h in all, down to {T(f.value)}; raise the setpoint "
            "or add heat."
        )
    if f.kind == "heater":
        return (
            f"The heater is too small: it cannot hold the setpoint for {f.hours:.1f} h, from "
            f"{_when(f.at)}" + (f" to {_when(f.until)}" if f.until else "") + "; the air "
            f"falls to {T(f.value)}."
            + (
                f" About {vapour.power(f.extra_w, system)} more output would hold it through "
                "the coldest hour."
                if f.extra_w
                else ""
            )
        )
    if f.kind == "fuel":
        line = (
            f"The fuel runs out {_when(f.at)}, {f.value:.1f} days from the start, before the "
            "forecast ends"
        )
        a = r.after_run_out
        if a is not None:
            line += (
                f"; then, without heat, the air falls to {T(a.min_air_c)} by {_when(a.coldest_at)}"
            )
            if r.crop is not None:
                line += (
                    f" and the plants pass the {r.crop.crop} alarm at {_when(a.crop_alarm_at)}"
                    if a.crop_alarm_at
                    else f" (the plants stay above the {r.crop.crop} alarm)"
                )
        return line + "; order more now."
    line, _ = vapour.sentence(r.vapour, system)
    return "Not enough vapour: " + line


def _order_line(o: Order, fuel: str, r_start, system: UnitSystem, keep: bool = False) -> str:
    amount = fuel_text(o.amount, o.unit, fuel, system, digits=0, keep=keep)
    refill = f"the {o.reserve_pct:.0f} % refill level"
    lead = f" with {o.lead_time_days:g} days' delivery" if o.lead_time_days else ""
    if o.order_by is None:
        return "No order needed: the house burns no fuel at this rate."
    if o.order_now:
        if o.reserve_at is not None and o.reserve_at <= r_start:
            return f"Order now: the fuel is already at or below {refill}; {amount} fills it up."
        return f"Order now{lead}: the fuel reaches {refill} {_when(o.reserve_at)}; {amount} fills it up."
    est = " (past the forecast's end, at its mean rate)" if o.extrapolated else ""
    return (
        f"Order by {o.order_by:%a %d %b}{lead}: the fuel reaches {refill} {_when(o.reserve_at)}"
        f"{est}; {amount} fills it up."
    )


def _lasts_line(r: StockResult, span_days: float, system: UnitSystem) -> str | None:
    """ "The 900 L on hand lasts the forecast (…)", or None (none given, or it runs out)."""
    if r.on_hand is None or r.runs_out_at is not None:
        return None
    left = r.on_hand.energy_j * r.fuel.efficiency / 3.6e6 - r.energy_kwh
    keep = r.fuel_unit_chosen and r.on_hand.unit == r.fuel.unit
    on_hand = fuel_text(r.on_hand.amount, r.on_hand.unit, r.fuel.fuel, system, digits=0, keep=keep)
    text = f"The {on_hand} on hand lasts the forecast"
    if r.energy_kwh > 0:
        text += f" (about {left / r.energy_kwh * span_days:,.1f} more days at this rate)"
    return text + "."


def render_stock(console, r: StockResult, system: UnitSystem) -> None:

    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    # fuel in the screen's system (`fuel_value`), or in the unit --fuel-unit asked for
    per, unit = fuel_value(1.0, r.fuel.unit, r.fuel.fuel, system, keep=r.fuel_unit_chosen)
    amount = float(r.fuel.amount) * per
    span = (r.end - r.start).total_seconds() / 86400.0
    # shortfalls first, worst first: nothing reassuring is printed above them; with
    # none, the verdict that the stock lasts (or the heater holds) comes first
    for f in r.shortfalls:
        plain(
            console,
            shortfall_line(f, r, system),
            "bold red" if f.kind != "heater" else "bold yellow",
        )
    lasts = _lasts_line(r, span, system)
    if not r.shortfalls:
        plain(
            console,
            lasts or "No shortfall: the heater holds the setpoints all through the forecast.",
            "bold green",
        )
    head = (
        f"{r.house_name}: {amount:,.1f} {unit} of {r.fuel_label} over {span:.1f} days "
        f"({_when(r.start)} to {_when(r.end)})"
    )
    if r.cost is not None:
        # the price per the unit the amounts are shown in (it is given per the unit bought)
        head += f", cost {r.cost:,.2f} at {r.price / per:,.2f} per {unit}"
    plain(console, head, "bold")
    if lasts and r.shortfalls:
        plain(console, lasts)
    if r.order is not None:
        plain(
            console,
            _order_line(
                r.order,
                r.fuel.fuel,
                r.start,
                system,
                keep=r.fuel_unit_chosen and r.order.unit == r.fuel.unit,
            ),
            "bold" if r.order.order_now else None,
        )
    if r.crop is not None and r.crop.first_at is None:
        once = " even once the fuel runs out" if r.crop.run_out else ""
        plain(
            console,
            f"Crop alarm not reached — {r.crop.crop}: the plants stay above "
            f"{T(r.crop.alarm_c)}{once}; coldest {T(r.crop.min_plant_c)}.",
            None if r.shortfalls else "green",
        )
    elif r.crop is not None and r.crop.cause == "run_out":
        c = r.crop
        span = f"from {_when(c.first_at)}" + (f" to {_when(c.last_at)}" if c.last_at else "")
        plain(
            console,
            f"Crop alarm reached once the fuel runs out — {c.crop}: the plants fall below "
            f"{T(c.alarm_c)} {span}, {c.hours_below:.1f} h in all, down to "
            f"{T(c.min_plant_c)}.",
            "red",
        )
    if r.crop is not None:
        from grower.report.tonight import alarm_words

        c = r.crop
        plain(console, alarm_words(c.alarm_c, c.damage_c, c.margin_k, c.basis, system), "dim")
    if not (r.vapour.applies and r.vapour.short):
        line, _ = vapour.sentence(r.vapour, system)
        plain(console, line, "dim" if not r.vapour.applies else None)
    setp = T(r.setpoint_c) + (
        "" if r.night_setpoint_c == r.setpoint_c else f" by day, {T(r.night_setpoint_c)} at night"
    )
    heater = (
        "unlimited heater"
        if r.heater_output_w is None
        else f"heater {vapour.power(r.heater_output_w, system)} output"
    )
    plain(
        console,
        f"setpoint {setp}; vent above {T(r.vent_c)}; {heater}, {r.appliance} {r.fuel.efficiency:.0%}",
        "dim",
    )
    console.print()
    us = system == "us"
    heat_label = "heat therm" if us else "heat kWh"
    heat_of = (lambda kwh: kwh * 3.6e6 / J_PER_THERM) if us else (lambda kwh: kwh)  # noqa: E731
    table = data_table(console)
    table.add_column("day", no_wrap=True)
    table.add_column(heat_label, justify="right")
    table.add_column(f"fuel {unit}", justify="right")
    if r.price is not None:
        table.add_column("cost", justify="right")
    table.add_column("coldest air", justify="right", min_width=len("coldest"))
    table.add_column("not held", justify="right")
    for d in r.days:
        row = [
            d.date.strftime("%a %d %b"),
            f"{heat_of(d.heat_kwh):,.0f}",
            f"{d.fuel_amount * per:,.1f}",
        ]
        if r.price is not None:
            row.append(f"{d.cost:,.2f}")
        row += [
            T(d.min_air_c),
            f"{d.hours_below_setpoint:.1f} h" if d.hours_below_setpoint > 0.05 else "",
        ]
        table.add_row(*row)
    table.add_section()
    total = [
        "[bold]total[/bold]",
        f"[bold]{heat_of(r.energy_kwh):,.0f}[/bold]",
        f"[bold]{amount:,.1f}[/bold]",
    ]
    if r.price is not None:
        total.append(f"[bold]{r.cost:,.2f}[/bold]")
    total += ["", f"{r.hours_below_setpoint:.1f} h" if r.hours_below_setpoint > 0.05 else ""]
    table.add_row(*total)
    console.print(table)
    if r.containers:
        parts = [f"{c.count} × {c.container.name}" for c in r.containers]
        plain(console, "That is " + ", or ".join(parts) + ".")
    plain(console, f"Peak heat {vapour.power(r.peak_w, system)}.")
    console.print()
    src = f"Forecast: {r.forecast_source}"
    if r.forecast_age_s is not None:
        src += f", fetched {r.forecast_age_s / 60:.0f} min ago"
    if r.forecast_attribution:
        src += f". {r.forecast_attribution}"
    plain(console, src, "dim")
    for w in r.forecast_warnings:
        plain(console, f"! {w}", "yellow")
    for a in r.assumptions:
        if a == r.calibration_warning:
            plain(console, f"! {note_text(a, system)}", "yellow")
        else:
            plain(console, f"· {note_text(a, system)}", "dim")
    render_cautions(console, r.cautions, system)
