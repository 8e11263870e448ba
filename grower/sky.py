"""Sky temperature: the effective radiating temperature of the night sky.

A cover that passes thermal infrared lets the floor and the crop radiate to the sky.
The sky's downwelling long-wave radiation is written as ``L↓ = ε_sky·σ·T_air⁴`` with
``T_air`` the screen-level air temperature [K] and ``ε_sky`` the effective sky
emissivity; the sky temperature is the black-body temperature that emits ``L↓``:
``T_sky = (L↓/σ)^{1/4} = ε_sky^{1/4}·T_air``.

Clear-sky emissivity
    * with a dew point: Berdahl & Martin (1984), ``ε₀ = 0.711 + 0.56·x + 0.73·x²`` with
      ``x = T_dp/100`` (T_dp in °C), and the optional hour and pressure terms of Martin
      & Berdahl (1984): ``+0.013·cos(2π·t/24)`` (t: hours after local midnight) and
      ``+0.00012·(P − 1000)`` (P in hPa). Fitted to US sites with dew points of roughly
      −20…+30 °C (from memory); outside that range it is extrapolated.
    * without a dew point: Swinbank (1963), ``L↓ = 5.31e-13·T⁶`` W m-2, which is
      ``ε₀ = 5.31e-13·T²/σ`` or ``T_sky = 0.05532·T^1.5``. Many texts print the rounded
      ``T_sky = 0.0552·T^1.5`` (about 0.5 K colder); both are offered.

Cloud correction (our choice, documented)
    ``ε = ε₀ + (1 − ε₀)·k·c`` with c the cloud fraction [0–1]. The default,
    ``model="one-layer"``, is the one-layer form for a black cloud base at 2 km,
    ``k = 0.784``; we attribute it to Martin & Berdahl (1984), whose cloud-base factor
    is ``exp(−z/8.2 km)`` (attribution and the 8.2 km scale from memory; 0.784 =
    exp(−2/8.2)). It is chosen because its smaller k gives the colder, cautious sky of
    the two published forms offered, and because it pairs with the clear-sky fit of the
    same authors. ``model="unsworth-monteith"`` gives Unsworth & Monteith (1975),
    ``ε = (1 − 0.84·c)·ε₀ + 0.84·c``, the same form with k = 0.84. Published cloud
    terms differ a lot (low cloud is nearly black, cirrus nearly transparent); with no
    cloud data the caller passes c = 0 (clear), the cautious side, and says so. Where
    the forecast says how much of the cloud is low (``low_cloud_fraction``), that part
    counts with the factor of a 0.5 km base, ``exp(−0.5/8.2) = 0.941``: a full low
    overcast then sits within about 1 K of the air, where the 2 km factor left it 4–5 K
    below. Cloud of unknown height keeps the 2 km factor: the colder, cautious sky.

Emissivity is capped at 1 so that the sky is never warmer than the air.

References
----------
Berdahl, P., & Martin, M. (1984). Emissivity of clear skies. *Solar Energy*, 32(5),
663–664. doi:10.1016/0038-092X(84)90144-0

Martin, M., & Berdahl, P. (1984). Characteristics of infrared sky radiation in the
United States. *Solar Energy*, 33(3–4), 321–336. doi:10.1016/0038-092X(84)90162-2

Swinbank, W. C. (1963). Long-wave radiation from clear skies. *Quarterly Journal of
the Royal Meteorological Society*, 89(381), 339–348. doi:10.1002/qj.49708938105

Unsworth, M. H., & Monteith, J. L. (1975). Long-wave radiation at the ground I. Angular
distribution of incoming radiation. *Quarterly Journal of the Royal Meteorological
Society*, 101(427), 13–24. doi:10.1002/qj.49710142703

CODATA 2018: Tiesinga, E., et al. (2021). *Rev. Mod. Phys.* 93, 025010 (σ).
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

#: Stefan–Boltzmann constant [W m-2 K-4] (CODATA 2018, exact in the 2019 SI)
SIGMA = 5.670374419e-8
#: 0 °C in kelvin
T_ZERO_K = 273.15
#: Swinbank (1963) clear-sky coefficient: L↓ = 5.31e-13·T⁶ [W m-2 K-6]
SWINBANK_W_M2_K6 = 5.31e-13
#: The rounded coefficient of T_sky = 0.0552·T^1.5 [K^-0.5] quoted in many texts
SWINBANK_ROUNDED = 0.0552
#: One-layer cloud factor for a black cloud base at 2 km, 0.784;
#: = exp(−z/8.2 km) at z = 2 km, the cloud-base factor of Martin & Berdahl (1984)
#: (attribution from memory)
CLOUD_FACTOR_ONE_LAYER = 0.784
#: Unsworth & Monteith (1975) cloud factor
CLOUD_FACTOR_UNSWORTH_MONTEITH = 0.84
#: base height of low cloud (stratus, stratocumulus) taken for the low-cloud term [km]:
#: low-cloud bases lie below 2 km, stratus often a few hundred metres (WMO International
#: Cloud Atlas classes; the 0.5 km figure is common practice, no source)
LOW_CLOUD_BASE_KM = 0.5
#: scale height of the cloud-base factor exp(−z/8.2 km) of Martin & Berdahl (1984) [km]
#: (from memory, as for `CLOUD_FACTOR_ONE_LAYER`)
CLOUD_BASE_SCALE_KM = 8.2
#: the factor for low cloud: exp(−0.5/8.2) = 0.941; a full low overcast puts the sky
#: within about 1 K of the air, as the base-height corrections do (Kimball, Idso & Aase
#: 1982, Water Resour. Res. 18(4):931–936, put a low overcast within 1–2 K of the air —
#: from memory)
CLOUD_FACTOR_LOW = float(np.exp(-LOW_CLOUD_BASE_KM / CLOUD_BASE_SCALE_KM))

CloudModel = Literal["one-layer", "unsworth-monteith"]
_CLOUD_FACTORS: dict[str, float] = {
    "one-layer": CLOUD_FACTOR_ONE_LAYER,
    "unsworth-monteith": CLOUD_FACTOR_UNSWORTH_MONTEITH,
}


def _kelvin(temp_c: ArrayLike, name: str) -> NDArray[np.float64]:
    temp_k = np.asarray(temp_c, dtype=float) + T_ZERO_K
    if np.any(temp_k <= 0.0):
        raise ValueError(f"{name} must be above absolute zero (−273.15 °C)")
    return temp_k


def berdahl_martin_emissivity(
    dew_point_c: ArrayLike,
    *,
    hour: ArrayLike | None = None,
    pressure_hpa: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Clear-sky emissivity from the dew point (Berdahl & Martin 1984).

    Parameters
    ----------
    dew_point_c : array_like
        Screen-level dew point [°C].
    hour : array_like, optional
        Hours after local midnight [h] for the diurnal term ``+0.013·cos(2π·t/24)``;
        omitted when None.
    pressure_hpa : array_like, optional
        Station pressure [hPa] for the term ``+0.00012·(P − 1000)``; omitted when None.

    Returns
    -------
    numpy.ndarray
        Clear-sky emissivity [1], not capped (see `sky_temperature`).

    References
    ----------
    Berdahl & Martin (1984), *Solar Energy* 32(5):663–664; hour and pressure terms:
    Martin & Berdahl (1984), *Solar Energy* 33:321–336.
    """
    x = np.asarray(dew_point_c, dtype=float) / 100.0
    eps = 0.711 + 0.56 * x + 0.73 * x**2
    if hour is not None:
        eps = eps + 0.013 * np.cos(2.0 * np.pi * np.asarray(hour, dtype=float) / 24.0)
    if pressure_hpa is not None:
        eps = eps + 0.00012 * (np.asarray(pressure_hpa, dtype=float) - 1000.0)
    return eps


