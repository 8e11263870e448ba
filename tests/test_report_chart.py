"""The terminal chart: it fits the terminal, shows the whole night and a legend that wraps."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from grower.report import chart


def _night():
    t0 = dt.datetime(2026, 12, 3, 16, 0, tzinfo=dt.UTC)
    times = [t0 + dt.timedelta(minutes=10 * i) for i in range(104)]  # 16:00 to 09:10
    v = np.linspace(5.0, -8.0, len(times))
    v[-1] = -12.0  # the coldest sample is the last one: it must be drawn
    series = [
        chart.Series("outside", v - 2.0, "+", ""),
        chart.Series("effective outside", v - 4.0, ":", ""),
        chart.Series("air", v, "o", ""),
        chart.Series("plants", v - 1.0, "*", ""),
    ]
    return times, series


@pytest.mark.parametrize("columns", [40, 60, 100])
def test_the_chart_fits_the_terminal_and_keeps_the_coldest_hour(columns):
    times, series = _night()
    rows = chart.layout(times, series, threshold=0.0, threshold_label="alarm", columns=columns)
    lines = ["".join(text for text, _ in row) for row in rows]
    assert max(len(line) for line in lines) <= columns
    plot = [line for line in lines if "┤" in line or "│" in line[:8]]  # the value rows
    # the last column of the plot holds a mark of the last sample of the plants series
    last_column = [line[-1] for line in plot if line.strip()]
    assert "*" in last_column or ":" in last_column
    text = " ".join(lines)
    for label in ("+ outside", ": effective outside", "o air", "* plants", "= = alarm", "(°C)"):
        assert label in text, label  # every legend entry whole, however it wraps


def test_the_alarm_line_is_told_apart_from_every_series():
    times, series = _night()
    rows = chart.layout(times, series, threshold=0.0, columns=80)
    marks = {s.mark for s in series}
    dashes = {text for row in rows for text, style in row if style == "red"}
    assert dashes and not (dashes & marks)
