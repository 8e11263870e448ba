"""How reading and planning scale with the size of the user's files (issue 15's hangs).

    python benchmarks/input_scaling.py [--json] [--rows N]

Each line times the same work on a small file and on one 10× (or 50×) larger, in the
same run, and prints the ratio of the times against the ratio of the sizes: a ratio of
about the size ratio is linear; about 1 means the extra rows cost (almost) nothing.

(a) The logger reader on 1-second readings (N and 10 N rows) and the 5-minute
    averaging `fit` applies before fitting.
(b) `stock` on an hourly forecast file of 2,000 and 100,000 rows (`--days` applies to
    files: the long file costs one read, not a long simulation).
(c) The forecast-file reader on 2,000 and 100,000 rows.

The files are invented (smooth curves, seeded); nothing here is data.
"""

from __future__ import annotations

import argparse
import contextlib
import datetime as dt
import io
import json
import math
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from grower import logger, weather  # noqa: E402
from grower.cli import main  # noqa: E402

HOUSE = (ROOT / "examples" / "gable-house.toml").read_text(encoding="utf-8")


def _logger_file(path: Path, rows: int) -> None:
    t0 = dt.datetime(2026, 11, 1, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
    with open(path, "w", encoding="utf-8") as f:
        f.write("time,inside_c,outside_c,heater\n")
        for i in range(rows):
            h = (i / 3600.0) % 24.0
            out = -2.0 + 6.0 * math.sin((h - 9.0) / 24.0 * 2 * math.pi)
            t = t0 + dt.timedelta(seconds=i)
            f.write(f"{t:%Y-%m-%dT%H:%M:%S%z},{out + 6.0:.2f},{out:.2f},{int(h < 6)}\n")


def _forecast_file(path: Path, rows: int) -> None:
    t0 = dt.datetime(2026, 12, 3, 16, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
    with open(path, "w", encoding="utf-8") as f:
        f.write("time,temperature_c,cloud_cover_pct,wind_speed_m_s\n")
        for i in range(rows):
            t = t0 + dt.timedelta(hours=i)
            f.write(
                f"{t.isoformat(timespec='minutes')},{-5 + 5 * math.sin(i / 24 * 2 * math.pi):.1f},40,3\n"
            )


def _time(fn, repeat: int = 1) -> float:
    best = math.inf
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def _quiet(argv: list[str]) -> None:
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        rc = main(argv)
    if rc not in (0, 3):
        raise SystemExit(f"{argv} exited {rc}")


def run(rows: int) -> list[dict]:
    out = []
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        small, big = folder / "small.csv", folder / "big.csv"
        _logger_file(small, rows)
        _logger_file(big, 10 * rows)

        def read_and_average(path):
            return lambda: logger.resample(logger.read_logger_csv(path))

        a, b = _time(read_and_average(small), 2), _time(read_and_average(big), 1)
        out.append({"what": "logger read + 5-min means", "rows": [rows, 10 * rows],
                    "seconds": [a, b], "size_ratio": 10.0, "time_ratio": b / a})  # fmt: skip

        house = folder / "h.toml"
        house.write_text(HOUSE, encoding="utf-8")
        f_small, f_big = folder / "f_small.csv", folder / "f_big.csv"
        _forecast_file(f_small, 2000)
        _forecast_file(f_big, 100_000)
        a = _time(lambda: weather.read_forecast_csv(f_small), 2)
        b = _time(lambda: weather.read_forecast_csv(f_big), 1)
        out.append({"what": "forecast file read", "rows": [2000, 100_000], "seconds": [a, b],
                    "size_ratio": 50.0, "time_ratio": b / a})  # fmt: skip

        def stock(path):
            argv = ["stock", str(house), "--setpoint", "10C", "--forecast", str(path)]
            return lambda: _quiet([*argv, "--json", "--start", "2026-12-03T16:00-05:00"])

        stock(f_small)()  # warm the imports
        a, b = _time(stock(f_small), 2), _time(stock(f_big), 1)
        out.append({"what": "stock on a forecast file (default --days)", "rows": [2000, 100_000],
                    "seconds": [a, b], "size_ratio": 50.0, "time_ratio": b / a})  # fmt: skip
    return out


def main_() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true")
    parser.add_argument("--rows", type=int, default=20_000, help="logger rows of the small file")
    args = parser.parse_args()
    results = run(args.rows)
    if args.json:
        print(json.dumps(results, indent=2))
        return
    print(f"{'work':44} {'rows':>17} {'seconds':>17} {'size×':>6} {'time×':>6}")
    for r in results:
        rows = f"{r['rows'][0]:,} → {r['rows'][1]:,}"
        secs = f"{r['seconds'][0]:.2f} → {r['seconds'][1]:.2f}"
        print(f"{r['what']:44} {rows:>17} {secs:>17} {r['size_ratio']:6.0f} {r['time_ratio']:6.1f}")


if __name__ == "__main__":
    main_()
