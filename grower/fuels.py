"""Fuels: heating values, purchase units, appliance efficiency, containers.

The table is data (``grower/data/fuels.toml``): each heating value is stored in the unit
its source printed, with the source and the year. Inside, a fuel's heating value is in
J per purchase unit; a volume unit converts exactly from a volumetric heating value, a
mass unit through a stated density, an energy unit (therm, GJ, kWh) exactly.

The fuel an appliance burns to deliver heat ``E`` [J] is ``E / (HV · η)`` with HV the
heating value [J per unit] and η the appliance efficiency (output ÷ input). Unit heaters
are rated on input, so the fuel burned per hour at input ``P`` [W] is ``3600 · P / HV``.

References
----------
U.S. Energy Information Administration, "Units and calculators explained" and "Energy
conversion calculators" (propane, natural gas, heating oil). UConn IPM, J. Bartok (2013),
"Comparing fuel costs". Manitoba Hydro, "Types of unit heaters". OSHA 29 CFR 1910.110
(LP-gas containers). NIST SP 811 (unit definitions). The safety cautions, with their
sources, are in `grower.safety`.
"""

from __future__ import annotations

import functools
import math
import re
import tomllib
from dataclasses import dataclass
from typing import Any

import numpy as np

from grower.errors import InputError, did_you_mean
from grower.units import (
    J_PER_BTU,
    J_PER_KWH,
    J_PER_THERM,
    KG_PER_LB,
    M3_PER_FT3,
    M3_PER_GAL,
)

#: canonical unit -> (dimension, SI factor: m³, kg or J per unit)
UNITS: dict[str, tuple[str, float]] = {
    "gal": ("volume", M3_PER_GAL),
    "L": ("volume", 1e-3),
    "m3": ("volume", 1.0),
    "ft3": ("volume", M3_PER_FT3),
    "ccf": ("volume", 100.0 * M3_PER_FT3),
    "lb": ("mass", KG_PER_LB),
    "kg": ("mass", 1.0),
    "ton": ("mass", 2000.0 * KG_PER_LB),
    "tonne": ("mass", 1000.0),
    "Btu": ("energy", J_PER_BTU),
    "therm": ("energy", J_PER_THERM),
    "MJ": ("energy", 1e6),
    "GJ": ("energy", 1e9),
    "kWh": ("energy", J_PER_KWH),
}
_SPELLINGS = {
    **{s: "gal" for s in ("gal", "gals", "gallon", "gallons", "usgal", "usgallon", "usgallons")},
    **{s: "L" for s in ("l", "liter", "liters", "litre", "litres")},
    **{s: "m3" for s in ("m3", "cubicmeter", "cubicmeters", "cubicmetre", "cubicmetres")},
    **{s: "ft3" for s in ("ft3", "cf", "cuft", "cubicfoot", "cubicfeet", "scf")},
    **{s: "ccf" for s in ("ccf", "hcf")},
    **{s: "lb" for s in ("lb", "lbs", "pound", "pounds")},
    **{s: "kg" for s in ("kg", "kgs", "kilogram", "kilograms")},
    **{s: "ton" for s in ("ton", "tons", "shortton", "shorttons")},
    **{s: "tonne" for s in ("tonne", "tonnes", "t", "metricton", "metrictons")},
    **{s: "therm" for s in ("therm", "therms", "thm")},
    "btu": "Btu",
    "mj": "MJ",
    "gj": "GJ",
    "kwh": "kWh",
}
BASES = ("common practice", "from memory")


@dataclass(frozen=True)
class Datum:
    """A number from the table as printed, with its basis and, for agency figures, year."""

    value: float
    unit: str
    basis: str  # "source" | "common practice" | "from memory"
    basis_text: str
    year: int | None = None
    note: str = ""


@dataclass(frozen=True)
class PurchaseUnit:
    """A unit a fuel is bought in and its heating value [J per unit]."""

    name: str
    j_per_unit: float
    derivation: str  # "published" | "exact conversion" | "energy unit" | "via density"


@dataclass(frozen=True)
class Container:
    """A container of fuel; ``content`` is what it holds when full, in ``unit``."""

    name: str
    aliases: tuple[str, ...]
    content: float
    unit: str
    basis: Datum
    water_capacity: float | None = None  # in `unit`, for tanks filled to a fraction
    fill_fraction: Datum | None = None


