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

from grower import covers, geometry, limits, thermal
from grower.errors import InputError, did_you_mean, warn
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

    Only a regular file of at most `grower.files.HOUSE_FILE_MAX_BYTES` is read (a FIFO
    or a device is refused before it is opened); a UTF-8 byte-order mark is accepted.

    Raises `InputError` (one line naming the file and key) for a TOML syntax error, an
    unknown or missing key, an unknown material, a unit of the wrong dimension, or an
    impossible size.
    """
    from grower import files

    path = Path(path)
    text = files.read_text(path, files.HOUSE_FILE_MAX_BYTES, str(path), what="text (TOML)")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"TOML syntax error: {exc}", where=str(path)) from exc
    except RecursionError:
        raise InputError("TOML nested too deeply to be a house file", where=str(path)) from None
    return from_mapping(doc, source=str(path))


def from_mapping(doc: Mapping[str, Any], *, source: str = "house") -> House:
    """Validate an already-parsed house document (see `read`).

    The steps, each its own function: the sections present, the shape and size
    (`_shape`), the covers of each surface (`_surfaces`), air exchange, the site, the
    floor, thermal mass, heaters, curtain, control, stock and calibration.
    """
    _check_sections(doc, source)

    def at(key: str) -> str:
        return f"{source}: {key}"

    shape = _shape(doc["house"], at)
    env = geometry.envelope(
        shape.shape, shape.width_m, shape.length_m, shape.eave_m, shape.ridge_m, shape.bays
    )
    limits.check(env.floor_m2, limits.FLOOR_AREA_M2, at("house"))
    surfaces = _surfaces(doc, shape, env, source, at)
    ach = _air(doc["air"], at)
    site, units = _site(doc.get("site"), at)
    floor = _floor(doc.get("floor", {}), at)
    masses = tuple(
        _mass(m, f"{source}: mass[{i}]") for i, m in enumerate(_list(doc, "mass", source))
    )
    _check_masses(masses, env, source)
    heaters = tuple(
        _heater(hd, f"{source}: heater[{i}]") for i, hd in enumerate(_list(doc, "heater", source))
    )
    _check_heaters(heaters, env, source)
    curtain = _curtain(doc.get("curtain"), at)
    ctl = _section(doc.get("control", {}), SCHEMA["control"], at("control"))
    vent = ctl.get("vent_temperature", 26.0)
    limits.check(vent, limits.VENT_C, at("control.vent_temperature"))
    stock = _stock(doc.get("stock", {}), at)
    calibration = _calibration(doc.get("calibration", {}), at)

    return House(
        name=shape.name,
        path=source,
        shape=shape.shape,
        width_m=shape.width_m,
        length_m=shape.length_m,
        sidewall_height_m=shape.eave_m,
        ridge_height_m=shape.ridge_m,
        bays=shape.bays,
        envelope=env,
        surfaces=surfaces,
        air_changes_per_hour=ach,
        floor_kind=floor["kind"],
        perimeter_insulated=floor["perimeter_insulated"],
        deep_ground_temperature_c=floor["deep_ground_temperature"],
        masses=masses,
        heaters=heaters,
        curtain=curtain,
        site=site,
        units=units,
        vent_temperature_c=vent,
        stock=stock,
        calibration=calibration,
    )


# ------------------------------------------------------------------ the steps


@dataclass(frozen=True)
class _Shape:
    name: str
    shape: str
    width_m: float
    length_m: float
    eave_m: float
    ridge_m: float
    bays: int


def _check_sections(doc: Mapping[str, Any], source: str) -> None:
    for key in doc:
        if key not in TOP_KEYS:
            raise InputError(f'unknown section "{key}"{did_you_mean(key, TOP_KEYS)}', where=source)
    for key in ("house", "cover", "air"):
        if key not in doc:
            raise InputError(f'missing section "[{key}]"', where=source)


def _shape(table: Mapping[str, Any], at) -> _Shape:
    """[house]: shape, span, length, heights and bays, each within its plausible range."""
    h = _section(table, SCHEMA["house"], at("house"))
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
    limits.check(width, limits.WIDTH_M, at("house.width"), shown=_shown(h, table, "width"))
    limits.check(length, limits.LENGTH_M, at("house.length"), shown=_shown(h, table, "length"))
    limits.check(
        eave,
        limits.SIDEWALL_M,
        at("house.sidewall_height"),
        shown=_shown(h, table, "sidewall_height"),
    )
    limits.check(
        ridge, limits.RIDGE_M, at("house.ridge_height"), shown=_shown(h, table, "ridge_height")
    )
    bays = h.get("bays", 1)
    if bays < 1:
        raise InputError(f"must be at least 1 (got {bays})", where=at("house.bays"))
    limits.check(bays, limits.BAYS, at("house.bays"))
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
    if rise == 0 and eave == 0:
        raise InputError("a house needs some height", where=at("house.ridge_height"))
    return _Shape(h["name"], shape, width, length, eave, ridge, bays)


def _shown(_parsed: Mapping[str, Any], table: Mapping[str, Any], key: str) -> str | None:
    """The file's own text for `key` when it was given as text ("9 mm"), for messages."""
    raw = table.get(key)
    return raw if isinstance(raw, str) else None


