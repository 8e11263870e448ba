"""Words and JSON for the propane vapour check (shared by stock, tonight and size)."""

from __future__ import annotations

from typing import Any

from grower.report.quantities import power_text
from grower.units import UnitSystem, show_temperature
from grower.vaporisation import VapourCheck

_NUMBERS = {1: "one", 2: "two", 3: "three", 4: "four", 5: "five", 6: "six"}


def power(w: float, system: UnitSystem) -> str:
    """A heater-sized power as the trade quotes it: nearest 1,000 Btu/h or 0.1 kW."""
    return power_text(w, system, with_btu=False)


def _containers(name: str, count: float) -> str:
    n = int(count) if float(count).is_integer() else count
    word = _NUMBERS.get(n, f"{n:g}") if isinstance(n, int) else f"{n:g}"
    return f"{word} {name}{'s' if count != 1 else ''}"


def sentence(check: VapourCheck, system: UnitSystem) -> tuple[str, bool]:
    """(one plain line, is it a shortfall) for the report."""
    if not check.applies:
        reason = check.reason or "vapour supply not checked"
        return reason[0].upper() + reason[1:] + ".", False
    s = check.supply
    what = _containers(s.container, s.count)
    level = f"{s.gauge_pct:.0f} %" + ("" if "tank" in s.container else " full")
    if check.fill_basis == "now":
        level += " (the fill now)"
    elif check.fill_basis == "then":
        level += " (the fill left then)"
    elif check.fill_basis == "refill":
        level += " (the refill level; less is left then)"
    temp = show_temperature(s.outside_c, system).text(0)
    when = f" ({check.at:%a %d %b %H:%M})" if check.at is not None else ""
    est = " (extrapolated beyond the printed table)" if s.extrapolated else ""
    head = (
        f"{what.capitalize()} at {level} {'gives' if s.count == 1 else 'give'} about {power(s.capacity_w, system)} of vapour "
        f"at {temp}{when}{est}; the heater needs {power(check.input_w, system)}"
    )
    if not check.short:
        if check.short_below_share is not None:
            from grower.vaporisation import gauge_pct

            low = gauge_pct(s.container, check.short_below_share)
            unit = "" if "tank" in s.container else " full"
            head += f"; below {low:.0f} %{unit} they fall short at that temperature: refill or swap before"
        return head + ".", False
    if "cylinder" in s.container:
        more = (
            f": manifold more cylinders ({check.count_needed} at this fill) or use a tank"
            if check.count_needed
            else ": use a tank"
        )
    else:
        more = (
            ": keep the tank fuller, add a second tank, or have a licensed installer fit a "
            "vaporiser"
        )
    return head + more + ".", True


def fields(check: VapourCheck) -> dict[str, Any]:
    """`vaporisation_w`, `vaporisation_short` and the details, for a JSON document."""
    s = check.supply
    return {
        "vaporisation_w": check.vaporisation_w,
        "vaporisation_short": bool(check.short) if check.applies else None,
        "vaporisation": {
            "checked": check.applies,
            "reason": check.reason,
            "input_w": check.input_w,
            "container": None if s is None else s.container,
            "count": None if s is None else s.count,
            "share_full": None if s is None else s.share_full,
            "gauge_pct": None if s is None else s.gauge_pct,
            "outside_c": None if s is None else s.outside_c,
            "per_container_w": None if s is None else s.per_container_w,
            "count_needed": check.count_needed,
            "at": None if check.at is None else check.at.isoformat(timespec="seconds"),
            "method": None if s is None else s.method,
            "extrapolated": None if s is None else s.extrapolated,
            "source": None if s is None else s.source,
        },
    }


def render(console, check: VapourCheck | None, system: UnitSystem) -> None:
    """The vapour line: bold red when the containers fall short, dim when not checked."""
    if check is None:
        return
    from grower.report.common import plain

    line, short = sentence(check, system)
    plain(console, line, "bold red" if short else (None if check.applies else "dim"))