@dataclass(frozen=True)
class Fuel:
    """A fuel: heating value per default purchase unit and per every other one."""

    name: str
    label: str
    aliases: tuple[str, ...]
    unit: str
    heating_value_j_per_unit: float
    units: tuple[PurchaseUnit, ...]
    default_appliance: str
    containers: tuple[Container, ...]
    heating_value: Datum
    density: Datum | None = None

    @property
    def source(self) -> str:
        return self.heating_value.basis_text

    @property
    def year(self) -> int | None:
        return self.heating_value.year

    @property
    def combustion(self) -> bool:
        return self.name != "electricity"

    def purchase_unit(self, unit: str, where: str = "fuel unit") -> PurchaseUnit:
        """The purchase unit spelt `unit` ("gallons", "L", "therms"); `InputError` if none."""
        canonical = _SPELLINGS.get(_norm_unit(unit))
        for pu in self.units:
            if pu.name == canonical:
                return pu
        names = [pu.name for pu in self.units]
        kind = f" ({UNITS[canonical][0]})" if canonical else ""
        raise InputError(
            f'"{unit}"{kind} is not a unit {self.label} is bought in; use {", ".join(names)}',
            where=where,
        )

    def j_per(self, unit: str) -> float:
        """Heating value per `unit` [J]."""
        return self.purchase_unit(unit).j_per_unit


@dataclass(frozen=True)
class Appliance:
    """A heater type: efficiency (output ÷ input), venting, fuels it burns."""

    name: str
    label: str
    efficiency: float
    vented: bool
    fuels: tuple[str, ...]
    basis: Datum


@dataclass(frozen=True)
class FuelTable:
    fuels: tuple[Fuel, ...]
    appliances: tuple[Appliance, ...]


@dataclass(frozen=True)
class FuelAmount:
    """Fuel for a quantity of heat: ``amount`` [unit] = energy ÷ (HV × efficiency)."""

    amount: float | np.ndarray
    unit: str
    heating_value_j_per_unit: float
    efficiency: float
    fuel: str = ""


@dataclass(frozen=True)
class FuelRate:
    """Fuel burned per hour [unit/h] at an appliance input power [W]."""

    amount_per_hour: float | np.ndarray
    unit: str
    input_w: float | np.ndarray
    heating_value_j_per_unit: float
    fuel: str = ""


@dataclass(frozen=True)
class FuelStock:
    """Fuel on hand: ``amount`` [unit] and its heating value content [J].

    Given in containers ("2 100-lb cylinders"), ``container`` and ``count`` say what holds
    it, ``capacity`` is what they hold full [unit] and ``share_full`` how full they are.
    """

    amount: float
    unit: str
    energy_j: float
    text: str = ""
    container: Container | None = None
    count: float | None = None
    capacity: float | None = None
    share_full: float = 1.0


@dataclass(frozen=True)
class ContainerCount:
    """How many full containers hold an amount: ``count`` (rounded up) and ``exact``."""

    container: Container
    count: int
    exact: float


# ---------------------------------------------------------------- reading the table


def _norm_unit(text: str) -> str:
    return text.strip().lower().replace("³", "3").replace(" ", "").replace(".", "")


def _key(text: str) -> str:
    return re.sub(r"[^a-z0-9]", "", text.lower())


def _check_keys(table: dict[str, Any], allowed: tuple[str, ...], where: str) -> None:
    for key in table:
        if key not in allowed:
            raise InputError(f'unknown key "{key}"{did_you_mean(key, allowed)}', where=where)