def _surfaces(doc, shape: _Shape, env, source: str, at) -> tuple[Surface, ...]:
    """[cover] and [knee_wall]: each envelope surface with its material."""
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
        if kh > shape.eave_m:
            raise InputError(
                f"knee wall height {kh:g} m is above the side wall height {shape.eave_m:g} m",
                where=at("knee_wall.height"),
            )
        knee_material = covers.get_material(
            kw["material"], materials, where=at("knee_wall.material")
        )
        limits.check(knee_material.u_w_m2k, limits.U_VALUE, at("knee_wall.material"))
        walls = side_area / shape.eave_m if shape.eave_m > 0 else 0.0  # exposed side length
        knee_sides = walls * kh
        knee_ends = 2.0 * shape.bays * shape.width_m * kh if kw.get("ends", True) else 0.0
        side_area -= knee_sides
        end_area -= knee_ends
        knee_area = knee_sides + knee_ends
    for key, material in (("roof", roof), ("sides", sides), ("ends", ends)):
        limits.check(material.u_w_m2k, limits.U_VALUE, at(f"cover.{key}") + f" ({material.key})")
    surfaces = [
        Surface("roof", env.roof_m2, roof),
        Surface("side walls", side_area, sides),
        Surface("end walls", end_area, ends),
    ]
    if knee_material is not None:
        surfaces.append(Surface("knee walls", knee_area, knee_material))
    # a hoop has no walls
    return tuple(x for x in surfaces if x.area_m2 > 0 or x.name == "roof")


def _air(table: Mapping[str, Any], at) -> float:
    air = _section(table, SCHEMA["air"], at("air"))
    ach = air["changes_per_hour"]
    b = limits.AIR_CHANGES_PER_H
    if ach < b.lo or ach > b.hi:
        raise InputError(
            f"{ach:g} is outside {b.lo:g}–{b.hi:g} air changes per hour",
            where=at("air.changes_per_hour"),
        )
    return limits.check(ach, b, at("air.changes_per_hour"))


def _site(table: Mapping[str, Any] | None, at) -> tuple[Site | None, str | None]:
    """[site]: where the house stands, its clock and its units; None when absent."""
    if table is None:
        return None, None
    s = _section(table, SCHEMA["site"], at("site"))
    if not -90 <= s["latitude"] <= 90:
        raise InputError("latitude must be within −90…90 degrees", where=at("site.latitude"))
    if not -180 <= s["longitude"] <= 180:
        raise InputError("longitude must be within −180…180 degrees", where=at("site.longitude"))
    _check_timezone(s["timezone"], at("site.timezone"))
    _check_clock(s["timezone"], s["longitude"], at("site.timezone"))
    units = s.get("units")
    if units is not None and units not in ("metric", "us"):
        raise InputError(f'"{units}" must be "metric" or "us"', where=at("site.units"))
    elevation = s.get("elevation", 0.0)
    limits.check(
        elevation, limits.ELEVATION_M, at("site.elevation"), shown=_shown(s, table, "elevation")
    )
    site = Site(
        latitude_deg=s["latitude"],
        longitude_deg=s["longitude"],
        elevation_m=elevation,
        timezone=s["timezone"],
        name=s.get("name", ""),
    )
    return site, units


