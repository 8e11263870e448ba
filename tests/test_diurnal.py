"""The min/max day-and-night curve (Parton & Logan 1981, Kimball & Bellamy 1986)."""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import diurnal
from grower.errors import InputError

KINGSTON = (44.3, -76.5)  # near an invented farm; America/Toronto
EST = dt.timezone(dt.timedelta(hours=-5))


def _events(
    lat=KINGSTON[0], lon=KINGSTON[1], start=dt.datetime(2026, 12, 3, 12, tzinfo=EST), days=2
):
    return diurnal.sun_events(lat, lon, start.timestamp(), start.timestamp() + days * 86400.0)


def test_sun_events_alternate_and_cover_the_interval():
    start = dt.datetime(2026, 12, 3, 16, tzinfo=EST).timestamp()
    rise, fall = diurnal.sun_events(*KINGSTON, start, start + 86400.0)
    assert np.all(rise < fall) and np.all(fall[:-1] < rise[1:])
    assert rise[0] < start and fall[-1] > start + 86400.0


def _forsythe_day_length_h(lat_deg: float, day: dt.date) -> float:
    """CBM day-length model, Forsythe et al. (1995), Ecological Modelling 80:87–95,
    p = 0.8333° (top of the sun on the horizon, with refraction). Formula from memory."""
    j = day.timetuple().tm_yday
    theta = 0.2163108 + 2 * math.atan(0.9671396 * math.tan(0.00860 * (j - 186)))
    phi = math.asin(0.39795 * math.cos(theta))
    lat, p = math.radians(lat_deg), math.radians(0.8333)
    x = (math.sin(p) + math.sin(lat) * math.sin(phi)) / (math.cos(lat) * math.cos(phi))
    return 24 - 24 / math.pi * math.acos(x)


@pytest.mark.parametrize(
    ("lat", "lon", "day"),
    [
        (44.3, -76.5, dt.date(2026, 12, 3)),
        (44.3, -76.5, dt.date(2026, 6, 21)),
        (-33.9, 151.2, dt.date(2026, 7, 1)),
        (0.0, 0.0, dt.date(2026, 9, 1)),
    ],
)
def test_day_length_is_plausible(lat, lon, day):
    # astral's NOAA equations are astral's job; we only check plausibility against an
    # independent simple model (Forsythe et al. 1995, within a few minutes below 60°).
    solar = dt.timezone(dt.timedelta(hours=round(lon / 15)))
    noon = dt.datetime(day.year, day.month, day.day, 12, tzinfo=solar).timestamp()
    rise, fall = diurnal.sun_events(lat, lon, noon, noon)
    today = np.flatnonzero((rise < noon) & (fall > noon))[0]
    length_h = (fall[today] - rise[today]) / 3600.0
    assert length_h == pytest.approx(_forsythe_day_length_h(lat, day), abs=8 / 60)


def test_polar_night_is_a_clear_input_error():
    start = dt.datetime(2026, 12, 3, 12, tzinfo=dt.UTC).timestamp()
    with pytest.raises(InputError, match=r"no sunrise or sunset at latitude 78° .*polar"):
        diurnal.sun_events(78.0, 15.0, start, start + 86400)


def test_polar_day_is_a_clear_input_error():
    start = dt.datetime(2026, 6, 21, 12, tzinfo=dt.UTC).timestamp()
    with pytest.raises(InputError, match="polar day or night"):
        diurnal.sun_events(78.0, 15.0, start, start + 86400)


def test_equals_the_low_at_the_minimum_time():
    rise, fall = _events()
    tmin = diurnal.minimum_times(rise)
    got = diurnal.diurnal_temperature(tmin[1:-1], rise, fall, -6.0, 3.0)
    np.testing.assert_allclose(got, -6.0, atol=1e-12)
    # the minimum is c = −0.17 h after sunrise, i.e. 10.2 minutes before it
    np.testing.assert_allclose(rise - tmin, 0.17 * 3600.0)


def test_maximum_is_the_high_at_a_hours_after_mid_day():
    # Parton & Logan day branch peaks where π·m/(D + 2a) = π/2
    rise, fall = _events()
    day_h = (fall[1] - rise[1]) / 3600.0
    t_peak = diurnal.minimum_times(rise)[1] + (day_h + 2 * diurnal.A_150CM) / 2 * 3600.0
    assert diurnal.diurnal_temperature(t_peak, rise, fall, -6.0, 3.0) == pytest.approx(
        3.0, abs=1e-12
    )