def _datum(entry: Any, where: str, *, unit_required: bool = True) -> Datum:
    if not isinstance(entry, dict):
        raise InputError("expected a table { value = ..., source = ... }", where=where)
    _check_keys(entry, ("value", "unit", "source", "basis", "year", "note"), where)
    value = entry.get("value")
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"value must be a number, got {value!r}", where=where)
    if unit_required and not isinstance(entry.get("unit"), str):
        raise InputError('missing "unit"', where=where)
    given = [k for k in ("source", "basis") if k in entry]
    if len(given) != 1:
        raise InputError('give exactly one of source = "..." or basis = "..."', where=where)
    if "basis" in entry and entry["basis"] not in BASES:
        raise InputError(f"basis must be one of {BASES}", where=where)
    text = str(entry[given[0]]).strip()
    if not text:
        raise InputError("empty source", where=where)
    year = entry.get("year")
    if year is not None and not isinstance(year, int):
        raise InputError("year must be an integer", where=where)
    basis = "source" if given[0] == "source" else text
    return Datum(float(value), entry.get("unit", ""), basis, text, year, entry.get("note", ""))


def _per(unit: str, where: str) -> tuple[float, str]:
    """ "Btu/gal" -> (J per numerator unit, canonical denominator)."""
    top, _, bottom = unit.partition("/")
    num, den = _SPELLINGS.get(_norm_unit(top)), _SPELLINGS.get(_norm_unit(bottom))
    if num is None or den is None:
        raise InputError(f'unit "{unit}" not understood', where=where)
    return UNITS[num][1], den


def _fuel(name: str, t: dict[str, Any], where: str) -> Fuel:
    keys = ("label", "aliases", "unit", "units", "default_appliance", "heating_value")
    _check_keys(t, (*keys, "density", "container"), where)
    for k in keys:
        if k not in t:
            raise InputError(f'missing "{k}"', where=where)
    hv = _datum(t["heating_value"], f"{where}.heating_value")
    j_per_num, den = _per(hv.unit, f"{where}.heating_value")
    hv_dim, hv_si = UNITS[den]
    j_per_si = hv.value * j_per_num / hv_si  # J per m³, kg or J
    density = _datum(t["density"], f"{where}.density") if "density" in t else None
    kg_per_m3 = None
    if density is not None:
        parts = [_SPELLINGS.get(_norm_unit(p)) for p in density.unit.split("/")]
        dims = [UNITS[p][0] if p else None for p in parts]
        if dims != ["mass", "volume"]:
            raise InputError(f'unit "{density.unit}" is not mass/volume', where=f"{where}.density")
        kg_per_m3 = density.value * UNITS[parts[0]][1] / UNITS[parts[1]][1]
    units = []
    for u in t["units"]:
        canonical = _SPELLINGS.get(_norm_unit(u))
        if canonical is None:
            raise InputError(f'unit "{u}" unknown', where=f"{where}.units")
        dim, si = UNITS[canonical]
        if dim == hv_dim:
            how = "published" if canonical == den else "exact conversion"
            j = j_per_si * si
        elif dim == "energy":
            how, j = "energy unit", si
        elif kg_per_m3 is not None and {dim, hv_dim} == {"mass", "volume"}:
            how = "via density"
            j = j_per_si * si / kg_per_m3 if dim == "mass" else j_per_si * si * kg_per_m3
        else:
            raise InputError(f'"{u}" needs a density to convert', where=f"{where}.units")
        units.append(PurchaseUnit(canonical, j, how))
    by_name = {pu.name: pu for pu in units}
    default = _SPELLINGS.get(_norm_unit(t["unit"]))
    if default not in by_name:
        raise InputError(f'unit "{t["unit"]}" is not in units', where=where)
    containers = tuple(
        _container(c, default, by_name, f"{where}.container[{i}]")
        for i, c in enumerate(t.get("container", []))
    )
    return Fuel(
        name=name,
        label=t["label"],
        aliases=tuple(t["aliases"]),
        unit=default,
        heating_value_j_per_unit=by_name[default].j_per_unit,
        units=tuple(units),
        default_appliance=t["default_appliance"],
        containers=containers,
        heating_value=hv,
        density=density,
    )


