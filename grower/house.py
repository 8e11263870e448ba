"""Reading and validating a house file (TOML) into a frozen `House`.

A house file describes one greenhouse or high tunnel: its shape and size, the cover
of each surface, air exchange, floor, thermal mass, energy curtain, knee walls, heaters,
fuel stock and (optionally) where it stands. Lengths, temperatures and powers may carry
units ("30 ft", "45 F", "150000 BTU/h"); a bare number is SI (m, °C, W). Every mistake
is reported as one `InputError` line naming the file and the key.

The file format is documented key by key in `SCHEMA` below and in the README.
"""

from __future__ import annotations

import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from grower import covers, geometry, thermal
from grower.errors import InputError, did_you_mean
from grower.site import Site
from grower.units import parse_quantity

#: floor kinds: volumetric heat capacity of the top layer [J m-3 K-1], thermal
#: conductivity [W m-1 K-1], and the basis of both (the table: grower/data/floors.toml)
FLOORS: dict[str, tuple[float, float, str]] = {
    f.key: (
        f.heat_capacity_j_m3k,
        f.conductivity_w_mk,
        f"heat capacity: {f.basis['heat_capacity']}; conductivity: {f.basis['conductivity']}",
    )
    for f in thermal.floors().values()
}

#: specific heat of thermal-mass materials [J kg-1 K-1] and its basis (grower/data/mass.toml)
MASS_MATERIALS: dict[str, tuple[float, str]] = {
    m.key: (m.specific_heat_j_kgk, m.basis["specific_heat"])
    for m in thermal.mass_materials().values()
}
SOLID_DENSITY_KG_M3 = 2000.0
WATER_DENSITY_KG_M3 = 1000.0  # near 4–10 °C, within 0.03 % (common practice, no source)

#: key → (kind, required) for each section; kind drives parsing
SCHEMA: dict[str, dict[str, tuple[str, bool]]] = {
    "house": {
        "name": ("text", True),
        "shape": ("text", True),
        "width": ("length", True),
        "length": ("length", True),
        "sidewall_height": ("length", True),
        "ridge_height": ("length", True),
        "bays": ("int", False),
        "notes": ("text", False),
    },
    "cover": {"roof": ("text", True), "sides": ("text", True), "ends": ("text", True)},
    "air": {"changes_per_hour": ("number", True)},
    "site": {
        "name": ("text", False),
        "latitude": ("number", True),
        "longitude": ("number", True),
        "elevation": ("length", False),
        "timezone": ("text", True),
        "units": ("text", False),
    },
    "floor": {
        "kind": ("text", False),
        "perimeter_insulated": ("bool", False),
        "deep_ground_temperature": ("temperature", False),
    },
    "knee_wall": {
        "height": ("length", True),
        "material": ("text", True),
        "ends": ("bool", False),
    },
    "curtain": {"kind": ("text", True), "closed_at_night": ("bool", False)},
    "control": {"vent_temperature": ("temperature", False)},
    "stock": {
        "fuel": ("text", False),
        "on_hand": ("text", False),
        "fill": ("text", False),  # "30%": a tank's gauge reading, a cylinder's share of full
        "withdrawal": ("text", False),  # "vapour" (default) or "liquid" (with a vaporiser)
        "price": ("number", False),
    },
}
LIST_SCHEMA: dict[str, dict[str, tuple[str, bool]]] = {
    "mass": {
        "name": ("text", False),
        "material": ("text", True),
        "volume": ("volume", False),
        "mass": ("mass", False),
        "count": ("int", False),
        "area": ("area", False),
    },
    "heater": {
        "name": ("text", False),
        "fuel": ("text", True),
        "appliance": ("text", False),
        "input": ("power", False),
        "output": ("power", False),
        "efficiency": ("number", False),
    },
}
FREE_TABLES = ("materials", "calibration")
TOP_KEYS = tuple(SCHEMA) + tuple(LIST_SCHEMA) + FREE_TABLES


