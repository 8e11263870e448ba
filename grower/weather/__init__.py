"""Forecasts: tonight's outside boundary from a file, from a forecast low, or live.

Three sources give one result, a `Forecast`: an hourly (or finer) frame with a
time-zone-aware index and the columns of `COLUMNS`, NaN where the source gave nothing.

* `read_forecast_csv` — a CSV file, validated line by line (errors name file, line and
  column; a single missing value or row is filled by linear interpolation and the repair
  is stated in ``Forecast.warnings``).
* `forecast_from_low` — a forecast low (and optionally high) turned into a curve with
  Parton & Logan (1981) and the continuous night of Kimball & Bellamy (1986); see
  `grower.diurnal`.
* `fetch_forecast` — Open-Meteo's forecast API through a persistent requests-cache
  (split into `fetch_openmeteo`, HTTP only, and `parse_openmeteo`, pure).
* `ensemble_forecasts` — the same service's ensemble, one `Forecast` per member
  (`fetch_ensemble`, `parse_ensemble`; module `members`).

Then, pure functions on arrays: `prepare_boundary` puts a forecast on the solver's time
grid (piecewise linear between samples) with the sky temperature of `grower.sky`;
`shifted` and `ensemble` give a colder night and members with a correlated error.

Times: inside, every instant is UTC epoch seconds, so durations are right across a DST
change; the index shows local clock times (the site's zone, or the offsets a file gave).

Modules: `forecast` (the result, shared checks and repairs, `assumptions`), `csvfile`,
`low`, `openmeteo` (the three sources) and `boundary` (the solver grid, forecast error).
Every public name is importable from ``grower.weather``; each module names its own
references (Open-Meteo's API documentation in `grower.weather.openmeteo`).
"""

from grower.weather.boundary import (
    Boundary,
    ar1_errors,
    ensemble,
    prepare_boundary,
    shifted,
    sky_temperature,
)
from grower.weather.csvfile import read_forecast_csv
from grower.weather.forecast import (
    COLUMNS,
    DEW_POINT_EXCESS_K,
    MAX_GAP_S,
    RANGES,
    Forecast,
    assumptions,
)
from grower.weather.low import DEFAULT_DIURNAL_RANGE_K, forecast_from_low

#: the live services' names, imported on first use (a file forecast needs neither the
#: HTTP client nor sqlite3, which they import): name -> module
_LAZY = {
    **dict.fromkeys(
        (
            "DEFAULT_ENSEMBLE_MODEL",
            "DEFAULT_ENSEMBLE_URL",
            "Ensemble",
            "ensemble_forecasts",
            "ensemble_url",
            "fetch_ensemble",
            "parse_ensemble",
        ),
        "members",
    ),
    **dict.fromkeys(
        (
            "DEFAULT_FORECAST_URL",
            "OPEN_METEO_ATTRIBUTION",
            "Fetched",
            "cache_file",
            "fetch_forecast",
            "fetch_openmeteo",
            "forecast_url",
            "parse_openmeteo",
        ),
        "openmeteo",
    ),
}


def __getattr__(name: str) -> object:
    if name not in _LAZY:
        raise AttributeError(f"module 'grower.weather' has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(f"grower.weather.{_LAZY[name]}"), name)
    globals()[name] = value
    return value


__all__ = [
    "COLUMNS",
    "DEFAULT_DIURNAL_RANGE_K",
    "DEFAULT_ENSEMBLE_MODEL",
    "DEFAULT_ENSEMBLE_URL",
    "DEFAULT_FORECAST_URL",
    "DEW_POINT_EXCESS_K",
    "MAX_GAP_S",
    "OPEN_METEO_ATTRIBUTION",
    "RANGES",
    "Boundary",
    "Ensemble",
    "Fetched",
    "Forecast",
    "ar1_errors",
    "assumptions",
    "cache_file",
    "ensemble",
    "ensemble_forecasts",
    "ensemble_url",
    "fetch_ensemble",
    "fetch_forecast",
    "fetch_openmeteo",
    "forecast_from_low",
    "forecast_url",
    "parse_ensemble",
    "parse_openmeteo",
    "prepare_boundary",
    "read_forecast_csv",
    "shifted",
    "sky_temperature",
]
