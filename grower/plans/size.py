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
    heat_loss_w: float  # the design heat loss: handbook + wind + calibration + sky
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
    #: a format-2 calibration's factors as fitted and as sized with (None: the geometry)
    calibration: dict[str, Any] | None = None
    #: the house file's [calibration] not used (an older format): the line, also in
    #: `notes`, that the report shows as a warning
    calibration_warning: str | None = None
    vapour: Any = None  # grower.vaporisation.VapourCheck for the recommended input
    #: what a calibration's conductance (outside air and sky together, at T_hold − T_out)
    #: adds to the geometry's at the design condition [W]; its sky depression is in
    #: `sky_allowance_w`
    calibration_allowance_w: float = 0.0


@dataclass(frozen=True)
class DesignLoss:
    """The steady heat loss at the design condition [W], and its parts."""

    conductances: network.Conductances
    sky_c: float
    effective_outside_c: float
    handbook_w: float  # Σ U·A·ΔT (tables as published) + air exchange + perimeter
    wind_w: float  # what the design wind adds to (or takes from) the handbook figure
    sky_w: float  # what the clear sky adds: K_s·(T_out − T_sky)
    conduction_factor: float  # on K_c − K_s, the conductance to the outside air
    sky_factor: float  # on K_s, the sky part

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
    conduction_factor: float = 1.0,
    sky_factor: float = 1.0,
) -> DesignLoss:
    """Q = K_c·(T_hold − T_out) + K_s·(T_out − T_sky) at the design condition.

    The steady state of the two-node network with the deep ground left out (it helps for
    hours, not through a long cold night): the trade's conductance at the design wind
    times the difference to outside air, plus the clear sky's excess below the outside
    air (see `grower.network`). A calibration's factors (`grower.plans.model.Calibration`)
    scale the two parts the fit told apart: `conduction_factor` the conductance to the
    outside air K_c − K_s, `sky_factor` the sky part K_s, so that
    Q = f_k·(K_c − K_s)·(T_hold − T_out) + f_s·K_s·(T_hold − T_sky).
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
    k_s = cond.sky_w_per_k * sky_factor
    k_o = cond.outside_w_per_k * conduction_factor
    k_c = k_o + k_s
    handbook = network.handbook_conductance(house) * dt
    t_eff = float(network.effective_outside(k_o, k_s, design_outside_c, t_sky))
    return DesignLoss(
        conductances=cond,
        sky_c=t_sky,
        effective_outside_c=t_eff,
        handbook_w=handbook,
        wind_w=k_c * dt - handbook,
        sky_w=k_s * (design_outside_c - t_sky),
        conduction_factor=conduction_factor,
        sky_factor=sky_factor,
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


def sizing_factors(
    conduction_factor: float,
    sky_factor: float,
    k_outside_w_per_k: float | None = None,
    k_sky_w_per_k: float | None = None,
) -> tuple[float, float]:
    """The calibration factors a heater is sized with: a fit may raise the loss, never
    lower it below the geometry's.

    The design loss has two parts (`design_heat_loss`): the conductance to the outside
    air and to the sky, K_o + K_s, times T_hold − T_out; and the clear sky's depression
    below the outside air, K_s·(T_out − T_sky). Each is kept at least the geometry's:

    - the *conductance*: the fitted f_k·K_o + f_s·K_s, at least K_o + K_s. The record
      fixes this sum well and its split less well (the two are fitted against each
      other, so one low part is often the other's share: a house whose sky part comes
      out low has its sky's exchange in the conduction to the outside air). A low sum
      most often means heat the fit did not see (a warm soil), not a tighter house;
    - the *sky's depression*: max(f_s, 1)·K_s·(T_out − T_sky). A low fitted sky part
      can be a record under cloud or condensation that a clear design night will not
      have.

    Flooring the sky factor alone would add the floored share's conductance a second
    time on top of the conduction that already holds it (a plain house with all its K
    to the outside air: 369 W/K × 25 K = 9.2 kW of loss counted twice at −20 °C; see
    tests/test_jobs.py). Returned as the pair (f_k', f_s') on K_o and K_s that gives
    both parts, f_s' = max(f_s, 1) and f_k' = (max(f_k·K_o + f_s·K_s, K_o + K_s) −
    f_s'·K_s) / K_o, for the design condition's `k_outside_w_per_k` and `k_sky_w_per_k`
    (without them: each factor floored at 1, the cruder rule, never below it either).
    With both parts at least the geometry's, the heater is never below the geometry's
    figure (common practice, no source: size for the worse of two estimates).
    """
    fk, fs = float(conduction_factor), float(sky_factor)
    fs_sized = max(fs, 1.0)
    if not k_outside_w_per_k or k_sky_w_per_k is None:
        return max(fk, 1.0), fs_sized
    k_o, k_s = float(k_outside_w_per_k), float(k_sky_w_per_k)
    if fs >= 1.0 and fk * k_o + fs * k_s >= k_o + k_s:
        return fk, fs  # both parts at least the geometry's as fitted
    k_c = max(fk * k_o + fs * k_s, k_o + k_s)
    return (k_c - fs_sized * k_s) / k_o, fs_sized


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

    cal = hm.calibration_of(house, use_calibration)
    fitted = (cal.conduction_factor, cal.sky_factor) if cal else (1.0, 1.0)

    def sized(curtain_closed: bool, geo: DesignLoss | None = None) -> DesignLoss:
        if geo is None:
            geo = design_heat_loss(
                house, design_outside_c, hold_c, wind_m_s, curtain_closed=curtain_closed
            )
        cond = geo.conductances
        fk, fs = sizing_factors(*fitted, cond.outside_w_per_k, cond.sky_w_per_k)
        return design_heat_loss(
            house,
            design_outside_c,
            hold_c,
            wind_m_s,
            curtain_closed=curtain_closed,
            conduction_factor=fk,
            sky_factor=fs,
        )

    geometry = design_heat_loss(house, design_outside_c, hold_c, wind_m_s, curtain_closed=False)
    design = sized(False, geometry)
    fk, fs = design.conduction_factor, design.sky_factor
    cond = design.conductances
    saving = None
    if house.curtain:
        saving = design.total_w - sized(True).total_w
    loss = max(design.total_w, 0.0)
    source = fuels.heat_source(house, fuel_name, appliance_name)
    fuel, appliance = source.fuel, source.appliance
    output = loss * safety_factor
    inp = output / source.efficiency
    # in the unit the grower buys the fuel in (the rule tonight and stock use too)
    per_hour = fuels.fuel_per_hour(inp, fuel, fuels.bought_unit(house, fuel))
    electric = fuel.name == "electricity"
    units = unit_choices(inp, electric, source.efficiency, loss)
    air = {} if electric else combustion_air_openings(inp)
    installed = house.heater_output_w
    notes = [
        Note(
            "the handbook figure is Σ U·A·ΔT with the tables' U-values (which hold at a "
            "{wind} wind) + air exchange + perimeter, as heating bulletins size it",
            us_template="the handbook figure is Σ U·A·ΔT with the tables' U-values (which hold "
            "at a 15 mph wind) + air exchange + perimeter, as heating bulletins size it",
            wind=("speed", 15 * M_S_PER_MPH, 1),
        ),
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
    notes.extend(_calibration_notes(house, cal, fitted, (fk, fs), use_calibration))
    return SizeResult(
        house_name=house.name,
        house_path=house.path,
        design_outside_c=design_outside_c,
        hold_c=hold_c,
        hold_basis=hold_basis,
        wind_m_s=wind_m_s,
        sky_c=design.sky_c,
        effective_outside_c=design.effective_outside_c,
        k_w_per_k=cond.outside_w_per_k * fk + cond.sky_w_per_k * fs,
        k_conduction_w_per_k=cond.outside_w_per_k * fk,
        k_sky_w_per_k=cond.sky_w_per_k * fs,
        heat_loss_w=loss,
        handbook_loss_w=max(design.handbook_w, 0.0),
        wind_allowance_w=geometry.wind_w,
        calibration_allowance_w=design.wind_w - geometry.wind_w,
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
        calibration=None
        if cal is None
        else {
            "model": cal.model,
            "quality": cal.quality,
            "fitted": {"conduction_factor": fitted[0], "sky_factor": fitted[1]},
            "applied": {"conduction_factor": fk, "sky_factor": fs},
        },
        calibration_warning=hm.calibration_warning(house, use_calibration),
        vapour=vaporisation.house_check(
            house, replace(source, input_w=inp), design_outside_c, design_fill_pct=30.0
        ),
    )


def _calibration_notes(
    house: House,
    cal,
    fitted: tuple[float, float],
    applied: tuple[float, float],
    use: bool,
) -> list[str]:
    """What `size` made of the house file's [calibration], one line each."""
    from grower.plans import model as hm

    if cal is None:
        note = hm.calibration_note(house, "two-node", use)
        return [note] if note else []
    (fk, fs), (ak, as_) = fitted, applied
    src = ", ".join(str(x) for x in (cal.record, cal.fit_date) if x)
    notes = [
        f"sized with the conduction to outside air × {ak:.2f} and the sky part × {as_:.2f} "
        f"the geometry's, from the house file's [calibration] (grower fit"
        f"{': ' + src if src else ''}; the fit gave × {fk:.2f} and × {fs:.2f})"
    ]
    if fk < 1.0 or fs < 1.0:
        low = [name for name, f in (("conduction", fk), ("sky part", fs)) if f < 1.0]
        verb = "is" if len(low) == 1 else "are"
        notes.append(
            f"a heater is not sized below the handbook figure on a fit: the fitted "
            f"{' and '.join(low)} {verb} below the geometry's, so the conductance to outside "
            "air and sky together and the clear sky's depression are each kept at least the "
            "geometry's (a record's warm soil, cloud or condensation is not the design "
            "night's; a sky part the fit moved into the conduction is not counted twice)"
        )
    if cal.rough:
        notes.append(
            "the calibration is a ROUGH fit (stored with grower fit --keep-rough): the model "
            "missed part of its record"
        )
    return notes
