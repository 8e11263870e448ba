"""Air temperature through the day and night from a daily minimum and maximum.

Parton & Logan (1981) split the day at sunrise and sunset. In daylight

    T = Tmin + (Tmax − Tmin)·sin(π·m/(D + 2a)),

with m the hours after the time of the minimum (sunrise + c) and D the day length [h].
At night Parton & Logan decay exponentially from the sunset temperature Tsn; their night
branch does not reach the next minimum, so the curve jumps at sunrise. We use the
continuous night branch of Kimball & Bellamy (1986),

    T = [Tmin′ − Tsn·e^−b + (Tsn − Tmin′)·e^(−b·n/Z)] / (1 − e^−b),

with n the hours since sunset and Tmin′ the next morning's minimum. It equals Tsn at
n = 0 and Tmin′ at n = Z. Our choice (documented here, not taken from either paper):
Z runs from sunset to the next *minimum* (sunrise + c) rather than to sunrise, so that
the night branch ends exactly where the day branch starts. With c = −0.17 h this
shortens Z by ten minutes; in exchange the curve is continuous at sunset and at the
minimum, and the minimum is the given low, at the time the model puts it.

Coefficients for air at 150 cm (Parton & Logan 1981): a = 1.86 h (the maximum
comes a + c hours after the middle of the day), b = 2.20 (night decay), c = −0.17 h (the
minimum comes c hours after sunrise, i.e. ten minutes before it).

Sunrise and sunset come from astral 3.x, an implementation of the NOAA solar
equations (the sun's upper limb on a sea-level horizon, 0.833° below it with
refraction: astral's default).

References
----------
Parton, W. J., & Logan, J. A. (1981). A model for diurnal variation in soil and air
temperature. *Agricultural Meteorology*, 23, 205–216.
doi:10.1016/0002-1571(81)90105-9

Kimball, B. A., & Bellamy, L. A. (1986). Generation of diurnal solar radiation,
temperature, and humidity patterns. *Energy in Agriculture*, 5, 185–197.
doi:10.1016/0167-5826(86)90018-5

NOAA Global Monitoring Laboratory, *Solar Calculation Details* (the equations astral
follows).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
from numpy.typing import ArrayLike, NDArray

from grower.errors import InputError

#: Parton & Logan (1981), air at 150 cm: lag of the maximum [h]
A_150CM = 1.86
#: Parton & Logan (1981), air at 150 cm: night decay coefficient [1]
B_150CM = 2.20
#: Parton & Logan (1981), air at 150 cm: lag of the minimum after sunrise [h]
C_150CM = -0.17

_H = 3600.0


def sun_events(
    latitude_deg: float, longitude_deg: float, start_s: float, end_s: float
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Sunrises and sunsets around an interval, as UTC epoch seconds.

    The days are taken in local *solar* time (a fixed offset of longitude/15 hours), so
    each day's sunrise comes before its sunset whatever clock zone the site keeps. The
    days run from one before `start_s` to one after `end_s`.

    Parameters
    ----------
    latitude_deg, longitude_deg : float
        Site position [°], north and east positive.
    start_s, end_s : float
        The interval [s since 1970-01-01 UTC].

    Returns
    -------
    sunrise_s, sunset_s : numpy.ndarray
        One entry per day [s since 1970-01-01 UTC], with
        ``sunrise[i] < sunset[i] < sunrise[i + 1]``.

    Raises
    ------
    InputError
        If the sun does not rise or does not set on one of the days (polar day or night).

    References
    ----------
    astral 3.x, ``astral.sun.sunrise`` / ``sunset`` (NOAA solar equations).
    """
    from astral import Observer
    from astral.sun import sunrise, sunset

    solar = dt.timezone(dt.timedelta(hours=round(longitude_deg / 15.0)))
    first = dt.datetime.fromtimestamp(start_s, solar).date() - dt.timedelta(days=1)
    last = dt.datetime.fromtimestamp(end_s, solar).date() + dt.timedelta(days=1)
    observer = Observer(latitude=latitude_deg, longitude=longitude_deg, elevation=0.0)

    def event(find, day: dt.date) -> float:
        try:
            return find(observer, day, tzinfo=solar).timestamp()
        except ValueError:
            # astral returns one event per UTC date, so one whose UTC date has another
            # just after midnight is never returned (at -41°, 110° E the 2026-07-18
            # sunrise is 23:59:40 UTC on 07-17, the 07-17 one 00:00:20 UTC): take the
            # mean of the days either side, exact to the seconds by which the time of an
            # event changes its daily drift. A polar day or night fails there too.
            one = dt.timedelta(days=1)
            before = find(observer, day - one, tzinfo=solar).timestamp()
            after = find(observer, day + one, tzinfo=solar).timestamp()
            return 0.5 * (before + after)

    rises, sets = [], []
    day = first
    while day <= last:
        try:
            rises.append(event(sunrise, day))
            sets.append(event(sunset, day))
        except ValueError as exc:
            raise InputError(
                f"no sunrise or sunset at latitude {latitude_deg:g}° on {day.isoformat()} "
                "(polar day or night: "
                f"{exc.args[0].rstrip('.').lower()}); the day and night curve needs both — give "
                "an hourly forecast file instead"
            ) from None
        day += dt.timedelta(days=1)
    rise, fall = np.array(rises), np.array(sets)
    _check_alternating(rise, fall)
    return rise, fall


