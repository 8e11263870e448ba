"""The house as the solver sees it: network matrices and boundary series.

Shared by tonight, size, stock and fit. Everything here is a pure function of the house,
the forecast's arrays and a few choices (model, wind, curtain).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, replace
from typing import Any, Literal

import numpy as np

from grower import network
from grower.house import House
from grower.network import Capacities, Conductances

ModelKind = Literal["two-node", "lumped"]
#: the solver's boundary temperatures, in this order
BOUNDARIES = ("outside", "sky", "deep_ground")

#: leaves on a clear, calm night run 1–3 °C below the adjacent air when they see the
#: whole sky — Leuning, R. & Cremer, K. W. (1988), Leaf temperatures during radiation
#: frost. Part I. Observation. *Agric. For. Meteorol.* 42, 121–133. We take the middle,
#: 2 K, and scale it by the share of the sky the leaves see through the cover (its
#: long-wave transmittance) and by the clear part of the sky.
LEAF_BELOW_AIR_CLEAR_K = 2.0
#: share of the solar radiation entering the house that heats air and mass; the rest
#: evaporates water from crop and soil (from memory: about half in a cropped house)
SUN_SENSIBLE_FRACTION = 0.5
#: above this global radiation the leaves are not cooler than the air [W m-2]
#: (common practice, no source)
DAYLIGHT_W_M2 = 20.0


@dataclass(frozen=True)
class Model:
    """The network of one house at one set of conditions."""

    kind: ModelKind
    conductances: Conductances
    capacities: Capacities
    k_w_per_k: float  # K to T_eff: outside air, sky excess (lumped: and deep ground)
    k_conduction_w_per_k: float  # the part of K that ends at the outside air
    k_sky_w_per_k: float  # the part that ends at the sky (the clear night's excess)
    c_j_per_k: float  # two-node: all of C; lumped: the one node's (after calibration)
    k_ground_w_per_k: float  # lumped: the node's path to the deep ground; two-node: 0 (on the mass)
    calibrated: bool
    network: object  # grower.solver.Network

    @property
    def time_constant_h(self) -> float:
        return self.c_j_per_k / self.k_w_per_k / 3600.0


def calibration_of(
    house: House, use: bool = True, kind: ModelKind | None = None
) -> dict[str, float] | None:
    """The fitted K and C from the house file's [calibration], or None.

    A calibration that names its model (``model = "lumped"`` or ``"two-node"``, as
    `grower fit` writes it) is used by that model only (None for `kind` the other one):
    the two models' fitted K and C are not interchangeable — a lumped fit of a two-node
    house gives a longer C/K. A two-node fit also gives ``coupling_scale``, a factor on
    the air–mass coupling on top of the factor on every conductance.
    """
    cal = house.calibration
    if not use or not cal:
        return None
    fitted_for = cal.get("model")
    if kind is not None and fitted_for in ("lumped", "two-node") and fitted_for != kind:
        return None
    k, c = cal.get("k_w_per_k"), cal.get("c_j_per_k")
    if isinstance(k, int | float) and isinstance(c, int | float) and k > 0 and c > 0:
        out = {"k_w_per_k": float(k), "c_j_per_k": float(c)}
        g = cal.get("coupling_scale")
        if cal.get("model") == "two-node" and isinstance(g, int | float) and g > 0:
            out["coupling_scale"] = float(g)
        return out
    return None


def calibration_note(house: House, kind: ModelKind, use: bool = True) -> str | None:
    """One line for the report: what calibration is used, or why one is not."""
    cal = house.calibration
    if not cal:
        return None
    if not use:
        return "the house file's [calibration] is ignored (--no-calibration)"
    if calibration_of(house, use, kind) is None:
        fitted_for = cal.get("model")
        if fitted_for in ("lumped", "two-node") and fitted_for != kind:
            return (
                f"the house file's [calibration] is for the {fitted_for} model: this run uses "
                f"the geometry (give --model {fitted_for} to use it)"
            )
        return "the house file's [calibration] lacks k_w_per_k and c_j_per_k: not used"
    when = cal.get("fit_date")
    record = cal.get("record")
    src = ", ".join(str(x) for x in (record, when) if x)
    return f"K and C from the house file's [calibration] (grower fit{': ' + src if src else ''})"


def calibration_ratio(house: House, use: bool = True) -> float | None:
    """K_fit / K_geometry for a calm clear night, for steady sizing (`size`)."""
    cal = calibration_of(house, use)
    if cal is None:
        return None
    return cal["k_w_per_k"] / network.describe(house).calm.total_w_per_k


def calibrated_heater_output(house: House, use: bool = True) -> float | None:
    """A heater output [W] that `grower fit` measured (not the rating it was anchored to)."""
    cal = house.calibration
    q = cal.get("heater_output_w") if (use and cal) else None
    if isinstance(q, int | float) and q > 0 and cal.get("anchor") != "heater":
        return float(q)
    return None


def build(
    house: House,
    *,
    kind: ModelKind = "two-node",
    wind_m_s: float = 0.0,
    curtain_closed: bool = True,
    mean_radiant_temp_c: float = -10.0,
    air_temp_c: float = 0.0,
    use_calibration: bool = True,
) -> Model:
    """Conductances, capacities and the solver network of `house`.

    Two-node (see `grower.network`): the air node (air, light structure, canopy) loses
    K_c − K_fs − K_cs to the outside air and K_cs (the cover faces' excess) to the sky,
    and is coupled to the mass node through g; the mass node (floor active layer, water,
    benches) radiates K_r to the sky through the cover and conducts k/d·A to the deep
    ground. It is the floor and the crop, not the air, that see the sky: with K_r on the
    air node the air ran 2–3 K below the outside air all night, where measured plastic
    tunnels end the night on average 1.3 °C above it (Savage 1980, *Agrochemophysica*
    12:5–13). Lumped: `grower.network.lumped_reduction` of the same network, one node to
    outside air, sky and deep ground. A calibration in the house file replaces K and C;
    every conductance is scaled by K_fit/K and every capacity by C_fit/C, and the
    air–mass coupling further by a two-node fit's ``coupling_scale``.

    `air_temp_c` is about the outside air: it linearises the cover faces' radiation.
    """
    from grower import solver

    cond = network.conductances(
        house,
        wind_m_s=wind_m_s,
        curtain_closed=curtain_closed,
        mean_radiant_temp_c=mean_radiant_temp_c,
        cover_temp_c=air_temp_c,
    )
    caps = network.capacities(house, rho_cp_j_m3k=cond.rho_cp_j_m3k)
    cal = calibration_of(house, use_calibration, kind)
    k_scale = c_scale = 1.0
    if kind == "lumped":
        red = network.lumped_reduction(cond, caps)
        if cal:
            k_scale = cal["k_w_per_k"] / (
                red.outside_w_per_k + red.sky_w_per_k + red.deep_ground_w_per_k
            )
            c_scale = cal["c_j_per_k"] / red.capacitance_j_per_k
        k_out, k_sky = red.outside_w_per_k * k_scale, red.sky_w_per_k * k_scale
        net = solver.Network(
            capacitance_j_per_k=np.array([red.capacitance_j_per_k * c_scale]),
            coupling_w_per_k=np.zeros((1, 1)),
            boundary_w_per_k=np.array([[k_out, k_sky, red.deep_ground_w_per_k * k_scale]]),
            node_names=("air",),
            boundary_names=BOUNDARIES,
        )
        c_model = red.capacitance_j_per_k * c_scale
        k_ground = red.deep_ground_w_per_k * k_scale
    else:
        if cal:
            k_scale = cal["k_w_per_k"] / cond.total_w_per_k
            c_scale = cal["c_j_per_k"] / caps.total_j_per_k
        k_out = cond.outside_w_per_k * k_scale
        k_sky = cond.sky_w_per_k * k_scale
        g = caps.air_mass_w_per_k * k_scale * (cal.get("coupling_scale", 1.0) if cal else 1.0)
        net = solver.Network(
            capacitance_j_per_k=np.array([caps.air_j_per_k, caps.mass_j_per_k]) * c_scale,
            coupling_w_per_k=np.array([[0.0, g], [g, 0.0]]),
            boundary_w_per_k=np.array(
                [
                    [k_out, cond.cover_sky_w_per_k * k_scale, 0.0],
                    [0.0, cond.floor_sky_w_per_k * k_scale, caps.ground_w_per_k * k_scale],
                ]
            ),
            node_names=("air", "mass"),
            boundary_names=BOUNDARIES,
        )
        c_model = caps.total_j_per_k * c_scale
        k_ground = 0.0
    k_total = k_out + k_sky + k_ground
    return Model(kind, cond, caps, k_total, k_out, k_sky, c_model, k_ground, cal is not None, net)


@dataclass(frozen=True)
class Boundary:
    """The forecast on the solver's time grid, with what the house makes of it."""

    utc_s: np.ndarray  # each time as UTC seconds since 1970
    tz: dt.tzinfo  # the zone local times are shown in
    times_s: np.ndarray  # seconds since the first time (from UTC: right across DST)
    outside_c: np.ndarray
    sky_c: np.ndarray
    effective_c: np.ndarray
    sun_w: np.ndarray  # sensible solar gain into the air node [W]
    plant_offset_k: np.ndarray  # leaves below air [K]
    wind_m_s: np.ndarray
    cloud_fraction: np.ndarray  # NaN where not given
    assumed_clear: bool

    @property
    def times(self) -> Any:
        """The grid as a tz-aware pandas DatetimeIndex (imports pandas)."""
        from grower.weather.forecast import time_index

        return time_index(self.utc_s, self.tz)

    def local_times(self) -> list[dt.datetime]:
        """The grid as aware datetimes in `tz`, to the second."""
        return [dt.datetime.fromtimestamp(round(t), self.tz) for t in self.utc_s]

    def solver_boundary(self, model: Model, deep_ground_c: float | None = None) -> np.ndarray:
        """(N, 3) boundary temperatures: outside air, sky, deep ground (`BOUNDARIES`)."""
        deep = model.capacities.deep_ground_c if deep_ground_c is None else deep_ground_c
        return np.column_stack([self.outside_c, self.sky_c, np.full_like(self.outside_c, deep)])

    def solver_gains(self, model: Model) -> np.ndarray:
        """(N, n) heat inputs per node: the sun on the air node."""
        n = len(model.network.capacitance_j_per_k)
        gains = np.zeros((len(self.times_s), n))
        gains[:, 0] = self.sun_w
        return gains

    def shifted(self, delta_k: float, model: Model) -> Boundary:
        """The same night `delta_k` warmer (negative: colder) outside and in the sky."""
        out = self.outside_c + delta_k
        skyc = self.sky_c + delta_k
        eff = effective_temperature(model, out, skyc)
        return replace(self, outside_c=out, sky_c=skyc, effective_c=eff)


def effective_temperature(model: Model, outside_c, sky_c) -> np.ndarray:
    """T_eff [°C]: the mean of the temperatures the air node loses heat to, weighted by
    their conductances (outside air, sky; and the deep ground in the lumped model)."""
    out = np.asarray(outside_c, dtype=float)
    num = model.k_conduction_w_per_k * out + model.k_sky_w_per_k * np.asarray(sky_c, dtype=float)
    if model.k_ground_w_per_k > 0:
        num = num + model.k_ground_w_per_k * model.capacities.deep_ground_c
    return num / model.k_w_per_k


def instant_ns(t: Any) -> int:
    """An instant as integer nanoseconds since 1970 UTC.

    `t` is an aware datetime (a pandas Timestamp keeps its nanoseconds) or float UTC
    seconds, rounded the way ``pandas.Timestamp(t, unit="s")`` rounds them (whole
    seconds, then the fraction to 9 decimals), so a grid built here is the grid pandas
    builds.
    """
    if isinstance(t, dt.datetime):
        if hasattr(t, "as_unit"):  # pandas Timestamp
            return int(t.as_unit("ns").value)
        return ((t - _EPOCH) // dt.timedelta(microseconds=1)) * 1000
    t = float(t)
    base = int(t)
    return base * 10**9 + int(round(t - base, 9) * 1e9)


_EPOCH = dt.datetime(1970, 1, 1, tzinfo=dt.UTC)


def duration_ns(seconds: float) -> int:
    """A duration [s] as integer nanoseconds, truncated as ``pandas.Timedelta(seconds=…)``
    truncates it."""
    return int(float(seconds) * 1e9)


def samples_ns(utc_s: np.ndarray) -> np.ndarray:
    """A forecast's sample times (UTC seconds, kept to the microsecond) as int64 ns."""
    return np.round(np.asarray(utc_s, dtype=float) * 1e6).astype(np.int64) * 1000


def grid_ns(
    start_ns: int, end_ns: int, at_ns: np.ndarray, step_s: float, cuts_ns: Any = ()
) -> np.ndarray:
    """A time grid [int64 ns since 1970 UTC] from `start_ns` to `end_ns`: every `step_s`
    from the start, every time of `at_ns` (forecast samples) strictly between, the
    `cuts_ns` and both ends; sorted, each once. UTC seconds: ``grid_ns(...) / 1e9``."""
    step = int(round(step_s * 1e9))
    regular = start_ns + step * np.arange((end_ns - start_ns) // step + 1, dtype=np.int64)
    at = np.asarray(at_ns, dtype=np.int64)
    extra = np.asarray(list(cuts_ns) + [start_ns, end_ns], dtype=np.int64)
    return np.unique(np.concatenate([regular, at[(at > start_ns) & (at < end_ns)], extra]))


def grid(start: Any, end: Any, frame_index: Any, step_s: float) -> Any:
    """`grid_ns` as a tz-aware pandas DatetimeIndex in the start's zone (imports pandas)."""
    import pandas as pd

    t = grid_ns(instant_ns(start), instant_ns(end), frame_index.as_unit("ns").asi8, step_s)
    return pd.DatetimeIndex(pd.to_datetime(t, unit="ns", utc=True)).tz_convert(start.tzinfo)


def epoch_s(index: Any) -> np.ndarray:
    """UTC seconds since 1970 of a tz-aware pandas index, whatever its resolution."""
    return index.as_unit("ns").asi8 / 1e9


def boundary(
    house: House,
    model: Model,
    forecast,
    times: Any,
    *,
    pressure_hpa: float | None = None,
    tz: dt.tzinfo | None = None,
) -> Boundary:
    """Outside, sky and effective temperatures, sun gain and leaf offset on `times`.

    `times` is a tz-aware pandas DatetimeIndex, or an array of UTC seconds (`grid_ns` / 1e9)
    with `tz` the zone to show them in (default the forecast's).

    `forecast` is a `grower.weather.Forecast`, linear between its samples; it is sampled
    on the grid by `grower.weather.prepare_boundary` (sky temperature from Berdahl &
    Martin with a dew point, Swinbank without, the one-layer cloud correction; clear
    where the forecast gives no cloud).
    """
    from grower import weather

    if isinstance(times, np.ndarray):
        at_s, zone = times, tz or forecast.tz
    else:
        at_s, zone = epoch_s(times), times.tz
    start = dt.datetime.fromtimestamp(float(at_s[0]), zone)
    w = weather.prepare_boundary(forecast, at_s - at_s[0], start=start, pressure_hpa=pressure_hpa)
    eff = effective_temperature(model, w.temperature_c, w.sky_c)
    sw = w.shortwave_w_m2
    sun = sw * house.roof_material.solar_transmittance * house.floor_area_m2 * SUN_SENSIBLE_FRACTION
    cloud = w.cloud_fraction if not w.assumed_clear else np.full(len(at_s), np.nan)
    offset = plant_offset(house, model, np.where(np.isfinite(cloud), cloud, 0.0), sw)
    wind = np.where(np.isfinite(w.wind_speed_m_s), w.wind_speed_m_s, 0.0)
    return Boundary(
        utc_s=at_s,
        tz=zone,
        times_s=at_s - at_s[0],
        outside_c=w.temperature_c,
        sky_c=w.sky_c,
        effective_c=eff,
        sun_w=sun,
        plant_offset_k=offset,
        wind_m_s=wind,
        cloud_fraction=cloud,
        assumed_clear=w.assumed_clear,
    )


def plant_offset(
    house: House, model: Model, cloud_fraction: np.ndarray, shortwave_w_m2: np.ndarray
) -> np.ndarray:
    """How far leaves run below the air [K]: 2 K × clear share × cover IR share, at night.

    See `LEAF_BELOW_AIR_CLEAR_K`. The cover's share is the one the network uses (with its
    inside condensate, `grower.network.CONDENSATION_LW_FACTOR`); a closed energy curtain
    blocks most of the sky.
    """
    tau = house.roof_material.longwave_transmittance * network.CONDENSATION_LW_FACTOR
    if house.curtain and model.conductances.curtain_closed:
        tau *= house.curtain.curtain.longwave_transmittance
    clear = 1.0 - np.clip(cloud_fraction, 0.0, 1.0)
    night = shortwave_w_m2 < DAYLIGHT_W_M2
    return np.where(night, LEAF_BELOW_AIR_CLEAR_K * clear * tau, 0.0)


def initial_state(model: Model, air_c: float, mass_c: float) -> np.ndarray:
    """The solver's starting node temperatures from the air's and the mass's [°C].

    Two-node: both as given. Lumped: the one node starts at the air's temperature; the
    mass's own reading has no node to go to (the lumped model cannot use a soil reading,
    which is one reason the two-node model is the default).
    """
    if model.kind == "lumped":
        return np.array([air_c], dtype=float)
    return np.array([air_c, mass_c], dtype=float)


def quasi_steady_air(
    model: Model, boundary_c: np.ndarray, gains_w: np.ndarray, mass_c: float
) -> float:
    """Air temperature in balance with the boundary at the first time and with floor and
    water at `mass_c` (the air node settles in minutes; the mass in days) [°C].

    In the lumped model the one node stands for everything; it starts where the air of
    the two-node model would, so that the two models start alike.
    """
    if model.kind == "lumped":
        c = model.conductances
        h = np.array([c.outside_w_per_k, c.cover_sky_w_per_k, 0.0])
        g = model.capacities.air_mass_w_per_k
        num = float(h @ boundary_c[0]) + float(gains_w[0, 0]) + g * mass_c
        return num / (float(h.sum()) + g)
    net = model.network
    h = np.asarray(net.boundary_w_per_k, dtype=float)[0]
    g = float(np.asarray(net.coupling_w_per_k)[0, 1])
    num = float(h @ boundary_c[0]) + float(gains_w[0, 0]) + g * mass_c
    return num / (float(h.sum()) + g)
