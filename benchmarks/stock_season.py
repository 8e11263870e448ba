"""A 120-day season through `stock`'s thermostat run, against references in the same run.

    python benchmarks/stock_season.py [--json] [--days N] [--repeat N]

(a) `grower.plans.thermostat_run.simulate` on the example gable house (a site, so 241
    day/night segments in 120 days, one thermostat run with the setpoints as a series)
    against the way `stock` ran before: a model, a grid, a boundary and a thermostat run
    for each segment, re-written here. Ratio = per-segment ÷ one run; the energies of the
    two are compared (the one run takes the conductances at the heating hours' wind and
    temperature, the per-segment one at each segment's).
(b) the same season's bare solver run (`grower.solver.thermostat` on a ready network and
    boundary): simulate ÷ solver is the cost of everything around the solver.
(c) the glass range (a nightly curtain: a new run at each drawing and opening).

The forecast is invented: a smooth winter with a daily swing, sun, cloud and wind. Best
of `--repeat` wall-clock runs for each side, one BLAS thread.
"""

from __future__ import annotations

import os
import sys

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import argparse  # noqa: E402
import json  # noqa: E402
import math  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))  # run from a checkout without installing, like the other benchmarks


def invented_forecast(site, days: int):
    from grower.weather.forecast import COLUMNS, make_forecast, zone_offsets

    start = pd.Timestamp("2025-11-01T00:00", tz=site.timezone)
    t = pd.date_range(start, periods=days * 24 + 1, freq="h")
    h = np.arange(len(t), dtype=float)
    season = -4 - 6 * np.sin(np.pi * h / (days * 24))
    temp = season + 4 * np.sin(2 * np.pi * (h % 24 - 9) / 24) + 3 * np.sin(h / 41.0)
    values = {
        "temperature_c": temp,
        "dew_point_c": temp - 2,
        "cloud_cover_pct": 50 + 45 * np.sin(h / 17.0),
        "wind_speed_m_s": np.abs(4 + 3 * np.sin(h / 23.0)),
        "shortwave_w_m2": np.maximum(0.0, 350 * np.sin(2 * np.pi * (h % 24 - 7) / 24)),
    }
    utc = t.as_unit("ns").asi8 / 1e9
    from zoneinfo import ZoneInfo

    tz = ZoneInfo(site.timezone)
    return make_forecast(
        utc,
        zone_offsets(utc, tz),
        values,
        set(COLUMNS) & set(values),
        tz=tz,
        timezone=site.timezone,
        source="invented",
    )


def per_segment(house, forecast, start, end, day_c, night_c, q_max, kind="two-node"):
    """How `stock` ran before: one model, grid, boundary and run per segment."""
    from grower.plans import model as hm
    from grower.plans import runs
    from grower.plans.thermostat_run import STEP_S, segments

    segs = segments(house, start, end)
    frame = forecast.frame
    x, total = None, 0.0
    curtain = bool(house.curtain and house.curtain.closed_at_night)
    for a, b, night in segs:
        times = hm.grid(a, b, frame.index, STEP_S)
        window = frame[
            (frame.index >= a - pd.Timedelta(hours=1)) & (frame.index <= b + pd.Timedelta(hours=1))
        ]
        wind = float(np.nanmean(window["wind_speed_m_s"]))
        mean_out = float(window["temperature_c"].mean())
        mdl = hm.build(
            house,
            kind=kind,
            wind_m_s=wind,
            curtain_closed=curtain and night,
            mean_radiant_temp_c=mean_out - 5.0,
            air_temp_c=mean_out,
        )
        bnd = hm.boundary(house, mdl, forecast, times, pressure_hpa=house.site.pressure_hpa)
        bc, gains = bnd.solver_boundary(mdl), bnd.solver_gains(mdl)
        sp = night_c if night else day_c
        if x is None:
            x = runs.held_steady_state(mdl, bc[0], gains[0], sp)
        res = runs.thermostat(
            mdl, bnd.times_s, bc, x, np.full(len(times), sp), q_max, gains, house.vent_temperature_c
        )
        x = res.temps_c[0, -1]
        total += float(res.step_heat_j[0].sum())
    return total, len(segs)


def best(fn, repeat: int):
    out, t = None, math.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        t = min(t, time.perf_counter() - t0)
    return t, out


def case(path: str, days: int, repeat: int) -> dict:
    from grower import house as house_mod
    from grower import solver
    from grower.plans import thermostat_run as tr

    h = house_mod.read(str(ROOT / path))
    fc = invented_forecast(h.site, days)
    q = h.heater_output_w if h.heaters else math.inf

    def one():
        return tr.simulate(
            h, fc, fc.start, fc.end, setpoint_c=12.0, night_setpoint_c=8.0, q_max_w=q
        )

    t_one, run = best(one, repeat)
    t_seg, (e_seg, n_seg) = best(lambda: per_segment(h, fc, fc.start, fc.end, 12.0, 8.0, q), repeat)
    out = {
        "house": path,
        "days": days,
        "segments": n_seg,
        "thermostat_runs": run.n_runs,
        "one_run_s": t_one,
        "per_segment_s": t_seg,
        "speedup_vs_per_segment": t_seg / t_one,
        "energy_kwh": run.energy_j / 3.6e6,
        "energy_rel_diff_vs_per_segment": run.energy_j / e_seg - 1.0,
    }
    if run.n_runs == 1:
        from grower.plans import model as hm

        mdl = run.model
        bnd = hm.boundary(h, mdl, fc, run.times, pressure_hpa=h.site.pressure_hpa)
        bc, gains = bnd.solver_boundary(mdl), bnd.solver_gains(mdl)
        x0 = np.array([12.0, 10.0])
        sp = np.append(run.setpoint_c, run.setpoint_c[-1])
        t_s = hm.epoch_s(run.times) - hm.epoch_s(run.times)[0]
        t_solver, _ = best(
            lambda: solver.thermostat(mdl.network, t_s, bc, x0, sp, q, h.vent_temperature_c, gains),
            repeat,
        )
        out["solver_only_s"] = t_solver
        out["one_run_over_solver"] = t_one / t_solver
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--json", action="store_true")
    ap.add_argument("--days", type=int, default=120)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args(argv)
    res = {
        "season_gable": case("examples/gable-house.toml", args.days, args.repeat),
        "season_glass_curtain": case("examples/glass-range.toml", args.days, args.repeat),
    }
    if args.json:
        print(json.dumps(res, indent=2))
        return 0
    for name, r in res.items():
        print(
            f"{name}: {r['days']} days, {r['segments']} day/night segments, "
            f"{r['thermostat_runs']} thermostat run(s)"
        )
        print(f"  one run        {r['one_run_s'] * 1e3:8.1f} ms")
        print(
            f"  per segment    {r['per_segment_s'] * 1e3:8.1f} ms   "
            f"speed-up {r['speedup_vs_per_segment']:.1f}×"
        )
        if "solver_only_s" in r:
            print(
                f"  solver alone   {r['solver_only_s'] * 1e3:8.1f} ms   "
                f"one run / solver {r['one_run_over_solver']:.2f}"
            )
        print(
            f"  energy {r['energy_kwh']:,.0f} kWh, "
            f"{100 * r['energy_rel_diff_vs_per_segment']:+.2f} % against per segment"
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
