"""Make the invented logger record examples/logger-gable-house.csv from a known house.

Run from the repository's root (it rewrites the record and the truth beside it):

    python examples/make_logger_record.py

The "true" house is the example propagation house (examples/gable-house.toml) as its
own geometry gives it at the record's conditions (calm, the nights' mean outside
temperature), with the parts `grower fit` estimates changed by known factors:

- conduction (inside air to the outside air, floor to the deep ground, air to floor and
  water) × CONDUCTION, a house leakier than its tables;
- the sky part (the cover faces and the floor radiating through the film to the clear
  sky) × SKY, condensation and dust on the film passing less long-wave than the table;
- every heat capacity × CAPACITY.

The record is computed by an integration of its own: the two-node equations are written
out below from the conductances and capacities and integrated with scipy's `solve_ivp`
(Radau, rtol 1e-9) over each 10-minute logger interval; grower's solver is not used. The
clear-night sky is Swinbank's (1963) L = 5.31e-13·T⁶ W/m² (no dew point, no cloud: the
record logs neither), written out here too. The sun heats the air by day (a clear-day
half-sine between grower's sunrise and sunset, peak SUN_PEAK_W_M2, the roof's solar
transmittance and the sensible half `grower.plans.model.SUN_SENSIBLE_FRACTION`); the
fit leaves the day out, so the sun only sets the floor's warmth at dusk.

The heater (the house file's rated output) runs on a thermostat that looks at the air
every 10 minutes, at the logger's readings (on below the setpoint, off 2 K above it), on
the second and the fourth night; the logger records its on/off state for the interval
after each reading. Both sensors read with Gaussian noise of NOISE_K and are rounded to
0.1 °C, as a cheap logger prints them. A read-out gap of 50 minutes and one missing
inside value are left in. Everything random comes from one seed, so the record is the
same on every run; the truth is printed and written beside the record
(examples/logger-gable-house.truth.json).

Nothing here was measured: the farm, the weather and the house are invented.
"""

from __future__ import annotations

import datetime as dt
import json
import sys
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
from scipy.integrate import solve_ivp

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))  # run from a checkout without installing

from grower import diurnal, house  # noqa: E402
from grower.plans import model as hm  # noqa: E402

SEED = 11
CONDUCTION, SKY, CAPACITY = 1.15, 0.70, 0.90
NOISE_K = 0.1
STEP_S = 600.0
#: peak global radiation on a clear late-November day at 44° N [W/m²] (from memory:
#: about 450; the days here are partly cloudy)
SUN_PEAK_W_M2 = (380.0, 300.0, 420.0, 250.0, 350.0)
#: heater thermostat setpoint per night [°C] (None: off), noon to noon from 20 Nov
SETPOINTS_C = (None, 5.0, None, 3.0)
HYSTERESIS_K = 2.0
ZONE = ZoneInfo("America/Toronto")
LOG_START = dt.datetime(2026, 11, 20, 14, 0, tzinfo=ZONE)
LOG_END = dt.datetime(2026, 11, 24, 10, 0, tzinfo=ZONE)
SPIN_UP = dt.timedelta(days=1)  # the run starts a day before the logger
#: (local time, lowest before it or highest) of the invented outside air [°C]
OUTSIDE_TURNS = (
    ("2026-11-19 07:00", 2.0),
    ("2026-11-19 14:30", 9.5),
    ("2026-11-20 07:00", 3.0),
    ("2026-11-20 14:30", 10.0),
    ("2026-11-21 07:00", -1.0),
    ("2026-11-21 14:30", 9.0),
    ("2026-11-22 07:00", -2.0),
    ("2026-11-22 14:30", 5.0),
    ("2026-11-23 07:00", -5.5),
    ("2026-11-23 14:30", 4.5),
    ("2026-11-24 07:00", -6.5),
    ("2026-11-24 14:30", 2.0),
)
GAP = ("2026-11-23 08:50", 5)  # first lost reading, how many
MISSING_INSIDE = (
    "2026-11-23 03:20"  # on a night without heat: the reader drops the row, heater state and all
)
SIGMA = 5.670374419e-8  # Stefan–Boltzmann [W m-2 K-4] (CODATA 2018)


def swinbank_sky_c(temp_air_c: np.ndarray) -> np.ndarray:
    """Clear-sky temperature [°C]: L = 5.31e-13·T⁶ W/m² (Swinbank 1963, Q. J. R.
    Meteorol. Soc. 89:339–348), T_sky = (L/σ)^¼."""
    t = np.asarray(temp_air_c, dtype=float) + 273.15
    return (5.31e-13 * t**6 / SIGMA) ** 0.25 - 273.15