def _floor(table: Mapping[str, Any], at) -> dict[str, Any]:
    fl = _section(table, SCHEMA["floor"], at("floor"))
    kind = fl.get("kind", "soil")
    if kind not in FLOORS:
        raise InputError(
            f'unknown floor kind "{kind}"{did_you_mean(kind, FLOORS)}; '
            f"use one of {', '.join(FLOORS)}",
            where=at("floor.kind"),
        )
    deep = fl.get("deep_ground_temperature")
    if deep is not None:
        limits.check(
            deep,
            limits.DEEP_GROUND_C,
            at("floor.deep_ground_temperature"),
            shown=_shown(fl, table, "deep_ground_temperature"),
        )
    return {
        "kind": kind,
        "perimeter_insulated": fl.get("perimeter_insulated", False),
        "deep_ground_temperature": deep,
    }


def _check_masses(masses: tuple[Mass, ...], env, source: str) -> None:
    """Thermal mass must fit in the house: volume and exchange area against its size."""
    if not masses:
        return
    volume = sum(
        m.mass_kg / (WATER_DENSITY_KG_M3 if m.material == "water" else SOLID_DENSITY_KG_M3)
        for m in masses
    )
    share = volume / env.volume_m3
    refuse, usual = limits.MASS_VOLUME_SHARE
    where = f"{source}: mass"
    if not math.isfinite(share) or share > refuse:
        raise InputError(
            f"{volume:,.4g} m³ of thermal mass is {share:.0%} of the house's {env.volume_m3:,.4g} m³ "
            f"inside volume; more than {refuse:.0%} leaves no room to grow (check volume, mass and count)",
            where=where,
        )
    if share > usual:
        warn(
            f"{volume:,.4g} m³ of thermal mass is {share:.0%} of the house's inside volume "
            f"(usually under {usual:.0%}); check volume, mass and count",
            where=where,
        )
    area = sum(m.area_m2 for m in masses)
    refuse, usual = limits.MASS_AREA_PER_FLOOR
    ratio = area / env.floor_m2
    if not math.isfinite(ratio) or ratio > refuse:
        raise InputError(
            f"{area:,.4g} m² of mass surface is {ratio:.3g} × the floor area; more than "
            f"{refuse:g} × cannot fit in the house",
            where=where,
        )
    if ratio > usual:
        warn(
            f"{area:,.4g} m² of mass surface is {ratio:.3g} × the floor area (usually under {usual:g} ×)",
            where=where,
        )


def _check_heaters(heaters: tuple[Heater, ...], env, source: str) -> None:
    total = sum(h.output_w for h in heaters)
    if heaters and total / env.floor_m2 > limits.HEATER_USUAL_W_PER_M2:
        warn(
            f"{total / 1e3:,.4g} kW of heat output is {total / env.floor_m2:,.0f} W per m² of floor "
            f"(cold-climate designs install 100–400 W/m²); check input and output",
            where=f"{source}: heater",
        )


def _curtain(table: Mapping[str, Any] | None, at) -> Curtain | None:
    if table is None:
        return None
    ct = _section(table, SCHEMA["curtain"], at("curtain"))
    return Curtain(
        covers.get_curtain(ct["kind"], where=at("curtain.kind")), ct.get("closed_at_night", True)
    )


def _stock(table: Mapping[str, Any], at) -> dict[str, Any]:
    stock = _section(table, SCHEMA["stock"], at("stock"))
    if stock.get("withdrawal", "vapour") not in ("vapour", "vapor", "liquid"):
        raise InputError('must be "vapour" or "liquid"', where=at("stock.withdrawal"))
    if "price" in stock and stock["price"] < 0:
        raise InputError(
            f"{stock['price']:g} is a negative price (zero or more)", where=at("stock.price")
        )
    if "price" in stock:
        limits.check(stock["price"], limits.PRICE, at("stock.price"))
    return stock


#: [calibration] keys that must be positive, finite numbers when present (any format)
_CALIBRATION_POSITIVE = ("k_w_per_k", "c_j_per_k", "coupling_scale", "heater_output_w")
#: format 2 (`grower.fit.calibration`): keys it must have, > 0 (or ≥ 0 for the sky part:
#: a house under glass has next to none)
_CALIBRATION_REQUIRED = {
    "k_outside_w_per_k": "positive",
    "k_sky_w_per_k": "non-negative",
    "c_j_per_k": "positive",
    "geometry_k_outside_w_per_k": "positive",
    "geometry_k_sky_w_per_k": "non-negative",
    "geometry_c_j_per_k": "positive",
}
#: format 2: further keys that must be non-negative numbers when present
_CALIBRATION_NON_NEGATIVE = (
    "k_outside_w_per_k_ci95",
    "k_sky_w_per_k_ci95",
    "k_w_per_k_ci95",
    "c_j_per_k_ci95",
    "record_wind_m_s",
    "record_hours",
    "rms_k",
    "noise_k",
    "time_constant_h",
)
_CALIBRATION_REFIT = (
    "(written by `grower fit --write`; refit, or delete the [calibration] table to use "
    "the geometry)"
)