@dataclass(frozen=True)
class Surface:
    """One part of the envelope: its area and cover."""

    name: str  # "roof", "side walls", "end walls", "knee walls"
    area_m2: float
    material: covers.Material

    @property
    def ua_w_per_k(self) -> float:
        return self.material.u_w_m2k * self.area_m2


@dataclass(frozen=True)
class Mass:
    """Thermal mass inside the house: barrels, tanks, benches, beds."""

    name: str
    material: str
    mass_kg: float
    specific_heat_j_per_kg_k: float
    area_m2: float  # surface exchanging heat with the air

    @property
    def capacitance_j_per_k(self) -> float:
        return self.mass_kg * self.specific_heat_j_per_kg_k


@dataclass(frozen=True)
class Heater:
    """An installed heater: output = input × efficiency (unit heaters are rated on input)."""

    name: str
    fuel: str
    appliance: str | None
    input_w: float
    output_w: float
    efficiency: float


@dataclass(frozen=True)
class Curtain:
    curtain: covers.Curtain
    closed_at_night: bool = True


@dataclass(frozen=True)
class House:
    """A validated house, SI throughout."""

    name: str
    path: str
    shape: str
    width_m: float  # of one span
    length_m: float
    sidewall_height_m: float
    ridge_height_m: float
    bays: int
    envelope: geometry.Envelope
    surfaces: tuple[Surface, ...]
    air_changes_per_hour: float
    floor_kind: str
    perimeter_insulated: bool
    deep_ground_temperature_c: float | None
    masses: tuple[Mass, ...] = ()
    heaters: tuple[Heater, ...] = ()
    curtain: Curtain | None = None
    site: Site | None = None
    units: str | None = None
    vent_temperature_c: float = 26.0
    stock: Mapping[str, Any] = field(default_factory=dict)
    calibration: Mapping[str, Any] = field(default_factory=dict)

    @property
    def floor_area_m2(self) -> float:
        return self.envelope.floor_m2

    @property
    def volume_m3(self) -> float:
        return self.envelope.volume_m3

    @property
    def roof_material(self) -> covers.Material:
        return self.surfaces[0].material

    @property
    def heater_output_w(self) -> float:
        return sum(h.output_w for h in self.heaters)


# ------------------------------------------------------------------ parsing


def _value(kind: str, raw: Any, where: str) -> Any:
    if kind == "text":
        if not isinstance(raw, str) or not raw.strip():
            raise InputError("must be a non-empty text", where=where)
        return raw.strip()
    if kind == "bool":
        if not isinstance(raw, bool):
            raise InputError("must be true or false", where=where)
        return raw
    if kind == "int":
        if isinstance(raw, bool) or not isinstance(raw, int):
            raise InputError(f"{raw!r} must be a whole number", where=where)
        return raw
    if kind == "number":
        if isinstance(raw, bool) or not isinstance(raw, int | float) or not math.isfinite(raw):
            raise InputError(f"{raw!r} must be a number", where=where)
        return float(raw)
    return parse_quantity(raw, kind, where=where)


def _section(
    table: Mapping[str, Any], schema: Mapping[str, tuple[str, bool]], where: str
) -> dict[str, Any]:
    if not isinstance(table, Mapping):
        raise InputError("must be a table", where=where)
    for key in table:
        if key not in schema:
            raise InputError(f'unknown key "{key}"{did_you_mean(key, schema)}', where=where)
    out: dict[str, Any] = {}
    for key, (kind, required) in schema.items():
        if key in table:
            out[key] = _value(kind, table[key], f"{where}.{key}")
        elif required:
            raise InputError(f'missing key "{key}"', where=where)
    return out


def _positive(value: float, where: str, *, allow_zero: bool = False) -> float:
    if value < 0 or (value == 0 and not allow_zero):
        word = "negative" if value < 0 else "zero"
        raise InputError(f"must be greater than zero (got {word}: {value:g})", where=where)
    return value


