"""The night's chart as an image (`--plot FILE.png|svg`), through matplotlib.

matplotlib is an optional extra (``pip install "grower[plot]"``): it is imported here
only, and its absence is reported as one line.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import datetime
from pathlib import Path

from grower.errors import InputError

#: colours per series label (our own choice; colour-blind-safe Okabe–Ito palette)
COLOURS = {
    "outside": "#0072B2",
    "effective outside": "#56B4E9",
    "air": "#009E73",
    "plants": "#E69F00",
    "air, colder night": "#CC79A7",
}


def write_plot(
    path: str | Path,
    times: Sequence[datetime],
    series: dict[str, Sequence[float]],
    *,
    threshold: float | None,
    crossing: datetime | None,
    unit: str,
    title: str,
) -> Path:
    """Write the chart to `path` (PNG or SVG by its suffix); returns the path.

    The file is written next to its final name and renamed into place, so an existing
    file is only replaced by a complete new one.
    """
    path = Path(path)
    if path.suffix.lower() not in (".png", ".svg"):
        raise InputError("the chart file must end in .png or .svg", where=f"--plot {path}")
    if not path.parent.exists():
        raise InputError("folder does not exist", where=f"--plot {path}")
    if path.is_dir():
        raise InputError(
            "is a folder; give a file name ending in .png or .svg", where=f"--plot {path}"
        )
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.dates as mdates
        import matplotlib.pyplot as plt
    except ImportError as exc:
        raise InputError(
            'the chart image needs matplotlib: pip install "grower[plot]"', where="--plot"
        ) from exc
    fig, ax = plt.subplots(figsize=(9, 4.5), dpi=110)
    for label, values in series.items():
        ax.plot(
            times, values, label=label, color=COLOURS.get(label), lw=2 if label == "plants" else 1.4
        )
    if threshold is not None:
        ax.axhline(
            threshold, color="#D55E00", ls="--", lw=1.2, label="alarm"
        )  # the text report's word
    if crossing is not None:
        ax.axvline(crossing, color="#D55E00", lw=1, alpha=0.6)
        if threshold is not None:
            ax.plot([crossing], [threshold], "x", color="#D55E00", ms=10, mew=2)
    tz = times[0].tzinfo
    ax.xaxis.set_major_formatter(mdates.DateFormatter("%H:%M", tz=tz))
    ax.set_ylabel(f"temperature ({unit})")
    ax.set_title(title)
    ax.grid(alpha=0.3)
    ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    tmp = path.with_name(f".{path.name}.tmp")
    try:
        fig.savefig(tmp, format=path.suffix.lower().lstrip("."))
        tmp.replace(path)
    except BaseException:
        tmp.unlink(missing_ok=True)  # a failed write leaves nothing behind
        raise
    finally:
        plt.close(fig)
    return path
