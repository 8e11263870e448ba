"""One crop file: parse and validate its TOML text into a `grower.crops.Crop`.

The format is described in ``crops/README.md``. Every threshold must carry its basis (a
source, a reference into the file's ``[sources]``, or "common practice" / "from
memory"), a unit ("F" or "C", converted to °C here) and a plausible value; a stage's
thresholds must be ordered warm to cold. Errors are one line naming the file and key.
`grower.crops` reads the directories and offers ``parse_crop`` too.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import replace
from typing import Any

from grower.crops import BASES, KINDS, RANK, Crop, Origin, Stage, Threshold, lookup_key
from grower.errors import InputError, did_you_mean
from grower.units import f_to_c

_TOP_KEYS = ("name", "aliases", "group", "default_stage", "note", "sources", "stage")
_STAGE_KEYS = ("name", "aliases", "note", *KINDS)
_ENTRY_KEYS = ("value", "unit", "source", "ref", "basis", "hours", "minutes", "note")
_UNITS = {"F": "°F", "°F": "°F", "C": "°C", "°C": "°C"}
#: a crop threshold outside this range [°C] is a typo, not a plant
_PLAUSIBLE_C = (-45.0, 30.0)


def _check_keys(table: dict[str, Any], allowed: tuple[str, ...], where: str) -> None:
    for key in table:
        if key not in allowed:
            raise InputError(f'unknown key "{key}"{did_you_mean(key, allowed)}', where=where)


def _text(value: Any, where: str, *, empty_ok: bool = False) -> str:
    if not isinstance(value, str) or (not value.strip() and not empty_ok):
        raise InputError(f"expected text, got {value!r}", where=where)
    return value.strip()


def _texts(value: Any, where: str) -> tuple[str, ...]:
    if not isinstance(value, list):
        raise InputError(f"expected a list of names, got {value!r}", where=where)
    return tuple(_text(v, f"{where}[{i}]") for i, v in enumerate(value))


def _number(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"expected a number, got {value!r}", where=where)
    return float(value)


def _threshold(entry: Any, kind: str, sources: dict[str, str], where: str) -> Threshold:
    if not isinstance(entry, dict):
        raise InputError(
            'expected a table like { value = 28, unit = "F", source = "..." }', where=where
        )
    _check_keys(entry, _ENTRY_KEYS, where)
    if "value" not in entry:
        raise InputError('missing "value"', where=where)
    value = _number(entry["value"], f"{where}.value")
    unit = entry.get("unit")
    if unit not in _UNITS:
        raise InputError(f'unit {unit!r} unknown; use "F" or "C"', where=f"{where}.unit")
    given = [k for k in ("source", "ref", "basis") if k in entry]
    if len(given) != 1:
        raise InputError(
            'give exactly one of source = "...", ref = "<key in [sources]>" or '
            'basis = "common practice" / "from memory"',
            where=where,
        )
    how = given[0]
    if how == "source":
        basis, text = "source", _text(entry["source"], f"{where}.source")
    elif how == "ref":
        ref = _text(entry["ref"], f"{where}.ref")
        if ref not in sources:
            raise InputError(
                f'no source "{ref}" in [sources]{did_you_mean(ref, sources)}', where=f"{where}.ref"
            )
        basis, text = "source", sources[ref]
    else:
        basis = _text(entry["basis"], f"{where}.basis")
        if basis not in BASES:
            raise InputError(
                f'basis "{basis}" unknown; use "common practice" or "from memory"',
                where=f"{where}.basis",
            )
        text = basis
    if "hours" in entry and "minutes" in entry:
        raise InputError("give hours or minutes, not both", where=where)
    hours = None
    for key, per_hour in (("hours", 1.0), ("minutes", 60.0)):
        if key in entry:
            hours = _number(entry[key], f"{where}.{key}") / per_hour
            if hours <= 0:
                raise InputError(f"{key} must be positive", where=f"{where}.{key}")
    printed_unit = _UNITS[unit]
    value_c = f_to_c(value) if printed_unit == "°F" else value
    if not _PLAUSIBLE_C[0] <= value_c <= _PLAUSIBLE_C[1]:
        raise InputError(
            f"{value:g} {printed_unit} is not a plausible crop temperature", where=where
        )
    note = _text(entry.get("note", ""), f"{where}.note", empty_ok=True)
    return Threshold(kind, value_c, value, printed_unit, basis, text, hours, note)


def _check_order(found: dict[str, Threshold], where: str) -> None:
    for warm in found.values():
        for cold in found.values():
            if RANK[warm.kind] < RANK[cold.kind] and warm.value_c < cold.value_c:
                raise InputError(
                    f"{warm.kind} ({warm.printed_value:g} {warm.printed_unit}) is colder than "
                    f"{cold.kind} ({cold.printed_value:g} {cold.printed_unit}); thresholds must "
                    "be ordered chill ≥ damage ≥ severe, kill_10 ≥ kill, kill_90",
                    where=where,
                )


def _stage(table: Any, sources: dict[str, str], where: str) -> Stage:
    if not isinstance(table, dict):
        raise InputError("each [[stage]] must be a table", where=where)
    _check_keys(table, _STAGE_KEYS, where)
    if "name" not in table:
        raise InputError('missing "name"', where=where)
    name = _text(table["name"], f"{where}.name")
    where = f'{where} ("{name}")'
    found = {k: _threshold(table[k], k, sources, f"{where}.{k}") for k in KINDS if k in table}
    _check_order(found, where)
    if "damage" not in found:
        if "kill_10" not in found:
            raise InputError("a stage needs damage (or kill_10 for fruit buds)", where=where)
        k10 = found["kill_10"]
        found["damage"] = replace(k10, kind="damage", note=k10.note or "the 10 % kill temperature")
    stage = Stage(
        name=name,
        aliases=_texts(table.get("aliases", []), f"{where}.aliases"),
        note=_text(table.get("note", ""), f"{where}.note", empty_ok=True),
        **found,
    )
    return stage


def parse_crop(text: str, where: str, *, origin: Origin = "shipped") -> Crop:
    """Parse and validate one crop file's text; `where` names it in errors.

    Raises `InputError` (one line naming the file and key) for invalid TOML, unknown
    keys, values without a basis, unknown units, thresholds out of order, duplicate
    stage names or a default stage that is not a stage.
    """
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", where=where) from None
    _check_keys(doc, _TOP_KEYS, where)
    if "name" not in doc:
        raise InputError('missing "name"', where=where)
    name = _text(doc["name"], f"{where}: name")
    if ":" in name:
        raise InputError(f'"{name}": a crop name cannot contain ":"', where=f"{where}: name")
    sources = doc.get("sources", {})
    if not isinstance(sources, dict):
        raise InputError('[sources] must be a table of key = "citation"', where=where)
    sources = {k: _text(v, f"{where}: sources.{k}") for k, v in sources.items()}
    tables = doc.get("stage")
    if not isinstance(tables, list) or not tables:
        raise InputError("needs at least one [[stage]]", where=where)
    stages = tuple(_stage(t, sources, f"{where}: stage[{i}]") for i, t in enumerate(tables))
    seen: dict[str, str] = {}
    for stage in stages:
        own = {lookup_key(label): label for label in (stage.name, *stage.aliases)}
        for key, label in own.items():
            if key in seen:
                raise InputError(
                    f'stage name "{label}" is used twice (stages "{seen[key]}" and "{stage.name}")',
                    where=where,
                )
        seen.update(dict.fromkeys(own, stage.name))
    default = doc.get("default_stage")
    if default is None:
        if len(stages) > 1:
            raise InputError('missing "default_stage" (there is more than one stage)', where=where)
        default = stages[0].name
    default = _text(default, f"{where}: default_stage")
    if lookup_key(default) not in seen:
        names = [s.name for s in stages]
        raise InputError(
            f'default_stage "{default}" is not a stage{did_you_mean(default, names)}; '
            f"stages: {', '.join(names)}",
            where=where,
        )
    return Crop(
        name=name,
        stages=stages,
        default_stage=seen[lookup_key(default)],
        aliases=_texts(doc.get("aliases", []), f"{where}: aliases"),
        group=_text(doc.get("group", ""), f"{where}: group", empty_ok=True),
        note=_text(doc.get("note", ""), f"{where}: note", empty_ok=True),
        path=where,
        origin=origin,
    )
