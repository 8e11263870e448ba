"""Shared fixtures: paths to the invented example farm."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"


@pytest.fixture
def examples() -> Path:
    return EXAMPLES


def write_house(tmp_path: Path, text: str, name: str = "house.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


MINIMAL = """
[house]
name = "test"
shape = "gable"
width = "9 m"
length = "30 m"
sidewall_height = "1.8 m"
ridge_height = "4.2 m"
bays = 1

[cover]
roof = "double-poly"
sides = "double-poly"
ends = "twin-wall-polycarbonate-8mm"

[air]
changes_per_hour = 1.0
"""


@pytest.fixture(autouse=True)
def _metric_locale(monkeypatch):
    """Reports default to the locale's units: pin a neutral locale for every test."""
    monkeypatch.setenv("LC_ALL", "C.UTF-8")


@pytest.fixture(autouse=True)
def _no_live_ensemble(monkeypatch):
    """A live `tonight` also asks for the forecast's ensemble: never the internet. Tests
    that serve one point GROWER_ENSEMBLE_URL at their loopback server; the rest get a
    port nobody listens on (the run falls back to drawn nights, with a note)."""
    monkeypatch.setenv("GROWER_ENSEMBLE_URL", "http://127.0.0.1:9")


#: the wall clock every test runs at (and moves on from): the evening before the bundled
#: forecasts' night (examples/forecast-cold-night.csv starts 2026-12-03T16:00-05:00), so
#: a test that runs them "now" meets them as a grower would on that day, whatever the date
#: the suite runs on; without it every such test would fail once the files are past
TEST_CLOCK = "2026-12-02T17:00:00+00:00"


@pytest.fixture(autouse=True)
def _fixed_clock():
    """The clock at `TEST_CLOCK`, ticking on (time-machine: datetime.now, date.today and
    time.time; monotonic clocks and timers are left alone)."""
    import time_machine

    with time_machine.travel(TEST_CLOCK, tick=True):
        yield
