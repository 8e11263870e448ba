"""Cover and wall materials, and energy curtains.

A *material* is what one surface of the house (roof, side walls, end walls, knee wall) is
made of. It carries the three numbers the thermal network needs:

- ``u_w_m2k``: the overall heat-transfer coefficient of the cover in calm air, surface
  films included [W m-2 K-1];
- ``longwave_transmittance``: the fraction of thermal infrared (about 3-50 µm) that
  passes, which sets how much the floor and plants radiate straight to the night sky [1];
- ``solar_transmittance``: the fraction of sunlight that passes [1].

A *curtain* (energy curtain, thermal screen) is drawn under the roof at night; it cuts
the conduction of the surfaces it covers by ``saving_fraction`` and passes
``longwave_transmittance`` of the thermal IR.

The shipped tables live in ``grower/data/covers.toml`` and ``grower/data/curtains.toml``;
every number there names its basis (a published source, ``from memory``,
``common practice`` or ``derived: ...``), and that basis is kept on each object so a
report can show it. A house file may add or replace materials in ``[materials.<key>]``
tables (see `load_materials`).

References
----------
S. Sanford, "Glazing Materials", eXtension Farm Energy (University of Wisconsin-Madison).
J. Bartok, "Insulating Sidewalls and Endwalls", UMass Extension fact sheet.
J. Bartok, "Heating cold frames, high tunnels", Greenhouse Management.
eXtension Farm Energy, "Thermal Curtains".
Acta Horticulturae 245 (closed metallised screens).
"""

from __future__ import annotations

import functools
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from grower.errors import InputError, did_you_mean
from grower.units import W_M2K_PER_BTU_HFT2F, parse_quantity

#: the kinds a material may be
KINDS = ("glazing", "opaque")
#: sane bounds for a U-value [W m-2 K-1]: nothing real conducts 10 W/m²·K in calm air
U_MAX_W_M2K = 10.0
#: unit spellings allowed in the shipped table (as the sources print them) -> factor to SI
_SHIPPED_U_UNITS = {"Btu/h·ft²·°F": W_M2K_PER_BTU_HFT2F, "W/m²·K": 1.0}
#: TOML name -> dataclass field name, for the three numbers of a material
_MATERIAL_NUMBERS = {
    "u": "u_w_m2k",
    "longwave_transmittance": "longwave_transmittance",
    "solar_transmittance": "solar_transmittance",
}
#: numbers a material row may carry, and the dataclass field each fills
_OPTIONAL_MATERIAL_NUMBERS = {"outer_emissivity": "outer_emissivity"}
_CURTAIN_NUMBERS = {
    "saving_fraction": "saving_fraction",
    "longwave_transmittance": "longwave_transmittance",
}
#: fields a user's [materials.<key>] table may carry
USER_FIELDS = (
    "label",
    "kind",
    "u",
    "longwave_transmittance",
    "solar_transmittance",
    "outer_emissivity",
    "basis",
    "source",
)
_PLAIN_BASES = ("from memory", "common practice")
_OPAQUE_BASIS = "common practice: an opaque wall passes no radiation"


@dataclass(frozen=True)
class Material:
    """One cover or wall material.

    Attributes
    ----------
    key : str
        The name house files use (``"double-poly"``).
    label : str
        What the report prints.
    kind : str
        ``"glazing"`` or ``"opaque"``.
    u_w_m2k : float
        Overall heat-transfer coefficient, surface films included, at the 15 mph winter
        design wind the tables hold at [W m-2 K-1] (see `grower.network`).
    longwave_transmittance : float
        Thermal-IR transmittance [1].
    solar_transmittance : float
        Solar transmittance [1].
    outer_emissivity : float or None
        Long-wave emissivity of the outer face [1], which radiates to the sky; None: taken
        as 1 − longwave_transmittance, at most 0.9 (`grower.network`).
    basis : Mapping[str, str]
        Per field (``"u_w_m2k"``, ``"longwave_transmittance"``, ``"solar_transmittance"``):
        ``"source: ..."``, ``"from memory"``, ``"common practice"``, ``"derived: ..."``,
        or, for a user's material, ``"user: ..."``.
    user_defined : bool
        True for a material from the user's house file.
    notes : Mapping[str, str]
        Per field, the note the table gives (which table a recalled figure came from,
        where two sources differ); may be empty.
    """

    key: str
    label: str
    kind: str
    u_w_m2k: float
    longwave_transmittance: float
    solar_transmittance: float
    basis: Mapping[str, str]
    user_defined: bool = False
    notes: Mapping[str, str] = field(default_factory=dict)
    outer_emissivity: float | None = None