def read(path: str | Path) -> House:
    """Read and validate a house file.

    Raises `InputError` (one line naming the file and key) for a TOML syntax error, an
    unknown or missing key, an unknown material, a unit of the wrong dimension, or an
    impossible size.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise InputError("not a text file (UTF-8 expected)", where=str(path)) from exc
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"TOML syntax error: {exc}", where=str(path)) from exc
    return from_mapping(doc, source=str(path))


def from_mapping(doc: Mapping[str, Any], *, source: str = "house") -> House:
    """Validate an already-parsed house document (see `read`)."""
    for key in doc:
        if key not in TOP_KEYS:
            raise InputError(f'unknown section "{key}"{did_you_mean(key, TOP_KEYS)}', where=source)
    for key in ("house", "cover", "air"):
        if key not in doc:
            raise InputError(f'missing section "[{key}]"', where=source)

    def at(key: str) -> str:
        return f"{source}: {key}"

    h = _section(doc["house"], SCHEMA["house"], at("house"))
    shape = h["shape"]
    if shape not in geometry.SHAPES:
        raise InputError(
            f'unknown shape "{shape}"{did_you_mean(shape, geometry.SHAPES)}; '
            f"use one of {', '.join(geometry.SHAPES)}",
            where=at("house.shape"),
        )
    width = _positive(h["width"], at("house.width"))
    length = _positive(h["length"], at("house.length"))
    eave = _positive(h["sidewall_height"], at("house.sidewall_height"), allow_zero=True)
    ridge = _positive(h["ridge_height"], at("house.ridge_height"))
    bays = h.get("bays", 1)
    if bays < 1:
        raise InputError(f"must be at least 1 (got {bays})", where=at("house.bays"))
    if shape == "lean-to" and bays != 1:
        raise InputError("a lean-to has one bay", where=at("house.bays"))
    if ridge < eave:
        raise InputError(
            f"ridge height {ridge:g} m is lower than the side wall {eave:g} m",
            where=at("house.ridge_height"),
        )
    rise = ridge - eave
    if shape == "arch" and rise > width / 2.0 * (1 + 1e-12):
        raise InputError(
            f"an arch's rise ({rise:g} m) cannot exceed half its span ({width / 2:g} m); "
            'use shape = "gothic" for a pointed roof',
            where=at("house.ridge_height"),
        )
    if shape == "gothic" and rise > math.sqrt(3) / 2 * width * (1 + 1e-12):
        raise InputError(
            f"a gothic roof's rise ({rise:g} m) cannot exceed √3/2 of its span "
            f"({math.sqrt(3) / 2 * width:.3g} m)",
            where=at("house.ridge_height"),
        )
    if shape in ("gable", "lean-to", "gothic") and rise == 0 and eave == 0:
        raise InputError("a house needs some height", where=at("house.ridge_height"))
    if shape == "arch" and rise == 0 and eave == 0:
        raise InputError("a house needs some height", where=at("house.ridge_height"))

    env = geometry.envelope(shape, width, length, eave, ridge, bays)

    materials = covers.load_materials(doc.get("materials"), where=source)
    cov = _section(doc["cover"], SCHEMA["cover"], at("cover"))
    roof = covers.get_material(cov["roof"], materials, where=at("cover.roof"))
    sides = covers.get_material(cov["sides"], materials, where=at("cover.sides"))
    ends = covers.get_material(cov["ends"], materials, where=at("cover.ends"))

    side_area = env.side_walls_m2
    end_area = env.end_walls_m2
    knee_area = 0.0
    knee_material = None
    if "knee_wall" in doc:
        kw = _section(doc["knee_wall"], SCHEMA["knee_wall"], at("knee_wall"))
        kh = _positive(kw["height"], at("knee_wall.height"))
        if kh > eave:
            raise InputError(
                f"knee wall height {kh:g} m is above the side wall height {eave:g} m",
                where=at("knee_wall.height"),
            )
        knee_material = covers.get_material(
            kw["material"], materials, where=at("knee_wall.material")
        )
        walls = side_area / eave if eave > 0 else 0.0  # exposed side-wall length
        knee_sides = walls * kh
        knee_ends = 2.0 * bays * width * kh if kw.get("ends", True) else 0.0
        side_area -= knee_sides
        end_area -= knee_ends
        knee_area = knee_sides + knee_ends
    surfaces = [
        Surface("roof", env.roof_m2, roof),
        Surface("side walls", side_area, sides),
        Surface("end walls", end_area, ends),
    ]
    if knee_material is not None:
        surfaces.append(Surface("knee walls", knee_area, knee_material))
    surfaces = [x for x in surfaces if x.area_m2 > 0 or x.name == "roof"]  # a hoop has no walls

    air = _section(doc["air"], SCHEMA["air"], at("air"))
    ach = air["changes_per_hour"]
    if ach < 0 or ach > 60:
        raise InputError(
            f"{ach:g} is outside 0–60 air changes per hour", where=at("air.changes_per_hour")
        )

    site = None
    units = None
    if "site" in doc:
        s = _section(doc["site"], SCHEMA["site"], at("site"))
        if not -90 <= s["latitude"] <= 90:
            raise InputError("latitude must be within −90…90 degrees", where=at("site.latitude"))
        if not -180 <= s["longitude"] <= 180:
            raise InputError(
                "longitude must be within −180…180 degrees", where=at("site.longitude")
            )
        _check_timezone(s["timezone"], at("site.timezone"))
        units = s.get("units")
        if units is not None and units not in ("metric", "us"):
            raise InputError(f'"{units}" must be "metric" or "us"', where=at("site.units"))
        site = Site(
            latitude_deg=s["latitude"],
            longitude_deg=s["longitude"],
            elevation_m=s.get("elevation", 0.0),
            timezone=s["timezone"],
            name=s.get("name", ""),
        )

    fl = _section(doc.get("floor", {}), SCHEMA["floor"], at("floor"))
    floor_kind = fl.get("kind", "soil")
    if floor_kind not in FLOORS:
        raise InputError(
            f'unknown floor kind "{floor_kind}"{did_you_mean(floor_kind, FLOORS)}; '
            f"use one of {', '.join(FLOORS)}",
            where=at("floor.kind"),
        )

    masses = tuple(
        _mass(m, f"{source}: mass[{i}]") for i, m in enumerate(_list(doc, "mass", source))
    )
    heaters = tuple(
        _heater(hd, f"{source}: heater[{i}]") for i, hd in enumerate(_list(doc, "heater", source))
    )

    curtain = None
    if "curtain" in doc:
        ct = _section(doc["curtain"], SCHEMA["curtain"], at("curtain"))
        curtain = Curtain(
            covers.get_curtain(ct["kind"], where=at("curtain.kind")),
            ct.get("closed_at_night", True),
        )

    ctl = _section(doc.get("control", {}), SCHEMA["control"], at("control"))
    stock = _section(doc.get("stock", {}), SCHEMA["stock"], at("stock"))
    if stock.get("withdrawal", "vapour") not in ("vapour", "vapor", "liquid"):
        raise InputError('must be "vapour" or "liquid"', where=at("stock.withdrawal"))
    calibration = doc.get("calibration", {})
    if not isinstance(calibration, Mapping):
        raise InputError("must be a table", where=at("calibration"))

    return House(
        name=h["name"],
        path=source,
        shape=shape,
        width_m=width,
        length_m=length,
        sidewall_height_m=eave,
        ridge_height_m=ridge,
        bays=bays,
        envelope=env,
        surfaces=tuple(surfaces),
        air_changes_per_hour=ach,
        floor_kind=floor_kind,
        perimeter_insulated=fl.get("perimeter_insulated", False),
        deep_ground_temperature_c=fl.get("deep_ground_temperature"),
        masses=masses,
        heaters=heaters,
        curtain=curtain,
        site=site,
        units=units,
        vent_temperature_c=ctl.get("vent_temperature", 26.0),
        stock=stock,
        calibration=dict(calibration),
    )


def _list(doc: Mapping[str, Any], key: str, source: str) -> list[Mapping[str, Any]]:
    items = doc.get(key, [])
    if isinstance(items, Mapping):
        items = [items]
    if not isinstance(items, list):
        raise InputError(
            f"must be a table or a list of tables ([[{key}]])", where=f"{source}: {key}"
        )
    return items


def _mass(table: Mapping[str, Any], where: str) -> Mass:
    m = _section(table, LIST_SCHEMA["mass"], where)
    material = m["material"]
    if material not in MASS_MATERIALS:
        raise InputError(
            f'unknown mass material "{material}"{did_you_mean(material, MASS_MATERIALS)}',
            where=f"{where}.material",
        )
    count = m.get("count", 1)
    if count < 1:
        raise InputError("must be at least 1", where=f"{where}.count")
    if "mass" in m and "volume" in m:
        raise InputError('give "mass" or "volume", not both', where=where)
    if "volume" in m:
        volume = _positive(m["volume"], f"{where}.volume")
        if material != "water":
            raise InputError('"volume" is for water; give "mass" for other materials', where=where)
        kg = volume * WATER_DENSITY_KG_M3
    elif "mass" in m:
        kg = _positive(m["mass"], f"{where}.mass")
        volume = None
    else:
        raise InputError('missing key "mass" (or "volume" for water)', where=where)
    if "area" in m:
        area = _positive(m["area"], f"{where}.area")
    else:
        # each item an upright cylinder 1.5 diameters tall (a drum): side + top. A solid
        # given by mass is taken at 2000 kg/m³ (between wood and concrete: from memory).
        vol_each = volume if volume is not None else kg / SOLID_DENSITY_KG_M3
        d = (4.0 * vol_each / (1.5 * math.pi)) ** (1.0 / 3.0)
        area = math.pi * d * 1.5 * d + math.pi * d**2 / 4.0
    cp, _basis = MASS_MATERIALS[material]
    return Mass(m.get("name", material), material, kg * count, cp, area * count)


def _heater(table: Mapping[str, Any], where: str) -> Heater:
    from grower import fuels

    hd = _section(table, LIST_SCHEMA["heater"], where)
    fuel = _at(fuels.get_fuel, hd["fuel"], f"{where}.fuel")
    appliance_key = hd.get("appliance")
    if "efficiency" in hd:
        eff = hd["efficiency"]
        if not 0 < eff <= 1:
            raise InputError(
                f"{eff:g} must be within 0 < efficiency ≤ 1", where=f"{where}.efficiency"
            )
    else:
        key = appliance_key or fuel.default_appliance
        eff = _at(fuels.appliance_for, fuel, f"{where}.appliance", key).efficiency
    if "input" in hd and "output" in hd:
        raise InputError('give "input" (nameplate) or "output", not both', where=where)
    if "input" in hd:
        q_in = _positive(hd["input"], f"{where}.input")
        q_out = q_in * eff
    elif "output" in hd:
        q_out = _positive(hd["output"], f"{where}.output")
        q_in = q_out / eff
    else:
        raise InputError('missing key "input" (nameplate rating) or "output"', where=where)
    return Heater(hd.get("name", fuel.name), fuel.name, appliance_key, q_in, q_out, eff)


def _at(lookup, name, where: str, *more):
    """Call a table lookup; re-word its InputError to name the house file's key."""
    try:
        return lookup(name, *more)
    except InputError as exc:
        text = str(exc).split(": ", 1)[-1]
        raise InputError(text, where=where) from exc


def _check_timezone(name: str, where: str) -> None:
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    try:
        ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError) as exc:
        raise InputError(
            f'unknown time zone "{name}" (use an IANA name like "America/Toronto")', where=where
        ) from exc
