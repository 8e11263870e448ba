"""`grower fit --weather-archive`: what a cheap logger does not record, from past weather.

A cheap logger records the inside (and maybe the outside) temperature and the heater,
never the cloud cover; without it the fit takes each night's cloud as a nuisance and
may not pin the conduction to the outside air down (`grower.fit.estimate`, "Unlogged
cloud"). `for_record` fetches the hourly weather archive for the house's [site] over the
record's span (`grower.weather.history.fetch_history`: Open-Meteo's historical-weather
API, cached for good) and hands it to the fit as its outside weather with
``outside_fills=True``: the record's own outside column stays the outside temperature
wherever it has a reading (the local truth); the archive gives the cloud cover, the wind
and the sun, and the temperature (with the dew point) only where the record has none
(`grower.fit.data._outside_columns`).

References
----------
Open-Meteo Historical Weather API documentation,
https://open-meteo.com/en/docs/historical-weather-api (hourly ``cloud_cover``,
``wind_speed_10m``, ``shortwave_radiation``; the data lag real time by a few days;
CC BY 4.0).
"""

from __future__ import annotations

import datetime as dt

from grower.errors import InputError
from grower.house import House
from grower.logger import LoggerRecord
from grower.weather.forecast import Forecast

#: the command's option, named in its messages
OPTION = "--weather-archive"
#: the archive's hours are asked for this far beyond the record's first and last rows,
#: so that each row has an hour on either side to interpolate between [h]
MARGIN_H = 1.0


def archive_dates(record: LoggerRecord, today: dt.date) -> tuple[dt.date, dt.date]:
    """The archive's first and last day (local to the record) for `record`'s rows,
    the last no later than `today`."""
    margin = dt.timedelta(hours=MARGIN_H)
    first = (record.local(0) - margin).date()
    last = (record.local(record.n_rows - 1) + margin).date()
    return first, min(max(last, first), max(today, first))


def for_record(house: House, record: LoggerRecord, *, today: dt.date | None = None) -> Forecast:
    """The weather archive's hourly values over `record`'s span at the house's site.

    Raises
    ------
    InputError
        One line: the house has no [site]; the service cannot be reached with nothing
        cached; the archive does not (yet) reach over the whole record.
    """
    from grower.weather import history

    if house.site is None:
        raise InputError(
            f"{OPTION} needs a [site] (latitude, longitude, time zone) in the house file to "
            "know where the weather was; or give --outside FILE",
            where=house.path,
        )
    today = today or dt.date.today()
    first, last = archive_dates(record, today)
    got = history.fetch_history(house.site, first, last, instead="--outside FILE")
    start, end = float(record.utc_s[0]), float(record.utc_s[-1])
    if got.utc_s[0] > start or got.utc_s[-1] < end:
        has = f"{got.start:%Y-%m-%d %H:%M} to {got.end:%Y-%m-%d %H:%M}"
        runs = (
            f"{record.local(0):%Y-%m-%d %H:%M} to {record.local(record.n_rows - 1):%Y-%m-%d %H:%M}"
        )
        later = ""
        if got.utc_s[-1] < end:
            later = (
                "; the archive lags real time by a few days (about five): try again in a few "
                "days, or give --outside FILE"
            )
        raise InputError(
            f"the weather archive has hours from {has} only, short of the record's span "
            f"({runs}){later}",
            where=OPTION,
        )
    span = f"{first.isoformat()} to {last.isoformat()}"
    cached = ", cached" if got.from_cache else ""
    return got.with_samples(got.samples, source=f"the Open-Meteo weather archive ({span}{cached})")
