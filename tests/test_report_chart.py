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


@pytest.mark.parametrize(
    "low, high, threshold",
    [(-12.0, 7.0, 0.0), (19.0, 41.0, 31.8), (-3.3, 2.1, None), (0.0, 100.0, 50.0)],
)
def test_the_value_ticks_are_round_and_each_row_is_its_label(low, high, threshold):
    # the labels are whole multiples of one step and evenly spaced, so the tick row's
    # value is the label itself (before, rows were labelled 41 and 19 in °F)
    times, _ = _night()
    v = np.linspace(high, low, len(times))
    rows = chart.layout(times, [chart.Series("air", v, "o", "")], threshold=threshold)
    lines = ["".join(text for text, _ in row) for row in rows]
    ticks = [(i, float(line.split("┤")[0])) for i, line in enumerate(lines) if "┤" in line]
    assert len(ticks) >= 3
    labels = np.array([value for _, value in ticks])
    steps = -np.diff(labels)
    assert np.allclose(steps, steps[0]) and steps[0] > 0
    assert np.allclose(labels / steps[0], np.round(labels / steps[0]))
    gaps = np.diff([i for i, _ in ticks])
    assert np.all(gaps == gaps[0])  # a whole number of rows per tick
    assert labels[0] >= high and labels[-1] <= low
