"""What the chance of damage costs `tonight`: the command with its members against the
same command without them (``--draws 0``), measured in the same run.

    python benchmarks/chance.py [--json] [--pairs N] [--draws N] [--inside C]

- in process: `grower.plans.tonight.tonight` on the example farm's cold night with the
  default drawn members against the same call with none, interleaved; the figure is the
  median of the per-pair ratios;
- whole command: ``grower tonight examples/gable-house.toml --crop tomato --forecast
  examples/forecast-cold-night.csv`` against the same with ``--draws 0``, each a fresh
  interpreter (bytecode caching on), in paired, interleaved runs.

No target: the figures say what the members cost against the rest of the command.
``--inside C`` starts the in-process night from that inside air [°C] (0: the plants below
the alarm, each member judged on the heater's recovery) instead of the assumed one.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

COMMAND = [
    sys.executable,
    "-m",
    "grower",
    "tonight",
    "examples/gable-house.toml",
    "--crop",
    "tomato",
    "--forecast",
    "examples/forecast-cold-night.csv",
    "--start",
    "2026-12-03T17:00",
]


def _pairs(a, b, pairs: int) -> dict:
    """Median times of `a` and `b` (callables returning seconds) and of b/a, interleaved."""
    ta, tb, ratio = [], [], []
    for i in range(pairs):
        first, second = (a, b) if i % 2 == 0 else (b, a)
        x, y = first(), second()
        sa, sb = (x, y) if i % 2 == 0 else (y, x)
        ta.append(sa)
        tb.append(sb)
        ratio.append(sb / sa)
    return {
        "without_s": statistics.median(ta),
        "with_s": statistics.median(tb),
        "ratio": statistics.median(ratio),
        "ratio_min": min(ratio),
        "ratio_max": max(ratio),
        "pairs": pairs,
    }


def in_process(pairs: int, draws: int, inside_c: float | None = None) -> dict:
    import pandas as pd

    from grower import house, weather
    from grower.plans import chance, tonight

    h = house.read(str(ROOT / "examples/gable-house.toml"))
    f = weather.read_forecast_csv(str(ROOT / "examples/forecast-cold-night.csv"), site=h.site)
    start = pd.Timestamp("2026-12-03T17:00", tz="America/Toronto")

    def timed(members) -> float:
        t0 = time.perf_counter()
        tonight.tonight(
            h,
            f,
            tonight.Alarm(-0.1, "bench"),
            tonight.Readings(inside_c=inside_c, start=start, now=start),
            members=members,
        )
        return time.perf_counter() - t0

    timed(None)  # warm the caches and the imports
    timed(chance.Spec(draws=draws))
    return _pairs(lambda: timed(None), lambda: timed(chance.Spec(draws=draws)), pairs)


def whole_command(pairs: int, draws: int) -> dict:
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)

    def timed(extra: list[str]) -> float:
        t0 = time.perf_counter()
        subprocess.run([*COMMAND, *extra], cwd=ROOT, env=env, stdout=subprocess.DEVNULL, check=True)
        return time.perf_counter() - t0

    timed(["--draws", "0"])  # writes the bytecode caches; not counted
    return _pairs(lambda: timed(["--draws", "0"]), lambda: timed(["--draws", str(draws)]), pairs)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--json", action="store_true", help="print the figures as one JSON document")
    ap.add_argument("--pairs", type=int, default=11, help="paired runs per figure")
    ap.add_argument("--draws", type=int, default=300, help="drawn nights (default 300)")
    ap.add_argument("--inside", type=float, default=None, help="inside air at the start [°C]")
    args = ap.parse_args(argv)
    res = {"in_process": in_process(args.pairs * 2, args.draws, args.inside)}
    if args.inside is None:  # the command's own start (assumed air)
        res["command"] = whole_command(args.pairs, args.draws)
    if args.json:
        print(json.dumps(res, indent=2))
        return 0
    print(f"tonight with {args.draws} drawn nights against --draws 0; medians of paired runs")
    for name, r in res.items():
        print(
            f"  {name:10s} {r['with_s'] * 1e3:6.0f} ms against {r['without_s'] * 1e3:5.0f} ms"
            f"  (+{(r['with_s'] - r['without_s']) * 1e3:.0f} ms)  ratio {r['ratio']:.2f}x "
            f"({r['ratio_min']:.2f}-{r['ratio_max']:.2f}, {r['pairs']} pairs)"
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