def _container(
    c: dict[str, Any], unit: str, units: dict[str, PurchaseUnit], where: str
) -> Container:
    _check_keys(c, ("name", "aliases", "content", "water_capacity", "fill_fraction"), where)

    def in_default(d: Datum, at: str) -> float:
        canonical = _SPELLINGS.get(_norm_unit(d.unit))
        if canonical not in units:
            raise InputError(f'unit "{d.unit}" is not a purchase unit of this fuel', where=at)
        return d.value * units[canonical].j_per_unit / units[unit].j_per_unit

    if "content" in c:
        basis = _datum(c["content"], f"{where}.content")
        return Container(
            c["name"], tuple(c.get("aliases", ())), in_default(basis, where), unit, basis
        )
    cap = _datum(c["water_capacity"], f"{where}.water_capacity")
    fill = _datum(c["fill_fraction"], f"{where}.fill_fraction", unit_required=False)
    if not 0 < fill.value <= 1:
        raise InputError("fill_fraction must be in (0, 1]", where=where)
    water = in_default(cap, where)
    return Container(
        c["name"], tuple(c.get("aliases", ())), water * fill.value, unit, cap, water, fill
    )


def _appliance(name: str, t: dict[str, Any], where: str) -> Appliance:
    _check_keys(t, ("label", "efficiency", "vented", "fuels"), where)
    basis = _datum(t["efficiency"], f"{where}.efficiency", unit_required=False)
    if not 0 < basis.value <= 1:
        raise InputError("efficiency must be in (0, 1]", where=where)
    return Appliance(name, t["label"], basis.value, bool(t["vented"]), tuple(t["fuels"]), basis)


def _default_path() -> str:
    from grower.files import PACKAGE_DIR

    return str(PACKAGE_DIR / "data" / "fuels.toml")


@functools.lru_cache(maxsize=4)
def load_fuels(path: str | None = None) -> FuelTable:
    """Read and check the fuel table (the shipped one by default)."""
    where = path or _default_path()
    with open(where, "rb") as fh:
        try:
            doc = tomllib.load(fh)
        except tomllib.TOMLDecodeError as exc:
            raise InputError(f"not valid TOML: {exc}", where=where) from None
    _check_keys(doc, ("fuel", "appliance"), where)
    fuels = tuple(_fuel(n, t, f"{where}: fuel.{n}") for n, t in doc["fuel"].items())
    appliances = tuple(
        _appliance(n, t, f"{where}: appliance.{n}") for n, t in doc["appliance"].items()
    )
    names = {a.name for a in appliances}
    for f in fuels:
        if f.default_appliance not in names:
            raise InputError(f"default_appliance {f.default_appliance!r} unknown", where=where)
    return FuelTable(fuels, appliances)


def get_fuel(name: str | Fuel, table: FuelTable | None = None) -> Fuel:
    """The fuel called `name` or one of its aliases ("lp", "oil", "pellets", ...)."""
    if isinstance(name, Fuel):
        return name
    table = table or load_fuels()
    key = _key(name)
    for fuel in table.fuels:
        if key in {_key(n) for n in (fuel.name, *fuel.aliases)}:
            return fuel
    choices = [n for f in table.fuels for n in (f.name, *f.aliases)]
    raise InputError(
        f'unknown fuel "{name}"{did_you_mean(name.lower(), choices)}; known: '
        + ", ".join(f.name for f in table.fuels),
        where="fuel",
    )


def get_appliance(name: str | Appliance, table: FuelTable | None = None) -> Appliance:
    """The appliance type called `name` ("unit-heater-power-vented", "boiler", ...)."""
    if isinstance(name, Appliance):
        return name
    table = table or load_fuels()
    for appliance in table.appliances:
        if _key(name) == _key(appliance.name):
            return appliance
    names = [a.name for a in table.appliances]
    raise InputError(
        f'unknown heater type "{name}"{did_you_mean(name, names)}; known: {", ".join(names)}',
        where="heater",
    )


def appliance_for(fuel: str | Fuel, name: str | Appliance | None = None) -> Appliance:
    """The appliance `name` (or the fuel's default); `InputError` if it cannot burn it."""
    fuel = get_fuel(fuel)
    appliance = get_appliance(name or fuel.default_appliance)
    if fuel.name not in appliance.fuels:
        raise InputError(
            f"a {appliance.label} does not run on {fuel.label} (it takes: "
            f"{', '.join(appliance.fuels)})",
            where="heater",
        )
    return appliance


# ---------------------------------------------------------------- arithmetic


def _check_efficiency(efficiency: float) -> None:
    if not (isinstance(efficiency, int | float) and 0 < efficiency <= 1):
        raise ValueError(f"efficiency must be in (0, 1], got {efficiency!r}")


