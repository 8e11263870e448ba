"""`size`: the backup heater that holds a temperature on a design-cold, windy, clear night.

Steady state: Q = K·(T_hold − T_eff), with K at the design wind (U and air exchange
raised above 15 mph), the energy curtain open (it may be up, torn or not yet drawn when
it matters most: the cautious side — the saving with it drawn is shown beside), and the
clear night sky at the design temperature (Swinbank 1963, no dew point: the coldest sky
the model gives). Heat stored in the soil and water and heat from the deep ground are
ignored: they help for a few hours, not through a long cold night.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

from grower import fuels, network, sky, vaporisation
from grower.house import House
from grower.units import W_PER_BTU_H

#: heater output over the design heat loss (common practice, no source: sizing methods
#: add 10–25 % for pick-up after a setback, leakage as the cover ages, dirty burners)
SAFETY_FACTOR = 1.2
#: unit-heater nameplate inputs offered by makers for gas-fired unit heaters [Btu/h]
#: (common practice, no source: 30,000–400,000 in these steps)
UNIT_SIZES_BTU_H = (
    30_000,
    45_000,
    60_000,
    75_000,
    100_000,
    125_000,
    150_000,
    175_000,
    200_000,
    250_000,
    300_000,
    350_000,
    400_000,
)
#: electric heater sizes [kW] (common practice, no source)
ELECTRIC_SIZES_KW = (1.5, 3.0, 4.0, 5.0, 7.5, 10.0, 15.0, 20.0, 25.0, 30.0, 40.0, 50.0)


@dataclass(frozen=True)
class UnitChoice:
    """n units of one size: each unit's input and output, and what one alone covers."""

    count: int
    input_each_w: float
    output_each_w: float
    one_down_share: float  # share of the design heat loss left when one unit fails


@dataclass(frozen=True)
class SizeResult:
    house_name: str
    house_path: str
    design_outside_c: float
    hold_c: float
    hold_basis: str
    wind_m_s: float
    sky_c: float
    effective_outside_c: float
    k_w_per_k: float
    k_conduction_w_per_k: float
    k_sky_w_per_k: float
    heat_loss_w: float
    conduction_loss_w: float
    sky_loss_w: float
    curtain_saving_w: float | None  # less heat with the curtain drawn, if there is one
    safety_factor: float
    recommended_output_w: float
    efficiency: float
    appliance: str
    recommended_input_w: float
    fuel: fuels.Fuel
    fuel_per_hour: fuels.FuelRate
    units: tuple[UnitChoice, ...]
    combustion_air_in2: dict[str, float]
    installed_output_w: float
    installed_holds: bool | None
    cautions: tuple[str, ...]
    notes: tuple[str, ...]
    vapour: Any = None  # grower.vaporisation.VapourCheck for the recommended input


def design_heat_loss(
    house: House,
    design_outside_c: float,
    hold_c: float,
    wind_m_s: float,
    *,
    curtain_closed: bool,
    k_ratio: float = 1.0,
) -> tuple[network.Conductances, float, float, float]:
    """K, T_sky, T_eff and Q = K·(T_hold − T_eff) at the design condition.

    `k_ratio` scales every conductance (a calibration's K_fit / K_geometry).
    """
    t_sky = float(sky.swinbank_sky_temperature(design_outside_c))
    cond = network.conductances(
        house,
        wind_m_s=wind_m_s,
        curtain_closed=curtain_closed,
        air_temp_c=design_outside_c,
        mean_radiant_temp_c=(hold_c + t_sky) / 2.0,
    )
    if k_ratio != 1.0:
        cond = replace(
            cond,
            surfaces=tuple(
                replace(x, u_w_m2k=x.u_w_m2k * k_ratio, ua_w_per_k=x.ua_w_per_k * k_ratio)
                for x in cond.surfaces
            ),
            cover_w_per_k=cond.cover_w_per_k * k_ratio,
            infiltration_w_per_k=cond.infiltration_w_per_k * k_ratio,
            perimeter_w_per_k=cond.perimeter_w_per_k * k_ratio,
            sky_w_per_k=cond.sky_w_per_k * k_ratio,
        )
    t_eff = float(
        network.effective_outside(
            cond.conduction_w_per_k, cond.sky_w_per_k, design_outside_c, t_sky
        )
    )
    return cond, t_sky, t_eff, cond.total_w_per_k * (hold_c - t_eff)


def combustion_air_openings(input_w: float) -> dict[str, float]:
    """Free area of fresh-air openings for a combustion heater of input `input_w` [in²].

    References
    ----------
    Purdue Extension, "Greenhouse heating checklist": 1 in² per 1,000 Btu/h of input.
    International Fuel Gas Code §304 / NFPA 54: 1 in² per 4,000 Btu/h from outdoors by
    vertical ducts, per 2,000 by horizontal ducts, per 1,000 from indoor spaces.
    """
    btu_h = input_w / W_PER_BTU_H
    return {
        "rule_of_thumb_in2": btu_h / 1000.0,
        "outdoor_vertical_duct_in2": btu_h / 4000.0,
        "outdoor_horizontal_duct_in2": btu_h / 2000.0,
        "indoor_air_in2": btu_h / 1000.0,
    }


