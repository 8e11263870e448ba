"""Logger records made by independent means, for testing `grower fit` against a known truth.

A *true house* (`TrueHouse`) is written out here as its own ordinary differential
equations — one node (air and everything that follows it) or two (air; floor and
water) — and integrated with scipy's ``solve_ivp`` (DOP853, tight tolerances), not with
`grower.solver`, which the fit uses. The air node loses heat to the outside air, to the
clear sky and to the deep ground; the mass node (two-node houses) to the sky and the deep
ground, and exchanges heat with the air:

    C_a dT_a/dt = K_o (T_o − T_a) + K_sa (T_sky − T_a) + K_ga (T_g − T_a) + g (T_m − T_a) + Q
    C_m dT_m/dt = g (T_a − T_m) + K_sm (T_sky − T_m) + K_gm (T_g − T_m)

The sky temperature is Swinbank's clear-sky formula written out here
(``L↓ = 5.31e-13·T⁶`` W m-2, so ``T_sky = (5.31e-13/σ)^¼ · T^1.5``), with the outside
air linear between the rows and the heater's power held from one row to the next (what
a logger's "power up to the next row" means). Noise is added to the inside temperature
only (the outside sensor is taken as exact: its error is not what these records test).

The scenarios (`plain_house`, `sky_share_house`, `two_node_house`) each write a CSV
record in a logger format `grower.logger` reads (ISO 8601 times with offset,
``inside_c``, ``outside_c`` and ``heater_w`` or an on/off ``heater`` column) and a house
TOML whose geometry the truth was taken from (or, for the plain house, one of about the
same size), and return the truth. Every house and record here is invented.

References
----------
W. C. Swinbank (1963), "Long-wave radiation from clear skies", Q. J. R. Meteorol. Soc.
89(381):339-348, doi:10.1002/qj.49708938105.
E. Hairer, S. P. Nørsett and G. Wanner (1993), *Solving Ordinary Differential Equations
I*, 2nd ed., Springer (DOP853, the integrator used here through scipy).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

#: Swinbank (1963) clear-sky long-wave coefficient [W m-2 K-6]
SWINBANK_W_M2_K6 = 5.31e-13
#: the Stefan–Boltzmann constant [W m-2 K-4] (CODATA 2018, as in scipy.constants)
STEFAN_BOLTZMANN = 5.670374419e-8
ZERO_C_K = 273.15
#: one-layer cloud factor for a black cloud base at 2 km, exp(−2/8.2) (Martin & Berdahl
#: 1984's cloud-base factor exp(−z/8.2 km); from memory)
CLOUD_BASE_2KM = float(np.exp(-2.0 / 8.2))
#: the site of every synthetic house (invented farm at 44.3° N; late-November nights there
#: run from about 16:45 to 07:15 local time)
SITE = (44.30, -76.50, "America/Toronto")
#: first night of every record, local date
FIRST_DATE = "2026-11-20"
#: rows every this many minutes, from 18:00 to 06:00 local time
ROW_MINUTES = 10
NIGHT_HOURS = 12.0

HOUSE_TOML = """# invented house for a synthetic logger record (grower.fit.synthetic)
[house]
name = "{name}"
shape = "gable"
width = "{width} m"
length = "{length} m"
sidewall_height = "2.4 m"
ridge_height = "4.5 m"

[cover]
roof = "{cover}"
sides = "{cover}"
ends = "twin-wall-polycarbonate-8mm"

[air]
changes_per_hour = {ach}

[site]
latitude = {lat}
longitude = {lon}
timezone = "{tz}"

