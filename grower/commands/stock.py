"""`grower stock HOUSE --setpoint T --fuel KIND`: fuel for a forecast cold spell."""

from __future__ import annotations

import argparse

from grower.commands import Subcommands
from grower.commands._options import add_crop_options, add_forecast_options

#: a forecast file is run for at most this many days unless --days says otherwise
FILE_DAYS_DEFAULT = 62
#: the most days --days takes for a file (a season: `grower winters` runs many)
FILE_DAYS_MAX = 366


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "stock",
        parents=[common],
        help="plan fuel for a cold spell: fuel burned per day, cost, when the stock runs out",
        description=(
            "Run the house through a multi-day forecast with its thermostat heater (day and "
            "night setpoints, sun and venting by day) and report heat delivered and fuel "
            "burned per day in the unit it is bought in, containers, cost, and when the "
            "fuel on hand runs out."
        ),
    )
    p.add_argument("house", metavar="HOUSE", help="house file (TOML)")
    p.add_argument(
        "--setpoint",
        required=True,
        metavar="T",
        help="heating setpoint (by day, and at night unless --night-setpoint), e.g. 10C",
    )
    p.add_argument("--night-setpoint", metavar="T", help="heating setpoint from sunset to sunrise")
    p.add_argument(
        "--fuel", metavar="KIND", help="fuel (default: the house's [stock] fuel or its heater's)"
    )
    p.add_argument(
        "--on-hand",
        metavar="AMOUNT",
        help='fuel on hand, e.g. "320 gal", "900 L", "3 100-lb cylinders"',
    )
    p.add_argument(
        "--fill",
        metavar="PCT",
        help="how full the containers are now, e.g. 30%% (a tank's gauge reading; for "
        "cylinders the share of a full fill); default full, or [stock] fill",
    )
    p.add_argument(
        "--reserve",
        metavar="PCT",
        default="30%",
        help="refill level to order at, read like --fill (default 30%%; the trade orders at 20–30%%)",
    )
    p.add_argument(
        "--lead-time",
        type=float,
        default=0.0,
        metavar="DAYS",
        help="days from ordering to delivery (default 0)",
    )
    p.add_argument(
        "--price",
        type=float,
        metavar="P",
        help="price per unit of fuel (the unit of --on-hand, else the fuel's usual unit)",
    )
    p.add_argument(
        "--fuel-unit",
        metavar="UNIT",
        help="report fuel in this unit (gal, L, therm, m3, kWh, lb, kg …)",
    )
    p.add_argument(
        "--days",
        type=int,
        default=None,
        metavar="N",
        help=(
            "days to plan from the start: of the live forecast (1–16, default 16) or of a "
            "forecast file (1–366, default the file's, up to 62)"
        ),
    )
    p.add_argument(
        "--model",
        choices=("two-node", "lumped"),
        default="two-node",
        help="thermal model (default two-node)",
    )
    p.add_argument(
        "--no-calibration",
        action="store_true",
        help=(
            "ignore the house file's [calibration] (grower fit): run on the geometry's K and C; "
            "the file is left as it is"
        ),
    )
    add_crop_options(p)
    add_forecast_options(p, live_days=16)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    import sys

    from grower import house
    from grower.commands._options import (
        alarm_basis,
        check_house,
        choose_threshold,
        get_forecast,
        limit_days,
        reading_system,
        setpoints,
        start_time,
    )
    from grower.errors import InputError
    from grower.plans import stock
    from grower.report import common
    from grower.report import stock as report
    from grower.report.common import unit_system
    from grower.units import Note

    if args.days is not None:
        top = FILE_DAYS_MAX if args.forecast else 16
        if not 1 <= args.days <= top:
            what = "a forecast file" if args.forecast else "the live forecast"
            raise InputError(f"{args.days} must be within 1–{top} for {what}", where="--days")
    if args.low:
        raise InputError(
            "a cold spell needs a multi-day forecast: give --forecast FILE or use the live forecast",
            where="--low",
        )
    h = house.read(args.house)
    system = reading_system(args, [h])  # bare numbers are read in the report's units
    check_house(h, use_calibration=not args.no_calibration)
    setpoint, night = setpoints(args, h, system)
    crop, stage, choice, override = choose_threshold(args, system)
    alarm = choice.alarm_c if choice else override
    if alarm is not None:
        for value, option in ((setpoint, "--setpoint"), (night, "--night-setpoint")):
            if value is not None and value < alarm:
                what = f"{crop.name} ({stage.name})" if crop else "your --threshold"
                raise InputError(
                    Note(
                        f"{{value}} is below the alarm temperature of {what}, {{alarm}}",
                        value=("temp", value),
                        alarm=("temp", alarm),
                    ).text(unit_system(args.units, h.units)),
                    where=option,
                )
    if args.price is not None and not 0 <= args.price < float("inf"):
        raise InputError("must be zero or more", where="--price")
    if args.price is not None:
        from grower import limits

        limits.check(args.price, limits.PRICE, "--price")
    if not 0 <= args.lead_time <= 365:
        raise InputError(f"{args.lead_time:g} days must be within 0–365", where="--lead-time")
    from grower import fuels

    reserve = fuels.parse_fill(args.reserve, "--reserve")
    crop_alarm = None
    if alarm is not None:
        _, basis = alarm_basis(crop, stage, choice, override)
        crop_alarm = stock.CropAlarm(
            label=f"{crop.name} ({stage.name})" if crop else "your --threshold",
            alarm_c=alarm,
            damage_c=choice.damage_c if choice else None,
            margin_k=choice.margin_k if choice else 0.0,
            basis=basis,
        )
    forecast = get_forecast(args, h, days=args.days or 16)
    start = start_time(args, h, forecast)
    # a file too: at most --days (else FILE_DAYS_DEFAULT) days are run, so a file of
    # years of hours costs one read, not a long simulation
    forecast = limit_days(
        forecast,
        start,
        args.days or FILE_DAYS_DEFAULT,
        "--days"
        if args.days
        else f"{FILE_DAYS_DEFAULT} days, a file's default (--days up to {FILE_DAYS_MAX}):",
    )

    progress = None
    bar = None
    if sys.stderr.isatty() and not args.json:
        from rich.progress import Progress

        bar = Progress(transient=True, console=common.console(stderr=True))
        task = bar.add_task("simulating", total=None)
        bar.start()

        def progress(done: int, total: int) -> None:
            bar.update(task, completed=done, total=total)

    try:
        plan = stock.FuelPlan(
            fuel_name=args.fuel,
            on_hand_text=args.on_hand,
            fill_text=args.fill,
            price=args.price,
            unit=args.fuel_unit,
            reserve_pct=reserve,
            lead_time_days=args.lead_time,
        )
        result = stock.stock(
            h,
            forecast,
            stock.Setpoints(setpoint, night),
            plan,
            kind=args.model,
            start=start,
            use_calibration=not args.no_calibration,
            crop=crop_alarm,
            progress=progress,
        )
    finally:
        if bar is not None:
            bar.stop()
    if args.json:
        common.emit_json(report.stock_json(result))
        return 0
    report.render_stock(common.console(), result, common.unit_system(args.units, h.units))
    return 0
