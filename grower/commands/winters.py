"""`grower winters HOUSE --setpoint T`: the house through each of the last N winters."""

from __future__ import annotations

import argparse
import math

from grower.commands import Subcommands


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "winters",
        parents=[common],
        help="plan a season's fuel: the house through each of the last N winters of weather",
        description=(
            "Run the house on its thermostat (as `stock` does) through each of the last N "
            "winters of the site's hourly weather history, and report heat, fuel and cost "
            "per month and per season, the median winter, the coldest one, and the hours "
            "the installed heater could not hold the setpoint."
        ),
    )
    p.add_argument("house", metavar="HOUSE", help="house file (TOML)")
    p.add_argument("--setpoint", required=True, metavar="T", help="heating setpoint, e.g. 10C")
    p.add_argument("--night-setpoint", metavar="T", help="heating setpoint from sunset to sunrise")
    p.add_argument(
        "--winters",
        type=int,
        default=5,
        metavar="N",
        help="how many past winters (1–30, default 5)",
    )
    p.add_argument(
        "--season-start",
        metavar="MM-DD",
        help="first day of the season (default 11-01; 05-01 south of the equator)",
    )
    p.add_argument(
        "--season-days",
        type=int,
        default=120,
        metavar="DAYS",
        help="length of the season in days (default 120)",
    )
    p.add_argument(
        "--history",
        metavar="FILE",
        help="hourly weather CSV in the forecast format instead of the history service",
    )
    p.add_argument("--fuel", metavar="KIND", help="fuel (default: the installed heater's)")
    p.add_argument(
        "--price",
        type=float,
        metavar="P",
        help="price per unit of fuel: the --fuel-unit, else the unit of the house file's "
        "[stock] on_hand, else the fuel's usual unit (the report prints the price per the "
        "unit it shows)",
    )
    p.add_argument("--fuel-unit", metavar="UNIT", help="report fuel in this unit (gal, L, therm …)")
    p.add_argument(
        "--model", choices=("two-node", "lumped"), default="two-node", help="thermal model"
    )
    p.add_argument(
        "--no-calibration",
        action="store_true",
        help=(
            "ignore the house file's [calibration] (grower fit): run on the geometry's K and C; "
            "the file is left as it is"
        ),
    )
    p.add_argument("--plot", metavar="FILE", help="write fuel per month as an image (.png or .svg)")
    p.set_defaults(run=run)


def _season_start(text: str | None, house) -> tuple[int, int]:
    import re

    from grower.errors import InputError

    if text is None:
        south = house.site is not None and house.site.latitude_deg < 0
        return (5, 1) if south else (11, 1)
    m = re.fullmatch(r"\s*(\d{1,2})-(\d{1,2})\s*", text)
    if not m or not (1 <= int(m.group(1)) <= 12 and 1 <= int(m.group(2)) <= 31):
        raise InputError(f'"{text}" is not a month and day like 11-01', where="--season-start")
    return int(m.group(1)), int(m.group(2))


def run(args: argparse.Namespace) -> int:
    import datetime as dt
    import sys

    from grower import house, weather
    from grower.commands._options import check_house, reading_system, setpoints
    from grower.errors import InputError
    from grower.plans import winters as plan
    from grower.report import common
    from grower.report import winters as report
    from grower.weather import history

    if not 1 <= args.winters <= 30:
        raise InputError(f"{args.winters} must be within 1–30", where="--winters")
    if not 7 <= args.season_days <= 366:
        raise InputError(f"{args.season_days} must be within 7–366", where="--season-days")
    if args.price is not None and not 0 <= args.price < math.inf:
        raise InputError("must be zero or more", where="--price")
    if args.price is not None:
        from grower import limits

        limits.check(args.price, limits.PRICE, "--price")
    h = house.read(args.house)
    system = reading_system(args, [h])  # bare numbers are read in the report's units
    check_house(h, use_calibration=not getattr(args, "no_calibration", False))
    setpoint, night = setpoints(args, h, system)
    start_md = _season_start(args.season_start, h)
    if args.plot:
        from pathlib import Path

        if Path(args.plot).suffix.lower() not in (".png", ".svg"):
            raise InputError("the chart file must end in .png or .svg", where=f"--plot {args.plot}")

    bar = None
    if sys.stderr.isatty() and not args.json:
        from rich.progress import Progress

        bar = Progress(transient=True, console=common.console(stderr=True))
        bar.start()
    try:
        seasons = []
        if args.history:
            record = weather.read_forecast_csv(args.history, site=h.site)
            first = (record.start + dt.timedelta(days=0)).date()
            last = record.end.date()
            windows = history.winter_windows(first, last, start_md, args.season_days, args.winters)
            if not windows:
                raise InputError(
                    f"holds no whole season of {args.season_days} days from "
                    f"{start_md[0]:02d}-{start_md[1]:02d}",
                    where=args.history,
                )
            seasons = [history.season_of(record, a, b) for a, b in windows]
            source = record.source
        else:
            if h.site is None:
                raise InputError(
                    "the weather history needs a [site] (latitude, longitude, time zone); "
                    "or give --history FILE",
                    where=h.path,
                )
            today = dt.date.today() - dt.timedelta(days=history.ARCHIVE_LAG_DAYS)
            windows = history.winter_windows(
                dt.date(1950, 1, 1), today, start_md, args.season_days, args.winters
            )
            task = bar.add_task("fetching weather history", total=len(windows)) if bar else None
            for a, b in windows:
                seasons.append(history.fetch_history(h.site, a, b))
                if bar:
                    bar.advance(task)
            source = f"Open-Meteo historical weather, {len(windows)} winters"
        task2 = bar.add_task("running the winters", total=len(seasons)) if bar else None

        def progress(done: int, total: int) -> None:
            if bar:
                bar.update(task2, completed=done, total=total)

        result = plan.winters(
            h,
            seasons,
            setpoint_c=setpoint,
            night_setpoint_c=night,
            fuel_name=args.fuel,
            price=args.price,
            unit=args.fuel_unit,
            kind=args.model,
            use_calibration=not args.no_calibration,
            source=source,
            progress=progress,
        )
    finally:
        if bar is not None:
            bar.stop()
    if args.plot:
        report.write_plot(args.plot, result)
    if args.json:
        common.emit_json(report.winters_json(result))
        return 0
    report.render_winters(common.console(), result, common.unit_system(args.units, h.units))
    return 0