[floor]
deep_ground_temperature = "{ground} C"
"""
HEATER_TOML = """
[[heater]]
fuel = "propane"
output = "{q} W"
"""


@dataclass(frozen=True)
class TrueHouse:
    """The true house's conductances [W/K], capacities [J/K] and deep-ground temperature.

    One node when `c_mass_j_per_k` is 0 (then the mass terms are unused).
    """

    k_outside_w_per_k: float
    c_air_j_per_k: float
    k_sky_w_per_k: float = 0.0  # air node to the sky
    k_ground_w_per_k: float = 0.0  # air node to the deep ground
    coupling_w_per_k: float = 0.0  # air to mass
    c_mass_j_per_k: float = 0.0
    mass_sky_w_per_k: float = 0.0
    mass_ground_w_per_k: float = 0.0
    deep_ground_c: float = 6.0
    #: share of the clear sky's depression below the outside air that is kept (1: clear;
    #: a cloud the record does not log makes it smaller)
    clear_share: float = 1.0
    #: cloud cover [0–1] of unknown height, through the one-layer correction of the sky's
    #: emissivity (`cloudy_sky_c`); what a weather archive would report as cloud_cover
    cloud_fraction: float = 0.0

    @property
    def two_node(self) -> bool:
        return self.c_mass_j_per_k > 0

    @property
    def c_j_per_k(self) -> float:
        return self.c_air_j_per_k + self.c_mass_j_per_k

    def rhs(self, y: np.ndarray, t_out_c: float, q_w: float) -> np.ndarray:
        """dT/dt [K/s] of the air (and mass) at the outside temperature and heat."""
        t_clear = cloudy_sky_c(t_out_c, self.cloud_fraction)
        t_sky = t_out_c - self.clear_share * (t_out_c - t_clear)
        ta = y[0]
        loss = (
            self.k_outside_w_per_k * (t_out_c - ta)
            + self.k_sky_w_per_k * (t_sky - ta)
            + self.k_ground_w_per_k * (self.deep_ground_c - ta)
        )
        if not self.two_node:
            return np.array([(loss + q_w) / self.c_air_j_per_k])
        tm = y[1]
        swap = self.coupling_w_per_k * (tm - ta)
        mass = (
            -swap
            + self.mass_sky_w_per_k * (t_sky - tm)
            + self.mass_ground_w_per_k * (self.deep_ground_c - tm)
        )
        return np.array([(loss + swap + q_w) / self.c_air_j_per_k, mass / self.c_mass_j_per_k])


@dataclass(frozen=True)
class Record:
    """A written record: its files, and the truth a fit should recover."""

    house_path: Path
    log_path: Path
    truth: dict[str, float]
    heater: str  # "power" or "state"
    house: TrueHouse = field(repr=False)


def swinbank_sky_c(t_air_c):
    """Clear-sky temperature [°C] from the air's, Swinbank (1963): (5.31e-13/σ)^¼·T^1.5."""
    t = np.asarray(t_air_c, dtype=float) + ZERO_C_K
    return (SWINBANK_W_M2_K6 / STEFAN_BOLTZMANN) ** 0.25 * t**1.5 - ZERO_C_K


def cloudy_sky_c(t_air_c, cloud_fraction):
    """Sky temperature [°C] under a cloud cover of unknown height [0–1]: the clear sky's
    emissivity ε₀ (Swinbank 1963) raised to ε = ε₀ + (1 − ε₀)·k·c with k = exp(−2/8.2)
    for a black cloud base at 2 km (the cloud-base factor of Martin & Berdahl 1984,
    attribution and the 8.2 km scale from memory), T_sky = ε^¼·T."""
    t = np.asarray(t_air_c, dtype=float) + ZERO_C_K
    eps0 = SWINBANK_W_M2_K6 * t**2 / STEFAN_BOLTZMANN
    eps = np.minimum(eps0 + (1.0 - eps0) * CLOUD_BASE_2KM * np.asarray(cloud_fraction), 1.0)
    return eps**0.25 * t - ZERO_C_K


def outside_curve(hours: np.ndarray, night: int, rng: np.random.Generator) -> np.ndarray:
    """An invented night's outside temperature [°C] at `hours` after 18:00."""
    mean = (2.0, -2.0, 0.5, -4.0, 1.0, -1.0)[night % 6] + rng.uniform(-1.5, 1.5)
    swing = rng.uniform(2.0, 3.5)
    wobble = rng.uniform(0.3, 0.8) * np.sin(rng.uniform(0.6, 1.2) * hours + rng.uniform(0, 6))
    return mean + swing * np.cos(np.pi * hours / NIGHT_HOURS) + wobble


def heater_steps(n_rows: int, night: int, step_w: float, rng: np.random.Generator) -> np.ndarray:
    """Heater power [W] held from each row to the next: off on the first night; on later
    nights in steps of `step_w` (0, 1, 2 or 3 steps), changed every 60–120 minutes."""
    out = np.zeros(n_rows)
    if night == 0:
        return out
    i = int(rng.integers(0, 6))
    while i < n_rows:
        n = int(rng.integers(6, 13))
        out[i : i + n] = step_w * int(rng.integers(0, 4))
        i += n
    return out


