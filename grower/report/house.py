"""Rendering of `grower house`: the breakdown a heating contractor reads."""

from __future__ import annotations

from typing import Any

from grower.network import HouseSummary
from grower.report.common import NARROW, data_table, plain, say
from grower.report.quantities import capacity_unit, capacity_value, conductance_text
from grower.units import (
    M_PER_IN,
    M_S_PER_MPH,
    UnitSystem,
    show_area,
    show_conductance,
    show_length,
    show_speed,
    show_temperature,
    show_u_value,
    show_volume,
)


def house_json(s: HouseSummary) -> dict[str, Any]:
    """The `grower house --json` document (SI)."""
    h, k, c = s.house, s.conductances, s.capacities
    return {
        "name": h.name,
        "file": h.path,
        "shape": h.shape,
        "bays": h.bays,
        "k_w_per_k": s.k_w_per_k,
        "c_j_per_k": s.c_j_per_k,
        "time_constant_h": s.time_constant_h,
        "volume_m3": h.volume_m3,
        "floor_area_m2": h.floor_area_m2,
        "perimeter_m": h.envelope.perimeter_m,
        "areas_m2": {x.name: x.area_m2 for x in k.surfaces},
        "materials": {x.name: x.material_key for x in k.surfaces},
        "u_w_per_m2k": {x.name: x.u_w_m2k for x in k.surfaces},
        "ua_w_per_k": {x.name: x.ua_w_per_k for x in k.surfaces},
        "cover_w_per_k": k.cover_w_per_k,
        "infiltration_w_per_k": k.infiltration_w_per_k,
        "air_changes_per_hour": k.air_changes_per_hour,
        "perimeter_w_per_k": k.perimeter_w_per_k,
        "sky_w_per_k": k.sky_w_per_k,
        "floor_sky_w_per_k": k.floor_sky_w_per_k,
        "cover_sky_w_per_k": k.cover_sky_w_per_k,
        "conduction_w_per_k": k.conduction_w_per_k,
        "handbook_k_w_per_k": s.handbook_w_per_k,
        "calm_k_w_per_k": s.calm.total_w_per_k,
        "time_scales_h": dict(zip(("air", "mass"), s.time_scales_h, strict=True)),
        "curtain_closed": k.curtain_closed,
        "wind_m_s": k.wind_m_s,
        "capacity_j_per_k": {
            "air": c.air_j_per_k,
            "soil": c.soil_j_per_k,
            "water": c.water_j_per_k,
            "other_mass": c.other_mass_j_per_k,
        },
        "air_mass_w_per_k": c.air_mass_w_per_k,
        "ground_w_per_k": c.ground_w_per_k,
    }


def _num(value: float, digits: int = 0) -> str:
    return f"{value:,.{digits}f}"


