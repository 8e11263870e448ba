"""Quantities with units, at the edges of the program.

Input files and command-line options may give a number with a unit ("30 ft", "-4 C",
"25F", "150000 BTU/h", "12 mph"); a bare number is SI (for temperatures, °C) — except a
bare command-line temperature, which the commands read in the report's unit system
(`parse_temperature(..., bare="F")`). Units are case-correct: "5 mW" is five milliwatts,
"5 MW" five megawatts, and "5 mw" is refused as either. Inside,
everything is SI: m, m², m³, W, J, kg, s, m/s; absolute temperatures in °C, differences
in K. This module turns text into SI floats and SI floats into display values.

Conversion factors are the exact definitions where one exists:

- foot = 0.3048 m, inch = 0.0254 m (international yard and pound agreement, 1959);
- pound = 0.45359237 kg (same agreement); US gallon = 231 in³ = 3.785411784 L;
- British thermal unit (International Table) = 1055.05585262 J; therm = 100,000 Btu;
- kWh = 3.6 MJ; mile per hour = 0.44704 m/s.

References
----------
NIST Special Publication 811 (2008), *Guide for the Use of the International System of
Units*, Appendix B.8 (factors for units listed alphabetically).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Literal

from grower.errors import InputError

M_PER_FT = 0.3048
M_PER_IN = 0.0254
KG_PER_LB = 0.45359237
M3_PER_GAL = 3.785411784e-3
M3_PER_FT3 = M_PER_FT**3
J_PER_BTU = 1055.05585262
J_PER_THERM = 1.0e5 * J_PER_BTU
J_PER_KWH = 3.6e6
W_PER_BTU_H = J_PER_BTU / 3600.0
#: 1 Btu/(h·ft²·°F) in W/(m²·K) — ≈ 5.678263
W_M2K_PER_BTU_HFT2F = W_PER_BTU_H / M_PER_FT**2 * 1.8
#: 1 Btu/(h·°F) in W/K
W_K_PER_BTU_HF = W_PER_BTU_H * 1.8
#: 1 Btu/(h·ft·°F) in W/(m·K)
W_MK_PER_BTU_HFTF = W_PER_BTU_H / M_PER_FT * 1.8
M_S_PER_MPH = 0.44704

UnitSystem = Literal["metric", "us"]

# kind -> {unit spelling: factor to SI}. Spellings are case-correct: an SI prefix's case
# is its meaning ("mW" is a milliwatt, "MW" a megawatt). Input is matched exactly first,
# then ignoring case only where that cannot change the meaning ("KW", "FT", "MPH"); a
# spelling that could be two units ("mw": mW or MW) is refused with both named.
_FACTORS: dict[str, dict[str, float]] = {
    "length": {
        "m": 1.0,
        "meter": 1.0,
        "meters": 1.0,
        "metre": 1.0,
        "metres": 1.0,
        "cm": 0.01,
        "mm": 0.001,
        "km": 1000.0,
        "ft": M_PER_FT,
        "foot": M_PER_FT,
        "feet": M_PER_FT,
        "'": M_PER_FT,
        "in": M_PER_IN,
        "inch": M_PER_IN,
        "inches": M_PER_IN,
        '"': M_PER_IN,
    },
    "area": {
        "m2": 1.0,
        "m²": 1.0,
        "sqm": 1.0,
        "ft2": M_PER_FT**2,
        "ft²": M_PER_FT**2,
        "sqft": M_PER_FT**2,
    },
    "volume": {
        "m3": 1.0,
        "m³": 1.0,
        "L": 1e-3,
        "l": 1e-3,
        "liter": 1e-3,
        "liters": 1e-3,
        "litre": 1e-3,
        "litres": 1e-3,
        "gal": M3_PER_GAL,
        "gallon": M3_PER_GAL,
        "gallons": M3_PER_GAL,
        "ft3": M3_PER_FT3,
        "ft³": M3_PER_FT3,
        "cuft": M3_PER_FT3,
    },
    "mass": {
        "kg": 1.0,
        "g": 1e-3,
        "t": 1000.0,
        "tonne": 1000.0,
        "lb": KG_PER_LB,
        "lbs": KG_PER_LB,
        "pound": KG_PER_LB,
        "pounds": KG_PER_LB,
    },
    "power": {
        "W": 1.0,
        "mW": 1e-3,
        "kW": 1e3,
        "KW": 1e3,  # a common misspelling of kW: there is no kelvin-watt
        "MW": 1e6,
        "Btu/h": W_PER_BTU_H,
        "Btu/hr": W_PER_BTU_H,
        "Btuh": W_PER_BTU_H,
        "MBH": 1e3 * W_PER_BTU_H,  # the trade's thousand Btu/h (common practice, no source)
        "kBtu/h": 1e3 * W_PER_BTU_H,
    },
    "energy": {
        "J": 1.0,
        "mJ": 1e-3,
        "kJ": 1e3,
        "MJ": 1e6,
        "GJ": 1e9,
        "Wh": 3600.0,
        "mWh": 3.6,
        "kWh": J_PER_KWH,
        "MWh": 1e3 * J_PER_KWH,
        "Btu": J_PER_BTU,
        "therm": J_PER_THERM,
        "therms": J_PER_THERM,
    },
    "speed": {
        "m/s": 1.0,
        "mps": 1.0,
        "km/h": 1 / 3.6,
        "kmh": 1 / 3.6,
        "kph": 1 / 3.6,
        "mph": M_S_PER_MPH,
        "kn": 1852.0 / 3600.0,
        "knot": 1852.0 / 3600.0,
        "knots": 1852.0 / 3600.0,
    },
    "u_value": {
        "W/m2K": 1.0,
        "W/m²K": 1.0,
        "W/m2/K": 1.0,
        "W/(m2K)": 1.0,
        "W/m2·K": 1.0,
        "Btu/hft2F": W_M2K_PER_BTU_HFT2F,
        "Btu/h·ft²·°F": W_M2K_PER_BTU_HFT2F,
        "Btu/(hft2F)": W_M2K_PER_BTU_HFT2F,
    },
    "fraction": {"": 1.0, "%": 0.01, "pct": 0.01, "percent": 0.01},
}

_TEMPERATURE_UNITS = {
    "c": "C",
    "°c": "C",
    "degc": "C",
    "celsius": "C",
    "f": "F",
    "°f": "F",
    "degf": "F",
    "fahrenheit": "F",
    "k": "K",
    "kelvin": "K",
}
_NUMBER = re.compile(r"^\s*([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def f_to_c(temp_f: float) -> float:
    """Fahrenheit to Celsius [°F → °C]."""
    return (temp_f - 32.0) / 1.8


def c_to_f(temp_c: float) -> float:
    """Celsius to Fahrenheit [°C → °F]."""
    return temp_c * 1.8 + 32.0


def _normalise_unit(unit: str) -> str:
    """Fold spellings of one unit together: spaces, ·, *, ^, ², ³, brackets (not case)."""
    unit = unit.replace(" ", "").replace("º", "°")
    for old, new in (("·", ""), ("*", ""), ("^", ""), ("²", "2"), ("³", "3"), ("(", ""), (")", "")):
        unit = unit.replace(old, new)
    return unit


for _table in _FACTORS.values():
    for _unit in list(_table):
        _table.setdefault(_normalise_unit(_unit), _table[_unit])

#: kind -> lower-case spelling -> {factor: a case-correct spelling}
_FOLDED: dict[str, dict[str, dict[float, str]]] = {}
for _kind, _table in _FACTORS.items():
    _fold = _FOLDED.setdefault(_kind, {})
    for _unit, _factor in _table.items():
        _fold.setdefault(_unit.lower(), {}).setdefault(_factor, _unit)


def _factor(kind: str, unit: str, value: object, where: str) -> float | None:
    """SI factor of `unit` (normalised) for `kind`; None when unknown; InputError when
    the spelling could be two units that differ only in case ("mw": mW or MW)."""
    table = _FACTORS[kind]
    if unit in table:
        return table[unit]
    found = _FOLDED[kind].get(unit.lower(), {})
    if len(found) == 1:
        return next(iter(found))
    if len(found) > 1:
        names = " or ".join(f'"{u}"' for u in sorted(found.values()))
        raise InputError(
            f'"{value}": "{unit}" could be {names} (the case of a prefix is its meaning: '
            "m is milli, M is mega); write the unit as it is spelled",
            where=where,
        )
    return None


_THOUSANDS = re.compile(r"^[-+]?\d{1,3}(,\d{3})+(\.\d*)?$")


def _split(text: str, kind: str, where: str) -> tuple[float, str]:
    text = text.replace("\u2212", "-")  # a typographic minus sign
    match = _NUMBER.match(text)
    if not match:
        raise InputError(f'"{text}" is not a number with a unit ({kind} expected)', where=where)
    digits = match.group(1)
    rest = text[match.end(1) :]
    # "150,000" is a thousands separator; "2,5" a decimal comma
    whole = re.match(r"^[-+]?\d{1,3}(?:,\d{3})+(?:\.\d*)?", text.strip())
    if whole and _THOUSANDS.match(whole.group(0)):
        digits = whole.group(0).replace(",", "")
        rest = text.strip()[whole.end() :]
    else:
        digits = digits.replace(",", ".")
    number = float(digits)
    unit = _normalise_unit(rest)
    return number, unit


def _check_finite(value: float, text: object, where: str) -> float:
    if not math.isfinite(value):
        raise InputError(f'"{text}" is not a finite number', where=where)
    return value


def parse_temperature(
    value: object, *, where: str = "temperature", bare: Literal["C", "F"] = "C"
) -> float:
    """Parse an absolute temperature ("−4 C", "25F", "271.15 K", 3) to °C.

    A bare number is read in `bare` (°C unless the caller knows the user works in °F).
    Raises `InputError` naming `where` for text that is not a temperature, a unit of
    another dimension, or a value below absolute zero.
    """
    if isinstance(value, bool):
        raise InputError(f"{value!r} is not a temperature", where=where)
    if isinstance(value, int | float):
        celsius = f_to_c(float(value)) if bare == "F" else float(value)
        if celsius < -273.15:
            raise InputError(f'"{value}" is below absolute zero', where=where)
        return _check_finite(celsius, value, where)
    if not isinstance(value, str):
        raise InputError(f"{value!r} is not a temperature", where=where)
    number, unit = _split(value, "temperature", where)
    unit = unit.replace("º", "°").lower()
    if unit == "":
        celsius = f_to_c(number) if bare == "F" else number
    elif unit in _TEMPERATURE_UNITS:
        scale = _TEMPERATURE_UNITS[unit]
        celsius = {"C": number, "F": f_to_c(number), "K": number - 273.15}[scale]
    else:
        other = _kind_of(unit)
        got = f" (that is a {other} unit)" if other else ""
        raise InputError(
            f'"{value}": unknown temperature unit "{unit}"{got}; use C, F or K', where=where
        )
    if celsius < -273.15:
        raise InputError(f'"{value}" is below absolute zero', where=where)
    return _check_finite(celsius, value, where)


def parse_temperature_difference(
    value: object, *, where: str = "temperature difference", bare: Literal["K", "F"] = "K"
) -> float:
    """Parse a temperature *difference* ("2 C", "4F", "3 K", 2) to K.

    A bare number is read in `bare` (K, or °F degrees for a user working in °F).
    """
    if isinstance(value, bool):
        raise InputError(f"{value!r} is not a temperature difference", where=where)
    if isinstance(value, int | float):
        return _check_finite(float(value) / (1.8 if bare == "F" else 1.0), value, where)
    if not isinstance(value, str):
        raise InputError(f"{value!r} is not a temperature difference", where=where)
    number, unit = _split(value, "temperature difference", where)
    unit = unit.replace("º", "°").lower()
    if unit == "":
        return _check_finite(number / (1.8 if bare == "F" else 1.0), value, where)
    scale = _TEMPERATURE_UNITS.get(unit)
    if scale is None:
        raise InputError(
            f'"{value}": unknown temperature unit "{unit}"; use C, F or K', where=where
        )
    return number / 1.8 if scale == "F" else number


def _kind_of(unit: str) -> str | None:
    for kind, fold in _FOLDED.items():
        if unit and unit.lower() in fold:
            return kind
    if unit.lower() in _TEMPERATURE_UNITS:
        return "temperature"
    return None


def parse_quantity(value: object, kind: str, *, where: str = "value") -> float:
    """Parse a quantity of the given `kind` to SI.

    Parameters
    ----------
    value : str or number
        "30 ft", "9.1 m", "150000 BTU/h", "12 mph", "40 %"; a bare number is SI.
    kind : str
        One of length, area, volume, mass, power, energy, speed, u_value, fraction,
        temperature, temperature_difference.
    where : str
        Named in the error message ("house.toml: house.width").

    Returns
    -------
    float
        The value in SI units (m, m², m³, kg, W, J, m/s, W m-2 K-1, 1, °C or K).
    """
    if kind == "temperature":
        return parse_temperature(value, where=where)
    if kind == "temperature_difference":
        return parse_temperature_difference(value, where=where)
    if kind not in _FACTORS:
        raise ValueError(
            f"kind must be one of {', '.join(_FACTORS)}, temperature, temperature_difference; got {kind!r}"
        )
    table = _FACTORS[kind]
    if isinstance(value, bool):
        raise InputError(f"{value!r} is not a {kind.replace('_', ' ')}", where=where)
    if isinstance(value, int | float):
        return _check_finite(float(value), value, where)
    if not isinstance(value, str):
        raise InputError(f"{value!r} is not a {kind.replace('_', ' ')}", where=where)
    number, unit = _split(value, kind.replace("_", " "), where)
    factor = _factor(kind, unit, value, where)
    if factor is None:
        if unit == "" and kind != "fraction":
            return _check_finite(number, value, where)
        other = _kind_of(unit)
        if other and other != kind:
            raise InputError(
                f'"{value}" is a {other.replace("_", " ")}, not a {kind.replace("_", " ")}',
                where=where,
            )
        known = ", ".join(sorted({u for u in table if u}))
        raise InputError(
            f'"{value}": unknown {kind.replace("_", " ")} unit "{unit}" (known: {known})',
            where=where,
        )
    return _check_finite(number * factor, value, where)


# ---------------------------------------------------------------- display


@dataclass(frozen=True)
class Shown:
    """A value ready to print: number in display units and the unit label."""

    value: float
    unit: str

    def text(self, digits: int = 1) -> str:
        return f"{self.value:,.{digits}f} {self.unit}"


def show_temperature(temp_c: float, system: UnitSystem) -> Shown:
    """°C → display (°C or °F)."""
    return Shown(c_to_f(temp_c), "°F") if system == "us" else Shown(temp_c, "°C")


def show_temperature_difference(delta_k: float, system: UnitSystem) -> Shown:
    """K → display (K or °F difference)."""
    return Shown(delta_k * 1.8, "°F") if system == "us" else Shown(delta_k, "K")


def show_length(length_m: float, system: UnitSystem) -> Shown:
    return Shown(length_m / M_PER_FT, "ft") if system == "us" else Shown(length_m, "m")


def show_area(area_m2: float, system: UnitSystem) -> Shown:
    return Shown(area_m2 / M_PER_FT**2, "ft²") if system == "us" else Shown(area_m2, "m²")


def show_volume(volume_m3: float, system: UnitSystem) -> Shown:
    return Shown(volume_m3 / M3_PER_FT3, "ft³") if system == "us" else Shown(volume_m3, "m³")


def show_power(power_w: float, system: UnitSystem) -> Shown:
    return Shown(power_w / W_PER_BTU_H, "Btu/h") if system == "us" else Shown(power_w / 1e3, "kW")


def show_u_value(u_w_m2k: float, system: UnitSystem) -> Shown:
    if system == "us":
        return Shown(u_w_m2k / W_M2K_PER_BTU_HFT2F, "Btu/h·ft²·°F")
    return Shown(u_w_m2k, "W/m²·K")


def show_conductance(k_w_per_k: float, system: UnitSystem) -> Shown:
    if system == "us":
        return Shown(k_w_per_k / W_K_PER_BTU_HF, "Btu/h·°F")
    return Shown(k_w_per_k, "W/K")


def show_speed(speed_m_s: float, system: UnitSystem) -> Shown:
    return Shown(speed_m_s / M_S_PER_MPH, "mph") if system == "us" else Shown(speed_m_s, "m/s")


class Note(str):
    """A report line whose quantities follow the report's unit system.

    The string itself is the SI text (what ``--json`` carries and what tests compare);
    `text` renders it in either system. `template` has `str.format` fields named after
    `values`, each ``(kind, SI value)`` or ``(kind, SI value, digits)``; kinds:
    "temp" [°C], "delta" [K], "cm", "km" (lengths of those sizes) [m], "speed" [m/s],
    "power" [W], "area" (an opening: cm² or in²) [m²]. `us_template` is the wording in US
    units where it differs (a rule quoted in its own units).
    """

    template: str
    us_template: str
    values: dict[str, tuple]

    def __new__(cls, template: str, *, us_template: str | None = None, **values: tuple) -> Note:
        self = super().__new__(cls, _note_text(template, values, "metric"))
        self.template, self.us_template, self.values = template, us_template or template, values
        return self

    def text(self, system: UnitSystem) -> str:
        template = self.us_template if system == "us" else self.template
        return _note_text(template, self.values, system)


def note_text(note: str, system: UnitSystem) -> str:
    """`note` in `system` (a plain string is shown as it is)."""
    return note.text(system) if isinstance(note, Note) else str(note)


def _note_text(template: str, values: dict[str, tuple], system: UnitSystem) -> str:
    return template.format(**{k: _quantity(*v, system=system) for k, v in values.items()})


def _quantity(kind: str, value: float, digits: int = 1, *, system: UnitSystem) -> str:
    us = system == "us"
    if kind == "temp":
        return show_temperature(value, system).text(digits)
    if kind == "delta":
        return show_temperature_difference(value, system).text(digits)
    if kind == "speed":
        return show_speed(value, system).text(digits)
    if kind == "cm":  # a few cm: whole inches (common practice, no source)
        return f"{value / M_PER_IN:,.0f} in" if us else f"{value * 100:,.0f} cm"
    if kind == "km":  # a few km: feet to the nearest hundred (common practice, no source)
        return f"{round(value / M_PER_FT, -2):,.0f} ft" if us else f"{value / 1e3:,.{digits}g} km"
    if kind == "area":  # an opening: whole cm² or in²
        return f"{value / M_PER_IN**2:,.0f} in²" if us else f"{value * 1e4:,.0f} cm²"
    if kind == "power":
        from grower.report.quantities import power_text

        return power_text(value, system)
    raise ValueError(f"unknown quantity kind {kind!r}")