def integrate(
    house: TrueHouse, t_s: np.ndarray, t_out_c: np.ndarray, q_w: np.ndarray, x0: np.ndarray
) -> np.ndarray:
    """The air temperature [°C] at the rows `t_s`: solve_ivp from row to row (the outside
    air linear between rows, the heater held)."""
    from scipy.integrate import solve_ivp

    x = np.array(x0, dtype=float)
    air = [x[0]]
    for i in range(t_s.size - 1):
        t0, t1, o0, o1, q = t_s[i], t_s[i + 1], t_out_c[i], t_out_c[i + 1], q_w[i]

        def f(t, y, t0=t0, t1=t1, o0=o0, o1=o1, q=q):
            return house.rhs(y, o0 + (t - t0) / (t1 - t0) * (o1 - o0), q)

        sol = solve_ivp(f, (t0, t1), x, method="DOP853", rtol=1e-10, atol=1e-8)
        x = sol.y[:, -1]
        air.append(x[0])
    return np.array(air)


def _steady_mass(house: TrueHouse, air_c: float, t_out_c: float) -> float:
    """The mass temperature in balance with the air [°C] (a plausible evening start)."""
    ks, kg, g = house.mass_sky_w_per_k, house.mass_ground_w_per_k, house.coupling_w_per_k
    return (g * air_c + ks * swinbank_sky_c(t_out_c) + kg * house.deep_ground_c) / (g + ks + kg)


def write_record(
    house: TrueHouse,
    log_path: Path,
    *,
    nights: int = 3,
    noise_k: float = 0.1,
    step_w: float = 15000.0,
    heater: str = "power",
    seed: int = 0,
    cloud: tuple[float, ...] | None = None,
    cloud_cover: tuple[float, ...] | None = None,
) -> None:
    """Simulate `nights` nights (18:00–06:00 local time, `ROW_MINUTES` rows) and write them.

    `heater` "power" logs the power [W]; "state" logs on/off, the heater then giving
    `step_w` when on (on later nights, runs of 60–120 minutes on and off). `cloud`: per
    night, the share of the clear sky's depression a cloud takes away (not logged).
    `cloud_cover`: per night, the cloud cover [0–1] (of unknown height; not logged, but
    what a weather archive would give: `cloudy_sky_c`).
    """
    import pandas as pd

    rng = np.random.default_rng(seed)
    lines = ["time,inside_c,outside_c," + ("heater_w" if heater == "power" else "heater")]
    for n in range(nights):
        start = pd.Timestamp(f"{FIRST_DATE} 18:00", tz=SITE[2]) + pd.Timedelta(days=n)
        index = pd.date_range(
            start, start + pd.Timedelta(hours=NIGHT_HOURS), freq=f"{ROW_MINUTES}min"
        )
        hours = np.arange(index.size) * ROW_MINUTES / 60.0
        t_out = outside_curve(hours, n, rng)
        if heater == "power":
            q = heater_steps(index.size, n, step_w, rng)
        else:
            q = step_w * np.minimum(heater_steps(index.size, n, 1.0, rng), 1.0)
        air0 = t_out[0] + rng.uniform(4.0, 9.0)
        x0 = [air0]
        if house.two_node:
            x0.append(_steady_mass(house, air0, t_out[0]) + rng.uniform(1.0, 4.0))
        night_house = house if cloud is None else replace(house, clear_share=1.0 - cloud[n])
        if cloud_cover is not None:
            night_house = replace(night_house, cloud_fraction=cloud_cover[n])
        air = integrate(night_house, hours * 3600.0, t_out, q, np.array(x0))
        inside = air + rng.normal(0.0, noise_k, air.size)
        for j, when in enumerate(index):
            cell = f"{q[j]:.1f}" if heater == "power" else ("on" if q[j] > 0 else "off")
            lines.append(f"{when.isoformat()},{inside[j]:.4f},{t_out[j]:.4f},{cell}")
    log_path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def house_text(
    *,
    name: str = "synthetic house",
    width: float = 9.0,
    length: float = 30.0,
    cover: str = "double-poly",
    ach: float = 1.0,
    ground_c: float = 6.0,
    heater_w: float | None = None,
) -> str:
    """A house TOML (the geometry the fit starts from)."""
    text = HOUSE_TOML.format(
        name=name,
        width=width,
        length=length,
        cover=cover,
        ach=ach,
        lat=SITE[0],
        lon=SITE[1],
        tz=SITE[2],
        ground=ground_c,
    )
    if heater_w is not None:
        text += HEATER_TOML.format(q=heater_w)
    return text


