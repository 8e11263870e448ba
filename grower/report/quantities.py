"""The printed quantities of the text reports, in one unit system each.

The numbers `tonight`, `house`, `stock` and `size` print with these units go through one
of these, so their report lines are either all SI (kW, kWh, W/K, MJ/K, L) or all US
customary (Btu/h, Btu, Btu/h·°F, Btu/°F, gal); temperatures and their differences are
`grower.units.show_temperature*`. (The plans' assumption notes are still written in
SI.) The SI screens keep the trade's Btu/h beside a heater's kW; the US screens print US
units only.

Factors are the exact definitions in `grower.units` (NIST SP 811, 2008, Appendix B.8):
Btu (IT) = 1055.05585262 J, a kelvin difference = 1.8 °F, US gallon = 3.785411784 L.
Rounding: heaters to the nearest 1,000 Btu/h and 0.1 kW, as the trade quotes them
(common practice, no source).
"""

from __future__ import annotations

from grower.units import J_PER_BTU, W_K_PER_BTU_HF, W_PER_BTU_H, UnitSystem

#: 1 Btu/°F in J/K: a Btu per 5/9 kelvin
J_K_PER_BTU_F = J_PER_BTU * 1.8

#: the US purchase unit a metric purchase unit is shown in, first one the fuel offers
_US_FUEL_UNITS = {"L": ("gal",), "kg": ("lb",), "m3": ("therm", "ft3"), "GJ": ("therm",)}
#: the metric purchase unit a US one is shown in on an SI screen (a metric house with no
#: [stock] unit would otherwise see gallons and therms, the fuel table's defaults)
_SI_FUEL_UNITS = {
    "gal": ("L",),
    "lb": ("kg",),
    "ton": ("tonne",),
    "therm": ("m3", "GJ"),
    "ccf": ("m3",),
    "ft3": ("m3",),
}
#: how a purchase unit is written on a screen
_SHOWN = {"m3": "m³", "ft3": "ft³"}


def power_text(watts: float, system: UnitSystem, *, with_btu: bool = True) -> str:
    """A heater's power: "47.1 kW (161,000 Btu/h)" in SI ("47.1 kW" without `with_btu`),
    "161,000 Btu/h" in US units.

    Rounded as the trade quotes heaters: to 0.1 kW and to the nearest 1,000 Btu/h
    (common practice, no source).
    """
    btu = f"{round(watts / W_PER_BTU_H, -3):,.0f} Btu/h"
    if system == "us":
        return btu
    kw = f"{watts / 1e3:,.1f} kW"
    return f"{kw} ({btu})" if with_btu else kw


def energy_text(joules: float, system: UnitSystem) -> str:
    """Heat over a night or a season: "136 kWh" in SI, "464,000 Btu" (nearest 1,000) in US."""
    if system == "us":
        return f"{round(joules / J_PER_BTU, -3):,.0f} Btu"
    return f"{joules / 3.6e6:,.0f} kWh"


def conductance_text(w_per_k: float, system: UnitSystem) -> str:
    """A conductance K or U·A: "1,587 W/K" in SI, "3,008 Btu/h·°F" in US units."""
    if system == "us":
        return f"{w_per_k / W_K_PER_BTU_HF:,.0f} Btu/h·°F"
    return f"{w_per_k:,.0f} W/K"


def capacity_text(j_per_k: float, system: UnitSystem, digits: int = 1) -> str:
    """A heat capacity C: "93.8 MJ/K" in SI, "49,392 Btu/°F" in US units."""
    return f"{capacity_value(j_per_k, system, digits)} {capacity_unit(system)}"


def capacity_value(j_per_k: float, system: UnitSystem, digits: int = 1) -> str:
    """The number of `capacity_text` alone (MJ/K to `digits` places, or whole Btu/°F)."""
    if system == "us":
        return f"{j_per_k / J_K_PER_BTU_F:,.0f}"
    return f"{j_per_k / 1e6:,.{digits}f}"


def capacity_unit(system: UnitSystem) -> str:
    return "Btu/°F" if system == "us" else "MJ/K"


def fuel_text(
    amount: float, unit: str, fuel: str, system: UnitSystem, digits: int = 1, *, keep: bool = False
) -> str:
    """Fuel `amount` in purchase unit `unit` of `fuel`, in the screen's system: in US units
    a metric purchase unit becomes the fuel's US one (L → gal, kg → lb, m³ → therm,
    GJ → therm), in SI a US one the metric one (gal → L, lb → kg, ton → tonne, therm,
    ccf and ft³ → m³), through the fuel table's heating values, so the energy is the same.
    Units of both systems (kWh, MJ), and any unit with `keep` (one the user asked for),
    stay as they are."""
    value, shown = fuel_value(amount, unit, fuel, system, keep=keep)
    return f"{value:,.{digits}f} {shown}"


def fuel_value(
    amount: float, unit: str, fuel: str, system: UnitSystem, *, keep: bool = False
) -> tuple[float, str]:
    """(amount, unit as written) of `fuel_text`, the number unrounded."""
    other = () if keep else (_US_FUEL_UNITS if system == "us" else _SI_FUEL_UNITS).get(unit, ())
    if other:
        from grower import fuels

        f = fuels.get_fuel(fuel)
        offered = {pu.name: pu for pu in f.units}
        for name in other:
            if name in offered:
                j_per_unit = f.purchase_unit(unit).j_per_unit
                amount, unit = float(amount) * j_per_unit / offered[name].j_per_unit, name
                break
    return float(amount), _SHOWN.get(unit, unit)


def chance_text(count: int, total: int) -> str:
    """A share of `total` members as a whole per cent: "35 %".

    None of them, or all, is not said as 0 % or 100 %: the members cannot show a chance
    much smaller than 3/total (the rule of three: with none of n members, the 95 % upper
    bound is about 3/n — Hanley & Lippman-Hand 1983, *JAMA* 249:1743, from memory), so
    "under 1 %" (300 members) or "under 10 %" (31), and "over 99 %" or "over 90 %".
    Shares between round to the whole per cent, "under 1 %" and "over 99 %" at the ends.
    """
    import math

    if total < 1 or not 0 <= count <= total:
        raise ValueError("count must be within 0…total, total >= 1")
    bound = max(1, math.ceil(300 / total))
    if count == 0:
        return f"under {bound} %"
    if count == total:
        return f"over {100 - bound} %"
    p = 100.0 * count / total
    if p < 1:
        return "under 1 %"
    if p > 99:
        return "over 99 %"
    return f"{p:.0f} %"
