"""The live forecast's ensemble: every member of Open-Meteo's ensemble API as a `Forecast`.

Split like the forecast client (`grower.weather.openmeteo`): `fetch_ensemble` (HTTP
through the same persistent requests-cache, ``timeout=`` a parameter), `parse_ensemble`
(pure) and `ensemble_forecasts`, which joins them. The base URL is
``GROWER_ENSEMBLE_URL`` or Open-Meteo's ensemble host.

Each hourly variable comes as ``NAME`` (the control run) beside ``NAME_member01`` …
``NAME_memberNN`` (the perturbed runs); every member is parsed, checked and repaired
exactly as a forecast is (`grower.weather.openmeteo.parse_openmeteo`).

References
----------
Open-Meteo Ensemble API documentation, https://open-meteo.com/en/docs/ensemble-api
(``/v1/ensemble``, ``models=``, the ``_memberNN`` suffix; data under CC BY 4.0).
"""

from __future__ import annotations

import datetime as dt
import os
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from typing import Any

from grower.errors import InputError
from grower.site import Site
from grower.weather.forecast import Forecast
from grower.weather.openmeteo import (
    OPEN_METEO_VARS,
    OPTIONAL_VARS,
    Fetched,
    check_answer,
    get_cached_json,
    parse_openmeteo,
    site_query,
)

DEFAULT_ENSEMBLE_URL = "https://ensemble-api.open-meteo.com"
#: the global ensemble asked for: NOAA's GEFS (control + 30 members), everywhere on Earth
DEFAULT_ENSEMBLE_MODEL = "gfs_seamless"
#: words for the report
MODEL_LABELS = {"gfs_seamless": "GFS"}
#: most members an answer may hold (the largest ensembles the service lists have ~100)
MAX_MEMBERS = 200
_MEMBER = re.compile(r"^temperature_2m_member(\d{2,3})$")


def ensemble_url() -> str:
    """Base URL of the ensemble service: ``GROWER_ENSEMBLE_URL`` or Open-Meteo's."""
    return (os.environ.get("GROWER_ENSEMBLE_URL") or DEFAULT_ENSEMBLE_URL).rstrip("/")


@dataclass(frozen=True, eq=False)
class Ensemble:
    """The members of one ensemble answer, the control run first."""

    members: tuple[Forecast, ...]
    model: str
    url: str
    from_cache: bool = False
    stale: bool = False

    @property
    def label(self) -> str:
        return MODEL_LABELS.get(self.model, self.model)


def fetch_ensemble(
    site: Site,
    *,
    days: int = 3,
    model: str = DEFAULT_ENSEMBLE_MODEL,
    timeout: float = 10.0,
    status: Callable[[str], None] | None = None,
    expire_after_s: float = 3600.0,
    now: dt.datetime | None = None,
) -> Fetched:
    """GET the ensemble for the site (``/v1/ensemble``), through the forecast cache.

    Raises
    ------
    InputError
        One line, as `grower.weather.fetch_openmeteo`, naming the ensemble service.
    """
    return get_cached_json(
        ensemble_url(),
        "/v1/ensemble",
        site_query(site, days, models=model),
        what="ensemble",
        timeout=timeout,
        status=status,
        expire_after_s=expire_after_s,
        now=now,
    )


def member_numbers(hourly: Mapping[str, Any]) -> list[int]:
    """The perturbed members an answer holds (from ``temperature_2m_memberNN``), sorted."""
    return sorted(int(m.group(1)) for key in hourly if (m := _MEMBER.match(str(key))))


def parse_ensemble(
    document: Mapping[str, Any], *, site: Site | None = None, url: str = DEFAULT_ENSEMBLE_URL
) -> tuple[Forecast, ...]:
    """An Open-Meteo ensemble document → one `Forecast` per member, control first (pure).

    Every member must carry every variable the forecast needs (``NAME`` for the control,
    ``NAME_memberNN`` for the others); an optional variable is used where a member has it.

    Raises
    ------
    InputError
        An error document, no members, or a member whose data is missing or malformed
        (the message names the member).
    """
    where = f"ensemble from {url}"
    check_answer(document, where)
    hourly = document.get("hourly")
    if not isinstance(hourly, Mapping):
        raise InputError("the answer has no hourly data", where=where)
    numbers = member_numbers(hourly)
    if not numbers:
        raise InputError("the answer has no temperature_2m_memberNN series", where=where)
    if len(numbers) + 1 > MAX_MEMBERS:
        raise InputError(
            f"the answer has {len(numbers) + 1} members; at most {MAX_MEMBERS} are read",
            where=where,
        )
    units = document.get("hourly_units") or {}
    if not isinstance(units, Mapping):
        units = {}
    out = []
    for n in [0, *numbers]:
        suffix = f"_member{n:02d}" if n else ""
        sub_hourly: dict[str, Any] = {"time": hourly.get("time")}
        sub_units: dict[str, Any] = {}
        for var in (*OPEN_METEO_VARS, *OPTIONAL_VARS):
            key = f"{var}{suffix}"
            if key in hourly:
                sub_hourly[var] = hourly[key]
            unit = units.get(key, units.get(var))
            if unit is not None:
                sub_units[var] = unit
        sub = {k: v for k, v in document.items() if k not in ("hourly", "hourly_units")}
        sub["hourly"], sub["hourly_units"] = sub_hourly, sub_units
        label = "control run" if n == 0 else f"member {n:02d}"
        out.append(parse_openmeteo(sub, site=site, url=f"{url} ({label})"))
    return tuple(out)


def ensemble_forecasts(site: Site, **options: Any) -> Ensemble:
    """The live ensemble for the site, cached: `fetch_ensemble` (its keyword `options`:
    days, model, timeout, status, expire_after_s, now), then `parse_ensemble`."""
    got = fetch_ensemble(site, **options)
    model = options.get("model", DEFAULT_ENSEMBLE_MODEL)
    members = parse_ensemble(got.document, site=site, url=got.url)
    members = tuple(
        replace(m, source=f"Open-Meteo ensemble ({model})", retrieved_at=got.retrieved_at)
        for m in members
    )
    return Ensemble(members, model, got.url, from_cache=got.from_cache, stale=got.stale)
