"""Rendering of `grower winters`: JSON, the terminal report and the fuel-per-month image."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from grower.errors import InputError
from grower.plans.winters import Winter, WintersResult
from grower.report.common import data_table, iso, plain, render_cautions
from grower.report.quantities import fuel_value
from grower.units import J_PER_THERM, UnitSystem, note_text, show_temperature

#: one colour per winter (Okabe–Ito palette, colour-blind safe)
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#F0E442")


def _winter_json(w: Winter) -> dict[str, Any]:
    return {
        "label": w.label,
        "start": iso(w.start),
        "end": iso(w.end),
        "energy_kwh": w.energy_kwh,
        "fuel": {
            "kind": w.fuel.fuel,
            "amount": float(w.fuel.amount),
            "unit": w.fuel.unit,
            "heating_value_j_per_unit": w.fuel.heating_value_j_per_unit,
            "efficiency": w.fuel.efficiency,
        },
        "cost": w.cost,
        "hours_not_held": w.hours_not_held,
        "mean_outside_c": w.mean_outside_c,
        "mean_effective_outside_c": w.mean_effective_outside_c,
        "min_outside_c": w.min_outside_c,
        "min_air_c": w.min_air_c,
        "peak_w": w.peak_w,
        "months": [
            {
                "month": m.month,
                "energy_kwh": m.energy_kwh,
                "fuel_amount": m.fuel_amount,
                "cost": m.cost,
                "hours_not_held": m.hours_not_held,
            }
            for m in w.months
        ],
    }


def winters_json(r: WintersResult) -> dict[str, Any]:
    """The `grower winters --json` document (SI; fuel in its purchase unit)."""
    return {
        "house": r.house_name,
        "file": r.house_path,
        "model": r.model,
        "k_w_per_k": r.k_w_per_k,
        "setpoint_c": r.setpoint_c,
        "night_setpoint_c": r.night_setpoint_c,
        "heater_output_w": r.heater_output_w,
        "fuel_kind": r.winters[0].fuel.fuel,
        "unit": r.unit,
        "price": r.price,
        "winters": [_winter_json(w) for w in r.winters],
        "median_energy_kwh": r.median_energy_kwh,
        "median_fuel_amount": r.median_fuel_amount,
        "median_winter": r.median.label,
        "coldest_winter": r.coldest.label,
        "source": r.source,
        "attribution": r.attribution,
        "assumptions": list(r.assumptions),
        "calibration_warning": r.calibration_warning,
        "cautions": list(r.cautions),
    }


def render_winters(console, r: WintersResult, system: UnitSystem) -> None:

    T = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    us = system == "us"
    heat_of = (lambda kwh: kwh * 3.6e6 / J_PER_THERM) if us else (lambda kwh: kwh / 1e3)  # noqa: E731
    heat_unit = "therm" if us else "MWh"
    heat_fmt = "{:,.0f}" if us else "{:,.1f}"
    deg = "°F" if us else "°C"
    # fuel in the screen's system (`fuel_value`), or in the unit --fuel-unit asked for
    per, unit = fuel_value(1.0, r.unit, r.fuel, system, keep=r.fuel_unit_chosen)
    n = len(r.winters)
    short = [w for w in r.winters if w.hours_not_held > 0.05]
    if short:
        worst = max(short, key=lambda w: w.hours_not_held)
        plain(
            console,
            f"The heater could not hold the setpoint in {len(short)} of {n} winters: "
            f"{worst.hours_not_held:,.0f} h in {worst.label}, the air down to {T(worst.min_air_c)}.",
            "bold yellow",
        )
    cost = lambda w: f", cost {w.cost:,.0f}" if w.cost is not None else ""  # noqa: E731
    plain(
        console,
        f"{r.house_name}: a median winter burns {r.median_fuel_amount * per:,.0f} {unit} of "
        f"{r.fuel_label}; the coldest of the {n} ({r.coldest.label}) "
        f"{float(r.coldest.fuel.amount) * per:,.0f} {unit}{cost(r.coldest)}.",
        "bold",
    )
    setp = T(r.setpoint_c) + (
        "" if r.night_setpoint_c == r.setpoint_c else f" by day, {T(r.night_setpoint_c)} at night"
    )
    # the price per the unit the fuel is shown in (the plan's is per `r.unit`)
    price = "" if r.price is None else f"; price {r.price / per:,.2f} per {unit}"
    plain(console, f"setpoint {setp}; {r.appliance} {r.efficiency:.0%}{price}", "dim")
    console.print()
    table = data_table(
        console, title=f"each winter (median {r.median.label}, coldest {r.coldest.label})"
    )
    table.add_column("winter", no_wrap=True)
    table.add_column(f"heat {heat_unit}", justify="right")
    table.add_column(f"fuel {unit}", justify="right")
    if r.price is not None:
        table.add_column("cost", justify="right")
    table.add_column(f"mean {deg}", justify="right")
    table.add_column("not held", justify="right", no_wrap=True)
    for w in r.winters:
        row = [
            w.label,
            heat_fmt.format(heat_of(w.energy_kwh)),
            f"{float(w.fuel.amount) * per:,.0f}",
        ]
        if r.price is not None:
            row.append(f"{w.cost:,.0f}")
        mean = show_temperature(w.mean_outside_c, system).value
        row += [f"{mean:.1f}", f"{w.hours_not_held:,.0f} h" if w.hours_not_held > 0.05 else ""]
        table.add_row(*row)
    console.print(table)
    months = sorted({m.month[5:] for w in r.winters for m in w.months}, key=_season_order(r))
    mt = data_table(console, title=f"fuel per month, {unit}")
    mt.add_column("month", no_wrap=True)
    for w in r.winters:
        mt.add_column(w.label, justify="right")
    names = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]
    for mm in months:
        row = [names[int(mm) - 1]]
        for w in r.winters:
            got = [m.fuel_amount for m in w.months if m.month[5:] == mm]
            row.append(f"{got[0] * per:,.0f}" if got else "")
        mt.add_row(*row)
    console.print(mt)
    console.print()
    src = f"Weather: {r.source}"
    if r.attribution:
        src += f". {r.attribution}"
    plain(console, src, "dim")
    for a in r.assumptions:
        if a == r.calibration_warning:
            plain(console, f"! {note_text(a, system)}", "yellow")
        else:
            plain(console, f"· {note_text(a, system)}", "dim")
    render_cautions(console, r.cautions, system)


def _season_order(r: WintersResult):
    first = int(r.winters[0].months[0].month[5:]) if r.winters[0].months else 1
    return lambda mm: (int(mm) - first) % 12


def write_plot(path: str | Path, r: WintersResult) -> Path:
    """Fuel per month for each winter as grouped bars (PNG or SVG by suffix)."""
    path = Path(path)
    if path.suffix.lower() not in (".png", ".svg"):
        raise InputError("the chart file must end in .png or .svg", where=f"--plot {path}")
    if not path.parent.exists():
        raise InputError("folder does not exist", where=f"--plot {path}")
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError as exc:
        raise InputError(
            'the chart image needs matplotlib: pip install "grower[plot]"', where="--plot"
        ) from exc
    months = sorted({m.month[5:] for w in r.winters for m in w.months}, key=_season_order(r))
    names = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]
    fig, ax = plt.subplots(figsize=(9, 4.5), dpi=110)
    n = len(r.winters)
    width = 0.8 / n
    for i, w in enumerate(r.winters):
        by = {m.month[5:]: m.fuel_amount for m in w.months}
        xs = [j + (i - (n - 1) / 2) * width for j in range(len(months))]
        ax.bar(
            xs,
            [by.get(mm, 0.0) for mm in months],
            width,
            label=w.label,
            color=PALETTE[i % len(PALETTE)],
        )
    ax.set_xticks(range(len(months)), [names[int(mm) - 1] for mm in months])
    ax.set_ylabel(f"fuel ({r.unit} of {r.fuel_label})")
    ax.set_title(f"{r.house_name}: fuel per month, each winter")
    ax.grid(alpha=0.3, axis="y")
    ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    tmp = path.with_name(f".{path.name}.tmp")
    fig.savefig(tmp, format=path.suffix.lower().lstrip("."))
    plt.close(fig)
    tmp.replace(path)
    return path
