"""Rendering for `grower crops`: the crop list, one crop's stages and sources, JSON."""

from __future__ import annotations

import re
from typing import Any

from grower.crops import (
    KINDS,
    Crop,
    Stage,
    Threshold,
    select_threshold,
)
from grower.report.common import NARROW, console, data_table, jsonable
from grower.units import (
    UnitSystem,
    c_to_f,
    f_to_c,
    show_temperature,
    show_temperature_difference,
)


def _e(text: str) -> str:
    """Text from a crop file, safe from rich markup."""
    from rich.markup import escape

    return escape(text)


_MAX_ALIASES = 3


def _temp(value_c: float, system: UnitSystem) -> str:
    return show_temperature(value_c, system).text(1)


#: a temperature, or a range of two, as crop files write them in their notes: "28 °F",
#: "about 12.5 °C", "0–5 °C", "-4 to -7 °C", "−2.2 °C" (a hyphen between two numbers
#: would read as a minus sign, so a range takes an en dash or "to")
_TEMPERATURE = re.compile(
    r"(?P<a>[-−]?\d+(?:\.\d+)?)(?:(?P<sep>\s*–\s*|\s+to\s+)(?P<b>[-−]?\d+(?:\.\d+)?))?"
    r"\s?°\s?(?P<unit>[CF])\b"
)


def _number(value: float) -> str:
    """A converted temperature to 0.1 degree, no trailing ".0", a hyphen for minus."""
    text = f"{round(value, 1):.1f}".removesuffix(".0")
    return "0" if text == "-0" else text


def temperatures_in(text: str, system: UnitSystem) -> str:
    """`text` (a crop file's note) with every temperature written in it shown in the
    screen's units: "0–5 °C" is "32–41 °F" on a US screen, "28 °F" is "-2.2 °C" on a
    metric one (to 0.1 degree); one already in the screen's unit is left as written.
    The factors are the definitions of the two scales (`grower.units.c_to_f`)."""
    want = "F" if system == "us" else "C"

    def shown(m: re.Match[str]) -> str:
        if m["unit"] == want:
            return m[0]
        convert = c_to_f if want == "F" else f_to_c
        values = [m["a"]] + ([m["b"]] if m["b"] is not None else [])
        out = [_number(convert(float(v.replace("−", "-")))) for v in values]
        joined = out[0] if len(out) == 1 else f"{out[0]}{m['sep']}{out[1]}"
        return f"{joined} °{want}"

    return _TEMPERATURE.sub(shown, text)


def _origin(crop: Crop) -> str:
    if crop.origin != "user":
        return ""
    if crop.overrides:
        return "yours, replaces the shipped crop"
    return "yours"


# ---------------------------------------------------------------- JSON


def _threshold_doc(t: Threshold | None) -> dict[str, Any] | None:
    if t is None:
        return None
    return {
        "value_c": t.value_c,
        "printed_value": t.printed_value,
        "printed_unit": t.printed_unit,
        "basis": t.basis,
        "basis_text": t.basis_text,
        "hours": t.hours,
        "note": t.note,
    }


def stage_document(crop: Crop, stage: Stage, margin_k: float) -> dict[str, Any]:
    """One stage as plain data (°C)."""
    doc: dict[str, Any] = {
        "name": stage.name,
        "aliases": list(stage.aliases),
        "note": stage.note,
        "default": stage.name == crop.default_stage,
        "alarm_c": select_threshold(stage, margin_k).alarm_c,
    }
    for kind in KINDS:
        doc[kind] = _threshold_doc(getattr(stage, kind))
    return doc


def crop_document(crop: Crop, margin_k: float) -> dict[str, Any]:
    """One crop as plain data (°C)."""
    low, high = crop.damage_range_c()
    return {
        "name": crop.name,
        "aliases": list(crop.aliases),
        "group": crop.group,
        "note": crop.note,
        "default_stage": crop.default_stage,
        "origin": crop.origin,
        "path": crop.path,
        "overrides": crop.overrides,
        "damage_range_c": [low, high],
        "stages": [stage_document(crop, s, margin_k) for s in crop.stages],
    }