def _scalar_or_array(x: np.ndarray) -> float | np.ndarray:
    return float(x) if x.ndim == 0 else x


def fuel_amount(
    energy_j: float | np.ndarray, fuel: str | Fuel, efficiency: float, unit: str | None = None
) -> FuelAmount:
    """Fuel an appliance burns to deliver heat `energy_j`.

    Parameters
    ----------
    energy_j : float or array
        Heat delivered to the house [J], ≥ 0.
    fuel : Fuel or str
    efficiency : float
        Appliance efficiency, output ÷ input, in (0, 1] [1].
    unit : str, optional
        A purchase unit of the fuel; default the fuel's default unit.

    Returns
    -------
    FuelAmount
        ``amount = energy_j / (heating_value × efficiency)`` [unit].
    """
    fuel = get_fuel(fuel)
    _check_efficiency(efficiency)
    energy = np.asarray(energy_j, dtype=float)
    if not np.all(np.isfinite(energy)) or np.any(energy < 0):
        raise ValueError("energy_j must be finite and ≥ 0 [J]")
    pu = fuel.purchase_unit(unit) if unit else fuel.purchase_unit(fuel.unit)
    amount = energy / (pu.j_per_unit * efficiency)
    return FuelAmount(
        _scalar_or_array(amount), pu.name, pu.j_per_unit, float(efficiency), fuel.name
    )


def fuel_per_hour(
    input_w: float | np.ndarray, fuel: str | Fuel, unit: str | None = None
) -> FuelRate:
    """Fuel burned per hour at appliance input power `input_w` [W] → [unit/h]."""
    fuel = get_fuel(fuel)
    power = np.asarray(input_w, dtype=float)
    if not np.all(np.isfinite(power)) or np.any(power < 0):
        raise ValueError("input_w must be finite and ≥ 0 [W]")
    pu = fuel.purchase_unit(unit) if unit else fuel.purchase_unit(fuel.unit)
    rate = power * 3600.0 / pu.j_per_unit
    return FuelRate(
        _scalar_or_array(rate), pu.name, _scalar_or_array(power), pu.j_per_unit, fuel.name
    )


def containers_needed(
    amount: float | FuelAmount, fuel: str | Fuel, unit: str | None = None
) -> tuple[ContainerCount, ...]:
    """How many of each of the fuel's containers hold `amount` (in `unit`, default the
    fuel's unit, or the unit of a `FuelAmount`). Empty for piped fuels."""
    fuel = get_fuel(fuel)
    if isinstance(amount, FuelAmount):
        amount, unit = float(np.sum(amount.amount)), amount.unit
    if not math.isfinite(amount) or amount < 0:
        raise ValueError(f"amount must be finite and ≥ 0, got {amount!r}")
    in_default = amount * fuel.j_per(unit or fuel.unit) / fuel.heating_value_j_per_unit
    counts = []
    for c in fuel.containers:
        exact = in_default / c.content
        counts.append(ContainerCount(c, max(0, math.ceil(exact - 1e-9)), exact))
    return tuple(counts)


_AMOUNT = re.compile(r"^\s*([-+]?(?:\d{1,3}(?:,\d{3})+|\d+)(?:[.,]\d*)?|[-+]?[.,]\d+)\s*(.*?)\s*$")


