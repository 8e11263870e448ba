"""Helpers every report uses: the console, JSON output, unit-system choice."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
import math
import re
import sys
from typing import Any

from grower.units import UnitSystem


def console(stderr: bool = False):
    """A rich Console writing to stdout (or stderr for progress and warnings)."""
    from rich.console import Console

    return Console(stderr=stderr, highlight=False, soft_wrap=False)


NARROW = 72  # columns below which a table drops its vertical rules (common practice, no source)


def data_table(console, **options):
    """A rich Table that fits the terminal: boxed at 72 columns and over; on a narrower
    screen, rules above and under the header and around the totals only and two spaces between
    columns, so a six-column day table fits 60 columns without cutting a header."""
    from rich import box
    from rich.table import Table

    if console.width < NARROW:
        options.setdefault("box", box.HORIZONTALS)
        options.setdefault("pad_edge", False)
        options.setdefault("padding", (0, 0, 0, 1))  # the box keeps a blank between columns
    return Table(**options)


def jsonable(value: Any) -> Any:
    """Turn results (dataclasses, numpy, datetimes, NaN) into plain JSON values.

    NaN and infinities become null; datetimes become ISO 8601 strings with offset.
    """
    import numpy as np

    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: jsonable(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return [jsonable(v) for v in value.tolist()]
    if isinstance(value, np.generic):
        return jsonable(value.item())
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dt.datetime):
        return value.isoformat()
    if hasattr(value, "isoformat") and hasattr(value, "to_pydatetime"):  # pandas Timestamp
        return value.to_pydatetime().isoformat()
    return value


def iso(t: dt.datetime | None) -> str | None:
    """ISO 8601 to the second, with the UTC offset; None stays None."""
    return None if t is None else t.isoformat(timespec="seconds")


def emit_json(document: dict[str, Any]) -> None:
    """Write one JSON document to stdout."""
    json.dump(jsonable(document), sys.stdout, indent=2, ensure_ascii=False, allow_nan=False)
    sys.stdout.write("\n")


#: territories whose locale measures in US customary units (common practice, no source:
#: the United States, Liberia and Myanmar)
US_TERRITORIES = ("US", "LR", "MM")


def locale_system(environ=None) -> UnitSystem:
    """US units when the user's locale (LC_ALL, LC_MEASUREMENT or LANG) is a US one."""
    import os
    import re

    env = os.environ if environ is None else environ
    for var in ("LC_ALL", "LC_MEASUREMENT", "LANG"):
        value = env.get(var)
        if value:
            match = re.match(r"^[a-zA-Z]{2,3}_([A-Z]{2})", value)
            return "us" if match and match.group(1) in US_TERRITORIES else "metric"
    return "metric"


def unit_system(requested: str | None, default: str | None = None) -> UnitSystem:
    """The display system: the option, else the house file's [site] units, else the
    locale's (US customary in a US locale), else metric."""
    choice = requested or default or locale_system()
    return "us" if choice == "us" else "metric"


def render_cautions(
    console, cautions, system: UnitSystem = "metric", houses: str | None = None
) -> None:
    """The safety cautions, always last, in `system`'s units; `houses` names whose they
    are (several houses)."""
    from grower.units import note_text

    if not cautions:
        return
    from rich.markup import escape

    console.print()
    whose = f" for {escape(houses)}" if houses else ""
    console.print(
        f"[bold]Safety{whose}[/bold] — general cautions, not a substitute for a licensed installer:"
    )
    for c in cautions:
        plain(console, f"  ⚠ {note_text(c, system)}", hang=4)


#: a number followed by a space and a unit (the space becomes a no-break one)
_NUMBER_UNIT = re.compile(
    r"(\d) (?=°|K\b|kW|Btu|h\b|min\b|L\b|gal\b|therm|W\b|kWh|in\b|in²|cm|km|m\b|m/s|mph|ft|"
    r"%|lb\b|kg\b|ppm|(?:Mon|Tue|Wed|Thu|Fri|Sat|Sun)\b)"
)


def keep_units(text: str) -> str:
    """No-break spaces between a number and its unit, so wrapping never splits them."""
    return _NUMBER_UNIT.sub("\\1\u00a0", text)


def wrapped(text, width: int, hang: int = 0) -> list:
    """`text` (a rich Text) cut into lines of at most `width` columns at ordinary spaces
    only, so a number keeps its unit (joined by a no-break space, see `keep_units`); the
    lines after the first are `hang` columns narrower. No-break spaces come back as
    spaces. Rich's own wrapping breaks at any whitespace, the no-break space included.
    """
    from rich.text import Text

    plain_text = text.plain
    cuts, start, last_space, room = [], 0, None, width
    for i, ch in enumerate(plain_text):
        if ch == " " and i > start:
            last_space = i
        if i - start >= room and last_space is not None and last_space > start:
            cuts.append(last_space + 1)
            start, last_space, room = last_space + 1, None, max(width - hang, 10)
    out = []
    for piece in text.divide(cuts):
        piece.rstrip()
        out.append(Text(piece.plain.replace("\u00a0", " "), spans=piece.spans, style=piece.style))
    return out


def print_text(console, text, hang: int | None = None) -> None:
    """Print a rich Text wrapped at the console's width by `wrapped`.

    Continuation lines are indented by `hang` columns (default: the text's own leading
    indent plus two, so a list item's second line sits under its words).
    """
    from rich.text import Text

    plain_text = text.plain
    if hang is None:
        lead = len(plain_text) - len(plain_text.lstrip(" "))
        hang = lead + 2 if lead or plain_text[:2] in ("· ", "! ") else 0
    for n, line in enumerate(wrapped(text, max(console.width, 20), hang)):
        if n and hang:
            line = Text(" " * hang) + line
        console.print(line, no_wrap=True, crop=False)


class Rows:
    """Label–value rows to print (a rich renderable): the labels in a column, each value
    (rich markup) wrapped in the room left beside them by `wrapped`, so no number is
    split from its unit (rich's Table wraps cells at any space)."""

    def __init__(self, label_style: str = "dim") -> None:
        self.rows: list[tuple[str, str]] = []
        self.label_style = label_style

    def add_row(self, label: str, value: str) -> None:
        self.rows.append((label, value))

    def __rich_console__(self, console, options):
        from rich.text import Text

        w = max((len(label) for label, _ in self.rows), default=0)
        room = max(options.max_width - w - 2, 20)
        for label, value in self.rows:
            for n, line in enumerate(wrapped(Text.from_markup(keep_units(value)), room)):
                out = Text((label if n == 0 else "").ljust(w) + "  ", style=self.label_style)
                out.append_text(line)
                out.no_wrap = True
                yield out


def print_line(console, markup: str, hang: int | None = None) -> None:
    """Print rich `markup`, wrapped at ordinary spaces only (see `print_text`)."""
    from rich.text import Text

    print_text(console, Text.from_markup(markup), hang)


def say(console, markup: str) -> None:
    """Print a paragraph of rich markup wrapped at ordinary spaces, no number split from
    its unit (`keep_units`; rich alone would print "12.8" and "h" on two lines)."""
    from rich.text import Text

    print_text(console, Text.from_markup(keep_units(markup)))


def plain(console, text: str, style: str | None = None, hang: int | None = None) -> None:
    """Print `text` as it is (brackets in it, "[calibration]", are not markup), wrapped
    at ordinary spaces with no number split from its unit (see `print_text`)."""
    from rich.text import Text

    print_text(console, Text(keep_units(text), style=style or ""), hang)