def crops_document(
    crops: tuple[Crop, ...],
    *,
    query: str | None,
    exact: bool,
    margin_k: float,
    margin_basis: str,
    stage: Stage | None = None,
) -> dict[str, Any]:
    """The `grower crops --json` document: SI (°C) values, every basis included."""
    doc: dict[str, Any] = {
        "query": query,
        "exact": exact,
        "margin_k": margin_k,
        "margin_basis": margin_basis,
        "crops": [crop_document(c, margin_k) for c in crops],
    }
    if stage is not None:
        doc["stage"] = stage.name
        doc["threshold"] = jsonable(select_threshold(stage, margin_k))
    return doc


# ---------------------------------------------------------------- rich


def render_list(crops: tuple[Crop, ...], system: UnitSystem, query: str | None) -> None:
    """A table of crops: names, group, stages, damage range."""

    out = console()
    title = f'Crops matching "{query}"' if query else "Crops"
    # a narrow screen leaves out the other names and the group (`grower crops NAME` has them)
    wide = out.width >= NARROW
    table = data_table(out, title=title, title_justify="left", show_lines=False)
    table.add_column("Crop", style="bold", no_wrap=True)
    if wide:
        table.add_column("Also called")
        table.add_column("Group")
    table.add_column("Stages", ratio=1 if not wide else None)
    table.add_column("Damage at", justify="right", no_wrap=not wide)
    for crop in crops:
        aliases = list(crop.aliases[:_MAX_ALIASES]) + (
            ["…"] if len(crop.aliases) > _MAX_ALIASES else []
        )
        stages = ", ".join(
            f"{s.name}*" if s.name == crop.default_stage and len(crop.stages) > 1 else s.name
            for s in crop.stages
        )
        low, high = crop.damage_range_c()
        damage = (
            _temp(low, system) if low == high else f"{_temp(low, system)} to {_temp(high, system)}"
        )
        name = crop.name + (" (yours)" if crop.origin == "user" else "")
        if wide:
            table.add_row(_e(name), _e(", ".join(aliases)), _e(crop.group), _e(stages), damage)
        else:
            unit = show_temperature(0.0, system).unit
            table.add_row(_e(name), _e(stages), damage.replace(f" {unit} to ", " to "))
    out.print(table)
    for crop in crops:
        if crop.origin == "user":
            out.print(f"{_e(crop.name)}: {_origin(crop)}, from {_e(crop.path)}")
    out.print(
        f"{len(crops)} crop{'s' if len(crops) != 1 else ''}; * default stage (the most "
        "sensitive). `grower crops NAME` shows one crop's thresholds and their sources."
    )


class _Refs:
    """Numbered footnotes, one per distinct basis text, each with the values it gives in
    the screen's units (marked where the source printed the other scale)."""

    def __init__(self, system: UnitSystem) -> None:
        self.system = system
        self.texts: list[str] = []
        self.printed: dict[str, list[tuple[str, str]]] = {}  # (shown, printed unit)

    def mark(self, t: Threshold) -> str:
        if t.basis_text not in self.texts:
            self.texts.append(t.basis_text)
            self.printed[t.basis_text] = []
        shown = (
            temperatures_in(f"{t.printed_value:g} {t.printed_unit}", self.system),
            t.printed_unit,
        )
        if shown not in self.printed[t.basis_text]:
            self.printed[t.basis_text].append(shown)
        return f"[{self.texts.index(t.basis_text) + 1}]"

    def values(self, text: str) -> str:
        """The values of source `text`, "-2.2 °C, -1.1 °C (printed in °F)": the unit the
        source printed is said once when it differs from the screen's, after each value
        when the source printed both."""
        here = self.printed[text]
        unit = show_temperature(0.0, self.system).unit
        printed = {p for _, p in here}
        if printed == {unit}:
            return ", ".join(v for v, _ in here)
        if len(printed) == 1:
            return f"{', '.join(v for v, _ in here)} (printed in {printed.pop()})"
        return ", ".join(v if p == unit else f"{v} (printed in {p})" for v, p in here)


def _duration(hours: float) -> str:
    return f"{hours * 60:g} min" if hours < 1 else f"{hours:g} h"