def geometry_house(house_path: Path, kind: str, mean_outside_c: float = 0.0) -> TrueHouse:
    """The geometry's network of a house file as a `TrueHouse` (its numbers only: the
    record is still integrated here), at the conditions `grower fit` builds it for."""
    from grower import house as house_file
    from grower import network
    from grower.plans import model as hm

    h = house_file.read(house_path)
    kw = dict(
        curtain_closed=True,
        mean_radiant_temp_c=mean_outside_c - 5.0,
        air_temp_c=mean_outside_c,
        use_calibration=False,
    )
    m = hm.build(h, kind=kind, **kw)
    cond, caps = m.conductances, m.capacities
    if kind == "lumped":
        red = network.lumped_reduction(cond, caps)
        return TrueHouse(
            k_outside_w_per_k=red.outside_w_per_k,
            c_air_j_per_k=red.capacitance_j_per_k,
            k_sky_w_per_k=red.sky_w_per_k,
            k_ground_w_per_k=red.deep_ground_w_per_k,
            deep_ground_c=caps.deep_ground_c,
        )
    return TrueHouse(
        k_outside_w_per_k=cond.outside_w_per_k,
        c_air_j_per_k=caps.air_j_per_k,
        k_sky_w_per_k=cond.cover_sky_w_per_k,
        coupling_w_per_k=caps.air_mass_w_per_k,
        c_mass_j_per_k=caps.mass_j_per_k,
        mass_sky_w_per_k=cond.floor_sky_w_per_k,
        mass_ground_w_per_k=caps.ground_w_per_k,
        deep_ground_c=caps.deep_ground_c,
    )


def _truth(house: TrueHouse, step_w: float, heater: str) -> dict[str, float]:
    out = {
        "k_outside_w_per_k": house.k_outside_w_per_k,
        "k_sky_w_per_k": house.k_sky_w_per_k + house.mass_sky_w_per_k,
        "c_j_per_k": house.c_j_per_k,
    }
    if house.two_node:
        out["coupling_w_per_k"] = house.coupling_w_per_k
    if heater == "state":
        out["heater_output_w"] = step_w
    return out


def _write(
    folder: Path,
    truth_house: TrueHouse,
    toml: str,
    *,
    heater: str,
    step_w: float,
    seed: int,
    nights: int,
    noise_k: float,
    name: str,
    cloud: tuple[float, ...] | None = None,
    cloud_cover: tuple[float, ...] | None = None,
) -> Record:
    folder.mkdir(parents=True, exist_ok=True)
    house_path = folder / f"{name}.toml"
    log_path = folder / f"{name}.csv"
    house_path.write_text(toml, encoding="utf-8")
    write_record(
        truth_house,
        log_path,
        nights=nights,
        noise_k=noise_k,
        step_w=step_w,
        heater=heater,
        seed=seed,
        cloud=cloud,
        cloud_cover=cloud_cover,
    )
    return Record(house_path, log_path, _truth(truth_house, step_w, heater), heater, truth_house)


def _geometry_of(folder: Path, kind: str, **geometry) -> TrueHouse:
    """The geometry's own `kind` house for `house_text(**geometry)`, read through a
    house file written to `folder` and removed again."""
    folder.mkdir(parents=True, exist_ok=True)
    probe = folder / "probe.toml"
    probe.write_text(house_text(**geometry), "utf-8")
    geo = geometry_house(probe, kind)
    probe.unlink()
    return geo


def _geometry_record(
    folder: Path,
    truth: TrueHouse,
    geometry: dict,
    *,
    heater: str,
    step_w: float | None,
    **record,
) -> Record:
    """The house file of `geometry` (`house_text`'s arguments) and the record of `truth`;
    the heater steps default to about 3 K of lift on the true conduction."""
    q = step_w if step_w is not None else round(3.0 * truth.k_outside_w_per_k, -2)
    toml = house_text(**geometry, heater_w=q if heater == "state" else None)
    return _write(folder, truth, toml, heater=heater, step_w=q, **record)


