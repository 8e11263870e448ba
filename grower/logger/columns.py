"""Which column is which in a logger record, and the units its header states."""

from __future__ import annotations

import re
from collections.abc import Mapping

from grower.errors import InputError
from grower.logger.times import try_time
from grower.logger.values import OFF_WORDS, ON_WORDS, parse_number

#: what a column can hold
ROLES = ("time", "inside", "outside", "heater", "sun")
#: name words that give a column its role (after splitting the name into words)
ROLE_WORDS: dict[str, frozenset[str]] = {
    "time": frozenset({"time", "date", "datetime", "timestamp"}),
    "inside": frozenset(
        {"inside", "indoor", "indoors", "in", "interior", "internal", "house", "greenhouse"}
    ),
    "outside": frozenset(
        {"outside", "outdoor", "outdoors", "out", "ambient", "exterior", "external"}
    ),
    "heater": frozenset({"heater", "heating", "heat", "burner", "furnace", "boiler"}),
    "sun": frozenset(
        {"sun", "solar", "shortwave", "irradiance", "radiation", "pyranometer", "ghi", "insolation"}
    ),
}
#: words of a plain temperature column ("Temperature", "Temp", "T", "Air")
TEMPERATURE_WORDS = frozenset({"temperature", "temp", "t", "air"})
#: how many lines are searched for the header row
HEADER_SEARCH_LINES = 12


def _words(name: str) -> list[str]:
    """The words of a column name, lower case, units and brackets dropped."""
    low = name.lower().replace("°", " ").replace("º", " ")
    low = re.sub(r"[\(\[].*?[\)\]]", " ", low)  # "(°F)", "[W/m²]"
    low = re.sub(r"\b(gmt|utc)\s*[+-]\s*\d{1,2}(:?\d{2})?", " ", low)
    return [w for w in re.split(r"[^a-z0-9]+", low) if w]


def _role_of(name: str) -> str | None:
    words = set(_words(name))
    if {"t", "in"} <= words or "tin" in words:
        return "inside"
    if {"t", "out"} <= words or "tout" in words:
        return "outside"
    for role in ("heater", "sun", "outside", "inside", "time"):
        if words & ROLE_WORDS[role]:
            if role == "heater" and words & {"index"}:  # "heat index" is a comfort figure
                continue
            return role
    return None


def find_header(rows, columns: Mapping[str, str] | None, where: str) -> tuple[int, list[str]]:
    """Index and cells of the header row: the first with a time column and 2+ fields."""
    wanted = {v.strip().lower() for v in (columns or {}).values()}
    for i, (_n, row) in enumerate(rows[:HEADER_SEARCH_LINES]):
        if len(row) < 2:
            continue
        names = [c.strip().lower() for c in row]
        if any(_role_of(c) == "time" for c in row) or (
            "time" in (columns or {}) and columns["time"].strip().lower() in names
        ):
            return i, [c.strip() for c in row]
        if wanted and wanted <= set(names):
            return i, [c.strip() for c in row]
    first = rows[0][1] if rows else []
    raise InputError(
        f"line {rows[0][0] if rows else 1}: no header row with a time column found "
        f'(got "{", ".join(first)[:60]}"); name it "time" or give --column time=NAME',
        where=where,
    )


