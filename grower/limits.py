"""Plausible ranges for every number a user gives, and where each bound comes from.

Each input has two ranges: the *possible* one, outside which the value cannot describe a
real greenhouse or a real night (refused: `InputError`, exit 2, one line naming the value
and the range), and the *usual* one, outside which the value is possible but rare enough
that a typing slip is the likelier story (a ``Warning:`` line, and the run goes on).

Values are SI inside (m, °C, K, W, m/s, h); messages show them in the unit the user
gave where the caller passes the raw text. Bounds marked "common practice, no source"
are facts of the trade nobody here can cite; "from memory" marks values recalled without
a source at hand.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from grower.errors import InputError, warn


@dataclass(frozen=True)
class Bound:
    """A possible range [lo, hi] and a usual range [usual_lo, usual_hi] in `unit`."""

    lo: float
    hi: float
    usual_lo: float
    usual_hi: float
    unit: str
    basis: str
    what: str = "value"


def _num(value: float) -> str:
    if value != 0 and (abs(value) >= 1e6 or abs(value) < 1e-3):
        return f"{value:.3g}".replace("-", "−")
    return f"{value:,.4g}".replace("-", "−")


def _range(lo: float, hi: float, unit: str) -> str:
    return f"{_num(lo)}…{_num(hi)}{_unit_suffix(unit)}"


# Temperatures [°C]. Earth's recorded air-temperature extremes: −89.2 °C (Vostok,
# 21 July 1983) and 56.7 °C (Furnace Creek, 10 July 1913), WMO Archive of Weather and
# Climate Extremes (https://wmo.asu.edu).
OUTSIDE_AIR_C = Bound(
    -90.0,
    60.0,
    -50.0,
    40.0,
    "°C",
    "outside air beyond Earth's recorded extremes (WMO: −89.2 °C, 56.7 °C) is impossible; "
    "frost-planning nights below −50 °C or above 40 °C are unusual (common practice, no source)",
    "outside temperature",
)
DEW_POINT_C = Bound(
    -90.0,
    35.0,
    -55.0,
    28.0,
    "°C",
    "the highest dew point on record is about 35 °C (Dhahran, 8 July 2003; from memory)",
    "dew point",
)
INSIDE_AIR_C = Bound(
    -60.0,
    70.0,
    -40.0,
    45.0,
    "°C",
    "a closed house in full sun reaches 50–60 °C; below the outside record it cannot be "
    "(common practice, no source)",
    "inside air temperature",
)
SOIL_C = Bound(
    -50.0,
    60.0,
    -20.0,
    35.0,
    "°C",
    "soil 5 cm down in a house at night stays between about −20 and 35 °C "
    "(common practice, no source)",
    "soil temperature",
)
DEEP_GROUND_C = Bound(
    -30.0,
    40.0,
    -10.0,
    30.0,
    "°C",
    "deep ground sits near the site's mean annual air temperature, which on farmed land "
    "spans about −10…30 °C (common practice, no source)",
    "deep ground temperature",
)
ALARM_C = Bound(
    -60.0,
    30.0,
    -40.0,
    15.0,
    "°C",
    "crop damage temperatures run from about −40 °C (dormant woody buds) to about 12 °C "
    "(chilling of tropical crops) in the shipped crop tables",
    "alarm temperature",
)
HOLD_C = Bound(
    -20.0,
    40.0,
    -5.0,
    30.0,
    "°C",
    "heated houses hold 0–30 °C (common practice, no source)",
    "temperature to hold",
)
SETPOINT_C = Bound(
    -5.0,
    35.0,
    0.0,
    30.0,
    "°C",
    "a heating setpoint of −5…35 °C covers frost guard to tropical houses; heated houses "
    "hold 0–30 °C (common practice, no source)",
    "setpoint",
)
VENT_C = Bound(
    0.0,
    50.0,
    15.0,
    35.0,
    "°C",
    "vents open at about 18–30 °C (common practice, no source)",
    "vent temperature",
)
# Temperature differences [K]
MARGIN_K = Bound(
    0.0,
    20.0,
    0.0,
    5.0,
    "K",
    "alarm margins of 0.5–3 K are usual (common practice, no source)",
    "margin",
)
# Drawn nights for the chance of damage: the share of 300 is good to about ±3 % (one
# binomial standard error at 50 %, sqrt(0.25/300)); past a few thousand only the run
# time grows (common practice, no source)
DRAWS = Bound(
    0,
    20000,
    30,
    3000,
    "",
    "0 leaves the chance out; a few hundred give it to a few per cent",
    "number of drawn nights",
)
# Lengths [m]: single spans of high tunnels are 4–12 m, wide-span houses 12–40 m, Venlo
# bays 3.2–12.8 m; gutters 2–8 m (common practice, no source).
WIDTH_M = Bound(0.3, 100.0, 2.0, 40.0, "m", "a span is 0.5 m (a low tunnel) to about 40 m", "width")
LENGTH_M = Bound(
    0.5,
    2000.0,
    2.0,
    500.0,
    "m",
    "houses are a few metres to a few hundred metres long (common practice, no source)",
    "length",
)
SIDEWALL_M = Bound(
    0.0,
    20.0,
    0.0,
    8.0,
    "m",
    "side walls and gutters are 0–8 m high (common practice, no source)",
    "side wall height",
)
RIDGE_M = Bound(
    0.3,
    40.0,
    1.0,
    15.0,
    "m",
    "ridges stand 1–12 m above the floor (common practice, no source)",
    "ridge height",
)
BAYS = Bound(
    1,
    1000,
    1,
    200,
    "",
    "gutter-connected ranges have up to about a hundred bays (common practice, no source)",
    "number of bays",
)
FLOOR_AREA_M2 = Bound(
    0.1,
    1.0e6,
    1.0,
    2.0e5,
    "m²",
    "the largest single greenhouse blocks cover tens of hectares (from memory); 100 ha "
    "under one roof is beyond any built",
    "floor area",
)
ELEVATION_M = Bound(
    -500.0,
    9000.0,
    -100.0,
    5000.0,
    "m",
    "land lies between the Dead Sea shore (about −430 m) and Everest (8,849 m)",
    "elevation",
)
AIR_CHANGES_PER_H = Bound(
    0.0,
    60.0,
    0.1,
    10.0,
    "per hour",
    "closed houses exchange 0.25–4 air changes per hour (ASHRAE Handbook—HVAC "
    "Applications, greenhouses chapter, from memory)",
    "air changes",
)
WIND_M_S = Bound(
    0.0,
    113.0,
    0.0,
    40.0,
    "m/s",
    "the strongest gust on record is 113 m/s (Barrow Island, 10 April 1996, WMO Archive of "
    "Weather and Climate Extremes); above hurricane force (32.7 m/s, Beaufort 12) a "
    "greenhouse does not stand",
    "wind speed",
)
SHORTWAVE_W_M2 = Bound(
    0.0,
    1400.0,
    0.0,
    1400.0,
    "W/m²",
    "global irradiance at the ground stays below the solar constant, 1361 W/m² (Kopp & Lean "
    "2011, Geophys. Res. Lett. 38:L01706), but for brief cloud-edge peaks",
    "solar radiation",
)
EFFICIENCY = Bound(
    0.3,
    1.0,
    0.6,
    1.0,
    "",
    "heaters deliver 60–100 % of their input as heat to the house (grower/data/fuels.toml); "
    "below 30 % no appliance is sold",
    "efficiency",
)
HEATER_W = Bound(
    1.0,
    1.0e8,
    100.0,
    3.0e7,
    "W",
    "from a 100 W heat mat to the tens of megawatts of a large range's boiler house "
    "(common practice, no source)",
    "heater power",
)
U_VALUE = Bound(
    0.05,
    10.0,
    0.1,
    8.0,
    "W/m²·K",
    "the best insulated opaque panels reach about 0.1 W/m²·K and single glass in wind about "
    "7 (common practice, no source)",
    "cover U-value",
)
PRICE = Bound(
    0.0,
    1.0e6,
    0.0,
    1.0e6,
    "",
    "no currency prices a unit of fuel above a million (common practice, no source)",
    "price per unit of fuel",
)
#: installed heat per m² of floor above this is unusual [W m-2]: cold-climate designs
#: run 100–400 W/m² (common practice, no source)
HEATER_USUAL_W_PER_M2 = 1000.0
#: thermal mass as a share of the house's inside volume: refuse above / warn above
MASS_VOLUME_SHARE = (0.25, 0.05)
#: thermal-mass exchange area over the floor area: refuse above / warn above
MASS_AREA_PER_FLOOR = (20.0, 5.0)
#: fitted K (and C) over the geometry's: refuse outside / warn outside. Handbook
#: U-values and air changes put K within about ±30 % of a real house (README); a fit
#: 5× away cannot describe the same envelope (common practice, no source).
CALIBRATION_K_RATIO = ((0.2, 5.0), (0.5, 2.0))
CALIBRATION_C_RATIO = ((0.1, 10.0), (0.33, 3.0))
#: a fitted sky part over the geometry's: possible / usual (common practice, no source:
#: condensation, dust and cloud during the record lower it, none raises it far; zero is
#: possible, a house whose film passes no long-wave)
CALIBRATION_SKY_RATIO = ((0.0, 5.0), (0.25, 2.0))
#: a site's clock and its longitude's solar time: refuse beyond / warn beyond [h].
#: The widest official offsets from solar time are about 3 h (western China on UTC+8),
#: 4 h with summer time (from memory).
TIMEZONE_LONGITUDE_H = (5.0, 3.5)
#: years a file or --start may name (pandas' nanosecond times span 1677–2262; records
#: and forecasts of greenhouse weather fall well inside this)
YEARS = (1900, 2200)


def check(
    value: float,
    bound: Bound,
    where: str,
    *,
    shown: str | None = None,
    convert=None,
) -> float:
    """Refuse `value` outside the possible range; warn outside the usual one.

    Parameters
    ----------
    value : the number in `bound.unit`
    bound : the ranges
    where : named in the message ("--low", "house.toml: house.width")
    shown : the user's own text for the value ("28F"), shown beside the SI value
    convert : optional callable turning a bound's number into the user's unit text
    """
    if isinstance(value, float) and math.isnan(value):
        raise InputError("is not a number", where=where)
    given = f'"{shown}"' if shown is not None else _num(float(value)) + _unit_suffix(bound.unit)
    si = f"{_num(float(value))}{_unit_suffix(bound.unit)}"
    if shown is not None and convert is None and shown.replace(" ", "") != si.replace(" ", ""):
        given += f" ({si})"
    if not bound.lo <= value <= bound.hi:
        rng = convert(bound.lo, bound.hi) if convert else _range(bound.lo, bound.hi, bound.unit)
        raise InputError(
            f"{given} is outside the possible {bound.what} range, {rng}: {bound.basis}",
            where=where,
        )
    if not bound.usual_lo <= value <= bound.usual_hi:
        rng = (
            convert(bound.usual_lo, bound.usual_hi)
            if convert
            else _range(bound.usual_lo, bound.usual_hi, bound.unit)
        )
        warn(f"{given}: an unusual {bound.what} (usually {rng}); check it", where=where)
    return value


def _unit_suffix(unit: str) -> str:
    if not unit:
        return ""
    return unit if unit == "%" else f" {unit}"


def check_ratio(
    ratio: float, ranges: tuple[tuple[float, float], tuple[float, float]], what: str, where: str
) -> None:
    """Refuse a ratio outside ranges[0], warn outside ranges[1]; `what` names the values
    ("K = 10 W/K")."""
    (lo, hi), (ulo, uhi) = ranges
    if not math.isfinite(ratio) or not lo <= ratio <= hi:
        raise InputError(
            f"{what} is {ratio:.3g} × the geometry's, outside the possible {lo:g}–{hi:g} × "
            "(delete the [calibration] table or refit)",
            where=where,
        )
    if not ulo <= ratio <= uhi:
        warn(f"{what} is {ratio:.2f} × the geometry's (usually {ulo:g}–{uhi:g} ×)", where=where)


def check_year(year: int, where: str) -> None:
    lo, hi = YEARS
    if not lo <= year <= hi:
        raise InputError(f"the year {year} is outside {lo}–{hi}", where=where)