def render_house(
    console, s: HouseSummary, system: UnitSystem, calibration: tuple[str, bool] | None = None
) -> None:
    """Print the breakdown of one house; `calibration`: the line on its [calibration] and
    whether it is a warning (`grower.plans.model.calibration_note`), shown last."""

    h, k, c = s.house, s.conductances, s.capacities
    total = k.total_w_per_k
    kk = show_conductance(total, system)
    dims = " × ".join(show_length(v, system).text(1) for v in (h.width_m * h.bays, h.length_m))
    console.print(
        f"[bold]{h.name}[/bold] — {h.shape}, {dims}"
        + (f", {h.bays} bays" if h.bays > 1 else "")
        + f"  ({h.path})"
    )
    per = "°F" if system == "us" else "kelvin"
    si_k = "" if system == "us" else f" (K = {conductance_text(total, system)})"
    say(
        console,
        f"Loses [bold]{_num(kk.value)} {'Btu/h' if system == 'us' else 'W'}[/bold] for every "
        f"{per} between inside and outside{si_k}; time constant C/K = "
        f"[bold]{s.time_constant_h:.1f} h[/bold]",
    )
    if k.curtain_closed and h.curtain:
        console.print(f"Energy curtain drawn: {h.curtain.curtain.label}")

    ua_unit = show_conductance(1.0, system).unit
    units = {
        "area": show_area(1.0, system).unit,
        "U": show_u_value(1.0, system).unit,
        "UA": ua_unit,
    }
    # a narrow screen keeps the headers short and says their units under the table
    narrow = console.width < NARROW
    table = data_table(console, title=None, show_footer=False, expand=False)
    table.add_column("part", no_wrap=True)
    table.add_column("cover", min_width=11, overflow="fold")  # a long name whole
    for name, unit in units.items():
        table.add_column(name if narrow else f"{name} {unit}", justify="right", no_wrap=True)
    table.add_column("share", justify="right")

    def row(name: str, what: str, area: str, u: str, ua_w: float) -> None:
        table.add_row(
            name, what, area, u, _num(show_conductance(ua_w, system).value), f"{ua_w / total:.0%}"
        )

    for x in k.surfaces:
        row(
            x.name,
            x.material_key,
            _num(show_area(x.area_m2, system).value),
            f"{show_u_value(x.u_w_m2k, system).value:.2f}",
            x.ua_w_per_k,
        )
    row(
        "air exchange",
        f"{k.air_changes_per_hour:g} ACH × {_num(show_volume(h.volume_m3, system).value)} "
        f"{show_volume(1, system).unit}",
        "",
        "",
        k.infiltration_w_per_k,
    )
    row(
        "perimeter",
        f"{_num(show_length(h.envelope.perimeter_m, system).value)} {show_length(1, system).unit}, "
        f"{'insulated' if h.perimeter_insulated else 'uninsulated'}",
        "",
        "",
        k.perimeter_w_per_k,
    )
    table.add_section()
    table.add_row(
        "[bold]total K[/bold]",
        "",
        "",
        "",
        f"[bold]{_num(show_conductance(total, system).value)}[/bold]",
        "100%",
    )
    console.print(table)
    if narrow:
        plain(console, "; ".join(f"{name} in {unit}" for name, unit in units.items()), "dim")

    cap = data_table(console, show_header=True, expand=False)
    cap.add_column("heat capacity")
    cap.add_column(capacity_unit(system), justify="right")

    def cval(j_per_k: float) -> str:
        return capacity_value(j_per_k, system, digits=2)

    layer = (
        f"{c.active_layer_m / M_PER_IN:.0f} in"
        if system == "us"
        else f"{c.active_layer_m * 100:.0f} cm"
    )
    cap.add_row("air, structure and canopy (air node)", cval(c.air_j_per_k))
    cap.add_row(f"floor, top {layer} of {h.floor_kind} (mass node)", cval(c.soil_j_per_k))
    if c.water_j_per_k:
        cap.add_row("water (mass node)", cval(c.water_j_per_k))
    if c.other_mass_j_per_k:
        cap.add_row("benches and other mass (mass node)", cval(c.other_mass_j_per_k))
    cap.add_section()
    cap.add_row("[bold]total C[/bold]", f"[bold]{cval(c.total_j_per_k)}[/bold]")
    console.print(cap)
    deep = show_temperature(c.deep_ground_c, system)
    say(
        console,
        f"Air–mass coupling {conductance_text(c.air_mass_w_per_k, system)}; to the deep ground "
        f"{conductance_text(c.ground_w_per_k, system)} at {deep.text(0)}"
        + (" (assumed; set \\[floor] deep_ground_temperature)" if c.deep_ground_assumed else ""),
    )
    tau = h.roof_material.longwave_transmittance
    fast, slow = s.time_scales_h
    say(
        console,
        f"At {show_speed(k.wind_m_s, system).text(1)} wind (the tables' U-values hold at "
        f"{show_speed(15 * M_S_PER_MPH, system).text(0 if system == 'us' else 1)}); "
        "in calm air K = "
        f"{_num(show_conductance(s.calm.total_w_per_k, system).value)} {ua_unit}. "
        f"A clear night loses {_num(show_conductance(k.sky_w_per_k, system).value)} "
        f"{'Btu/h' if system == 'us' else 'W'} more for every {per} the sky is below the "
        f"outside air (roof passes {tau:.0%} of thermal IR; "
        f"{conductance_text(k.cover_sky_w_per_k, system)} of it "
        "from the cover's own outer faces, the rest from the floor and crop through the film). "
        f"The air settles in {fast * 60:.0f} min, the floor and water in {slow:.1f} h.",
    )
    if calibration is not None:
        text, warning = calibration
        plain(console, f"! {text}" if warning else f"· {text}", "yellow" if warning else "dim")
    console.print()
