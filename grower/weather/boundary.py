"""A forecast on the solver's time grid, and forecast error.

`prepare_boundary` puts a forecast on the solver's grid (piecewise linear between
samples) with the sky temperature of `grower.sky`; `shifted` and `ensemble` give a
colder night and members with a correlated error (`ar1_errors`).

References
----------
Gillespie, D. T. (1996). Exact numerical simulation of the Ornstein–Uhlenbeck process
and its integral. *Physical Review E*, 54(2), 2084–2091. doi:10.1103/PhysRevE.54.2084
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from grower import sky
from grower.weather.forecast import Forecast, local_time, time_index


@dataclass(frozen=True, eq=False)
class Boundary:
    """The outside boundary on the solver's grid (arrays of one length).

    Attributes
    ----------
    start : datetime
        Time of ``times_s == 0`` (aware, in the forecast's zone).
    times_s : numpy.ndarray
        Grid [s since `start`].
    temperature_c, dew_point_c : numpy.ndarray
        Air temperature and dew point [°C]; dew point NaN where not given.
    cloud_fraction : numpy.ndarray
        Cloud [0–1]; 0 (clear, the cautious side) where not given.
    wind_speed_m_s : numpy.ndarray
        10 m wind [m/s]; NaN where not given (the network chooses its design wind).
    shortwave_w_m2 : numpy.ndarray
        Global horizontal irradiance [W m-2]; 0 where not given (no solar gain).
    sky_c : numpy.ndarray
        Sky temperature [°C] (`grower.sky.sky_temperature`).
    given : tuple of str
        Columns the forecast gave.
    assumed_clear : bool
        The forecast had no cloud data.
    """

    start: dt.datetime
    times_s: NDArray[np.float64]
    temperature_c: NDArray[np.float64]
    dew_point_c: NDArray[np.float64]
    cloud_fraction: NDArray[np.float64]
    wind_speed_m_s: NDArray[np.float64]
    shortwave_w_m2: NDArray[np.float64]
    sky_c: NDArray[np.float64]
    given: tuple[str, ...]
    assumed_clear: bool

    @property
    def index(self) -> Any:
        """The grid as a pandas DatetimeIndex in the start's zone (imports pandas)."""
        return time_index(self.start.timestamp() + self.times_s, self.start.tzinfo)


def prepare_boundary(
    forecast: Forecast,
    times_s: ArrayLike,
    *,
    start: dt.datetime | None = None,
    pressure_hpa: float | None = None,
    hour_term: bool = True,
    cloud_model: sky.CloudModel = "one-layer",
) -> Boundary:
    """Sample a forecast on a solver grid, piecewise linear between its samples.

    Parameters
    ----------
    forecast : Forecast
    times_s : array_like
        Non-decreasing grid [s since `start`] inside the forecast's span.
    start : datetime, optional
        Time of ``times_s == 0`` (aware); default the forecast's first sample.
    pressure_hpa : float, optional
        Station pressure for the Martin & Berdahl pressure term (``Site.pressure_hpa``).
    hour_term : bool
        Apply the Martin & Berdahl diurnal term, at local clock hours.
    cloud_model : {"one-layer", "unsworth-monteith"}
        The sky's cloud correction (`grower.sky`).

    Returns
    -------
    Boundary
        Shortwave given as preceding-hour means (``shortwave_offset_s = −1800``) is
        placed at the half hour before its label, then interpolated; the first and last
        values are held beyond the ends.

    References
    ----------
    See `grower.sky` for the sky temperature.
    """
    grid = np.asarray(times_s, dtype=float)
    if grid.ndim != 1 or grid.size == 0 or np.any(np.diff(grid) < 0) or not np.isfinite(grid).all():
        raise ValueError("times_s must be a non-empty, finite, non-decreasing 1-D array")
    utc = forecast.utc_s
    t0 = utc[0] if start is None else start.timestamp()
    t = t0 + grid
    if t[0] < utc[0] - 1e-6 or t[-1] > utc[-1] + 1e-6:
        raise ValueError(f"times_s runs outside the forecast ({forecast.start} to {forecast.end})")
    n = t.size

    def column(name: str, missing: float) -> NDArray[np.float64]:
        if name not in forecast.given:
            return np.full(n, missing)
        shift = forecast.shortwave_offset_s if name == "shortwave_w_m2" else 0.0
        return np.interp(t, utc + shift, forecast.values(name))

    temp, dew = column("temperature_c", np.nan), column("dew_point_c", np.nan)
    cloud = column("cloud_cover_pct", 0.0) / 100.0
    low = column("cloud_cover_low_pct", np.nan) / 100.0
    low = None if not np.isfinite(low).any() else np.clip(np.nan_to_num(low, nan=0.0), 0.0, 1.0)
    if low is not None:
        cloud = np.maximum(cloud, low)  # low cloud is part of the total
    hour = None
    if hour_term:
        offsets = forecast.samples.utc_offset_s.astype(float)
        local = t + offsets[np.clip(np.searchsorted(utc, t, side="right") - 1, 0, utc.size - 1)]
        hour = (local % 86400.0) / 3600.0
    sky_c = sky.sky_temperature(
        temp,
        dew,
        np.clip(cloud, 0.0, 1.0),
        hour=hour,
        pressure_hpa=pressure_hpa,
        cloud_model=cloud_model,
        low_cloud_fraction=low,
    )
    return Boundary(
        start=local_time(t0, forecast.tz),
        times_s=grid,
        temperature_c=temp,
        dew_point_c=dew,
        cloud_fraction=cloud,
        wind_speed_m_s=column("wind_speed_m_s", np.nan),
        shortwave_w_m2=column("shortwave_w_m2", 0.0),
        sky_c=sky_c,
        given=forecast.given,
        assumed_clear=forecast.assumed_clear,
    )


def sky_temperature(forecast: Forecast, *, pressure_hpa: float | None = None) -> Any:
    """Sky temperature [°C] at the forecast's own samples, as a pandas Series on its index."""
    import pandas as pd

    bound = prepare_boundary(forecast, forecast.times_s, pressure_hpa=pressure_hpa)
    return pd.Series(bound.sky_c, index=forecast.frame.index, name="sky_c")


# ---------------------------------------------------------------- forecast error


def shifted(forecast: Forecast, delta_k: float) -> Forecast:
    """The same forecast `delta_k` warmer (negative: colder) [K].

    Air temperature and dew point move together (the same air mass, the same dew-point
    depression), so a colder night also has a colder, drier sky.
    """
    s = forecast.samples
    values = dict(s.values)
    for c in ("temperature_c", "dew_point_c"):
        values[c] = values[c] + delta_k
    way = "colder" if delta_k < 0 else "warmer"
    return forecast.with_samples(
        replace(s, values=values), source=f"{forecast.source}, {abs(delta_k):g} K {way}"
    )


def ar1_errors(
    times_s: ArrayLike,
    members: int,
    sigma_k: float,
    correlation_s: float,
    rng: np.random.Generator,
) -> NDArray[np.float64]:
    """Gaussian errors with standard deviation `sigma_k` and correlation exp(−Δt/τ).

    Each member is a stationary first-order autoregressive (AR(1)) series, i.e. an
    Ornstein–Uhlenbeck process sampled exactly at arbitrary times:
    ``e₀ ~ N(0, σ²)``, ``e_k = ρ_k·e_{k−1} + σ·√(1 − ρ_k²)·z_k`` with
    ``ρ_k = exp(−(t_k − t_{k−1})/τ)`` and z_k standard normal.

    Parameters
    ----------
    times_s : array_like
        Non-decreasing sample times [s].
    members : int
        Number of members M (>= 1).
    sigma_k : float
        Standard deviation [K] (>= 0).
    correlation_s : float
        e-folding time τ of the correlation [s]; 0: independent, inf: one offset per member.
    rng : numpy.random.Generator

    Returns
    -------
    numpy.ndarray
        Shape (M, N) [K].

    References
    ----------
    Gillespie, D. T. (1996). Exact numerical simulation of the Ornstein–Uhlenbeck
    process and its integral. *Physical Review E*, 54(2), 2084–2091.
    doi:10.1103/PhysRevE.54.2084
    """
    t = np.asarray(times_s, dtype=float)
    if t.ndim != 1 or np.any(np.diff(t) < 0):
        raise ValueError("times_s must be a non-decreasing 1-D array")
    if int(members) != members or members < 1:
        raise ValueError("members must be a positive integer")
    if not sigma_k >= 0 or not correlation_s >= 0:
        raise ValueError("sigma_k and correlation_s must be >= 0")
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = np.exp(-np.diff(t) / correlation_s) if correlation_s > 0 else np.zeros(t.size - 1)
    rho = np.where(np.diff(t) == 0, 1.0, rho)
    z = rng.standard_normal((int(members), t.size))
    errors = np.empty_like(z)
    errors[:, 0] = z[:, 0]
    scale = np.sqrt(1.0 - rho**2)
    for k in range(1, t.size):
        errors[:, k] = rho[k - 1] * errors[:, k - 1] + scale[k - 1] * z[:, k]
    return sigma_k * errors


def ensemble(
    forecast: Forecast,
    members: int,
    sigma_k: float,
    correlation_hours: float,
    seed: int | None = None,
    *,
    times_s: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Outside-temperature members: the forecast plus a correlated Gaussian error.

    Parameters
    ----------
    forecast : Forecast
    members : int
        M members.
    sigma_k : float
        Error standard deviation [K].
    correlation_hours : float
        e-folding time of the error's autocorrelation [h] (see `ar1_errors`).
    seed : int, optional
        Seed for numpy's default generator (same seed, same members).
    times_s : array_like, optional
        Grid [s since the first sample]; default the forecast's own samples.

    Returns
    -------
    numpy.ndarray
        Shape (M, N): air temperature [°C] of each member at each time.

    References
    ----------
    Gillespie (1996), *Phys. Rev. E* 54:2084 (exact AR(1)/Ornstein–Uhlenbeck sampling).
    """
    grid = forecast.times_s if times_s is None else np.asarray(times_s, dtype=float)
    base = np.interp(grid, forecast.times_s, forecast.values("temperature_c"))
    errors = ar1_errors(
        grid, members, sigma_k, correlation_hours * 3600.0, np.random.default_rng(seed)
    )
    return base[np.newaxis, :] + errors