def parse_amount(text: object, fuel: str | Fuel, where: str = "fuel on hand") -> FuelStock:
    """Parse fuel on hand ("200 gal", "750 L", "1,000 lb", "3 bags", "2 100-lb cylinders").

    The unit must be one the fuel is bought in, or one of its containers; a bare number
    or a unit of the wrong kind ("200 kWh" for propane) is an `InputError` naming `where`.
    """
    fuel = get_fuel(fuel)
    units = ", ".join(pu.name for pu in fuel.units)
    if not isinstance(text, str):
        raise InputError(f"{text!r}: give an amount with a unit ({units})", where=where)
    match = _AMOUNT.match(text)
    if not match:
        raise InputError(f'"{text}" is not an amount of fuel (e.g. "200 {fuel.unit}")', where=where)
    number_text, unit_text = match.groups()
    if re.fullmatch(r"[-+]?\d{1,3}(,\d{3})+(\.\d*)?", number_text):
        number = float(number_text.replace(",", ""))
    else:
        number = float(number_text.replace(",", "."))
    if not math.isfinite(number) or number < 0:
        raise InputError(f'"{text}": an amount must be zero or more', where=where)
    if not unit_text:
        raise InputError(f'"{text}" needs a unit: {units}', where=where)
    c = _named_container(fuel, unit_text)
    if c is not None:
        amount = number * c.content
        return FuelStock(
            amount, c.unit, amount * fuel.heating_value_j_per_unit, text, c, number, amount
        )
    if not fuel.containers or _SPELLINGS.get(_norm_unit(unit_text)) is not None:
        pu = fuel.purchase_unit(unit_text, where=where)  # a unit, maybe of the wrong kind
    else:
        try:
            pu = fuel.purchase_unit(unit_text, where=where)
        except InputError:
            names = ", ".join(c.name for c in fuel.containers)
            raise InputError(
                f'"{unit_text}" is neither a unit {fuel.label} is bought in ({units}) nor one '
                f'of its containers ({names}; e.g. "2 {fuel.containers[0].name}s")',
                where=where,
            ) from None
    return FuelStock(number, pu.name, number * pu.j_per_unit, text)


def _named_container(fuel: Fuel, unit_text: str) -> Container | None:
    """The container `unit_text` names ("100-lb cylinders", "x 100lb", "× 500 gal"): its
    name or an alias, plural or not, or — after a count's "x" — its size alone when only
    one of the fuel's containers has that size."""
    wanted = _key(unit_text)
    times = re.match(r"\s*[x×]\s*", unit_text)
    if times:
        wanted = _key(unit_text[times.end() :])
    for c in fuel.containers:
        names = {_key(n) for n in (c.name, *c.aliases)}
        if wanted in names or (wanted.endswith("s") and wanted[:-1] in names):
            return c
    if times and re.fullmatch(r"\d+[a-z]+", wanted):  # a size with its unit: "100lb"
        sized = [c for c in fuel.containers if _key(c.name).startswith(wanted)]
        if len(sized) == 1:
            return sized[0]
    return None


def parse_fill(text: object, where: str = "--fill") -> float:
    """A fill level ("30%", "30 %", "30") → percent [0–100]; `InputError` otherwise."""
    if isinstance(text, int | float) and not isinstance(text, bool):
        value = float(text)
    elif isinstance(text, str):
        m = re.fullmatch(r"\s*([-+]?\d+(?:[.,]\d*)?)\s*(%|percent|pct)?\s*", text)
        if not m:
            raise InputError(f'"{text}" is not a fill level (e.g. "30%")', where=where)
        value = float(m.group(1).replace(",", "."))
    else:
        raise InputError(f'{text!r} is not a fill level (e.g. "30%")', where=where)
    if not 0.0 <= value <= 100.0:
        raise InputError(f"{value:g} % must be within 0–100 %", where=where)
    return value


def with_fill(
    stock: FuelStock, fuel: str | Fuel, percent: float, where: str = "--fill"
) -> FuelStock:
    """The containers of `stock` at a fill of `percent`.

    For a tank that is the gauge reading, the percent of its volume (a full tank reads
    80 %, its fill fraction); for a cylinder, which has no gauge, the share of a full
    fill by weight (30 % of a 100-lb cylinder is 30 lb).
    """
    fuel = get_fuel(fuel)
    c = stock.container
    if c is None or stock.capacity is None:
        raise InputError(
            f'a fill level needs the containers: give the fuel on hand as e.g. "1 500-gal tank", '
            f'not "{stock.text}"',
            where=where,
        )
    if c.fill_fraction is not None:
        full_pct = 100.0 * c.fill_fraction.value
        if percent > 95.0:
            raise InputError(
                f"a tank gauge reads at most about 95 %, not {percent:g} %", where=where
            )
        share = percent / full_pct
    else:
        share = percent / 100.0
    amount = stock.capacity * share
    return FuelStock(
        amount,
        stock.unit,
        amount * fuel.j_per(stock.unit),
        stock.text,
        c,
        stock.count,
        stock.capacity,
        share,
    )


# ---------------------------------------------------------------- which heater burns what


