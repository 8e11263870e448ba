"""Rendering of `grower size`."""

from __future__ import annotations

from typing import Any

from grower.plans.size import SizeResult
from grower.report import vapour as vapour_report
from grower.report.common import data_table, plain, render_cautions
from grower.report.quantities import fuel_text, power_text
from grower.units import (
    M_S_PER_MPH,
    UnitSystem,
    note_text,
    show_speed,
    show_temperature,
)


def size_json(r: SizeResult) -> dict[str, Any]:
    """The `grower size --json` document (SI)."""
    return {
        "house": r.house_name,
        "file": r.house_path,
        "design_outside_c": r.design_outside_c,
        "wind_m_s": r.wind_m_s,
        "sky_c": r.sky_c,
        "effective_outside_c": r.effective_outside_c,
        "hold_c": r.hold_c,
        "hold_basis": r.hold_basis,
        "k_w_per_k": r.k_w_per_k,
        "k_conduction_w_per_k": r.k_conduction_w_per_k,
        "k_sky_w_per_k": r.k_sky_w_per_k,
        "heat_loss_w": r.heat_loss_w,
        "handbook_loss_w": r.handbook_loss_w,
        "wind_allowance_w": r.wind_allowance_w,
        "calibration_allowance_w": r.calibration_allowance_w,
        "sky_allowance_w": r.sky_allowance_w,
        "curtain_saving_w": r.curtain_saving_w,
        "safety_factor": r.safety_factor,
        "recommended_output_w": r.recommended_output_w,
        "recommended_input_w": r.recommended_input_w,
        "efficiency": r.efficiency,
        "appliance": r.appliance,
        "fuel": {
            "kind": r.fuel.name,
            "unit": r.fuel_per_hour.unit,
            "heating_value_j_per_unit": r.fuel_per_hour.heating_value_j_per_unit,
            "per_hour_at_full_fire": r.fuel_per_hour.amount_per_hour,
            "source": r.fuel.source,
            "year": r.fuel.year,
        },
        "units": [
            {
                "count": u.count,
                "input_each_w": u.input_each_w,
                "output_each_w": u.output_each_w,
                "one_down_share": u.one_down_share,
            }
            for u in r.units
        ],
        "combustion_air_in2": r.combustion_air_in2,
        "installed_output_w": r.installed_output_w,
        "installed_holds": r.installed_holds,
        "notes": list(r.notes),
        "calibration": r.calibration,
        "calibration_warning": r.calibration_warning,
        "cautions": list(r.cautions),
        **({} if r.vapour is None else vapour_report.fields(r.vapour)),
    }


def _article(name: str) -> str:
    """ "an" before a vowel sound ("an electric …", "an unvented …"), else "a" ("a
    vented …", "a unit heater": the "u" of "unit" sounds as "you")."""
    vowel = name[:1].lower() in "aeiou" and not name.lower().startswith(("unit", "uni", "use"))
    return "an" if vowel else "a"


def render_size(console, r: SizeResult, system: UnitSystem) -> None:
    from rich.table import Table

    t = lambda c: show_temperature(c, system).text(1)  # noqa: E731
    console.print(
        f"[bold]{r.house_name}[/bold]: a heater of [bold]{power_text(r.recommended_output_w, system)}"
        f"[/bold] output — nameplate input [bold]{power_text(r.recommended_input_w, system)}[/bold] "
        f"for {_article(r.appliance)} {r.appliance} at {r.efficiency:.0%} efficiency"
    )
    console.print(
        f"holds {t(r.hold_c)} inside at {t(r.design_outside_c)} outside, "
        f"wind {show_speed(r.wind_m_s, system).text(1)}, clear sky at {t(r.sky_c)}"
    )
    plain(console, f"  hold: {note_text(r.hold_basis, system)}")
    console.print()

    table = Table(show_header=False, box=None, pad_edge=False)
    table.add_column(style="dim")
    table.add_column(justify="right")
    table.add_row(
        "handbook heat loss (Σ U·A·ΔT + air exchange + perimeter)",
        power_text(r.handbook_loss_w, system),
    )
    sign = "+" if r.wind_allowance_w > -0.5 else "−"  # round-off at the tables' wind
    digits = 0 if system == "us" else 1
    table.add_row(
        f"{sign} wind {show_speed(r.wind_m_s, system).text(digits)} against the tables' "
        + show_speed(15 * M_S_PER_MPH, system).text(digits),
        power_text(abs(r.wind_allowance_w), system),
    )
    if r.calibration is not None and abs(r.calibration_allowance_w) >= 0.5:
        applied = r.calibration["applied"]
        table.add_row(
            ("+" if r.calibration_allowance_w >= 0 else "−")
            + f" the fitted conductance (grower fit: conduction × "
            f"{applied['conduction_factor']:.2f}, sky part × {applied['sky_factor']:.2f})",
            power_text(abs(r.calibration_allowance_w), system),
        )
    table.add_row(
        f"+ clear sky at {t(r.sky_c)}, below the outside air", power_text(r.sky_allowance_w, system)
    )
    table.add_row("= design heat loss", f"[bold]{power_text(r.heat_loss_w, system)}[/bold]")
    table.add_row(
        f"× safety factor {r.safety_factor:g}", power_text(r.recommended_output_w, system)
    )
    table.add_row(
        f"÷ efficiency {r.efficiency:.0%} = nameplate input",
        power_text(r.recommended_input_w, system),
    )
    if r.curtain_saving_w:
        table.add_row(
            "with the energy curtain drawn, the loss is less by",
            power_text(r.curtain_saving_w, system),
        )
    rate = r.fuel_per_hour
    per_hour = fuel_text(float(rate.amount_per_hour), rate.unit, rate.fuel, system, digits=2)
    if per_hour.endswith(" kWh"):
        # electricity: kWh an hour is a power, said in kW on a metric screen; a US one
        # keeps the unit it is billed in, as it keeps gallons for propane
        kw = per_hour.removesuffix(" kWh")
        per_hour = f"{per_hour} an hour" if system == "us" else f"{kw} kW"
    else:
        per_hour += "/h"
    table.add_row(f"{r.fuel.label} at full fire", per_hour)
    console.print(table)
    console.print()

    units = data_table(console, title="Split into common unit sizes", title_justify="left")
    units.add_column("units", justify="right")
    units.add_column("input each", justify="right")
    units.add_column("output each", justify="right")
    units.add_column("if one fails", justify="right")
    for u in r.units:
        units.add_row(
            f"{u.count} ×",
            power_text(u.input_each_w, system),
            power_text(u.output_each_w, system),
            "—" if u.count == 1 else f"{u.one_down_share:.0%} of the loss",
        )
    console.print(units)
    if r.installed_holds is not None:
        verdict = "holds it" if r.installed_holds else "[bold red]does not hold it[/bold red]"
        console.print(
            f"Installed heat: {power_text(r.installed_output_w, system)} output — {verdict}; "
            f"the design loss is {power_text(r.heat_loss_w, system)}."
        )
    vapour_report.render(console, r.vapour, system)
    console.print()
    for n in r.notes:
        if n == r.calibration_warning:
            plain(console, f"! {note_text(n, system)}", "yellow")
        else:
            plain(console, f"· {note_text(n, system)}", "dim")
    render_cautions(console, r.cautions, system)
