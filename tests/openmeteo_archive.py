"""The JSON document of Open-Meteo's historical-weather answer (/v1/archive), in its
documented shape, for the loopback servers of the tests: site, `utc_offset_seconds`,
`hourly_units` and the `hourly` block of local times without offset
(https://open-meteo.com/en/docs/historical-weather-api). The values are the test's own."""

from __future__ import annotations

import json

from werkzeug.wrappers import Response

HOURLY_UNITS = {
    "time": "iso8601",
    "temperature_2m": "°C",
    "dew_point_2m": "°C",
    "cloud_cover": "%",
    "wind_speed_10m": "m/s",
    "shortwave_radiation": "W/m²",
}


def archive_response(
    hourly: dict,
    *,
    latitude: float,
    longitude: float,
    timezone: str,
    abbreviation: str,
    elevation: float,
    utc_offset_s: int = -18000,
) -> Response:
    """`hourly` (time and the variables of `HOURLY_UNITS`) as the service answers it."""
    doc = {
        "latitude": latitude,
        "longitude": longitude,
        "generationtime_ms": 1.2,
        "utc_offset_seconds": utc_offset_s,
        "timezone": timezone,
        "timezone_abbreviation": abbreviation,
        "elevation": elevation,
        "hourly_units": dict(HOURLY_UNITS),
        "hourly": hourly,
    }
    return Response(json.dumps(doc), content_type="application/json")