def _calibration_number(v: Any, sign: str, where: str) -> None:
    bad = isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v)
    if bad or (v <= 0 if sign == "positive" else v < 0):
        raise InputError(f"{v!r} must be a {sign} number {_CALIBRATION_REFIT}", where=where)


def _calibration(table: Any, at) -> dict[str, Any]:
    """The [calibration] table, checked: any format's K, C as numbers; format 2 whole.

    A table without ``format`` is an older fit, read but not used (see
    `grower.plans.model.calibration_note`); an integer format other than 2 likewise.
    """
    if not isinstance(table, Mapping):
        raise InputError("must be a table", where=at("calibration"))
    # the values first, each naming its own key (a bad number is what the user wrote;
    # a missing key is reported after)
    for key in _CALIBRATION_POSITIVE:
        if key in table:
            _calibration_number(table[key], "positive", at(f"calibration.{key}"))
    for key, sign in _CALIBRATION_REQUIRED.items():
        if key in table:
            _calibration_number(table[key], sign, at(f"calibration.{key}"))
    for key in _CALIBRATION_NON_NEGATIVE:
        if key in table:
            _calibration_number(table[key], "non-negative", at(f"calibration.{key}"))
    fmt = table.get("format")
    if "format" in table and (isinstance(fmt, bool) or not isinstance(fmt, int)):
        raise InputError(
            f"{fmt!r} must be a whole number (2) {_CALIBRATION_REFIT}",
            where=at("calibration.format"),
        )
    if fmt != 2:
        return dict(table)
    model = table.get("model")
    if "model" not in table:
        raise InputError(
            f'missing key "model" (format 2) {_CALIBRATION_REFIT}', where=at("calibration")
        )
    if model not in ("lumped", "two-node"):
        raise InputError(
            f'{model!r} must be "lumped" or "two-node" {_CALIBRATION_REFIT}',
            where=at("calibration.model"),
        )
    for key in _CALIBRATION_REQUIRED:
        if key not in table:
            raise InputError(
                f'missing key "{key}" (format 2) {_CALIBRATION_REFIT}', where=at("calibration")
            )
    if ("k_ground_w_per_k" in table) != ("geometry_k_ground_w_per_k" in table):
        raise InputError(
            f"k_ground_w_per_k and geometry_k_ground_w_per_k go together {_CALIBRATION_REFIT}",
            where=at("calibration"),
        )
    for key in ("k_ground_w_per_k", "geometry_k_ground_w_per_k"):
        if key in table:
            _calibration_number(table[key], "non-negative", at(f"calibration.{key}"))
    if "k_sky_by_night_w_per_k" in table:
        nights = table["k_sky_by_night_w_per_k"]
        where = at("calibration.k_sky_by_night_w_per_k")
        if not isinstance(nights, list) or not nights:
            raise InputError(f"must be a list of numbers {_CALIBRATION_REFIT}", where=where)
        for v in nights:
            _calibration_number(v, "non-negative", where)
    if "record_mean_outside_c" in table:
        t = table["record_mean_outside_c"]
        where = at("calibration.record_mean_outside_c")
        if isinstance(t, bool) or not isinstance(t, int | float) or not math.isfinite(t):
            raise InputError(f"{t!r} must be a temperature in °C {_CALIBRATION_REFIT}", where=where)
        limits.check(float(t), limits.OUTSIDE_AIR_C, where)
    quality = table.get("quality", "good")
    if quality not in ("good", "rough"):
        raise InputError(
            f'{quality!r} must be "good" or "rough" {_CALIBRATION_REFIT}',
            where=at("calibration.quality"),
        )
    return dict(table)


