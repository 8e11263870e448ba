"""A forecast from a forecast low (and optionally high): tonight's curve.

The low and high are turned into a curve with Parton & Logan (1981) and the continuous
night of Kimball & Bellamy (1986); see `grower.diurnal`.

References
----------
Parton, W. J., & Logan, J. A. (1981). A model for diurnal variation in soil and air
temperature. *Agricultural Meteorology*, 23, 205–216. Kimball, B. A., & Bellamy, L. A.
(1986). Generation of diurnal solar radiation, temperature, and humidity patterns.
*Energy in Agriculture*, 5, 185–197.
"""

from __future__ import annotations

import datetime as dt

import numpy as np

from grower import diurnal
from grower.errors import InputError
from grower.site import Site
from grower.units import Note
from grower.weather.forecast import (
    MAX_GAP_S,
    RANGES,
    UNIT_LABEL,
    Forecast,
    localize,
    make_forecast,
    signed_number,
    zone_info,
    zone_offsets,
)

#: high = low + this when no high is given [K]. from memory: a typical clear-day range in
#: the mid-latitudes; not from a source — give the forecast high for a better curve.
DEFAULT_DIURNAL_RANGE_K = 10.0


def forecast_from_low(
    site: Site,
    low_c: float,
    start: dt.datetime,
    *,
    high_c: float | None = None,
    dew_point_c: float | None = None,
    cloud_pct: float | None = None,
    wind_m_s: float | None = None,
    hours: float | None = None,
    step_s: float = 3600.0,
) -> Forecast:
    """Tonight's curve from a forecast low (Parton & Logan 1981; Kimball & Bellamy 1986).

    Parameters
    ----------
    site : Site
        Position (for sunrise and sunset, astral 3.x) and time zone.
    low_c : float
        Forecast low [°C]; reached at each morning's sunrise + c (c = −0.17 h).
    start : datetime
        "Now": the first sample (naive: the site's clock). The curve's value there is
        the starting temperature.
    high_c : float, optional
        Forecast high [°C]; default ``low_c + DEFAULT_DIURNAL_RANGE_K`` (10 K, from
        memory), stated in the warnings. The same low and high are used every day.
    dew_point_c, cloud_pct, wind_m_s : float, optional
        Constants over the night [°C, %, m/s]; None: not given (sky from Swinbank;
        clear sky, the cautious side). A dew point above the curve is capped at the air
        temperature (saturated air), with a warning.
    hours : float, optional
        Length [h]; default: until 3 h after the first sunrise after `start`.
    step_s : float
        Sample spacing [s], e.g. 900 for 15 minutes.

    Returns
    -------
    Forecast
        Samples at ``start + k·step_s`` (UTC arithmetic: right across DST changes).

    References
    ----------
    Parton & Logan (1981), *Agric. Meteorol.* 23:205–216; Kimball & Bellamy (1986),
    *Energy in Agriculture* 5:185–197 (see `grower.diurnal`).
    """
    zone = zone_info(site.timezone, "site")
    if start.tzinfo is None:
        start_s = float(localize([start], zone, ["start time"], None)[0][0])
    else:
        start_s = start.timestamp()
    warnings = []
    _check_range(low_c, "temperature_c", "forecast low")
    given_high = high_c is not None
    if high_c is None:
        high_c = low_c + DEFAULT_DIURNAL_RANGE_K
        # the SI text as it always read (the JSON's); a US screen shows °F throughout
        warnings.append(
            Note(
                f"no forecast high given: high taken as the low + {DEFAULT_DIURNAL_RANGE_K:g} K = "
                f"{signed_number(round(high_c, 1))} °C (a typical day's range, from memory)",
                us_template="no forecast high given: high taken as the low + {range} = {high} "
                "(a typical day's range, from memory)",
                range=("delta", DEFAULT_DIURNAL_RANGE_K, 0),
                high=("temp", high_c, 1),
            )
        )
    source = Note(
        f"forecast low {signed_number(round(low_c, 1))} °C"
        + (f", high {signed_number(round(high_c, 1))} °C" if given_high else ""),
        us_template="forecast low {low}" + (", high {high}" if given_high else ""),
        low=("temp", low_c, 1),
        high=("temp", high_c, 1),
    )
    _check_range(high_c, "temperature_c", "forecast high")
    if high_c < low_c:
        raise InputError(
            f"forecast high {signed_number(round(high_c, 1))} °C is below the low {signed_number(round(low_c, 1))} °C"
        )
    _check_range(dew_point_c, "dew_point_c", "dew point")
    _check_range(cloud_pct, "cloud_cover_pct", "cloud cover")
    _check_range(wind_m_s, "wind_speed_m_s", "wind speed")
    if not 0 < step_s <= MAX_GAP_S:
        raise InputError(f"time step {step_s:g} s: must be above 0 and at most {MAX_GAP_S:g} s")
    if hours is not None and not 0 < hours <= 24 * 14:
        raise InputError(f"curve length {hours:g} h: must be above 0 and at most 14 days")

    lat, lon = site.latitude_deg, site.longitude_deg
    rise, fall = diurnal.sun_events(lat, lon, start_s, start_s + 2 * 86400.0)
    end_s = rise[rise > start_s][0] + 3 * 3600.0 if hours is None else start_s + hours * 3600.0
    rise, fall = diurnal.sun_events(lat, lon, start_s, end_s)
    count = int(np.ceil((end_s - start_s) / step_s - 1e-9)) + 1
    utc_s = start_s + step_s * np.arange(count)
    temp = diurnal.diurnal_temperature(utc_s, rise, fall, low_c, high_c)
    values = {"temperature_c": temp}
    if dew_point_c is not None:
        values["dew_point_c"] = np.minimum(dew_point_c, temp)
        if dew_point_c > temp.min():
            warnings.append(
                Note(
                    f"dew point {signed_number(round(dew_point_c, 1))} °C is above the air temperature "
                    "at times: capped at the air temperature there (saturated air)",
                    us_template="dew point {dew} is above the air temperature at times: "
                    "capped at the air temperature there (saturated air)",
                    dew=("temp", dew_point_c, 1),
                )
            )
    for value, col in ((cloud_pct, "cloud_cover_pct"), (wind_m_s, "wind_speed_m_s")):
        if value is not None:
            values[col] = np.full(count, float(value))
    offsets = zone_offsets(utc_s, zone)
    return make_forecast(
        utc_s,
        offsets,
        values,
        set(values),
        tz=zone,
        timezone=site.timezone,
        source=source,
        warnings=tuple(warnings),
    )


def _check_range(value: float | None, col: str, what: str) -> None:
    lo, hi = RANGES[col]
    if value is not None and not (np.isfinite(value) and lo <= value <= hi):
        unit = UNIT_LABEL[col]
        raise InputError(
            f"{what} {signed_number(value)} {unit} is outside {signed_number(lo)}…{signed_number(hi)} {unit}"
        )
