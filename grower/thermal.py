"""Floor kinds and thermal-mass materials: the shipped tables and their basis.

The values live in ``grower/data/floors.toml`` and ``grower/data/mass.toml``; every number
carries its unit as printed and its basis (``source = "..."``, or ``basis = "from memory"``,
``"common practice"`` or ``"derived: ..."``), like the cover and fuel tables. The tables
are read and checked once, on first use; a broken shipped row is a `ValueError` naming
the file, the row and the field (a packaging fault, not the user's input).
"""

from __future__ import annotations

import functools
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

#: unit strings the tables may print, and the factor to SI
UNITS: dict[str, dict[str, float]] = {
    "heat_capacity": {"MJ m-3 K-1": 1e6, "J m-3 K-1": 1.0},  # -> J m-3 K-1
    "conductivity": {"W m-1 K-1": 1.0},
    "specific_heat": {"kJ kg-1 K-1": 1e3, "J kg-1 K-1": 1.0},  # -> J kg-1 K-1
}
_PLAIN_BASES = ("from memory", "common practice")


@dataclass(frozen=True)
class Floor:
    """A floor kind: the layer that stores the day's heat."""

    key: str
    label: str
    heat_capacity_j_m3k: float  # volumetric heat capacity [J m-3 K-1]
    conductivity_w_mk: float  # thermal conductivity [W m-1 K-1]
    basis: Mapping[str, str]  # per number: "source: ...", "from memory", ...


@dataclass(frozen=True)
class MassMaterial:
    """A thermal-mass material."""

    key: str
    label: str
    specific_heat_j_kgk: float  # [J kg-1 K-1]
    basis: Mapping[str, str]


def _number(entry: Any, field: str, where: str) -> tuple[float, str]:
    """One ``{value, unit, source | basis, note}`` table -> (SI value > 0, basis)."""
    if not isinstance(entry, Mapping):
        raise ValueError(f"{where}: must be a table with value, unit and source or basis")
    unknown = set(entry) - {"value", "unit", "source", "basis", "note"}
    if unknown:
        raise ValueError(f"{where}: unknown field {sorted(unknown)[0]!r}")
    value = entry.get("value")
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise ValueError(f"{where}: value must be a finite number, not {value!r}")
    if value <= 0:
        raise ValueError(f"{where}: value must be > 0, not {value!r}")
    units = UNITS[field]
    if entry.get("unit") not in units:
        raise ValueError(f"{where}: unit {entry.get('unit')!r} must be one of {list(units)}")
    if ("source" in entry) == ("basis" in entry):
        raise ValueError(f"{where}: give exactly one of source or basis")
    if "source" in entry:
        if not isinstance(entry["source"], str) or not entry["source"].strip():
            raise ValueError(f"{where}: source must be non-empty text")
        basis = "source: " + entry["source"].strip()
    else:
        basis = entry["basis"]
        if basis not in _PLAIN_BASES and not (
            isinstance(basis, str) and basis.startswith("derived: ")
        ):
            raise ValueError(
                f'{where}: basis {basis!r} must be "from memory", "common practice" or "derived: ..."'
            )
    return float(value) * units[entry["unit"]], basis


def _rows(text: str, where: str, section: str, fields: tuple[str, ...]) -> dict[str, tuple]:
    """``[section.<key>]`` rows -> key -> (label, {field: SI value}, {field: basis})."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{where}: {exc}") from None
    table = doc.get(section)
    if not isinstance(table, Mapping) or not table:
        raise ValueError(f"{where}: no [{section}.<key>] rows")
    out = {}
    for key, row in table.items():
        w = f"{where}: {section}.{key}"
        if not isinstance(row, Mapping):
            raise ValueError(f"{w}: must be a table")
        unknown = set(row) - {"label", *fields}
        if unknown:
            raise ValueError(f"{w}: unknown field {sorted(unknown)[0]!r}")
        if not isinstance(row.get("label"), str) or not row["label"].strip():
            raise ValueError(f"{w}.label: missing or empty")
        values, basis = {}, {}
        for field in fields:
            if field not in row:
                raise ValueError(f"{w}.{field}: missing")
            values[field], basis[field] = _number(row[field], field, f"{w}.{field}")
        out[key] = (row["label"].strip(), values, basis)
    return out


def parse_floors(text: str, where: str = "floors.toml") -> dict[str, Floor]:
    """Parse and check a floor table (the format of ``grower/data/floors.toml``)."""
    rows = _rows(text, where, "floors", ("heat_capacity", "conductivity"))
    return {
        key: Floor(key, label, v["heat_capacity"], v["conductivity"], basis)
        for key, (label, v, basis) in rows.items()
    }


def parse_mass_materials(text: str, where: str = "mass.toml") -> dict[str, MassMaterial]:
    """Parse and check a mass-material table (the format of ``grower/data/mass.toml``)."""
    rows = _rows(text, where, "materials", ("specific_heat",))
    return {
        key: MassMaterial(key, label, v["specific_heat"], basis)
        for key, (label, v, basis) in rows.items()
    }


def _shipped_text(name: str) -> str:
    from grower.files import PACKAGE_DIR

    return (PACKAGE_DIR / "data" / name).read_text(encoding="utf-8")


@functools.cache
def floors() -> dict[str, Floor]:
    """The shipped floor kinds, by key."""
    return parse_floors(_shipped_text("floors.toml"), "grower/data/floors.toml")


@functools.cache
def mass_materials() -> dict[str, MassMaterial]:
    """The shipped thermal-mass materials, by key."""
    return parse_mass_materials(_shipped_text("mass.toml"), "grower/data/mass.toml")
