"""The value columns of a logger record: numbers, temperatures, heater, sun."""

from __future__ import annotations

import numpy as np

from grower.errors import InputError
from grower.units import f_to_c, parse_quantity

#: accepted inside and outside temperatures after conversion [°C]
TEMPERATURE_RANGE_C = (-60.0, 60.0)
#: accepted global irradiance [W m-2]; small negative night readings (sensor offset)
#: down to the lower bound are set to 0 (common practice, no source)
SUN_RANGE_W_M2 = (-20.0, 1400.0)
#: a column with no unit whose median is above this is taken for °F and refused [°C]
#: (common practice, no source: cold-season greenhouse records sit well below 30 °C)
ASSUMED_C_MEDIAN_MAX = 30.0
MISSING = frozenset({"", "nan", "na", "n/a", "null", "none", "-", "--", "---", "#n/a"})
ON_WORDS = frozenset({"on", "true", "yes", "y", "1"})
OFF_WORDS = frozenset({"off", "false", "no", "n", "0"})


def parse_number(text: str, decimal_comma: bool) -> float | None:
    t = text.strip().replace("\u2212", "-").replace(" ", "")
    if decimal_comma:
        t = t.replace(",", ".")
    try:
        return float(t)
    except ValueError:
        return None


def _numbers(cells: list[str], lines: np.ndarray, col: str, where: str, dc: bool) -> np.ndarray:
    out = np.empty(len(cells))
    for i, c in enumerate(cells):
        if c.strip().lower() in MISSING:
            out[i] = np.nan
            continue
        v = parse_number(c, dc)
        if v is None or not np.isfinite(v):
            raise InputError(f'line {lines[i]}, column {col}: "{c}" is not a number', where=where)
        out[i] = v
    return out


def temperature_values(cells, unit: str, lines, col: str, where: str, dc: bool) -> np.ndarray:
    v = _numbers(cells, lines, col, where, dc)
    if unit == "°F":
        v = f_to_c(v)
    lo, hi = TEMPERATURE_RANGE_C
    bad = np.flatnonzero(np.isfinite(v) & ((v < lo) | (v > hi)))
    if bad.size:
        i = bad[0]
        hint = (
            "" if unit == "°F" else " (if these are °F, say so in the column name or a units row)"
        )
        raise InputError(
            f'line {lines[i]}, column {col}: "{cells[i]}" is outside −60…60 °C{hint}', where=where
        )
    if unit == "" and np.isfinite(v).any() and np.nanmedian(v) > ASSUMED_C_MEDIAN_MAX:
        i = int(np.flatnonzero(np.isfinite(v))[0])
        raise InputError(
            f'line {lines[i]}, column {col}: "{cells[i]}" with no unit looks like °F (the '
            f"column's median is {np.nanmedian(v):.1f}); give the unit in the column name "
            "or a units row (°C or °F)",
            where=where,
        )
    return v


def heater_values(cells, unit: str, lines, col: str, where: str, dc: bool):
    """(fraction, power_w, unit): one of the first two is None."""
    if unit in ("W", "kW", "Btu/h"):
        factor = parse_quantity(f"1 {unit}", "power", where=col)
        v = _numbers(cells, lines, col, where, dc) * factor
        bad = np.flatnonzero(v < 0)
        if bad.size:
            raise InputError(
                f'line {lines[bad[0]]}, column {col}: "{cells[bad[0]]}" is a negative power',
                where=where,
            )
        return None, v, unit
    out = np.empty(len(cells))
    for i, c in enumerate(cells):
        low = c.strip().lower()
        if low in ON_WORDS:
            out[i] = 1.0
        elif low in OFF_WORDS:
            out[i] = 0.0
        elif low in MISSING:
            out[i] = np.nan
        else:
            v = parse_number(c, dc)
            top = 100.0 if unit == "%" else 1.0
            if v is None or not 0.0 <= v <= top:
                what = (
                    "a share 0–100 %"
                    if unit == "%"
                    else "an on/off state (on/off, 1/0) or a share 0–1"
                )
                hint = (
                    ""
                    if unit == "%"
                    else "; for power give the unit (W, kW, Btu/h) in the column name or a units row"
                )
                raise InputError(
                    f'line {lines[i]}, column {col}: "{c}" is not {what}{hint}', where=where
                )
            out[i] = v / top
    return out, None, unit or "on/off"


def sun_values(
    cells, unit: str, lines, col: str, where: str, dc: bool, notes: list[str]
) -> np.ndarray:
    v = _numbers(cells, lines, col, where, dc)
    lo, hi = SUN_RANGE_W_M2
    bad = np.flatnonzero(np.isfinite(v) & ((v < lo) | (v > hi)))
    if bad.size:
        i = bad[0]
        raise InputError(
            f'line {lines[i]}, column {col}: "{cells[i]}" is outside 0…1400 W/m²', where=where
        )
    neg = np.isfinite(v) & (v < 0)
    if neg.any():
        notes.append(f"{int(neg.sum())} slightly negative sun reading(s) set to 0 W/m²")
        v = np.where(neg, 0.0, v)
    return v
