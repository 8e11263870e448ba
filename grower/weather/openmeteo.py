"""A live forecast from Open-Meteo's forecast API through a persistent requests-cache.

Split into `fetch_openmeteo` (HTTP only, ``timeout=`` a parameter), `parse_openmeteo`
(pure, tested on recorded or hand-written answers) and `fetch_forecast`, which joins
them. requests, requests-cache and platformdirs are imported only when a forecast is
fetched, so ``import grower.weather`` stays light.

References
----------
Open-Meteo Forecast API documentation, https://open-meteo.com/en/docs (response shape,
``utc_offset_seconds``, ``shortwave_radiation`` as the preceding-hour mean; data under
CC BY 4.0).
"""

from __future__ import annotations

import datetime as dt
import math
import os
import re
import sqlite3
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
from numpy.typing import NDArray

from grower import limits
from grower.errors import InputError
from grower.site import Site
from grower.units import M_S_PER_MPH, f_to_c
from grower.weather.forecast import (
    UNIT_LABEL,
    Forecast,
    check_and_repair,
    make_forecast,
    parse_time,
    zone_offsets,
)

DEFAULT_FORECAST_URL = "https://api.open-meteo.com"
#: clocks on Earth run from UTC−12 to UTC+14 [s]
MAX_UTC_OFFSET_S = 14 * 3600
#: most hours an answer may hold (30 years of history; a forecast has 384)
MAX_HOURS = 24 * 366 * 30
OPEN_METEO_ATTRIBUTION = "Weather data by Open-Meteo.com (CC BY 4.0)"
OPEN_METEO_VARS = {
    "temperature_2m": "temperature_c",
    "dew_point_2m": "dew_point_c",
    "cloud_cover": "cloud_cover_pct",
    "wind_speed_10m": "wind_speed_m_s",
    "shortwave_radiation": "shortwave_w_m2",
}
#: asked for too, used when the answer carries it (the sky under low cloud is warmer)
OPTIONAL_VARS = {"cloud_cover_low": "cloud_cover_low_pct"}


def forecast_url() -> str:
    """Base URL of the forecast service: ``GROWER_FORECAST_URL`` or Open-Meteo's."""
    return (os.environ.get("GROWER_FORECAST_URL") or DEFAULT_FORECAST_URL).rstrip("/")


def cache_file() -> Path:
    """The forecast cache (SQLite): in ``GROWER_CACHE_DIR`` or the user cache dir."""
    folder = os.environ.get("GROWER_CACHE_DIR")
    if not folder:
        from platformdirs import user_cache_dir

        folder = user_cache_dir("grower")
    return Path(folder) / "forecast-cache.sqlite"


@dataclass(frozen=True)
class Fetched:
    """A forecast document as fetched: the JSON and where and when it came from."""

    document: dict[str, Any]
    url: str
    retrieved_at: dt.datetime
    from_cache: bool
    stale: bool
    age_s: float


def is_forecast(response: Any) -> bool:
    """Cache only 200 answers that are JSON objects with hourly data."""
    try:
        return response.status_code == 200 and isinstance(response.json().get("hourly"), dict)
    except Exception:
        return False


def failure_reason(exc: Exception) -> str:
    text = str(exc)
    match = re.search(r"\[Errno -?\d+\] ([^'\")]+)", text)
    return match.group(1).strip() if match else type(exc).__name__