@dataclass(frozen=True)
class HeatSource:
    """The fuel and appliance a plan uses for a house, and the efficiency it burns at.

    ``installed`` is True when it is the house's own heater; ``input_w`` is then the
    nameplate input of the house's heaters [W] (None without a heater).
    """

    fuel: Fuel
    appliance: Appliance
    efficiency: float
    installed: bool
    input_w: float | None
    notes: tuple[str, ...] = ()


def heat_source(
    house: Any,
    fuel_name: str | None = None,
    appliance_name: str | None = None,
    *,
    fuel_where: str = "--fuel",
    appliance_where: str = "--appliance",
) -> HeatSource:
    """The one rule for which fuel and appliance a house uses (tonight, stock, size).

    Fuel: `fuel_name` if given, else the installed heater's, else the house file's
    ``[stock] fuel``, else propane (said in the notes). Appliance and efficiency: the
    installed heater's (its ``efficiency`` from the house file, else its appliance's)
    when it burns that fuel and no other appliance is asked for; else the appliance asked
    for, or the fuel's usual one, at the table's efficiency (said in the notes when the
    house has a heater of another kind).
    """
    heaters = tuple(getattr(house, "heaters", ()) or ())
    heater = heaters[0] if heaters else None
    stock = getattr(house, "stock", None) or {}
    notes: list[str] = []
    key = fuel_name or (heater.fuel if heater else None) or stock.get("fuel")
    try:
        fuel = get_fuel(key or "propane")
    except InputError as exc:
        raise InputError(str(exc).split(": ", 1)[-1], where=fuel_where) from None
    same = heater is not None and heater.fuel == fuel.name
    wanted = appliance_name
    if same and (
        wanted is None or _key(wanted) == _key(heater.appliance or fuel.default_appliance)
    ):
        appliance = get_appliance(heater.appliance or fuel.default_appliance)
        input_w = sum(h.input_w for h in heaters if h.fuel == fuel.name)
        return HeatSource(fuel, appliance, float(heater.efficiency), True, input_w)
    try:
        appliance = appliance_for(fuel, wanted)
    except InputError as exc:
        raise InputError(str(exc).split(": ", 1)[-1], where=appliance_where) from None
    if heater is None:
        if key is None:
            notes.append(f"no heater in the house file: propane in a {appliance.label} assumed")
        else:
            notes.append(f"no heater in the house file: a {appliance.label} assumed")
    elif not same:
        notes.append(
            f"{fuel.label} differs from the installed heater's fuel: a {appliance.label} at "
            f"{appliance.efficiency:.0%} is assumed"
        )
    else:
        notes.append(
            f"a {appliance.label} at {appliance.efficiency:.0%} instead of the installed heater"
        )
    return HeatSource(fuel, appliance, appliance.efficiency, False, None, tuple(notes))


def house_on_hand(house: Any, fuel: str | Fuel) -> str | None:
    """The house file's ``[stock] on_hand`` when it holds `fuel`, else None.

    The stock holds ``[stock] fuel``, else the fuel the house burns by `heat_source`'s
    rule (its heater's, else propane): a stock of propane is not read as natural gas or
    oil when another fuel is asked for."""
    stock = getattr(house, "stock", None) or {}
    text = stock.get("on_hand")
    if not text:
        return None
    held = get_fuel(stock.get("fuel") or heat_source(house).fuel.name)
    return text if held == get_fuel(fuel) else None


def bought_unit(house: Any, fuel: str | Fuel, on_hand_text: str | None = None) -> str:
    """The one rule for the unit fuel amounts are given in (tonight, size, stock; their
    JSON and the screens before any display conversion): the unit the grower buys it in
    — that of `on_hand_text` (``--on-hand``) when given, else of the house file's
    ``[stock] on_hand`` when it holds this fuel (`house_on_hand`) — else the fuel's
    default unit (fuels.toml)."""
    fuel = get_fuel(fuel)
    text = on_hand_text if on_hand_text is not None else house_on_hand(house, fuel)
    if not text:
        return fuel.unit
    where = "--on-hand" if on_hand_text is not None else f"{house.path}: stock.on_hand"
    return parse_amount(text, fuel, where=where).unit