def unit_choices(
    input_w: float, electric: bool, output_per_input: float, loss_w: float
) -> tuple[UnitChoice, ...]:
    """The first three ways to reach `input_w` with n equal units of a common size.

    For each n = 1, 2, 3, …, the smallest common size with n·size ≥ input; n where even
    the largest size is too small is skipped. `one_down_share` is the share of the
    design heat loss the remaining n − 1 units still cover when one fails.
    """
    sizes_w = (
        [kw * 1e3 for kw in ELECTRIC_SIZES_KW]
        if electric
        else [b * W_PER_BTU_H for b in UNIT_SIZES_BTU_H]
    )
    out: list[UnitChoice] = []
    n = 1
    while len(out) < 3 and n <= 12:
        need = input_w / n
        size = next((s for s in sizes_w if s >= need * (1 - 1e-9)), None)
        if size is not None:
            share = (n - 1) * size * output_per_input / loss_w if loss_w > 0 else 1.0
            out.append(UnitChoice(n, size, size * output_per_input, share))
        n += 1
    return tuple(out)


def size(
    house: House,
    *,
    design_outside_c: float,
    hold_c: float,
    hold_basis: str,
    wind_m_s: float,
    fuel_name: str | None = None,
    appliance_name: str | None = None,
    safety_factor: float = SAFETY_FACTOR,
    use_calibration: bool = True,
) -> SizeResult:
    """Size a heater for `house` to hold `hold_c` at `design_outside_c` and `wind_m_s`."""
    from grower.plans import model as hm

    ratio = hm.calibration_ratio(house, use_calibration) or 1.0
    cond, t_sky, t_eff, loss = design_heat_loss(
        house, design_outside_c, hold_c, wind_m_s, curtain_closed=False, k_ratio=ratio
    )
    saving = None
    if house.curtain:
        _, _, _, loss_closed = design_heat_loss(
            house, design_outside_c, hold_c, wind_m_s, curtain_closed=True, k_ratio=ratio
        )
        saving = loss - loss_closed
    loss = max(loss, 0.0)
    source = fuels.heat_source(house, fuel_name, appliance_name)
    fuel, appliance = source.fuel, source.appliance
    output = loss * safety_factor
    inp = output / source.efficiency
    per_hour = fuels.fuel_per_hour(inp, fuel)
    electric = fuel.name == "electricity"
    units = unit_choices(inp, electric, source.efficiency, loss)
    air = {} if electric else combustion_air_openings(inp)
    installed = house.heater_output_w
    notes = [
        "clear night sky at the design temperature (Swinbank 1963, no dew point)",
        "heat stored in soil and water ignored (it helps for hours, not a whole cold night)",
        "U-values and air exchange raised for wind above 15 mph (6.7 m/s)"
        if wind_m_s > network.WIND_REFERENCE_M_S
        else "U-values are handbook winter values; wind at or below 15 mph adds nothing",
    ]
    if house.curtain:
        notes.append("energy curtain taken as open (cautious); drawn, it saves the amount shown")
    if ratio != 1.0:
        notes.append(
            f"every conductance × {ratio:.2f}: the house file's [calibration] (grower fit) "
            "against the geometry's K on a calm clear night"
        )
    elif house.calibration and not use_calibration:
        notes.append("the house file's [calibration] is ignored (--no-calibration)")
    return SizeResult(
        house_name=house.name,
        house_path=house.path,
        design_outside_c=design_outside_c,
        hold_c=hold_c,
        hold_basis=hold_basis,
        wind_m_s=wind_m_s,
        sky_c=t_sky,
        effective_outside_c=t_eff,
        k_w_per_k=cond.total_w_per_k,
        k_conduction_w_per_k=cond.conduction_w_per_k,
        k_sky_w_per_k=cond.sky_w_per_k,
        heat_loss_w=loss,
        conduction_loss_w=max(cond.conduction_w_per_k * (hold_c - design_outside_c), 0.0),
        sky_loss_w=max(cond.sky_w_per_k * (hold_c - t_sky), 0.0),
        curtain_saving_w=saving,
        safety_factor=safety_factor,
        recommended_output_w=output,
        efficiency=source.efficiency,
        appliance=appliance.label,
        recommended_input_w=inp,
        fuel=fuel,
        fuel_per_hour=per_hour,
        units=units,
        combustion_air_in2=air,
        installed_output_w=installed,
        installed_holds=(installed >= loss) if house.heaters else None,
        cautions=fuels.cautions(fuel, appliance, inp),
        notes=tuple(notes),
        vapour=vaporisation.house_check(
            house, replace(source, input_w=inp), design_outside_c, design_fill_pct=30.0
        ),
    )
