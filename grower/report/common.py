"""Helpers every report uses: the console, JSON output, unit-system choice."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
import math
import sys
from typing import Any

from grower.units import UnitSystem


def console(stderr: bool = False):
    """A rich Console writing to stdout (or stderr for progress and warnings)."""
    from rich.console import Console

    return Console(stderr=stderr, highlight=False, soft_wrap=False)


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


def render_cautions(console, cautions, houses: str | None = None) -> None:
    """The safety cautions, always last; `houses` names whose they are (several houses)."""
    if not cautions:
        return
    from rich.markup import escape

    console.print()
    whose = f" for {escape(houses)}" if houses else ""
    console.print(
        f"[bold]Safety{whose}[/bold] — general cautions, not a substitute for a licensed installer:"
    )
    for c in cautions:
        plain(console, f"  ⚠ {c}")


def plain(console, text: str, style: str | None = None) -> None:
    """Print `text` as it is: brackets in it ("[calibration]") are not markup."""
    from rich.text import Text

    console.print(Text(text, style=style or ""))