def plain_house(
    folder: Path,
    *,
    k_w_per_k: float = 2500.0,
    c_j_per_k: float = 30e6,
    heater: str = "power",
    step_w: float = 15000.0,
    nights: int = 3,
    noise_k: float = 0.1,
    seed: int = 0,
) -> Record:
    """A plain first-order house: K to the outside air only (no sky, no ground), one C.

    The house file is a single-poly gable of about the same K (its geometry is only the
    fit's starting point: the true house has no sky or ground path at all).
    """
    truth = TrueHouse(k_outside_w_per_k=k_w_per_k, c_air_j_per_k=c_j_per_k)
    toml = house_text(
        name="plain house",
        width=9.0,
        length=30.0,
        cover="single-poly",
        ach=1.5,
        heater_w=step_w if heater == "state" else None,
    )
    return _write(
        folder,
        truth,
        toml,
        heater=heater,
        step_w=step_w,
        seed=seed,
        nights=nights,
        noise_k=noise_k,
        name="plain",
    )


def sky_share_house(
    folder: Path,
    sky_share: float,
    *,
    k_scale: float = 1.0,
    c_scale: float = 1.0,
    heater: str = "power",
    step_w: float | None = None,
    nights: int = 3,
    noise_k: float = 0.1,
    seed: int = 0,
    width: float = 9.0,
    length: float = 30.0,
    cover: str = "double-poly",
    ach: float = 1.0,
    cloud: tuple[float, ...] | None = None,
    cloud_cover: tuple[float, ...] | None = None,
) -> Record:
    """The geometry's one-node house (outside air, sky and deep ground, as
    `grower.network.lumped_reduction` gives them) with its conduction × `k_scale`, its
    sky part × `k_scale`·`sky_share` and its capacity × `c_scale`; `cloud` (one value a
    night, 0–1, not logged) takes that share of the clear sky's depression away;
    `cloud_cover` (one value a night, 0–1, not logged) is a cloud cover of unknown height
    as a weather archive reports it (`cloudy_sky_c`)."""
    geo = _geometry_of(folder, "lumped", width=width, length=length, cover=cover, ach=ach)
    truth = replace(
        geo,
        k_outside_w_per_k=geo.k_outside_w_per_k * k_scale,
        k_sky_w_per_k=geo.k_sky_w_per_k * k_scale * sky_share,
        k_ground_w_per_k=geo.k_ground_w_per_k * k_scale,
        c_air_j_per_k=geo.c_air_j_per_k * c_scale,
    )
    return _geometry_record(
        folder,
        truth,
        dict(name=f"sky share {sky_share:g}", width=width, length=length, cover=cover, ach=ach),
        heater=heater,
        step_w=step_w,
        seed=seed,
        nights=nights,
        noise_k=noise_k,
        name="sky",
        cloud=cloud,
        cloud_cover=cloud_cover,
    )


def two_node_house(
    folder: Path,
    *,
    k_scale: float = 1.1,
    sky_share: float = 1.0,
    c_scale: float = 0.9,
    coupling_scale: float = 1.2,
    heater: str = "power",
    step_w: float | None = None,
    nights: int = 3,
    noise_k: float = 0.1,
    seed: int = 0,
    width: float = 9.0,
    length: float = 30.0,
    cover: str = "double-poly",
    ach: float = 1.0,
) -> Record:
    """The geometry's two-node house (air; floor, water and benches) with the conduction
    (outside air, deep ground, air–mass coupling) × `k_scale`, the coupling × a further
    `coupling_scale`, the sky part (cover faces and floor) × `k_scale`·`sky_share` and
    every capacity × `c_scale`."""
    geo = _geometry_of(folder, "two-node", width=width, length=length, cover=cover, ach=ach)
    ks = k_scale * sky_share
    truth = replace(
        geo,
        k_outside_w_per_k=geo.k_outside_w_per_k * k_scale,
        k_sky_w_per_k=geo.k_sky_w_per_k * ks,
        coupling_w_per_k=geo.coupling_w_per_k * k_scale * coupling_scale,
        mass_sky_w_per_k=geo.mass_sky_w_per_k * ks,
        mass_ground_w_per_k=geo.mass_ground_w_per_k * k_scale,
        c_air_j_per_k=geo.c_air_j_per_k * c_scale,
        c_mass_j_per_k=geo.c_mass_j_per_k * c_scale,
    )
    return _geometry_record(
        folder,
        truth,
        dict(name="two-node house", width=width, length=length, cover=cover, ach=ach),
        heater=heater,
        step_w=step_w,
        seed=seed,
        nights=nights,
        noise_k=noise_k,
        name="two-node",
    )