def fetch_openmeteo(
    site: Site,
    *,
    days: int = 3,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Fetched:
    """GET Open-Meteo's hourly forecast for the site, through the persistent cache.

    A cached answer younger than `expire_after_s` is used without asking the service.
    When the service cannot be reached (or answers with an error) an expired cached
    answer is used instead (``stale=True``). Base URL: `forecast_url`; cache:
    `cache_file`. `status`, when given, is called with a short progress line.

    Raises
    ------
    InputError
        One line: unreachable with nothing cached, HTTP 400 (with the service's reason)
        or another error status, an answer that is not JSON.
    """
    return get_cached_json(
        forecast_url(),
        "/v1/forecast",
        site_query(site, days),
        what="forecast",
        timeout=timeout,
        status=status,
        expire_after_s=expire_after_s,
        now=now,
    )


def site_query(site: Site, days: int, **more: str) -> dict[str, str]:
    """The hourly query for the site (the variables the forecast needs, SI wind, local
    times with their offset), `days` days from today, plus `more` parameters."""
    if not 1 <= days <= 16:
        raise ValueError("days must be within 1…16")
    return {
        "latitude": f"{site.latitude_deg:.4f}",
        "longitude": f"{site.longitude_deg:.4f}",
        "hourly": ",".join([*OPEN_METEO_VARS, *OPTIONAL_VARS]),
        **more,
        "timezone": "auto",
        "forecast_days": str(days),
        "wind_speed_unit": "ms",
    }


def get_cached_json(
    base: str,
    endpoint: str,
    params: Mapping[str, str],
    *,
    what: str,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Fetched:
    """GET ``base + endpoint`` through the persistent cache: one JSON object with hourly
    data, or one `InputError` line naming the `what` service ("forecast", "ensemble")."""
    import requests
    import requests_cache

    path = cache_file()
    if status:
        status(f"fetching the {what} from {base}")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        session = requests_cache.CachedSession(
            str(path),
            backend="sqlite",
            expire_after=expire_after_s,
            stale_if_error=True,
            allowable_codes=(200,),
            filter_fn=is_forecast,
        )
    except Exception as exc:  # sqlite3 / OS errors opening the cache
        raise InputError(
            f"cannot open the forecast cache {path} ({exc}); delete the file or set GROWER_CACHE_DIR to another folder"
        ) from None
    from grower import __version__

    service = f"the {what} service at {base}"
    with session:
        try:
            response = session.get(
                f"{base}{endpoint}",
                params=dict(params),
                timeout=timeout,
                headers={"User-Agent": f"grower/{__version__}"},
            )
        except requests.exceptions.Timeout:
            raise InputError(
                f"cannot reach {service} (no answer within {timeout:g} s) and no cached {what} for this site"
            ) from None
        except requests.exceptions.RequestException as exc:
            raise InputError(
                f"cannot reach {service} ({failure_reason(exc)}) and no cached {what} for this site"
            ) from None
        except sqlite3.Error as exc:
            raise InputError(
                f"the forecast cache {path} cannot be used ({exc}); delete it or set GROWER_CACHE_DIR"
            ) from None
    if response.status_code == 400:
        try:
            reason = response.json().get("reason") or "no reason given"
        except Exception:
            reason = "no reason given"
        raise InputError(f"{service} refused the request: {reason}")
    if response.status_code != 200:
        raise InputError(
            f"{service} answered HTTP {response.status_code} {response.reason or ''} and no cached {what} for this site"
        )
    try:
        document = response.json()
    except (ValueError, RecursionError):
        raise InputError(
            f"{service} sent an answer that is not JSON ({response.text[:40]!r})"
        ) from None
    if not isinstance(document, dict):
        raise InputError(f"{service} sent JSON that is not an object")
    created = getattr(response, "created_at", None) or dt.datetime.now(dt.UTC)
    created = created if created.tzinfo else created.replace(tzinfo=dt.UTC)
    now = now or dt.datetime.now(dt.UTC)
    from_cache = bool(getattr(response, "from_cache", False))
    return Fetched(
        document,
        base,
        created,
        from_cache,
        stale=from_cache and bool(getattr(response, "is_expired", False)),
        age_s=max(0.0, (now - created).total_seconds()),
    )


def check_answer(document: Any, where: str) -> None:
    """Refuse an answer that is not a JSON object, or an error document (its reason)."""
    if not isinstance(document, Mapping):
        raise InputError(
            f"the answer is a JSON {type(document).__name__}, not an object", where=where
        )
    if document.get("error"):
        raise InputError(
            f"the service reported an error: {document.get('reason') or 'no reason given'}",
            where=where,
        )


def parse_openmeteo(
    document: Mapping[str, Any], *, site: Site | None = None, url: str = DEFAULT_FORECAST_URL
) -> Forecast:
    """An Open-Meteo forecast document (JSON as a dict) → `Forecast` (pure).

    Local times in ``hourly.time`` carry the single offset ``utc_offset_seconds``; they
    are converted to UTC with it, then shown in the site's zone (else the document's).
    Nulls are missing values (one between two good ones is filled; rows without data
    at the ends are dropped). Units are read from ``hourly_units``.

    Raises
    ------
    InputError
        An error document, a missing or malformed field or variable.
    """
    where = f"forecast from {url}"
    check_answer(document, where)
    hourly, offset = document.get("hourly"), document.get("utc_offset_seconds")
    if not isinstance(hourly, Mapping) or not isinstance(hourly.get("time"), list):
        raise InputError("the answer has no hourly.time list", where=where)
    if not isinstance(offset, int | float) or isinstance(offset, bool):
        raise InputError("the answer has no utc_offset_seconds", where=where)
    if not math.isfinite(offset) or abs(offset) > MAX_UTC_OFFSET_S:
        raise InputError(
            f"utc_offset_seconds {offset:g} is beyond any clock on Earth (UTC−12…+14)",
            where=where,
        )
    offset = int(offset)
    stamps = hourly["time"]
    if len(stamps) > MAX_HOURS:
        raise InputError(
            f"the answer has {len(stamps):,} hours; a forecast has at most {MAX_HOURS:,}",
            where=where,
        )
    units = document.get("hourly_units") or {}
    if not isinstance(units, Mapping):
        raise InputError(
            f"hourly_units is a JSON {type(units).__name__}, not an object of units", where=where
        )
    values: dict[str, NDArray[np.float64]] = {}
    present = {v: c for v, c in OPTIONAL_VARS.items() if isinstance(hourly.get(v), list)}
    for var, col in {**OPEN_METEO_VARS, **present}.items():
        series = hourly.get(var)
        if not isinstance(series, list):
            raise InputError(f"the answer has no hourly.{var}", where=where)
        if len(series) != len(stamps):
            raise InputError(
                f"hourly.{var} has {len(series)} values for {len(stamps)} times", where=where
            )
        try:
            if any(isinstance(x, bool | str) for x in series):
                raise TypeError
            numbers = np.array([np.nan if x is None else float(x) for x in series])
        except (TypeError, ValueError, OverflowError):
            raise InputError(
                f"hourly.{var} holds a value that is not a number", where=where
            ) from None
        if var in present and np.isnan(numbers).any():
            continue  # an optional variable with gaps is left out, not repaired
        if np.isnan(numbers).all():
            raise InputError(f"hourly.{var} has no values", where=where)
        values[col] = _convert_unit(numbers, units.get(var), var, where)
    wind = values.get("wind_speed_m_s")
    if wind is not None and np.any(np.isfinite(wind) & (wind > limits.WIND_M_S.hi)):
        i = int(np.flatnonzero(np.isfinite(wind) & (wind > limits.WIND_M_S.hi))[0])
        raise InputError(
            f"hourly.wind_speed_10m[{i}]: {wind[i]:g} m/s is beyond the strongest gust on "
            f"record ({limits.WIND_M_S.hi:g} m/s)",
            where=where,
        )
    utc_s = np.empty(len(stamps))
    lo_year, hi_year = limits.YEARS
    for i, text in enumerate(stamps):
        when = parse_time(str(text), f"hourly.time[{i}]", where)
        if not lo_year <= when.year <= hi_year:
            raise InputError(
                f"hourly.time[{i}]: the year {when.year} is outside {lo_year}–{hi_year}",
                where=where,
            )
        utc_s[i] = (
            when.timestamp() if when.tzinfo else when.replace(tzinfo=dt.UTC).timestamp() - offset
        )
    labels = [f"hourly.time[{i}] ({text})" for i, text in enumerate(stamps)]
    utc_s, values, warnings = _trim_empty_ends(utc_s, values, labels)
    if utc_s.size == 0:
        raise InputError("no hour has all variables", where=where)
    raw = {c: v.copy() for c, v in values.items()}
    utc_s, _, values, more = check_and_repair(
        utc_s,
        np.full(utc_s.size, int(offset)),
        values,
        label=labels.__getitem__,
        name={c: v for v, c in {**OPEN_METEO_VARS, **present}.items() if c in values},
        raw=lambda c, i: f"{raw[c][i]:g} {UNIT_LABEL[c]}",
        where=where,
    )
    warnings += more
    if site is not None:
        from grower.weather.csvfile import check_sun

        check_sun(utc_s, values["shortwave_w_m2"], site, where, "hourly.shortwave_radiation")
    zone_name = site.timezone if site else document.get("timezone")
    if not isinstance(zone_name, str):
        zone_name = None
    try:
        tz: Any = ZoneInfo(zone_name) if zone_name else None
    except (ZoneInfoNotFoundError, ValueError):
        tz = None
    if tz is None:
        zone_name, tz = None, dt.timezone(dt.timedelta(seconds=int(offset)))
    return make_forecast(
        utc_s,
        zone_offsets(utc_s, tz),
        values,
        set(values),
        tz=tz,
        timezone=zone_name,
        source="Open-Meteo",
        attribution=OPEN_METEO_ATTRIBUTION,
        warnings=tuple(warnings),
        shortwave_offset_s=-1800.0,
    )


def _trim_empty_ends(
    utc_s: NDArray[np.float64], values: dict[str, NDArray[np.float64]], labels: list[str]
) -> tuple[NDArray[np.float64], dict[str, NDArray[np.float64]], list[str]]:
    """Drop leading and trailing hours where any variable is null (a service's horizon)."""
    ok = np.all([~np.isnan(v) for v in values.values()], axis=0)
    if not ok.any():
        return utc_s[:0], values, []
    first, last = np.flatnonzero(ok)[[0, -1]]
    dropped = first + ok.size - 1 - last
    if not dropped:
        return utc_s, values, []
    keep = slice(first, last + 1)
    del labels[last + 1 :]
    del labels[:first]
    note = f"{dropped} hour(s) without data at the ends of the forecast dropped"
    return utc_s[keep], {c: v[keep] for c, v in values.items()}, [note]


_UNITS = {
    "°C": lambda v: v,
    "°F": f_to_c,
    "%": lambda v: v,
    "m/s": lambda v: v,
    "km/h": lambda v: v / 3.6,
    "mp/h": lambda v: v * M_S_PER_MPH,
    "mph": lambda v: v * M_S_PER_MPH,
    "kn": lambda v: v * 1852.0 / 3600.0,
    "W/m²": lambda v: v,
}
_EXPECTED = {
    "temperature_2m": "°C",
    "dew_point_2m": "°C",
    "cloud_cover": "%",
    "cloud_cover_low": "%",
    "wind_speed_10m": "m/s",
    "shortwave_radiation": "W/m²",
}


def _convert_unit(
    values: NDArray[np.float64], unit: Any, var: str, where: str
) -> NDArray[np.float64]:
    unit = _EXPECTED[var] if unit is None else str(unit)
    kind = {
        "°C": "t",
        "°F": "t",
        "%": "%",
        "m/s": "v",
        "km/h": "v",
        "mp/h": "v",
        "mph": "v",
        "kn": "v",
        "W/m²": "e",
    }
    if unit not in _UNITS or kind[unit] != kind[_EXPECTED[var]]:
        raise InputError(f'hourly_units.{var} is "{unit}", expected {_EXPECTED[var]}', where=where)
    return _UNITS[unit](values)


def fetch_forecast(
    site: Site,
    *,
    days: int = 3,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Forecast:
    """Live forecast for the site from Open-Meteo, cached; see `fetch_openmeteo`.

    When an expired cached forecast stands in for an unreachable service, a warning
    naming its age is the first entry of ``Forecast.warnings``.
    """
    got = fetch_openmeteo(
        site, days=days, timeout=timeout, status=status, expire_after_s=expire_after_s, now=now
    )
    forecast = parse_openmeteo(got.document, site=site, url=got.url)
    warnings = forecast.warnings
    if got.stale:
        when = got.retrieved_at.astimezone(forecast.tz).isoformat(timespec="minutes")
        warnings = (
            f"the forecast service at {got.url} could not be reached: using the forecast cached {_age_text(got.age_s)} ago (retrieved {when})",
            *warnings,
        )
    return forecast.with_samples(
        forecast.samples,
        retrieved_at=got.retrieved_at,
        from_cache=got.from_cache,
        age_s=got.age_s,
        warnings=warnings,
    )


def _age_text(seconds: float) -> str:
    if seconds < 5400:
        return f"{seconds / 60:.0f} min"
    if seconds < 2 * 86400:
        return f"{seconds / 3600:.1f} h"
    return f"{seconds / 86400:.1f} days"