@dataclass(frozen=True)
class Curtain:
    """One energy-curtain (thermal screen) type.

    Attributes
    ----------
    key : str
        The name house files use (``"aluminised"``).
    label : str
        What the report prints.
    saving_fraction : float
        Fraction by which the closed curtain cuts the conduction of the roof and walls
        it covers [1], ``0 <= f < 1``.
    longwave_transmittance : float
        Thermal-IR transmittance of the closed curtain [1].
    basis : Mapping[str, str]
        Per field (``"saving_fraction"``, ``"longwave_transmittance"``), as for `Material`.
    notes : Mapping[str, str]
        Per field, the table's note; may be empty.
    """

    key: str
    label: str
    saving_fraction: float
    longwave_transmittance: float
    basis: Mapping[str, str]
    notes: Mapping[str, str] = field(default_factory=dict)


# ---------------------------------------------------------------- checks


def _where(where: str, *parts: str) -> str:
    path = ".".join(parts)
    return f"{where}: {path}" if where else path


def _check_u(u_w_m2k: float, where: str) -> float:
    if not (0.0 < u_w_m2k < U_MAX_W_M2K):
        raise InputError(
            f"U-value {u_w_m2k:.4g} W/m²·K is out of range (0 < U < {U_MAX_W_M2K:g} W/m²·K)",
            where=where,
        )
    return u_w_m2k


def _check_fraction(value: float, name: str, where: str, *, below_one: bool = False) -> float:
    top_ok = value < 1.0 if below_one else value <= 1.0
    if not (value >= 0.0 and top_ok):
        bound = "0 <= x < 1" if below_one else "0 to 1"
        raise InputError(f"{name} {value:.4g} is outside {bound}", where=where)
    return value


def _text(value: Any, name: str, where: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{name} must be non-empty text", where=where)
    return value.strip()


# ---------------------------------------------------------------- shipped tables


def _shipped_number(entry: Any, *, unit_needed: bool, where: str) -> tuple[float, str, str]:
    """One ``{value, source | basis, note, [unit]}`` table -> (SI value, basis, note)."""
    if not isinstance(entry, Mapping):
        raise InputError("must be a table with value and source or basis", where=where)
    allowed = {"value", "source", "basis", "note"} | ({"unit"} if unit_needed else set())
    for name in entry:
        if name not in allowed:
            raise InputError(f'unknown field "{name}"{did_you_mean(name, allowed)}', where=where)
    value = entry.get("value")
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"value must be a finite number, not {value!r}", where=where)
    if ("source" in entry) == ("basis" in entry):
        raise InputError("give exactly one of source or basis", where=where)
    if "source" in entry:
        basis = "source: " + _text(entry["source"], "source", where)
    else:
        basis = _text(entry["basis"], "basis", where)
        if basis not in _PLAIN_BASES and not basis.startswith("derived: "):
            raise InputError(
                f'basis "{basis}" must be "from memory", "common practice" or "derived: ..."',
                where=where,
            )
    note = _text(entry["note"], "note", where) if "note" in entry else ""
    factor = 1.0
    if unit_needed:
        unit = entry.get("unit")
        if unit not in _SHIPPED_U_UNITS:
            known = ", ".join(f'"{u}"' for u in _SHIPPED_U_UNITS)
            raise InputError(f"unit {unit!r} must be one of {known}", where=where)
        factor = _SHIPPED_U_UNITS[unit]
    return float(value) * factor, basis, note


def _shipped_row(
    row: Any,
    numbers: Mapping[str, str],
    extra: tuple[str, ...],
    where: str,
    optional: Mapping[str, str] | None = None,
) -> tuple[dict[str, Any], dict[str, float], dict[str, str], dict[str, str]]:
    """Check one row's fields; return (extra text fields, numbers in SI, basis, notes)."""
    if not isinstance(row, Mapping):
        raise InputError("must be a table", where=where)
    optional = optional or {}
    allowed = (*extra, *numbers, *optional)
    for name in row:
        if name not in allowed:
            raise InputError(
                f'unknown field "{name}"{did_you_mean(name, allowed)}', where=f"{where}.{name}"
            )
    texts = {}
    for name in extra:
        if name not in row:
            raise InputError("missing", where=f"{where}.{name}")
        texts[name] = _text(row[name], name, f"{where}.{name}")
    values: dict[str, float] = {}
    basis: dict[str, str] = {}
    notes: dict[str, str] = {}
    for toml_name, attr in {**numbers, **optional}.items():
        if toml_name not in row:
            if toml_name in optional:
                continue
            raise InputError("missing", where=f"{where}.{toml_name}")
        value, why, note = _shipped_number(
            row[toml_name], unit_needed=toml_name == "u", where=f"{where}.{toml_name}"
        )
        values[attr], basis[attr] = value, why
        if note:
            notes[attr] = note
    return texts, values, basis, notes