def swinbank_emissivity(temp_air_c: ArrayLike, *, rounded: bool = False) -> NDArray[np.float64]:
    """Clear-sky emissivity from the air temperature alone (Swinbank 1963).

    Parameters
    ----------
    temp_air_c : array_like
        Screen-level air temperature [°C].
    rounded : bool
        False: the published ``L↓ = 5.31e-13·T⁶`` (ε = 5.31e-13·T²/σ). True: the rounded
        ``T_sky = 0.0552·T^1.5`` (ε = 0.0552⁴·T²), about 0.5 K colder.

    Returns
    -------
    numpy.ndarray
        Clear-sky emissivity [1].

    References
    ----------
    Swinbank (1963), *Q. J. R. Meteorol. Soc.* 89:339–348.
    """
    temp_k = _kelvin(temp_air_c, "temp_air_c")
    if rounded:
        return SWINBANK_ROUNDED**4 * temp_k**2
    return SWINBANK_W_M2_K6 * temp_k**2 / SIGMA


def swinbank_sky_temperature(
    temp_air_c: ArrayLike, *, rounded: bool = False
) -> NDArray[np.float64]:
    """Clear-sky temperature from Swinbank (1963) [°C]: 0.05532·T^1.5 or 0.0552·T^1.5.

    See `swinbank_emissivity` for `rounded`.
    """
    temp_k = _kelvin(temp_air_c, "temp_air_c")
    return swinbank_emissivity(temp_air_c, rounded=rounded) ** 0.25 * temp_k - T_ZERO_K