def column_roles(
    header: list[str], given: Mapping[str, str], where: str, line: int
) -> dict[str, int]:
    lower = [h.lower() for h in header]
    roles: dict[str, int] = {}
    for role, name in given.items():
        if role not in ROLES:
            raise InputError(
                f'unknown column role "{role}" (use one of {", ".join(ROLES)})', where="--column"
            )
        key = name.strip().lower()
        if key not in lower:
            raise InputError(
                f'line {line}: no column named "{name}" (columns: {", ".join(header)})', where=where
            )
        roles[role] = lower.index(key)
    found: dict[str, list[int]] = {r: [] for r in ROLES}
    plain: list[int] = []
    for j, h in enumerate(header):
        if j in roles.values() or not h:
            continue
        role = _role_of(h)
        if role is not None:
            found[role].append(j)
        elif set(_words(h)) & TEMPERATURE_WORDS:
            plain.append(j)
    if "time" not in roles:
        t = found["time"]
        dates = [j for j in t if "date" in _words(header[j]) and "time" not in _words(header[j])]
        times = [j for j in t if "time" in _words(header[j]) and "date" not in _words(header[j])]
        if len(t) == 1:
            roles["time"] = t[0]
        elif len(t) == 2 and len(dates) == 1 and len(times) == 1:
            roles["date"], roles["time"] = dates[0], times[0]
        elif len(t) > 1:
            names = ", ".join(header[j] for j in t)
            raise InputError(
                f"line {line}: several time columns ({names}); say which with --column time=NAME",
                where=where,
            )
        else:
            raise InputError(
                f'line {line}: no time column; name it "time" or give --column time=NAME',
                where=where,
            )
    for role in ("inside", "outside", "heater", "sun"):
        if role in roles:
            continue
        cand = found[role]
        if role == "inside" and not cand and len(plain) == 1:
            cand = plain
        if len(cand) > 1:
            names = ", ".join(header[j] for j in cand)
            raise InputError(
                f"line {line}: several {role} columns ({names}); say which with --column {role}=NAME",
                where=where,
            )
        if cand:
            roles[role] = cand[0]
    if "inside" not in roles:
        raise InputError(
            f"line {line}: no inside temperature column (columns: {', '.join(header)}); "
            'name it "inside" or give --column inside=NAME',
            where=where,
        )
    return roles


def _unit_text(text: str) -> str:
    """The unit a name or a units-row cell states: "°C", "°F", "W", "kW", "Btu/h",
    "W/m²", "%", "on/off", or ""."""
    t = text.strip().lower().replace("º", "°").replace("²", "2")
    compact = re.sub(r"\s+", "", t)
    if re.search(r"w/m2|w_m2|wm-2|w/sqm", compact):
        return "W/m²"
    if re.search(r"btu/?h|btu_h|btuh|btu/hr", compact):
        return "Btu/h"
    if re.search(r"°f|degf|fahrenheit|[\(\[]f[\)\]]|(^|_)f$|^f$", compact):
        return "°F"
    if re.search(r"°c|degc|celsius|[\(\[]c[\)\]]|(^|_)c$|^c$", compact):
        return "°C"
    if re.search(r"(^|[\(\[_])kw([\)\]]|$)", compact):
        return "kW"
    if re.search(r"(^|[\(\[_])w([\)\]]|$)", compact):
        return "W"
    if re.search(r"%|(^|_)pct$|percent", compact):
        return "%"
    if re.search(r"on/off|0/1|state|(^|[\(\[])on[\)\]]?$", compact):
        return "on/off"
    return ""


def unit_of(name: str, row_cell: str, role: str, where: str) -> str:
    by_name, by_row = _unit_text(name), _unit_text(row_cell)
    if row_cell.strip() and not by_row:
        raise InputError(
            f'units row, column {name}: unknown unit "{row_cell.strip()}"', where=where
        )
    if by_name and by_row and by_name != by_row:
        raise InputError(
            f"column {name}: the name says {by_name}, the units row says {by_row}", where=where
        )
    unit = by_row or by_name
    ok = {
        "inside": ("", "°C", "°F"),
        "outside": ("", "°C", "°F"),
        "heater": ("", "W", "kW", "Btu/h", "%", "on/off"),
        "sun": ("", "W/m²"),
    }[role]
    if unit not in ok:
        raise InputError(f"column {name}: {unit} is not a unit for the {role} column", where=where)
    return unit


def is_units_row(row: list[str], header: list[str], roles: Mapping[str, int], day_first) -> bool:
    """The row under the header states units: no number and no time in it."""
    if len(row) < len(header) and not any(row):
        return False
    cells = [row[j] if j < len(row) else "" for j in roles.values()]
    if not any(cells):
        return False
    for j, c in zip(roles.values(), cells, strict=True):
        if not c:
            continue
        if j in (roles.get("time"), roles.get("date")):
            if try_time(c) is not None:
                return False
            continue
        if parse_number(c, True) is not None or c.lower() in ON_WORDS | OFF_WORDS:
            return False
    return True
