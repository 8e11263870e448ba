"""A temperature-over-the-night chart drawn with characters, for the terminal.

Pure layout: series in, lines of (text, style) out; `render` wraps them for rich. The
image version (`--plot FILE.png|svg`) lives in `grower.report.image`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime

import numpy as np


@dataclass(frozen=True)
class Series:
    label: str
    values: np.ndarray  # one per time, display units
    mark: str  # one character
    style: str  # rich style


def _nice_step(span: float, lines: int) -> float:
    raw = span / max(lines, 1)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1.0
    for m in (1, 2, 2.5, 5, 10):
        if raw <= m * mag:
            return m * mag
    return 10 * mag


def layout(
    times: Sequence[datetime],
    series: Sequence[Series],
    *,
    threshold: float | None = None,
    threshold_label: str = "threshold",
    marker_time: datetime | None = None,
    width: int = 64,
    height: int = 14,
    unit: str = "°C",
    columns: int | None = None,
) -> list[list[tuple[str, str]]]:
    """Lay out a chart; returns rows of (text, style) segments.

    Later series are drawn over earlier ones; the threshold is a line of "=" (no series
    uses that mark); the crossing (`marker_time`) is a vertical bar of "│" with an "✕" on
    the threshold. `columns`: the terminal's width; the plot then takes what the value
    labels leave of it (at most `width`), so the whole night shows, and the legend wraps
    between its entries.
    """
    t0 = times[0].timestamp()
    span_t = max(times[-1].timestamp() - t0, 1.0)
    allv = np.concatenate([np.asarray(s.values, float) for s in series])
    allv = allv[np.isfinite(allv)]
    lo, hi = float(allv.min()), float(allv.max())
    if threshold is not None:
        lo, hi = min(lo, threshold), max(hi, threshold)
    if hi - lo < 1.0:
        lo, hi = lo - 0.5, hi + 0.5
    step = _nice_step(hi - lo, 5)
    lo = math.floor(lo / step) * step
    hi = math.ceil(hi / step) * step
    # a whole number of rows per tick, so every tick row is exactly its labelled value
    n_ticks = max(round((hi - lo) / step), 1)
    per_tick = max(1, round((height - 1) / n_ticks))
    height = n_ticks * per_tick + 1

    label_w = max(len(f"{hi:.0f}"), len(f"{lo:.0f}")) + 1
    if columns is not None:
        width = max(20, min(width, columns - label_w - 3))
    xs = np.array([(t.timestamp() - t0) / span_t * (width - 1) for t in times])

    def row_of(v: float) -> int:
        return int(round((hi - v) / (hi - lo) * (height - 1)))

    grid = [[(" ", "")] * width for _ in range(height)]
    if threshold is not None:
        r = row_of(threshold)
        for c in range(0, width, 2):
            grid[r][c] = ("=", "red")
    cols = np.arange(width)
    for s in series:
        v = np.asarray(s.values, float)
        ok = np.isfinite(v)
        if ok.sum() < 2:
            continue
        vc = np.interp(cols, xs[ok], v[ok])
        for c in cols:
            grid[row_of(vc[c])][c] = (s.mark, s.style)

    if marker_time is not None:
        c = int(round((marker_time.timestamp() - t0) / span_t * (width - 1)))
        if 0 <= c < width:
            for r in range(height):
                if grid[r][c][0] == " ":
                    grid[r][c] = ("│", "red dim")
            if threshold is not None:
                grid[row_of(threshold)][c] = ("✕", "bold red")
    rows: list[list[tuple[str, str]]] = []
    for r in range(height):
        on_tick = r % per_tick == 0
        label = f"{hi - r // per_tick * step:>{label_w}.0f}" if on_tick else " " * label_w
        rows.append([(label + " ┤" if on_tick else label + " │", "dim"), *grid[r]])
    # time axis: a tick every 2 or 3 hours, labelled with the local hour
    axis = [" "] * width
    labels = [" "] * (width + 1)  # a two-digit label may start in the last column
    hours = span_t / 3600.0
    every = (
        1 if hours <= 8 else 2 if hours <= 16 else 3 if hours <= 30 else 6 if hours <= 72 else 24
    )
    first = times[0]
    start_h = math.ceil(t0 / 3600.0) * 3600.0
    t = start_h
    tz = first.tzinfo
    while t <= times[-1].timestamp():
        local = datetime.fromtimestamp(t, tz)
        if local.hour % every == 0:
            c = int(round((t - t0) / span_t * (width - 1)))
            axis[c] = "┬"
            text = local.strftime("%H") if every < 24 else local.strftime("%d")
            for i, ch in enumerate(text):
                if c + i < len(labels):
                    labels[c + i] = ch
        t += 3600.0
    pad = " " * (label_w + 2)
    rows.append([(pad + "".join(axis).replace(" ", "─"), "dim")])
    hour_row = pad + "".join(labels).rstrip()
    suffix = "  h" if every < 24 else "  day"
    room = (columns if columns is not None else len(pad) + width + 6) - len(hour_row)
    rows.append([(hour_row + (suffix if room >= len(suffix) else ""), "dim")])
    entries = [((s.mark, s.style), f" {s.label}") for s in series]
    if threshold is not None:
        entries.append((("= =", "red"), f" {threshold_label}"))
    entries.append((("", ""), f"({unit})"))
    limit = len(pad) + width
    legend: list[tuple[str, str]] = [(pad, "")]
    used = len(pad)
    for (mark, style), label in entries:
        size = len(mark) + len(label)
        if used > len(pad) and used + 3 + size > limit:
            rows.append(legend)
            legend, used = [(pad, "")], len(pad)
        if used > len(pad):
            legend.append(("   ", ""))
            used += 3
        legend += [(mark, style), (label, "dim" if not mark else "")]
        used += size
    rows.append(legend)
    return rows


def render(console, rows: list[list[tuple[str, str]]]) -> None:
    """Print a laid-out chart through rich."""
    from rich.text import Text

    for row in rows:
        text = Text()
        for chunk, style in row:
            text.append(chunk, style=style or None)
        console.print(text, no_wrap=True, overflow="crop")