def _check_alternating(sunrise_s: NDArray[np.float64], sunset_s: NDArray[np.float64]) -> None:
    if sunrise_s.ndim != 1 or sunrise_s.shape != sunset_s.shape or sunrise_s.size < 2:
        raise ValueError("sunrise_s and sunset_s must be 1-D arrays of equal length >= 2")
    if np.any(sunset_s <= sunrise_s) or np.any(sunrise_s[1:] <= sunset_s[:-1]):
        raise ValueError("sunrise_s and sunset_s must alternate: sunrise < sunset < next sunrise")


def minimum_times(sunrise_s: ArrayLike, c_h: float = C_150CM) -> NDArray[np.float64]:
    """Times of the daily minimum, sunrise + c [s since the epoch]."""
    return np.asarray(sunrise_s, dtype=float) + c_h * _H


def diurnal_temperature(
    t_s: ArrayLike,
    sunrise_s: ArrayLike,
    sunset_s: ArrayLike,
    low_c: ArrayLike,
    high_c: ArrayLike,
    *,
    a_h: float = A_150CM,
    b: float = B_150CM,
    c_h: float = C_150CM,
) -> NDArray[np.float64]:
    """Air temperature at times `t_s` from daily minima and maxima.

    Parameters
    ----------
    t_s : array_like
        Times to evaluate [s since the epoch, UTC]; each must fall between the first
        day's minimum (sunrise + c) and the last day's sunset.
    sunrise_s, sunset_s : array_like
        Consecutive days' sunrise and sunset [s since the epoch], as from `sun_events`.
    low_c, high_c : array_like
        Each day's minimum (at its sunrise + c) and maximum [°C]; scalars or one value per
        day. The night after day i falls from day i's sunset temperature to day i + 1's
        minimum.
    a_h, b, c_h : float
        Parton & Logan coefficients (defaults: air at 150 cm). `a_h` and `c_h` in hours.

    Returns
    -------
    numpy.ndarray
        Air temperature [°C], shaped like `t_s`. The curve is continuous; it equals the
        day's low at the minimum time and stays within [low, high] of the days it joins.

    References
    ----------
    Parton & Logan (1981), *Agric. Meteorol.* 23:205–216; Kimball & Bellamy (1986),
    *Energy in Agriculture* 5:185–197. See the module notes for the night length Z.
    """
    rise = np.asarray(sunrise_s, dtype=float)
    fall = np.asarray(sunset_s, dtype=float)
    _check_alternating(rise, fall)
    days = rise.size
    low = np.broadcast_to(np.asarray(low_c, dtype=float), (days,))
    high = np.broadcast_to(np.asarray(high_c, dtype=float), (days,))
    if np.any(high < low):
        raise ValueError("high_c must not be below low_c")
    if a_h <= 0 or b <= 0 or not -2 * a_h < c_h < 2.0:
        raise ValueError("need a_h > 0, b > 0 and -2·a_h < c_h < 2 h")
    tmin = minimum_times(rise, c_h)
    t = np.asarray(t_s, dtype=float)
    if np.any(t < tmin[0]) or np.any(t > fall[-1]):
        raise ValueError("t_s must lie between the first day's minimum and the last sunset")

    i = np.clip(np.searchsorted(tmin, t, side="right") - 1, 0, days - 1)
    day_h = (fall - rise) / _H
    # day branch, from the minimum to sunset
    m_h = (t - tmin[i]) / _H
    day = low[i] + (high[i] - low[i]) * np.sin(np.pi * m_h / (day_h[i] + 2 * a_h))
    # sunset temperature of each day, and the night after it
    t_sunset = low + (high - low) * np.sin(np.pi * (day_h - c_h) / (day_h + 2 * a_h))
    j = np.minimum(i + 1, days - 1)
    z_h = (tmin[j] - fall[i]) / _H
    n_h = (t - fall[i]) / _H
    tsn, low_next, eb = t_sunset[i], low[j], np.exp(-b)
    with np.errstate(divide="ignore", invalid="ignore"):
        night = (low_next - tsn * eb + (tsn - low_next) * np.exp(-b * n_h / z_h)) / (1 - eb)
    return np.where(t < fall[i], day, night)
