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

from grower import fuels, network, safety, sky, vaporisation
from grower.house import House
from grower.units import M_S_PER_MPH, W_PER_BTU_H, Note

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
    heat_loss_w: float  # the design heat loss: handbook + wind + sky allowances
    handbook_loss_w: float  # the trade's figure (tables' U, air exchange, perimeter)
    wind_allowance_w: float  # the design wind against the tables' 15 mph (may be < 0)
    sky_allowance_w: float  # the clear sky's excess below the outside air
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


@dataclass(frozen=True)
class DesignLoss:
    """The steady heat loss at the design condition [W], and its parts."""

    conductances: network.Conductances
    sky_c: float
    effective_outside_c: float
    handbook_w: float  # Σ U·A·ΔT (tables as published) + air exchange + perimeter
    wind_w: float  # what the design wind adds to (or takes from) the handbook figure
    sky_w: float  # what the clear sky adds: K_s·(T_out − T_sky)
    k_ratio: float

    @property
    def total_w(self) -> float:
        return self.handbook_w + self.wind_w + self.sky_w


def design_heat_loss(
    house: House,
    design_outside_c: float,
    hold_c: float,
    wind_m_s: float,
    *,
    curtain_closed: bool,
    k_ratio: float = 1.0,
) -> DesignLoss:
    """Q = K_c·(T_hold − T_out) + K_s·(T_out − T_sky) at the design condition.

    The steady state of the two-node network with the deep ground left out (it helps for
    hours, not through a long cold night): the trade's conductance at the design wind
    times the difference to outside air, plus the clear sky's excess below the outside
    air (see `grower.network`). `k_ratio` scales every conductance (a calibration).
    """
    t_sky = float(sky.swinbank_sky_temperature(design_outside_c))
    cond = network.conductances(
        house,
        wind_m_s=wind_m_s,
        curtain_closed=curtain_closed,
        mean_radiant_temp_c=(hold_c + t_sky) / 2.0,
        cover_temp_c=design_outside_c,
    )
    dt = hold_c - design_outside_c
    k_c, k_s = cond.conduction_w_per_k * k_ratio, cond.sky_w_per_k * k_ratio
    handbook = network.handbook_conductance(house) * dt
    t_eff = float(network.effective_outside(k_c - k_s, k_s, design_outside_c, t_sky))
    return DesignLoss(
        conductances=cond,
        sky_c=t_sky,
        effective_outside_c=t_eff,
        handbook_w=handbook,
        wind_w=k_c * dt - handbook,
        sky_w=k_s * (design_outside_c - t_sky),
        k_ratio=k_ratio,
    )


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


def sizing_ratio(fitted_ratio: float) -> float:
    """The calibration factor a heater is sized with: a fit may raise K, never lower it.

    A fitted K below the geometry's most often means the record's nights were cloudier
    (or its sky share smaller) than the fit assumed, not a tighter house; applied to the
    design night it undersizes the heater, the unsafe direction. Sizing therefore keeps
    the geometry's K in that case and says so (common practice, no source: size for the
    worse of two estimates).
    """
    return max(float(fitted_ratio), 1.0)


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

    fitted_ratio = hm.calibration_ratio(house, use_calibration) or 1.0
    ratio = sizing_ratio(fitted_ratio)
    design = design_heat_loss(
        house, design_outside_c, hold_c, wind_m_s, curtain_closed=False, k_ratio=ratio
    )
    cond = design.conductances
    saving = None
    if house.curtain:
        closed = design_heat_loss(
            house, design_outside_c, hold_c, wind_m_s, curtain_closed=True, k_ratio=ratio
        )
        saving = design.total_w - closed.total_w
    loss = max(design.total_w, 0.0)
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
        "the handbook figure is Σ U·A·ΔT with the tables' U-values (which hold at a 15 mph "
        "wind) + air exchange + perimeter, as heating bulletins size it",
        "clear night sky at the design temperature (Swinbank 1963, no dew point): the "
        "U-values already count radiation to surroundings at the outside air temperature; "
        "grower adds only the sky's excess below it",
        "heat stored in soil and water and heat from the deep ground ignored (they help for "
        "hours, not a whole cold night)",
        Note(
            "outside films at the design wind: stronger wind than {tables} adds, calmer takes "
            "away; air exchange raised above {tables}",
            tables=("speed", 15 * M_S_PER_MPH, 1),
            us_template="outside films at the design wind: stronger wind than 15 mph adds, "
            "calmer takes away; air exchange raised above 15 mph",
        ),
    ]
    if house.curtain:
        notes.append("energy curtain taken as open (cautious); drawn, it saves the amount shown")
    if ratio != 1.0:
        notes.append(
            f"every conductance × {ratio:.2f}: the house file's [calibration] (grower fit) "
            "against the geometry's K on a calm clear night"
        )
    elif fitted_ratio < 1.0:
        notes.append(
            f"the house file's [calibration] K is × {fitted_ratio:.2f} the geometry's on a "
            "calm clear night; "
            "a heater is not sized below the handbook figure on a fit (the fit cannot yet "
            "tell conduction from the sky's share on a record without cloud): the "
            "geometry's K is used"
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
        sky_c=design.sky_c,
        effective_outside_c=design.effective_outside_c,
        k_w_per_k=cond.total_w_per_k * ratio,
        k_conduction_w_per_k=cond.outside_w_per_k * ratio,
        k_sky_w_per_k=cond.sky_w_per_k * ratio,
        heat_loss_w=loss,
        handbook_loss_w=max(design.handbook_w, 0.0),
        wind_allowance_w=design.wind_w,
        sky_allowance_w=max(design.sky_w, 0.0),
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
        cautions=safety.cautions(fuel, appliance, inp),
        notes=tuple(notes),
        vapour=vaporisation.house_check(
            house, replace(source, input_w=inp), design_outside_c, design_fill_pct=30.0
        ),
    )
