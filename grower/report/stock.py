"""Rendering of `grower stock`."""

from __future__ import annotations

from typing import Any

from grower.plans.stock import StockResult
from grower.report.common import iso, plain, render_cautions
from grower.units import W_PER_BTU_H, UnitSystem, show_temperature


def stock_json(r: StockResult) -> dict[str, Any]:
    """The `grower stock --json` document (SI; fuel in its purchase unit)."""
    return {
        "house": r.house_name,
        "file": r.house_path,
        "model": r.model,
        "calibrated": r.calibrated,
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
        else {"amount": r.on_hand.amount, "unit": r.on_hand.unit, "energy_j": r.on_hand.energy_j},
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
        "cautions": list(r.cautions),
    }


def render_stock(console, r: StockResult, system: UnitSystem) -> None:
    from rich.table import Table

    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    unit = r.fuel.unit
    amount = float(r.fuel.amount)
    span = (r.end - r.start).total_seconds() / 86400.0
    head = (
        f"[bold]{r.house_name}[/bold]: [bold]{amount:,.1f} {unit}[/bold] of {r.fuel_label} over "
        f"{span:.1f} days ({r.start:%a %d %b %H:%M} to {r.end:%a %d %b %H:%M})"
    )
    if r.cost is not None:
        head += f", cost {r.cost:,.2f}"
    console.print(head)
    if r.on_hand is not None:
        if r.runs_out_at is not None:
            console.print(
                f"[bold red]The {r.on_hand.amount:,.0f} {r.on_hand.unit} on hand runs out "
                f"{r.runs_out_at:%a %d %b at %H:%M}[/bold red] — {r.lasts_days:.1f} days from the start"
            )
        else:
            left = r.on_hand.energy_j * r.fuel.efficiency / 3.6e6 - r.energy_kwh
            console.print(
                f"[green]The {r.on_hand.amount:,.0f} {r.on_hand.unit} on hand lasts the forecast[/green] "
                f"(about {left / r.energy_kwh * span:,.1f} more days at this rate)"
                if r.energy_kwh > 0
                else "[green]The fuel on hand lasts the forecast.[/green]"
            )
    setp = T(r.setpoint_c) + (
        "" if r.night_setpoint_c == r.setpoint_c else f" by day, {T(r.night_setpoint_c)} at night"
    )
    heater = (
        "unlimited heater"
        if r.heater_output_w is None
        else f"heater {r.heater_output_w / 1e3:,.1f} kW output"
    )
    console.print(
        f"[dim]setpoint {setp}; vent above {T(r.vent_c)}; {heater}, {r.appliance} {r.fuel.efficiency:.0%}[/dim]"
    )
    if r.hours_below_setpoint > 0.05:
        console.print(
            f"[bold yellow]The heater cannot hold the setpoint for {r.hours_below_setpoint:.1f} h[/bold yellow]"
        )
    console.print()
    table = Table()
    table.add_column("day")
    table.add_column("heat kWh", justify="right")
    table.add_column(f"fuel {unit}", justify="right")
    if r.price is not None:
        table.add_column("cost", justify="right")
    table.add_column("coldest air", justify="right")
    table.add_column("below setpoint", justify="right")
    for d in r.days:
        row = [d.date.strftime("%a %d %b"), f"{d.heat_kwh:,.0f}", f"{d.fuel_amount:,.1f}"]
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
        f"[bold]{r.energy_kwh:,.0f}[/bold]",
        f"[bold]{amount:,.1f}[/bold]",
    ]
    if r.price is not None:
        total.append(f"[bold]{r.cost:,.2f}[/bold]")
    total += ["", f"{r.hours_below_setpoint:.1f} h" if r.hours_below_setpoint > 0.05 else ""]
    table.add_row(*total)
    console.print(table)
    if r.containers:
        parts = [f"{c.count} × {c.container.name}" for c in r.containers]
        console.print("That is " + ", or ".join(parts) + ".")
    console.print(f"Peak heat {r.peak_w / 1e3:,.1f} kW ({r.peak_w / W_PER_BTU_H:,.0f} Btu/h).")
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
        plain(console, f"· {a}", "dim")
    render_cautions(console, r.cautions)