def test_continuous_at_sunset_and_at_the_minimum():
    rise, fall = _events()
    eps = 1e-3  # s
    for joint in (fall[1], diurnal.minimum_times(rise)[2]):
        left, right = diurnal.diurnal_temperature([joint - eps, joint + eps], rise, fall, -6.0, 3.0)
        assert abs(left - right) < 1e-5


def test_night_falls_monotonically_to_the_next_low():
    rise, fall = _events()
    tmin = diurnal.minimum_times(rise)
    night = np.linspace(fall[1], tmin[2], 200)
    lows = np.where(np.arange(rise.size) >= 2, -9.0, -2.0)  # day 2's low is colder
    temp = diurnal.diurnal_temperature(night, rise, fall, lows, 4.0)
    assert np.all(np.diff(temp) < 0)
    assert temp[-1] == pytest.approx(-9.0, abs=1e-9)


def test_kimball_bellamy_night_formula_at_mid_night():
    # Kimball & Bellamy (1986), Energy in Agriculture 5:185–197, continuous night branch
    # written out independently: T = [Tmin' − Tsn·e^−b + (Tsn − Tmin')·e^(−b·n/Z)] / (1 − e^−b)
    rise, fall = _events()
    low, high, a, b, c = -6.0, 3.0, 1.86, 2.20, -0.17
    day_h = (fall[1] - rise[1]) / 3600.0
    tsn = low + (high - low) * math.sin(math.pi * (day_h - c) / (day_h + 2 * a))
    z_h = (rise[2] + c * 3600.0 - fall[1]) / 3600.0
    n_h = z_h / 2
    expected = (low - tsn * math.exp(-b) + (tsn - low) * math.exp(-b * n_h / z_h)) / (
        1 - math.exp(-b)
    )
    got = diurnal.diurnal_temperature(fall[1] + n_h * 3600.0, rise, fall, low, high)
    assert got == pytest.approx(expected, abs=1e-12)


@settings(max_examples=50, deadline=None)
@given(
    low=st.floats(-30.0, 20.0),
    span=st.floats(0.0, 25.0),
    lat=st.floats(-60.0, 60.0),
    lon=st.floats(-179.0, 179.0),
    day=st.integers(0, 364),
)
def test_bounded_by_the_low_and_high(low, span, lat, lon, day):
    start = dt.datetime(2026, 1, 1, tzinfo=dt.UTC).timestamp() + day * 86400.0
    rise, fall = diurnal.sun_events(lat, lon, start, start + 86400.0)
    t = np.linspace(start, start + 86400.0, 97)
    temp = diurnal.diurnal_temperature(t, rise, fall, low, low + span)
    assert np.all(temp >= low - 1e-9) and np.all(temp <= low + span + 1e-9)


def test_outside_the_days_given_is_a_value_error():
    rise, fall = _events()
    with pytest.raises(ValueError, match="t_s"):
        diurnal.diurnal_temperature(fall[-1] + 1.0, rise, fall, -6.0, 3.0)
    with pytest.raises(ValueError, match="high_c"):
        diurnal.diurnal_temperature(fall[0], rise, fall, 3.0, -6.0)
    with pytest.raises(ValueError, match="alternate"):
        diurnal.diurnal_temperature(fall[0], fall, rise, -6.0, 3.0)


def test_sunrise_at_utc_midnight_is_found():
    # astral 3 cannot place a sunrise that falls at 23:59 UTC when asked on the solar
    # clock (the case hypothesis found at -41°, 110° E on 2026-07-18); the events either
    # side are a day apart, within the minute or two the sunrise moves a day in July
    # (astral's own answers for 07-17 and 07-19 on the solar clock, 07:00 and 06:59)
    import datetime as dt

    start = dt.datetime(2026, 7, 17, 12, tzinfo=dt.UTC).timestamp()
    rise, fall = diurnal.sun_events(-41.0, 110.0, start, start + 86400.0)
    gaps = np.diff(rise)
    assert np.all(np.abs(gaps - 86400.0) < 180.0)
    assert np.all(rise[:-1] < fall[:-1]) and np.all(fall[:-1] < rise[1:])