def _read_table(name: str) -> dict[str, Any]:
    from grower.files import PACKAGE_DIR

    text = (PACKAGE_DIR / "data" / name).read_text(encoding="utf-8")
    return tomllib.loads(text)


@functools.lru_cache(maxsize=1)
def _shipped_materials() -> dict[str, Material]:
    where = "grower/data/covers.toml"
    try:
        table = _read_table("covers.toml")
        out: dict[str, Material] = {}
        for key, row in table["materials"].items():
            w = _where(where, "materials", key)
            texts, values, basis, notes = _shipped_row(
                row, _MATERIAL_NUMBERS, ("label", "kind"), w, _OPTIONAL_MATERIAL_NUMBERS
            )
            material = Material(
                key=key,
                label=texts["label"],
                kind=texts["kind"],
                u_w_m2k=values["u_w_m2k"],
                longwave_transmittance=values["longwave_transmittance"],
                solar_transmittance=values["solar_transmittance"],
                basis=basis,
                notes=notes,
                outer_emissivity=values.get("outer_emissivity"),
            )
            _check_material(material, w)
            out[key] = material
    except (InputError, KeyError, tomllib.TOMLDecodeError) as exc:
        raise ValueError(f"the shipped cover table is broken: {exc}") from exc
    return out


def _check_material(material: Material, where: str) -> None:
    if material.kind not in KINDS:
        raise InputError(
            f'kind "{material.kind}" must be "glazing" or "opaque"'
            f"{did_you_mean(material.kind, KINDS)}",
            where=f"{where}.kind",
        )
    _check_u(material.u_w_m2k, f"{where}.u")
    if material.outer_emissivity is not None:
        _check_fraction(material.outer_emissivity, "outer_emissivity", f"{where}.outer_emissivity")
    for name in ("longwave_transmittance", "solar_transmittance"):
        _check_fraction(getattr(material, name), name, f"{where}.{name}")
        if material.kind == "opaque" and getattr(material, name) != 0.0:
            raise InputError(f"{name} of an opaque material must be 0", where=f"{where}.{name}")


@functools.lru_cache(maxsize=1)
def _shipped_curtains() -> dict[str, Curtain]:
    where = "grower/data/curtains.toml"
    try:
        table = _read_table("curtains.toml")
        out: dict[str, Curtain] = {}
        for key, row in table["curtains"].items():
            w = _where(where, "curtains", key)
            texts, values, basis, notes = _shipped_row(row, _CURTAIN_NUMBERS, ("label",), w)
            _check_fraction(
                values["saving_fraction"],
                "saving_fraction",
                f"{w}.saving_fraction",
                below_one=True,
            )
            _check_fraction(
                values["longwave_transmittance"],
                "longwave_transmittance",
                f"{w}.longwave_transmittance",
            )
            out[key] = Curtain(key=key, label=texts["label"], basis=basis, notes=notes, **values)
    except (InputError, KeyError, tomllib.TOMLDecodeError) as exc:
        raise ValueError(f"the shipped curtain table is broken: {exc}") from exc
    return out


# ---------------------------------------------------------------- user materials