def check_calibration(house: House) -> None:
    """Refuse a format-2 ``[calibration]`` that cannot describe this envelope; warn of an
    unusual one.

    The fitted values are compared with the geometry's stored beside them (at the
    record's conditions): the conduction K_out outside `limits.CALIBRATION_K_RATIO`\\[0]
    (0.2–5 ×), the sky part outside `limits.CALIBRATION_SKY_RATIO`\\[0] (0–5 ×) or C
    outside `limits.CALIBRATION_C_RATIO`\\[0] (0.1–10 ×) is an `InputError` naming the
    file's key; outside the usual ranges a warning. A table of an older format is not
    checked: it is not used (`grower.plans.model.calibration_note`). For the commands to
    call before a calibrated run.
    """
    cal = house.calibration
    if not cal or cal.get("format") != 2:
        return
    where = f"{house.path}: calibration"
    k_out, g_out = float(cal["k_outside_w_per_k"]), float(cal["geometry_k_outside_w_per_k"])
    limits.check_ratio(
        k_out / g_out,
        limits.CALIBRATION_K_RATIO,
        f"K to outside air = {k_out:,.0f} W/K (the geometry's {g_out:,.0f} W/K)",
        f"{where}.k_outside_w_per_k",
    )
    k_sky, g_sky = float(cal["k_sky_w_per_k"]), float(cal["geometry_k_sky_w_per_k"])
    if g_sky > 0:
        limits.check_ratio(
            k_sky / g_sky,
            limits.CALIBRATION_SKY_RATIO,
            f"the sky part = {k_sky:,.0f} W/K (the geometry's {g_sky:,.0f} W/K)",
            f"{where}.k_sky_w_per_k",
        )
    c, g_c = float(cal["c_j_per_k"]), float(cal["geometry_c_j_per_k"])
    limits.check_ratio(
        c / g_c,
        limits.CALIBRATION_C_RATIO,
        f"C = {c / 1e6:,.4g} MJ/K (the geometry's {g_c / 1e6:,.4g} MJ/K)",
        f"{where}.c_j_per_k",
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
        limits.check(eff, limits.EFFICIENCY, f"{where}.efficiency")
    else:
        key = appliance_key or fuel.default_appliance
        eff = _at(fuels.appliance_for, fuel, f"{where}.appliance", key).efficiency
    if "input" in hd and "output" in hd:
        raise InputError('give "input" (nameplate) or "output", not both', where=where)
    if "input" in hd:
        q_in = _positive(hd["input"], f"{where}.input")
        limits.check(q_in, limits.HEATER_W, f"{where}.input", shown=_shown(hd, table, "input"))
        q_out = q_in * eff
    elif "output" in hd:
        q_out = _positive(hd["output"], f"{where}.output")
        limits.check(q_out, limits.HEATER_W, f"{where}.output", shown=_shown(hd, table, "output"))
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


def _check_clock(zone_name: str, longitude_deg: float, where: str) -> None:
    """The zone's clock against the longitude's solar time (15° per hour).

    A sign slip in the longitude (west is negative) or a zone from the wrong continent
    puts sunrise and the forecast's hours many hours off; the widest real gaps are
    about 3 h, 4 h with summer time (`limits.TIMEZONE_LONGITUDE_H`).
    """
    import datetime as dt
    from zoneinfo import ZoneInfo

    zone = ZoneInfo(zone_name)
    solar_h = longitude_deg / 15.0
    offsets = []
    for month in (1, 7):
        offset = dt.datetime(2026, month, 15, 12, tzinfo=zone).utcoffset()
        offsets.append(offset.total_seconds() / 3600.0 if offset is not None else 0.0)
    gaps = [abs((off_h - solar_h + 12.0) % 24.0 - 12.0) for off_h in offsets]
    gap = min(gaps)
    refuse, usual = limits.TIMEZONE_LONGITUDE_H
    flipped = min(abs((g_off - (-solar_h) + 12.0) % 24.0 - 12.0) for g_off in offsets)
    hint = ""
    if flipped <= usual:
        side = "west" if longitude_deg > 0 else "east"
        sign = "negative" if side == "west" else "positive"
        hint = f"; is the site {side} of Greenwich? {side} longitudes are {sign}"
    if gap > refuse:
        raise InputError(
            f'"{zone_name}" keeps a clock {gap:.1f} h from the solar time of longitude '
            f"{longitude_deg:g}° (at most {refuse:g} h anywhere){hint}",
            where=where,
        )
    if gap > usual:
        warn(
            f'"{zone_name}" keeps a clock {gap:.1f} h from the solar time of longitude '
            f"{longitude_deg:g}° (usually under {usual:g} h); check longitude and zone",
            where=where,
        )


def _check_timezone(name: str, where: str) -> None:
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    try:
        ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError) as exc:
        raise InputError(
            f'unknown time zone "{name}" (use an IANA name like "America/Toronto")', where=where
        ) from exc