def _cell(
    t: Threshold | None, system: UnitSystem, refs: _Refs, extra: str = "", hours: bool = True
) -> str:
    if t is None:
        return "—"
    shown = f", {_duration(t.hours)}" if hours and t.hours is not None else ""
    return f"{_temp(t.value_c, system)}{extra}{shown} {refs.mark(t)}"


def render_detail(
    crop: Crop, system: UnitSystem, *, margin_k: float, margin_basis: str, stage: Stage | None
) -> None:
    """One crop: every stage's thresholds in the chosen units, with their sources."""

    out = console()
    refs = _Refs(system)
    title = crop.name + (f" — {crop.group}" if crop.group else "")
    out.print(f"[bold]{_e(title)}[/bold]")
    if crop.aliases:
        out.print(f"Also called: {_e(', '.join(crop.aliases))}")
    if crop.origin == "user":
        out.print(f"From your file {_e(crop.path)}")
        if crop.overrides:
            out.print(f"  (replaces the shipped crop in {_e(crop.overrides)})")
    if crop.note:
        out.print(_e(temperatures_in(crop.note, system)))
    has = {k: any(getattr(s, k) is not None for s in crop.stages) for k in KINDS}
    all_k10 = all(s.kill_10 is not None for s in crop.stages)
    all_k90 = all(s.kill is None and s.kill_90 is not None for s in crop.stages)
    durations = {t.hours for s in crop.stages for t in s.thresholds()}
    one_duration = len(durations) == 1 and None not in durations
    table = data_table(out, show_lines=False)
    table.add_column("Stage", style="bold")
    table.add_column("Alarm at", justify="right")
    table.add_column("Damage (10 % kill)" if all_k10 else "Damage at", justify="right")
    if has["chill"]:
        table.add_column("Chilling below", justify="right")
    if has["severe"]:
        table.add_column("Severe at", justify="right")
    if has["kill"] or has["kill_90"]:
        table.add_column("90 % kill" if all_k90 else "Kill at", justify="right")
    for s in crop.stages:
        name = s.name + (" (default)" if s.name == crop.default_stage else "")
        if stage is not None and s.name == stage.name:
            name = f"▶ {name}"
        damage_extra = " (10 % kill)" if s.kill_10 is not None and not all_k10 else ""
        row = [
            _e(name),
            _temp(select_threshold(s, margin_k).alarm_c, system),
            _cell(s.damage, system, refs, damage_extra, not one_duration),
        ]
        if has["chill"]:
            row.append(_cell(s.chill, system, refs, hours=not one_duration))
        if has["severe"]:
            row.append(_cell(s.severe, system, refs, hours=not one_duration))
        if has["kill"] or has["kill_90"]:
            lethal = s.lethal
            k90 = " (90 %)" if lethal is not None and lethal is s.kill_90 and not all_k90 else ""
            row.append(_cell(lethal, system, refs, k90, not one_duration))
        table.add_row(*row)
    out.print(table)
    margin = show_temperature_difference(margin_k, system).text(1)
    out.print(f"Alarm = damage + {margin} safety margin ({margin_basis}).")
    if one_duration:
        out.print(f"Every figure is for an exposure of {_duration(durations.pop())}.")
    notes: dict[str, list[str]] = {}  # note -> where it applies
    for s in crop.stages:
        if s.note:
            notes.setdefault(s.note, []).append(s.name)
        for t in s.thresholds():
            if t.note:
                notes.setdefault(f"{t.label}: {t.note}", []).append(s.name)
    if notes:
        out.print("[bold]Notes[/bold]")
        for note, where in notes.items():
            scope = "" if len(where) == len(crop.stages) > 1 else f"{', '.join(where)} — "
            out.print(f"  {scope}{temperatures_in(note, system)}", markup=False)
    out.print("[bold]Sources[/bold] (the values each gives)")
    for i, text in enumerate(refs.texts, 1):
        printed = refs.values(text)
        kind = " — not checked against a publication" if text == "from memory" else ""
        out.print(f"  [{i}] {text}{kind}: {printed}", highlight=False, markup=False)