def cloudy_emissivity(
    clear_emissivity: ArrayLike,
    cloud_fraction: ArrayLike,
    *,
    model: CloudModel = "one-layer",
    low_cloud_fraction: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Sky emissivity under partial cloud: ``ε = ε₀ + (1 − ε₀)·k·c``.

    Parameters
    ----------
    clear_emissivity : array_like
        Clear-sky emissivity ε₀ [1]; values above 1 are capped at 1.
    cloud_fraction : array_like
        Fraction of the sky covered by cloud, c [0–1] (cloud cover % / 100; tenths / 10).
    model : {"one-layer", "unsworth-monteith"}
        k = 0.784 (one layer, black cloud base at 2 km; Martin & Berdahl 1984) or
        k = 0.84 (Unsworth & Monteith 1975), for cloud of unknown height.
    low_cloud_fraction : array_like, optional
        The part of `cloud_fraction` that is low cloud [0–1]: it counts with the factor
        of a base at 0.5 km, `CLOUD_FACTOR_LOW` = 0.941, the rest with `model`'s k.
        ``ε = ε₀ + (1 − ε₀)·(k_low·c_low + k·(c − c_low))``.

    Returns
    -------
    numpy.ndarray
        Emissivity [1], between ε₀ and 1; increasing in c.

    References
    ----------
    Martin & Berdahl (1984), *Solar Energy* 33:321–336; Unsworth & Monteith (1975),
    *Q. J. R. Meteorol. Soc.* 101:13–24.
    """
    if model not in _CLOUD_FACTORS:
        raise ValueError(f"model must be one of {sorted(_CLOUD_FACTORS)}, not {model!r}")
    cloud = np.asarray(cloud_fraction, dtype=float)
    if np.any((cloud < 0.0) | (cloud > 1.0)):
        raise ValueError("cloud_fraction must be within 0…1 (a fraction, not a percentage)")
    eps0 = np.minimum(np.asarray(clear_emissivity, dtype=float), 1.0)
    if low_cloud_fraction is None:
        return eps0 + (1.0 - eps0) * _CLOUD_FACTORS[model] * cloud
    low = np.asarray(low_cloud_fraction, dtype=float)
    if np.any((low < 0.0) | (low > 1.0)):
        raise ValueError("low_cloud_fraction must be within 0…1")
    low = np.minimum(low, cloud)
    return eps0 + (1.0 - eps0) * (CLOUD_FACTOR_LOW * low + _CLOUD_FACTORS[model] * (cloud - low))


def sky_temperature_from_emissivity(
    temp_air_c: ArrayLike, emissivity: ArrayLike
) -> NDArray[np.float64]:
    """``T_sky = (ε·σ·T⁴/σ)^{1/4} = ε^{1/4}·T`` [°C] for air temperature T [°C]."""
    temp_k = _kelvin(temp_air_c, "temp_air_c")
    eps = np.asarray(emissivity, dtype=float)
    if np.any(eps < 0.0):
        raise ValueError("emissivity must not be negative")
    return (eps * SIGMA * temp_k**4 / SIGMA) ** 0.25 - T_ZERO_K


def downwelling_longwave(temp_air_c: ArrayLike, emissivity: ArrayLike) -> NDArray[np.float64]:
    """Downwelling long-wave irradiance ``L↓ = ε·σ·T⁴`` [W m-2]."""
    temp_k = _kelvin(temp_air_c, "temp_air_c")
    return np.asarray(emissivity, dtype=float) * SIGMA * temp_k**4


def sky_emissivity(
    temp_air_c: ArrayLike,
    dew_point_c: ArrayLike | None = None,
    cloud_fraction: ArrayLike | None = None,
    *,
    hour: ArrayLike | None = None,
    pressure_hpa: ArrayLike | None = None,
    cloud_model: CloudModel = "one-layer",
    low_cloud_fraction: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Effective sky emissivity [1], capped at 1.

    Berdahl & Martin where a dew point is given, Swinbank (T⁶ form) where it is None or
    NaN (element by element), then the cloud correction of `cloudy_emissivity`. The hour
    and pressure terms apply to the Berdahl & Martin elements only. No cloud (None)
    means a clear sky.
    """
    temp = np.asarray(temp_air_c, dtype=float)
    swinbank = swinbank_emissivity(temp)
    if dew_point_c is None:
        eps0 = swinbank
    else:
        dew = np.asarray(dew_point_c, dtype=float)
        known = np.isfinite(dew)
        bm = berdahl_martin_emissivity(
            np.where(known, dew, 0.0), hour=hour, pressure_hpa=pressure_hpa
        )
        eps0 = np.where(known, bm, swinbank)
    eps0 = np.minimum(eps0, 1.0)
    if cloud_fraction is None:
        return np.broadcast_to(eps0, np.broadcast_shapes(eps0.shape, temp.shape)).copy()
    return cloudy_emissivity(
        eps0, cloud_fraction, model=cloud_model, low_cloud_fraction=low_cloud_fraction
    )


def sky_temperature(
    temp_air_c: ArrayLike,
    dew_point_c: ArrayLike | None = None,
    cloud_fraction: ArrayLike | None = None,
    *,
    hour: ArrayLike | None = None,
    pressure_hpa: ArrayLike | None = None,
    cloud_model: CloudModel = "one-layer",
    low_cloud_fraction: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Effective sky temperature [°C] from air temperature, dew point and cloud.

    Parameters
    ----------
    temp_air_c : array_like
        Screen-level air temperature [°C].
    dew_point_c : array_like, optional
        Dew point [°C]; None or NaN elements fall back to Swinbank (1963).
    cloud_fraction : array_like, optional
        Cloud fraction [0–1]; None means clear (the cautious side: coldest sky).
    hour : array_like, optional
        Hours after local midnight [h], for the Martin & Berdahl diurnal term.
    pressure_hpa : array_like, optional
        Station pressure [hPa], for the Martin & Berdahl pressure term.
    cloud_model : {"one-layer", "unsworth-monteith"}
        The cloud correction for cloud of unknown height; see the module notes.
    low_cloud_fraction : array_like, optional
        Low cloud [0–1], part of `cloud_fraction`: nearly black and warm (base 0.5 km).

    Returns
    -------
    numpy.ndarray
        Sky temperature [°C], never above the air temperature.

    References
    ----------
    Berdahl & Martin (1984); Martin & Berdahl (1984); Swinbank (1963); Unsworth &
    Monteith (1975) — full entries in the module docstring.
    """
    eps = sky_emissivity(
        temp_air_c,
        dew_point_c,
        cloud_fraction,
        hour=hour,
        pressure_hpa=pressure_hpa,
        cloud_model=cloud_model,
        low_cloud_fraction=low_cloud_fraction,
    )
    return sky_temperature_from_emissivity(temp_air_c, eps)