def outside_c(t_s: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """The invented outside air at UTC seconds `t_s` [°C]: half-cosines between the
    day's low (07:00) and high (14:30), plus a slow wobble (a few sines of random phase,
    0.3 K)."""
    turns_s = np.array(
        [dt.datetime.fromisoformat(a).replace(tzinfo=ZONE).timestamp() for a, _ in OUTSIDE_TURNS]
    )
    temps = np.array([v for _, v in OUTSIDE_TURNS])
    i = np.clip(np.searchsorted(turns_s, t_s, side="right") - 1, 0, turns_s.size - 2)
    frac = (t_s - turns_s[i]) / (turns_s[i + 1] - turns_s[i])
    base = temps[i] + (temps[i + 1] - temps[i]) * (1.0 - np.cos(np.pi * frac)) / 2.0
    periods_h = rng.uniform(2.0, 9.0, 4)
    phases = rng.uniform(0.0, 2.0 * np.pi, 4)
    wobble = sum(
        np.sin(2.0 * np.pi * t_s / (p * 3600.0) + ph)
        for p, ph in zip(periods_h, phases, strict=True)
    )
    return base + 0.3 * wobble / 2.0


def main() -> None:
    rng = np.random.default_rng(SEED)
    h = house.read(HERE / "gable-house.toml")
    site = h.site
    t0 = (LOG_START - SPIN_UP).timestamp()
    t1 = LOG_END.timestamp()
    ticks = np.arange(t0, t1 + 1.0, STEP_S)
    log_at = ticks >= LOG_START.timestamp()
    fine = np.arange(t0, t1 + 1.0, 60.0)
    out_fine = outside_c(fine, rng)
    rises, sets = diurnal.sun_events(site.latitude_deg, site.longitude_deg, t0, t1)

    def sun_w_m2(t: float) -> float:
        k = np.searchsorted(rises, t, side="right") - 1
        if k < 0 or t >= sets[k]:
            return 0.0
        day = int((rises[k] - t0) // 86400.0)
        peak = SUN_PEAK_W_M2[min(day, len(SUN_PEAK_W_M2) - 1)]
        return peak * float(np.sin(np.pi * (t - rises[k]) / (sets[k] - rises[k])))

    def is_night(t: float) -> bool:
        k = np.searchsorted(np.sort(np.concatenate([rises, sets])), t, side="right") - 1
        return sun_w_m2(t) == 0.0 and k >= 0

    # the geometry at the record's conditions, as `grower fit` builds it: calm, the
    # nights' mean outside temperature (rows logged after sunset and before sunrise)
    night_rows = [t for t in ticks[log_at] if is_night(t)]
    mean_out = float(np.mean(np.interp(night_rows, fine, out_fine)))
    geo = hm.build(
        h,
        kind="two-node",
        wind_m_s=0.0,
        curtain_closed=True,
        mean_radiant_temp_c=mean_out - 5.0,
        air_temp_c=mean_out,
        use_calibration=False,
    )
    c, m = geo.conductances, geo.capacities
    k_out = CONDUCTION * c.outside_w_per_k
    k_cover_sky, k_floor_sky = SKY * c.cover_sky_w_per_k, SKY * c.floor_sky_w_per_k
    g = CONDUCTION * m.air_mass_w_per_k
    k_ground = CONDUCTION * m.ground_w_per_k
    c_air, c_mass = CAPACITY * m.air_j_per_k, CAPACITY * m.mass_j_per_k
    deep_c = m.deep_ground_c
    q_heater = h.heater_output_w
    sun_gain = h.roof_material.solar_transmittance * h.floor_area_m2 * hm.SUN_SENSIBLE_FRACTION

    def rhs(t, x, q):
        t_a, t_m = x
        t_o = np.interp(t, fine, out_fine)
        t_s = swinbank_sky_c(t_o)
        q_a = (
            k_out * (t_o - t_a)
            + k_cover_sky * (t_s - t_a)
            + g * (t_m - t_a)
            + q
            + sun_gain * sun_w_m2(t)
        )
        q_m = g * (t_a - t_m) + k_floor_sky * (t_s - t_m) + k_ground * (deep_c - t_m)
        return [q_a / c_air, q_m / c_mass]

    x = np.array([10.0, 9.0])
    air, heater = np.empty(ticks.size), np.zeros(ticks.size, dtype=bool)
    on = False
    for i, t in enumerate(ticks):
        air[i] = x[0]
        night_no = int((t - (LOG_START.timestamp() - 2 * 3600)) // 86400.0)  # noon to noon
        sp = SETPOINTS_C[night_no] if 0 <= night_no < len(SETPOINTS_C) else None
        if sp is None or not is_night(t):
            on = False
        elif x[0] < sp:
            on = True
        elif x[0] > sp + HYSTERESIS_K:
            on = False
        heater[i] = on
        if i + 1 < ticks.size:
            q = q_heater if on else 0.0
            sol = solve_ivp(
                rhs, (t, ticks[i + 1]), x, method="Radau", args=(q,), rtol=1e-9, atol=1e-9
            )
            x = sol.y[:, -1]

    out_ticks = np.interp(ticks, fine, out_fine)
    inside_read = np.round(air + rng.normal(0.0, NOISE_K, ticks.size), 1)
    outside_read = np.round(out_ticks + rng.normal(0.0, NOISE_K, ticks.size), 1)

    gap_start = dt.datetime.fromisoformat(GAP[0]).replace(tzinfo=ZONE).timestamp()
    lost = (ticks >= gap_start) & (ticks < gap_start + GAP[1] * STEP_S)
    blank = dt.datetime.fromisoformat(MISSING_INSIDE).replace(tzinfo=ZONE).timestamp()

    def comma(v: float) -> str:
        return f"{v:.1f}".replace(".", ",")

    lines = [
        "Juniper Flats Farm - propagation house logger (invented record)",
        "Date/time;Inside;Outside;Heater",
        ";°C;°C;on/off",
    ]
    for i in np.flatnonzero(log_at & ~lost):
        when = dt.datetime.fromtimestamp(ticks[i], ZONE)
        inside = "" if abs(ticks[i] - blank) < 1.0 else comma(inside_read[i])
        state = "on" if heater[i] else "off"
        lines.append(f"{when:%d.%m.%Y %H:%M};{inside};{comma(outside_read[i])};{state}")
    (HERE / "logger-gable-house.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")

    k_sky_steady = k_cover_sky + g * k_floor_sky / (g + k_floor_sky)
    g_sky_steady = c.cover_sky_w_per_k + m.air_mass_w_per_k * c.floor_sky_w_per_k / (
        m.air_mass_w_per_k + c.floor_sky_w_per_k
    )
    truth = {
        "conduction_factor": CONDUCTION,
        "sky_factor": SKY,
        "capacity_factor": CAPACITY,
        "k_outside_w_per_k": k_out,
        "k_sky_w_per_k": k_cover_sky + k_floor_sky,
        "k_sky_steady_w_per_k": k_sky_steady,
        "k_w_per_k": k_out + k_sky_steady,
        "c_j_per_k": c_air + c_mass,
        "coupling_w_per_k": g,
        "heater_output_w": q_heater,
        "noise_k": NOISE_K,
        "record_mean_outside_c": mean_out,
    }
    geometry = {
        "k_outside_w_per_k": c.outside_w_per_k,
        "k_sky_w_per_k": c.cover_sky_w_per_k + c.floor_sky_w_per_k,
        "k_sky_steady_w_per_k": g_sky_steady,
        "k_w_per_k": c.outside_w_per_k + g_sky_steady,
        "c_j_per_k": m.total_j_per_k,
        "coupling_w_per_k": m.air_mass_w_per_k,
    }
    doc = {
        "about": (
            "The invented truth examples/logger-gable-house.csv was computed from, by "
            f"examples/make_logger_record.py (seed {SEED}); nothing here was measured. "
            "Two-node house. k_sky_w_per_k: the sky columns (cover faces to sky + floor to "
            "sky); k_sky_steady_w_per_k: the steady sky part (the cover faces' plus the "
            "floor's through the air-floor coupling); k_w_per_k: k_outside_w_per_k + "
            "k_sky_steady_w_per_k, the steady conductance to T_eff (grower fit reports K as "
            "k_outside_w_per_k + k_sky_w_per_k, the columns' sum). geometry: "
            "examples/gable-house.toml's own network at the record's conditions (calm, the "
            "nights' mean outside temperature)."
        ),
        "truth": {k: float(f"{v:.6g}") for k, v in truth.items()},
        "geometry": {k: float(f"{v:.6g}") for k, v in geometry.items()},
    }
    text = json.dumps(doc, indent=2, ensure_ascii=False)
    (HERE / "logger-gable-house.truth.json").write_text(text + "\n", encoding="utf-8")
    for k, v in truth.items():
        beside = f"   (the geometry's {geometry[k]:.6g})" if k in geometry else ""
        print(f"{k:22s} {v:14.6g}{beside}")
    print(
        f"{int((log_at & ~lost).sum())} rows written; heater on {int(heater[log_at].sum())} of them"
    )


if __name__ == "__main__":
    main()
