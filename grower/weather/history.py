"""Past weather for a site: Open-Meteo's historical-weather API, cached for good.

`fetch_history` asks ``{base}/v1/archive`` for one stretch of hourly history
(``start_date``, ``end_date``, the same hourly variables as the forecast) through a
persistent requests-cache; past weather does not change, so a cached answer is used
without asking again, and with a dead network the cache still answers. The answer has
the forecast's shape and is parsed by `grower.weather.openmeteo.parse_openmeteo`. The
base URL is ``GROWER_HISTORY_URL`` (tests point it at a loopback server), the cache
folder ``GROWER_CACHE_DIR``.

`winter_windows` and `split_winters` cut a long hourly record (fetched or from a CSV in
the forecast format) into seasons.

References
----------
Open-Meteo Historical Weather API documentation, https://open-meteo.com/en/docs/historical-weather-api
(``/v1/archive``, ``start_date`` and ``end_date`` as ISO 8601 dates, the response shape
of the forecast API; data under CC BY 4.0).
"""

from __future__ import annotations

import datetime as dt
import os
import sqlite3
from pathlib import Path

import numpy as np

from grower.errors import InputError
from grower.site import Site
from grower.weather.forecast import Forecast
from grower.weather.openmeteo import OPEN_METEO_VARS, failure_reason, is_forecast, parse_openmeteo

DEFAULT_HISTORY_URL = "https://archive-api.open-meteo.com"
#: the archive lags real time by a few days (from memory: about five)
ARCHIVE_LAG_DAYS = 7


def history_url() -> str:
    """Base URL of the history service: ``GROWER_HISTORY_URL`` or Open-Meteo's archive."""
    return (os.environ.get("GROWER_HISTORY_URL") or DEFAULT_HISTORY_URL).rstrip("/")


def cache_file() -> Path:
    """The history cache (SQLite): in ``GROWER_CACHE_DIR`` or the user cache dir."""
    folder = os.environ.get("GROWER_CACHE_DIR")
    if not folder:
        from platformdirs import user_cache_dir

        folder = user_cache_dir("grower")
    return Path(folder) / "history-cache.sqlite"


def _is_complete_history(response) -> bool:
    """Cache only whole answers: 200, hourly data, and a value at the last hour of every
    variable. The archive lags real time by a few days and answers the days it does not
    have yet with nulls; such an answer is used once, not kept for good."""
    if not is_forecast(response):
        return False
    try:
        hourly = response.json()["hourly"]
        return all(
            isinstance(hourly.get(v), list) and hourly[v] and hourly[v][-1] is not None
            for v in OPEN_METEO_VARS
        )
    except Exception:
        return False


def fetch_history(
    site: Site,
    start: dt.date,
    end: dt.date,
    *,
    timeout: float = 30.0,
    instead: str = "--history FILE",
) -> Forecast:
    """Hourly history for `site` from `start` to `end` (dates, both included).

    `instead` is the option the unreachable-service message offers instead (the
    command's own file option). An answer whose last hour is empty (days the archive
    does not have yet) is not cached; its empty hours at the end are dropped.

    Raises
    ------
    InputError
        One line: unreachable with nothing cached, an error answer, not JSON.
    """
    import requests
    import requests_cache

    if end < start:
        raise ValueError("end before start")
    base = history_url()
    path = cache_file()
    params = {
        "latitude": f"{site.latitude_deg:.4f}",
        "longitude": f"{site.longitude_deg:.4f}",
        "start_date": start.isoformat(),
        "end_date": end.isoformat(),
        "hourly": ",".join(OPEN_METEO_VARS),
        "timezone": "auto",
        "wind_speed_unit": "ms",
    }
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        session = requests_cache.CachedSession(
            str(path),
            backend="sqlite",
            expire_after=requests_cache.NEVER_EXPIRE,
            stale_if_error=True,
            allowable_codes=(200,),
            filter_fn=_is_complete_history,
        )
    except Exception as exc:  # sqlite3 / OS errors opening the cache
        raise InputError(
            f"cannot open the history cache {path} ({exc}); delete the file or set GROWER_CACHE_DIR"
        ) from None
    from grower import __version__

    span = f"{start.isoformat()} to {end.isoformat()}"
    with session:
        try:
            response = session.get(
                f"{base}/v1/archive",
                params=params,
                timeout=timeout,
                headers={"User-Agent": f"grower/{__version__}"},
            )
        except requests.exceptions.RequestException as exc:
            raise InputError(
                f"cannot reach the weather history service at {base} ({failure_reason(exc)}) and no "
                f"cached history for {span}; give {instead} instead"
            ) from None
        except sqlite3.Error as exc:
            raise InputError(
                f"the history cache {path} cannot be used ({exc}); delete it or set GROWER_CACHE_DIR"
            ) from None
    if response.status_code != 200:
        try:
            reason = response.json().get("reason") or ""
        except Exception:
            reason = ""
        raise InputError(
            f"the weather history service at {base} answered HTTP {response.status_code}"
            + (f": {reason}" if reason else "")
        )
    try:
        document = response.json()
    except ValueError:
        raise InputError(
            f"the weather history service at {base} sent an answer that is not JSON"
        ) from None
    if not isinstance(document, dict):
        raise InputError(f"the weather history service at {base} sent JSON that is not an object")
    forecast = parse_openmeteo(document, site=site, url=base)
    return forecast.with_samples(
        forecast.samples,
        source=f"Open-Meteo history {span}",
        from_cache=bool(getattr(response, "from_cache", False)),
    )


def winter_windows(
    first: dt.date, last: dt.date, season_start: tuple[int, int], days: int, n: int
) -> list[tuple[dt.date, dt.date]]:
    """The last `n` seasons (start, end date exclusive) lying wholly in [first, last]."""
    month, day = season_start
    out = []
    for year in range(last.year, first.year - 2, -1):
        try:
            a = dt.date(year, month, day)
        except ValueError:
            raise InputError(
                f"{month:02d}-{day:02d} is not a date", where="--season-start"
            ) from None
        b = a + dt.timedelta(days=days)
        if a >= first and b <= last:
            out.append((a, b))
        if len(out) == n:
            break
    return sorted(out)


def season_of(forecast: Forecast, start: dt.date, end: dt.date) -> Forecast:
    """The part of `forecast` from local midnight of `start` to that of `end`."""
    tz, utc = forecast.tz, forecast.utc_s
    a = dt.datetime.combine(start, dt.time(), tz).timestamp()
    b = dt.datetime.combine(end, dt.time(), tz).timestamp()
    first, stop = np.searchsorted(utc, a, side="left"), np.searchsorted(utc, b, side="right")
    return forecast.between(int(first), int(stop))
