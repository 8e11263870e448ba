"""The house as the solver sees it: network matrices and boundary series.

Shared by tonight, size, stock and fit. Everything here is a pure function of the house,
the forecast's arrays and a few choices (model, wind, curtain).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, replace
from typing import Any, Literal

import numpy as np

from grower import arrays, network
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


#: the ``[calibration]`` format this version writes and reads (`grower.fit.calibration`)
CALIBRATION_FORMAT = 2


@dataclass(frozen=True)
class Calibration:
    """A format-2 ``[calibration]``: the fitted conductances and their geometry.

    The fit gives the conductance from the air to the outside air and the sky part
    separately, each beside the geometry's value at the record's conditions (its wind,
    its temperatures). `build` applies their ratios to the geometry at a run's own
    conditions, so the wind still acts on a calibrated house.
    """

    model: str  # "lumped" or "two-node": the model it was fitted with
    k_outside_w_per_k: float
    k_sky_w_per_k: float
    c_j_per_k: float
    geometry_k_outside_w_per_k: float
    geometry_k_sky_w_per_k: float
    geometry_c_j_per_k: float
    coupling_scale: float = 1.0  # two-node: the air–floor coupling's own factor
    #: lumped, the path to the deep ground fitted apart: fitted and geometry [W/K]
    k_ground_w_per_k: float | None = None
    geometry_k_ground_w_per_k: float | None = None
    #: the sky part fitted night by night (no cloud in the record) [W/K]
    k_sky_by_night_w_per_k: tuple[float, ...] = ()
    quality: str = "good"  # "rough": stored with `grower fit --write --keep-rough`
    rms_k: float | None = None
    noise_k: float | None = None
    record: str | None = None
    fit_date: object = None

    @property
    def conduction_factor(self) -> float:
        """Fitted over geometric conduction: on the outside air, deep ground and coupling."""
        return self.k_outside_w_per_k / self.geometry_k_outside_w_per_k

    @property
    def sky_factor(self) -> float:
        """Fitted over geometric sky part: on the sky columns (1 where the geometry has none).

        Where the fit took the sky night by night (a record without cloud), the larger
        of the sky part and the clearest night's. `grower fit` stores the cover's
        exchange with a clear sky as ``k_sky_w_per_k`` and what each night's cloud left
        of it by night (a night may show a little more: a sky drier than Swinbank's
        average); a table from an earlier grower stores each night's own factor and
        their mean, and there the clearest night stands for the house.
        Tonight's cloud comes from the forecast, and a clear night is the one that
        matters for frost.
        """
        if self.geometry_k_sky_w_per_k <= 0:
            return 1.0
        sky = max((self.k_sky_w_per_k, *self.k_sky_by_night_w_per_k))
        return sky / self.geometry_k_sky_w_per_k

    @property
    def sky_from_a_night(self) -> bool:
        """The sky part a run uses is one night's (larger than the record's sky part)."""
        return max(self.k_sky_by_night_w_per_k, default=0.0) > self.k_sky_w_per_k

    @property
    def ground_factor(self) -> float:
        """On the lumped node's path to the deep ground: its own fit, else the conduction's."""
        g, geo = self.k_ground_w_per_k, self.geometry_k_ground_w_per_k
        if self.model == "lumped" and g is not None and geo:
            return g / geo
        return self.conduction_factor

    @property
    def capacity_factor(self) -> float:
        return self.c_j_per_k / self.geometry_c_j_per_k

    @property
    def rough(self) -> bool:
        return self.quality == "rough"


def _older_format(cal) -> bool:
    """A table from a `grower fit` before format 2 (one factor on every conductance)."""
    return "format" not in cal and ("k_w_per_k" in cal or "c_j_per_k" in cal)


def calibration_of(
    house: House, use: bool = True, kind: ModelKind | None = None
) -> Calibration | None:
    """The house file's format-2 [calibration], or None when none is to be used.

    None: no table, `use` False (``--no-calibration``), a table of an older or unknown
    format (see `calibration_note`), or a fit of the other model when `kind` is given:
    the two models' fitted values are not interchangeable (a lumped fit of a two-node
    house gives a longer C/K). The table's keys are checked when the house file is read
    (`grower.house`).
    """
    cal = house.calibration
    if not use or not cal or cal.get("format") != CALIBRATION_FORMAT:
        return None
    if kind is not None and cal["model"] != kind:
        return None
    if geometry_change(house) is not None:
        return None
    g = cal.get("coupling_scale", 1.0) if cal["model"] == "two-node" else 1.0
    rms, noise = cal.get("rms_k"), cal.get("noise_k")
    return Calibration(
        model=cal["model"],
        k_outside_w_per_k=float(cal["k_outside_w_per_k"]),
        k_sky_w_per_k=float(cal["k_sky_w_per_k"]),
        c_j_per_k=float(cal["c_j_per_k"]),
        geometry_k_outside_w_per_k=float(cal["geometry_k_outside_w_per_k"]),
        geometry_k_sky_w_per_k=float(cal["geometry_k_sky_w_per_k"]),
        geometry_c_j_per_k=float(cal["geometry_c_j_per_k"]),
        coupling_scale=float(g),
        k_ground_w_per_k=_float_or_none(cal.get("k_ground_w_per_k")),
        geometry_k_ground_w_per_k=_float_or_none(cal.get("geometry_k_ground_w_per_k")),
        k_sky_by_night_w_per_k=tuple(float(x) for x in cal.get("k_sky_by_night_w_per_k", ())),
        quality=str(cal.get("quality", "good")),
        rms_k=_float_or_none(rms),
        noise_k=_float_or_none(noise),
        record=cal.get("record"),
        fit_date=cal.get("fit_date"),
    )


def _float_or_none(v) -> float | None:
    return None if v is None else float(v)


#: the geometry at the record's conditions may differ from the one stored with the fit by
#: this share before the house counts as changed since the fit (the stored values carry
#: 5 significant digits and the record's mean temperature 3: far under it; a cover, an
#: air-change rate or a floor changed in the file moves K or C by more)
GEOMETRY_CHANGED_SHARE = 0.01


def geometry_change(house: House) -> str | None:
    """What changed in the house file since a format-2 fit, or None.

    The geometry's conductance to the outside air and its C, rebuilt at the record's
    conditions (``record_wind_m_s``, ``record_mean_outside_c``), against the values
    stored beside the fit; a table without the record's conditions is not checked.
    """
    cal = house.calibration
    wind, mean = cal.get("record_wind_m_s"), cal.get("record_mean_outside_c")
    if wind is None or mean is None:
        return None
    cond = network.conductances(
        house,
        wind_m_s=float(wind),
        curtain_closed=True,
        mean_radiant_temp_c=float(mean) - 5.0,
        cover_temp_c=float(mean),
    )
    caps = network.capacities(house, rho_cp_j_m3k=cond.rho_cp_j_m3k)
    c_now = caps.total_j_per_k
    if cal["model"] == "lumped":
        c_now = network.lumped_reduction(cond, caps).capacitance_j_per_k
    for what, now, then in (
        ("K to outside air", cond.outside_w_per_k, cal["geometry_k_outside_w_per_k"]),
        ("C", c_now, cal["geometry_c_j_per_k"]),
    ):
        change = now / float(then) - 1.0
        if abs(change) > GEOMETRY_CHANGED_SHARE:
            way = "higher" if change > 0 else "lower"
            return (
                f"the geometry's {what} at the record's conditions is {abs(change):.0%} {way} "
                "than when it was fitted"
            )
    return None


def refit_command(house: House) -> str:
    """The command that writes a format-2 calibration for `house`."""
    record = house.calibration.get("record") if house.calibration else None
    return f"grower fit {house.path} --log {record or 'RECORD.csv'} --write"


def calibration_note(house: House, kind: ModelKind, use: bool = True) -> str | None:
    """One line for the report: what calibration is used, or why one is not.

    ``--no-calibration`` ignores the table whatever it holds (the geometry's K and C, the
    file unchanged). A table of an older format (no ``format`` key: one factor on every
    conductance) is not used: that fit imposed the geometry's share of the sky on the
    house and, on a record without cloud, could understate K — the unsafe direction for
    a heater — so the run uses the geometry and the line gives the command to refit.
    """
    cal = house.calibration
    if not cal:
        return None
    if not use:
        return (
            "the house file's [calibration] is ignored (--no-calibration): the geometry's K and C"
        )
    if _older_format(cal):
        k = cal.get("k_w_per_k")
        found = ""
        if isinstance(k, int | float) and k > 0:
            ratio = float(k) / network.describe(house).calm.total_w_per_k
            found = f"K × {ratio:.2f} the geometry's calm-night K, "
        return (
            f"the house file's [calibration] is from an older grower fit ({found}one factor "
            "on every conductance): not used, the geometry's K and C are — that fit took the "
            "sky's share from the geometry and could understate K; refit: " + refit_command(house)
        )
    fmt = cal.get("format")
    if fmt is None:
        return "the house file's [calibration] has no fitted values: not used"
    if fmt != CALIBRATION_FORMAT:
        return (
            f"the house file's [calibration] is format {fmt}, which this grower does not read "
            f"(it reads {CALIBRATION_FORMAT}): not used, the geometry's K and C are; refit: "
            + refit_command(house)
        )
    changed = geometry_change(house)
    if changed is not None:
        return (
            f"the house file has changed since its [calibration] was fitted ({changed}): not "
            "used, the geometry's K and C are; refit: " + refit_command(house)
        )
    fitted = calibration_of(house, use, kind)
    if fitted is None:
        other = cal["model"]
        return (
            f"the house file's [calibration] is for the {other} model: this run uses "
            f"the geometry (give --model {other} to use it)"
        )
    src = ", ".join(str(x) for x in (fitted.record, fitted.fit_date) if x)
    clearest = " (the clearest of the record's nights)" if fitted.sky_from_a_night else ""
    text = (
        f"conduction × {fitted.conduction_factor:.2f}, sky part × {fitted.sky_factor:.2f}"
        f"{clearest}, C × {fitted.capacity_factor:.2f} the geometry's, from the house file's "
        f"[calibration] (grower fit{': ' + src if src else ''})"
    )
    if fitted.rough:
        ratio = ""
        if fitted.rms_k and fitted.noise_k:
            ratio = f", residual {fitted.rms_k / fitted.noise_k:.1f} × the sensor's noise"
        text += (
            f"; a ROUGH fit (stored with --keep-rough{ratio}): the model missed part of the "
            "record, treat these figures with care"
        )
    return text


def calibration_warning(house: House, use: bool = True) -> str | None:
    """`calibration_note`'s line when the house file holds a [calibration] this version
    will not use (an older or unknown format, or a house changed since the fit; the run
    goes on with the geometry), for the reports to show as a warning rather than a
    note; else None."""
    cal = house.calibration
    if not (use and cal):
        return None
    if cal.get("format") == CALIBRATION_FORMAT:
        if geometry_change(house) is None:
            return None
        return calibration_note(house, cal["model"], use)
    if "format" not in cal and not _older_format(cal):
        return None  # a table with nothing fitted in it: a plain note
    return calibration_note(house, "two-node", use)


def calibrated_heater_output(house: House, use: bool = True) -> float | None:
    """A heater output [W] that `grower fit` measured (not the rating it was anchored to)."""
    cal = house.calibration
    usable = use and cal and cal.get("format") == CALIBRATION_FORMAT
    q = cal.get("heater_output_w") if usable else None
    if isinstance(q, int | float) and q > 0 and cal.get("anchor") != "heater rating":
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
    outside air, sky and deep ground.

    A format-2 calibration in the house file (`calibration_of`) scales this network, built
    at the run's own wind and temperatures: the conduction (outside air, deep ground and
    the air–mass coupling) by K_out,fit/K_out,geometry, the sky columns by
    K_sky,fit/K_sky,geometry (both geometries at the record's conditions), every capacity
    by C_fit/C_geometry, and a two-node fit's coupling further by its ``coupling_scale``
    — the scaling `grower fit` fitted. A lumped fit whose deep-ground path was fitted
    apart scales that path by its own factor; a sky fitted night by night is taken at
    its clearest night (`Calibration.sky_factor`).

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
    fk = fs = fc = fg = 1.0  # conduction, sky, capacity, coupling factors
    if cal is not None:
        fk, fs, fc, fg = (
            cal.conduction_factor,
            cal.sky_factor,
            cal.capacity_factor,
            cal.coupling_scale,
        )
    if kind == "lumped":
        red = network.lumped_reduction(cond, caps)
        k_out, k_sky = red.outside_w_per_k * fk, red.sky_w_per_k * fs
        k_ground = red.deep_ground_w_per_k * (cal.ground_factor if cal else 1.0)
        c_model = red.capacitance_j_per_k * fc
        net = solver.Network(
            capacitance_j_per_k=np.array([c_model]),
            coupling_w_per_k=np.zeros((1, 1)),
            boundary_w_per_k=np.array([[k_out, k_sky, k_ground]]),
            node_names=("air",),
            boundary_names=BOUNDARIES,
        )
    else:
        k_out = cond.outside_w_per_k * fk
        g = caps.air_mass_w_per_k * fk * fg
        k_cs, k_r = cond.cover_sky_w_per_k * fs, cond.floor_sky_w_per_k * fs
        # the sky's share of the steady loss: the cover faces' plus the floor's through g
        k_sky = k_cs + network.floor_sky_share(g, k_r)
        net = solver.Network(
            capacitance_j_per_k=np.array([caps.air_j_per_k, caps.mass_j_per_k]) * fc,
            coupling_w_per_k=np.array([[0.0, g], [g, 0.0]]),
            boundary_w_per_k=np.array(
                [
                    [k_out, k_cs, 0.0],
                    [0.0, k_r, caps.ground_w_per_k * fk],
                ]
            ),
            node_names=("air", "mass"),
            boundary_names=BOUNDARIES,
        )
        c_model = caps.total_j_per_k * fc
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
    return arrays.unique(np.concatenate([regular, at[(at > start_ns) & (at < end_ns)], extra]))


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