def _user_material(key: str, row: Any, where: str) -> Material:
    """A ``[materials.<key>]`` table from a house file -> `Material`."""
    here = _where(where, "materials", key)
    if not isinstance(row, Mapping):
        raise InputError(
            "must be a table (u, longwave_transmittance, solar_transmittance, kind, basis)",
            where=here,
        )
    for name in row:
        if name not in USER_FIELDS:
            raise InputError(
                f'unknown field "{name}"{did_you_mean(name, USER_FIELDS)}', where=f"{here}.{name}"
            )
    kind = row.get("kind", "glazing")
    if kind not in KINDS:
        raise InputError(
            f'kind {kind!r} must be "glazing" or "opaque"'
            f"{did_you_mean(kind, KINDS) if isinstance(kind, str) else ''}",
            where=f"{here}.kind",
        )
    label = _text(row["label"], "label", f"{here}.label") if "label" in row else key
    if "source" not in row and "basis" not in row:
        raise InputError(
            'missing: say where these numbers come from, e.g. basis = "maker\'s data sheet"',
            where=f"{here}.basis",
        )
    why = "; ".join(
        _text(row[name], name, f"{here}.{name}") for name in ("source", "basis") if name in row
    )
    if "u" not in row:
        raise InputError(
            'missing: give the U-value, e.g. u = "1.1 Btu/h·ft²·°F" or a number in W/m²·K',
            where=f"{here}.u",
        )
    u = _check_u(parse_quantity(row["u"], "u_value", where=f"{here}.u"), f"{here}.u")
    basis = {"u_w_m2k": f"user: {why}"}
    fractions: dict[str, float] = {}
    for name in ("longwave_transmittance", "solar_transmittance"):
        w = f"{here}.{name}"
        if name in row:
            fractions[name] = _check_fraction(
                parse_quantity(row[name], "fraction", where=w), name, w
            )
            basis[name] = f"user: {why}"
        elif kind == "opaque":
            fractions[name] = 0.0
            basis[name] = _OPAQUE_BASIS
        else:
            raise InputError(
                "missing: a glazing needs both longwave_transmittance and "
                'solar_transmittance (0 to 1), or set kind = "opaque"',
                where=w,
            )
    if kind == "opaque":
        for name, value in fractions.items():
            if value != 0.0:
                raise InputError(
                    f'{name} {value:g} but kind = "opaque"; an opaque wall passes no radiation',
                    where=f"{here}.{name}",
                )
    eps = None
    if "outer_emissivity" in row:
        w = f"{here}.outer_emissivity"
        eps = _check_fraction(
            parse_quantity(row["outer_emissivity"], "fraction", where=w), "outer_emissivity", w
        )
        basis["outer_emissivity"] = f"user: {why}"
    return Material(
        key=key,
        label=label,
        kind=kind,
        u_w_m2k=u,
        basis=basis,
        user_defined=True,
        outer_emissivity=eps,
        **fractions,
    )


# ---------------------------------------------------------------- public API


def load_materials(
    user: Mapping[str, Mapping] | None = None, *, where: str = ""
) -> dict[str, Material]:
    """The shipped cover materials plus the user's own.

    Parameters
    ----------
    user : mapping, optional
        A house file's ``[materials]`` table: ``{key: {field: value}}``. Fields:
        ``u`` (a number in W/m²·K, or text with a unit, "1.1 Btu/h·ft²·°F"),
        ``longwave_transmittance`` and ``solar_transmittance`` (0 to 1, or "74 %"; both
        required for a glazing, 0 by default for ``kind = "opaque"``), optional
        ``outer_emissivity`` (0 to 1: the outer face's long-wave emissivity), ``kind``
        (``"glazing"``, the default, or ``"opaque"``), ``label`` (default: the key) and
        ``basis`` or ``source`` (required: where the numbers come from). A user key equal
        to a shipped key replaces the shipped material.
    where : str
        The house file, named in error messages ("house.toml").

    Returns
    -------
    dict[str, Material]
        A fresh dict, key -> material; shipped materials first, in table order.

    Raises
    ------
    InputError
        Naming ``<where>: materials.<key>.<field>`` for an unknown field, a missing ``u``
        or basis, a U-value outside 0 < U < 10 W/m²·K, a transmittance outside 0 to 1,
        or a unit of the wrong dimension.

    References
    ----------
    The shipped values and their sources: ``grower/data/covers.toml``.
    """
    materials = dict(_shipped_materials())
    if user is None:
        return materials
    if not isinstance(user, Mapping):
        raise InputError(
            "must be a table of [materials.<key>] tables", where=_where(where, "materials")
        )
    for key, row in user.items():
        materials[str(key)] = _user_material(str(key), row, where)
    return materials


def get_material(key: str, materials: Mapping[str, Material], *, where: str) -> Material:
    """Look up a material by key.

    Raises
    ------
    InputError
        ``unknown cover material "<key>"`` (with the closest known key), naming `where`.
    """
    if isinstance(key, str) and key in materials:
        return materials[key]
    hint = did_you_mean(key, materials) if isinstance(key, str) else ""
    raise InputError(f'unknown cover material "{key}"{hint}', where=where)


def load_curtains() -> dict[str, Curtain]:
    """The shipped energy-curtain types, key -> `Curtain` (a fresh dict).

    References
    ----------
    The values and their sources: ``grower/data/curtains.toml``.
    """
    return dict(_shipped_curtains())


def get_curtain(key: str, *, where: str) -> Curtain:
    """Look up a shipped curtain type by key.

    Raises
    ------
    InputError
        ``unknown energy curtain "<key>"`` (with the closest known key), naming `where`.
    """
    curtains = _shipped_curtains()
    if isinstance(key, str) and key in curtains:
        return curtains[key]
    hint = did_you_mean(key, curtains) if isinstance(key, str) else ""
    raise InputError(f'unknown energy curtain "{key}"{hint}', where=where)
