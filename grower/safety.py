"""Safety cautions for heating a house: combustion air, venting, CO, storage, power.

Advice here can hurt someone if it is wrong or missing: the cautions name their sources
where there is one (or say "common practice"), and the last one defers to local codes
and licensed installers. The fuel and the appliance come from `grower.fuels`.

References
----------
Purdue Extension, "Greenhouse heating checklist" (combustion air). International Fuel
Gas Code 304 / NFPA 54 (combustion air, gas piping). OSHA and NIOSH carbon monoxide
limits. Ohio State greenhouse guidance (the 2-3-10 chimney rule). ANSI Z83.7 and UW
Extension A3907-02 (unvented heaters). University of Arkansas greenhouse management
text (ethylene and other gases that harm plants). NFPA 58 and OSHA 29 CFR 1910.110
(LP-gas containers and their separation from buildings).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from grower.units import W_PER_BTU_H, Note

if TYPE_CHECKING:
    from grower.fuels import Appliance, Fuel

#: square metres per square inch [m² in-2], exact (1 in = 0.0254 m)
M2_PER_IN2 = 0.0254**2


#: supply voltages the electrical caution gives the current at [V]: single-phase and
#: three-phase line to line, the usual North American ones (120/240 V split phase, 208 V
#: and 480 V three-phase) and the IEC nominal ones (230 V, 400 V: IEC 60038, from memory)
US_VOLTS = {"single": (240.0, 120.0), "three": (208.0, 480.0)}
IEC_VOLTS = {"single": (230.0,), "three": (400.0,)}
#: the US code's continuous-load factor: branch-circuit conductors and the breaker are
#: sized at 125 % of a continuous load (NEC 210.19(A)(1) and 210.20(A); fixed electric
#: space heating is a continuous load, NEC 424.4(B): from memory), the "80 % rule"
NEC_CONTINUOUS = 1.25


def amps(power_w: float, volts: float, phases: int = 1) -> float:
    """Current [A] a resistance heater of `power_w` [W] draws at `volts` [V]: single-phase
    I = P / V; balanced three-phase I = P / (√3 · V_LL) with V_LL the line-to-line
    voltage, per line. Unity power factor (a resistance heater). Common practice, no
    source (the textbook relation P = √3 · V_LL · I · cos φ)."""
    if phases == 1:
        return power_w / volts
    if phases == 3:
        return power_w / (3.0**0.5 * volts)
    raise ValueError("phases must be 1 or 3")


def electrical_load(input_w: float, example: bool = False) -> Note:
    """The electrical caution for an electric heater of `input_w` [W]: its current single-
    and three-phase at the usual voltages; on a US screen the circuit rating the NEC's
    125 % continuous-load rule asks for, on a metric one a pointer to IEC 60364 and the
    national rules; both defer to a licensed electrician and local code. `example`: no
    heater size is known, `input_w` is an example."""

    def a(volts: float, phases: int, factor: float = 1.0) -> str:
        return f"{amps(input_w, volts, phases) * factor:,.1f} A"

    (v1, v1b), (v3a, v3b) = US_VOLTS["single"], US_VOLTS["three"]
    (iec1,), (iec3,) = IEC_VOLTS["single"], IEC_VOLTS["three"]
    head = (
        "Electrical load: for example, {p} of electric heat draws"
        if example
        else ("Electrical load: {p} of electric heat draws")
    )
    three = "three-phase (I = P ÷ (√3 · V between lines), per line)"
    metric = (
        f"{head} {a(iec1, 1)} on one {iec1:.0f} V phase, or {a(iec3, 3)} at {iec3:.0f} V "
        f"{three}. A heater is a continuous load: size the circuit for continuous duty as "
        "IEC 60364 and your national wiring rules require, and have a licensed electrician "
        "check the circuit and the supply against local code."
    )
    us = (
        f"{head} {a(v1, 1)} at {v1:.0f} V ({a(v1b, 1)} at {v1b:.0f} V) single-phase, or "
        f"{a(v3a, 3)} at {v3a:.0f} V and {a(v3b, 3)} at {v3b:.0f} V {three}. A heater is a "
        "continuous load: the NEC sizes its conductors and breaker at 125 % of it (NEC "
        "210.19(A), 210.20(A): the 80 % rule), a circuit rated for at least "
        f"{a(v1, 1, NEC_CONTINUOUS)} at {v1:.0f} V, {a(v3a, 3, NEC_CONTINUOUS)} at {v3a:.0f} V "
        f"or {a(v3b, 3, NEC_CONTINUOUS)} at {v3b:.0f} V three-phase. Have a licensed "
        "electrician check the circuit and the service against local code."
    )
    return Note(metric, us_template=us, p=("power", float(input_w)))


def cautions(
    fuel: str | Fuel,
    appliance: str | Appliance | None = None,
    input_w: float | None = None,
    *,
    short: bool = False,
) -> tuple[str, ...]:
    """Safety cautions for heating with `fuel` on `appliance` at `input_w` [W].

    Each names its source; the last defers to local codes and licensed installers.
    ``short``: only those that apply on the night itself (combustion air without the
    fuel gas code's duct sizes, an unvented heater, CO, electrical load, power cuts); the
    installation's (venting, crop damage from flue gas, storage, supply, codes) are left
    to `grower size`, and the last line says so.
    """
    from grower.fuels import appliance_for, get_fuel  # grower.fuels imports this module

    fuel = get_fuel(fuel)
    appliance = appliance_for(fuel, appliance)
    btu_h = None if input_w is None else float(input_w) / W_PER_BTU_H
    out: list[str] = []
    if fuel.combustion:
        if btu_h is not None:
            # Purdue Extension, "Greenhouse heating checklist": 1 in² inlet per 1,000 Btu/h
            # (22 cm² per kW: 6.4516 cm² / 0.29307 kW)
            inlet = btu_h / 1000.0 * M2_PER_IN2
            metric = (
                "Combustion air: a heater of {input} input needs a fresh-air inlet of at least {inlet}, "
                "22 cm² per kW of input (1 in² per 1,000 Btu/h: Purdue Extension, Greenhouse "
                "heating checklist)."
            )
            us = (
                "Combustion air: a heater of {input} input needs a fresh-air inlet of at least {inlet}, "
                "1 in² per 1,000 Btu/h of input (Purdue Extension, Greenhouse heating "
                "checklist)."
            )
            values = {"input": ("power", float(input_w)), "inlet": ("area", inlet)}
            if fuel.name in ("propane", "natural-gas") and not short:
                # IFGC 304 / NFPA 54: 1 in² per 4,000 (outdoor air, vertical ducts),
                # 2,000 (horizontal ducts), 1,000 Btu/h (air from indoors).
                code = (
                    " The fuel gas code (IFGC 304 / NFPA 54) asks {vertical} from outdoors by "
                    "vertical ducts, {horizontal} by horizontal ducts, or {indoor} of indoor air."
                )
                metric, us = metric + code, us + code
                values |= {
                    "vertical": ("area", inlet / 4.0),
                    "horizontal": ("area", inlet / 2.0),
                    "indoor": ("area", inlet),
                }
            text = Note(metric, us_template=us, **values)
            out.append(text)
        else:
            out.append(
                "Combustion air: give 1 in² of fresh-air inlet per 1,000 Btu/h of heater "
                "input (Purdue Extension, Greenhouse heating checklist)."
            )
        if appliance.vented:
            # (the installation's: left to `grower size` in the short set)
            # Ohio State greenhouse guidance: the 2-3-10 rule for natural-draft chimneys.
            if not short:
                us = (
                    "Venting: take flue gases outdoors through a listed vent or chimney; a "
                    "natural-draft chimney ends at least 3 ft above the roof and 2 ft above "
                    "anything within 10 ft (the 2-3-10 rule, Ohio State greenhouse guidance)."
                )
                # the rule is in feet; the metric wording rounds them (1 ft = 0.3048 m)
                metric = (
                    "Venting: take flue gases outdoors through a listed vent or chimney; a "
                    "natural-draft chimney ends at least 0.9 m above the roof and 0.6 m above "
                    "anything within 3 m (the 2-3-10 rule in feet, Ohio State greenhouse "
                    "guidance)."
                )
                out.append(Note(metric, us_template=us))
        else:
            # ANSI Z83.7 construction heaters; UW Extension A3907-02.
            out.append(
                "Unvented heater: every combustion product and its water vapour stays in the "
                "house (ANSI Z83.7 heaters are built that way) — an emergency measure only, "
                "with the air inlet above kept open."
            )
        # OSHA PEL 50 ppm (8-h TWA); NIOSH REL 35 ppm, ceiling 200 ppm.
        out.append(
            "Carbon monoxide: fit CO alarms where people work and test them before a cold "
            "night. OSHA's limit is 50 ppm over 8 h; NIOSH recommends 35 ppm with a 200 ppm "
            "ceiling. If an alarm sounds, get out and ventilate."
        )
        # Univ. of Arkansas greenhouse management text: ethylene from 0.05 ppm (R);
        # SO2 from 0.5 ppm and fuel gas from 50 ppm (secondary copies).
        gas = {
            "propane": " Leaked fuel gas harms them from about 50 ppm.",
            "natural-gas": " Leaked fuel gas harms them from about 50 ppm.",
            "heating-oil": " Sulfur dioxide harms them from about 0.5 ppm.",
            "kerosene": " Sulfur dioxide harms them from about 0.5 ppm.",
        }.get(fuel.name, "")
        if not short:
            out.append(
                "Crop damage: a blocked flue, a cracked heat exchanger, back-draft or "
                "incomplete combustion puts ethylene in the house, which damages plants from "
                f"0.05 ppm (University of Arkansas greenhouse management text).{gas}"
            )
    storage = {
        # NFPA 58; OSHA 29 CFR 1910.110 tank separation from buildings.
        # the rule is in feet and US gallons; the metric wording rounds them (1 ft =
        # 0.3048 m, 1 gal = 3.785 L)
        "propane": Note(
            "Fuel storage: LP-gas tanks and cylinders follow NFPA 58; OSHA 29 CFR 1910.110 "
            "keeps tanks 3 m from buildings up to 1,900 L water capacity and 7.6 m "
            "for 1,900–7,600 L. Keep cylinders outdoors and upright (common "
            "practice).",
            us_template="Fuel storage: LP-gas tanks and cylinders follow NFPA 58; OSHA 29 CFR "
            "1910.110 keeps tanks 10 ft from buildings up to 500 gal water capacity and 25 ft "
            "for 501–2,000 gal. Keep cylinders outdoors and upright (common practice).",
        ),
        # NFPA 54 / ANSI Z223.1 and the IFGC.
        "natural-gas": (
            "Gas piping: piping, regulators and appliance connections follow NFPA 54 / ANSI "
            "Z223.1 (or the IFGC) and are leak-tested by a licensed gas fitter."
        ),
        # common practice, no source
        "heating-oil": (
            "Fuel storage: keep oil in a listed tank away from the heater, as the local fire "
            "code requires, and check it for leaks (common practice)."
        ),
        "kerosene": (
            "Fuel storage: keep kerosene in a listed tank or approved cans away from the "
            "heater, as the local fire code requires (common practice)."
        ),
        "wood-pellets": (
            "Fuel storage: keep pellets dry and away from the stove; empty ash into a metal "
            "container with a lid (common practice)."
        ),
    }.get(fuel.name)
    if storage and not short:
        out.append(storage)
    if fuel.name == "propane" and not short:
        # the vapour check itself is grower.vaporisation (the trade's approximate tables)
        text = (
            "Cold weather: a propane tank vaporises less gas as it gets colder and emptier; "
            "grower's vapour check uses the trade's approximate tables: have the supplier "
            "confirm the tank can supply {need} on the coldest night."
        )
        if input_w is None:
            out.append(text.format(need="the heater's input"))
        else:
            out.append(Note(text, need=("power", float(input_w))))
    if fuel.name == "electricity":
        out.append(electrical_load(5000.0 if input_w is None else float(input_w), input_w is None))
        out.append(
            "Power cuts: an electric heater is no backup when the grid fails unless a "
            "generator, sized for it and connected through a transfer switch, carries it."
        )
    if short:
        out.append(
            "The installation's cautions (venting, fuel storage and supply, codes) are in "
            "`grower size`; follow local codes and have a licensed installer fit and test "
            "any heater."
        )
        return tuple(out)
    out.append(
        "Codes: follow local building, fire and fuel codes and the maker's instructions; "
        "have a licensed installer fit, vent and test any heater. These are reminders, not "
        "a design."
    )
    return tuple(out)
