"""Start-up cost of the commands, as a ratio to the bare import of their libraries.

    python benchmarks/startup.py [--json] [--pairs N]

The floor is ``python -c "import numpy, pandas, rich"``: no command can be quicker than
the libraries it needs. Each command is timed against the floor in paired, interleaved
runs (floor, command, floor, command, ...), so a busy machine slows both sides of a pair
alike; the figure is the median of the per-pair ratios, with the spread. Every run is a
fresh interpreter with bytecode caching on, as a normal install has it (a first run
writes the caches and is not counted).

- ``tonight`` on the example farm's file forecast (``examples/forecast-cold-night.csv``);
- ``stock`` on a 16-day hourly file forecast written here (invented: a smooth cold spell
  with a daily swing; nothing in it is data).

Targets: ``tonight`` at or under 1.0x the floor, ``stock`` at or under 1.3x.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import statistics
import subprocess
import sys
import tempfile
import time
from datetime import datetime, timedelta, timezone
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FLOOR = [sys.executable, "-c", "import numpy, pandas, rich"]
TARGETS = {"tonight": 1.0, "stock": 1.3}


def sixteen_days(path: Path) -> Path:
    """An invented 16-day hourly forecast in the CSV format the README documents."""
    start = datetime(2026, 12, 5, tzinfo=timezone(timedelta(hours=-5)))
    lines = ["time,temperature_c,dew_point_c,cloud_cover_pct,wind_speed_m_s,shortwave_w_m2"]
    for i in range(16 * 24):
        t = start + timedelta(hours=i)
        day = i / 24.0
        temp = (
            -2.0
            - 4.0 * math.sin(math.pi * day / 16.0)
            - 4.0 * math.cos(2 * math.pi * (day - 0.625))
        )
        sun = (
            max(0.0, 350.0 * math.sin(math.pi * (t.hour - 7) / 10.0)) if 7 <= t.hour <= 17 else 0.0
        )
        lines.append(
            f"{t.isoformat(timespec='minutes')},{temp:.1f},{temp - 2.0:.1f},40,3.0,{sun:.0f}"
        )
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def commands(tmp: Path) -> dict[str, list[str]]:
    grower = [sys.executable, "-m", "grower"]
    return {
        "tonight": [
            *grower,
            "tonight",
            "examples/gable-house.toml",
            "--crop",
            "tomato",
            "--forecast",
            "examples/forecast-cold-night.csv",
            "--start",  # the bundled night (a file past its end is refused)
            "2026-12-03T16:00",
        ],
        "stock": [
            *grower,
            "stock",
            "examples/gable-house.toml",
            "--setpoint",
            "10C",
            "--night-setpoint",
            "5C",
            "--forecast",
            str(sixteen_days(tmp / "sixteen-days.csv")),
            "--start",
            "2026-12-05T00:00",
        ],
    }


def run_once(argv: list[str], env: dict[str, str]) -> float:
    t0 = time.perf_counter()
    subprocess.run(argv, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, check=True)
    return time.perf_counter() - t0


def measure(pairs: int) -> dict:
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)  # bytecode caching on, as installed
    env.setdefault("COLUMNS", "100")
    out: dict[str, dict] = {}
    with tempfile.TemporaryDirectory() as tmp:
        cmds = commands(Path(tmp))
        run_once(FLOOR, env)
        for argv in cmds.values():
            run_once(argv, env)  # writes the bytecode caches; not counted
        for name, argv in cmds.items():
            floor, cmd, ratio = [], [], []
            for i in range(pairs):
                order = (FLOOR, argv) if i % 2 == 0 else (argv, FLOOR)
                a, b = (run_once(x, env) for x in order)
                f, c = (a, b) if i % 2 == 0 else (b, a)
                floor.append(f)
                cmd.append(c)
                ratio.append(c / f)
            out[name] = {
                "floor_s": statistics.median(floor),
                "command_s": statistics.median(cmd),
                "ratio": statistics.median(ratio),
                "ratio_min": min(ratio),
                "ratio_max": max(ratio),
                "pairs": pairs,
                "target_ratio": TARGETS[name],
                "target_met": statistics.median(ratio) <= TARGETS[name],
            }
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--json", action="store_true", help="print the figures as one JSON document")
    ap.add_argument("--pairs", type=int, default=15, help="paired runs per command")
    args = ap.parse_args(argv)
    res = measure(args.pairs)
    if args.json:
        print(json.dumps(res, indent=2))
        return 0
    print('floor: python -c "import numpy, pandas, rich"; medians of paired, interleaved runs')
    for name, r in res.items():
        met = "met" if r["target_met"] else "NOT met"
        print(
            f"  {name:8s} {r['command_s'] * 1e3:7.0f} ms  floor {r['floor_s'] * 1e3:5.0f} ms"
            f"  ratio {r['ratio']:.2f}x ({r['ratio_min']:.2f}-{r['ratio_max']:.2f}, "
            f"{r['pairs']} pairs)  target <= {r['target_ratio']}x: {met}"
        )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
