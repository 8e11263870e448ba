"""Where a house stands: the place that sets its sun, its clock and its forecast."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Site:
    """A location.

    Parameters
    ----------
    latitude_deg, longitude_deg : float
        WGS 84 degrees, north and east positive.
    elevation_m : float
        Height above sea level [m].
    timezone : str
        IANA time-zone name ("America/Toronto"); local clock times in reports use it.
    name : str
        Free text for reports.
    """

    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    timezone: str = "UTC"
    name: str = ""

    def __post_init__(self) -> None:
        if not -90.0 <= self.latitude_deg <= 90.0:
            raise ValueError(f"latitude_deg {self.latitude_deg} outside -90..90")
        if not -180.0 <= self.longitude_deg <= 180.0:
            raise ValueError(f"longitude_deg {self.longitude_deg} outside -180..180")

    @property
    def pressure_hpa(self) -> float:
        """Standard-atmosphere pressure at the site's elevation [hPa].

        References
        ----------
        ICAO (1993), *Manual of the ICAO Standard Atmosphere*, Doc 7488:
        p = 1013.25·(1 − 2.25577e-5·z)^5.25588.
        """
        return 1013.25 * (1.0 - 2.25577e-5 * self.elevation_m) ** 5.25588
