"""`grower fit HOUSE --log FILE.csv`: K and C of a house from its temperature record."""

from __future__ import annotations

import argparse

from grower.commands import Subcommands


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "fit",
        parents=[common],
        help="fit the house's conductance K and heat capacity C to a temperature-logger record",
        description=(
            "Fit the thermal model to a logger record of inside (and outside) temperature, "
            "with the heater's on/off state or power if logged. Reports each value with its "
            "95 % confidence interval beside the geometry's, the residual and a chart of "
            "measured against fitted; refuses a record that cannot pin the values down and "
            "says what to log. --write stores the fitted conductances in the house file's "
            "[calibration], which tonight, stock and size then use (format 2)."
        ),
        epilog="Exit status: 0 done; 2 bad input or a record that cannot be fitted.",
    )
    p.add_argument("house", metavar="HOUSE", help="house file (TOML)")
    p.add_argument(
        "--log",
        required=True,
        metavar="FILE",
        help="the logger's CSV export: time, inside temperature; optional outside, heater, sun",
    )
    p.add_argument(
        "--outside",
        metavar="FILE",
        help="outside temperature from a forecast/observation CSV (the forecast format)",
    )
    p.add_argument(
        "--weather-archive",
        action="store_true",
        help=(
            "fetch the site's past hourly weather (Open-Meteo's archive, cached) for the "
            "record's days and take from it what the record lacks: cloud cover, wind, sun "
            "(and the outside temperature only where the record has none); needs a [site]"
        ),
    )
    p.add_argument(
        "--model",
        choices=("auto", "lumped", "two-node"),
        default="auto",
        help="auto (default): two-node where the record identifies it, else lumped",
    )
    p.add_argument(
        "--anchor",
        choices=("auto", "geometry", "heater"),
        default="auto",
        help=(
            "what sets the scale of K when no heater power is logged: the heater's rating "
            "(with its on/off state; the default when the house file has a heater) or the "
            "geometry's K"
        ),
    )
    p.add_argument(
        "--with-days",
        action="store_true",
        help="fit daytime rows too, with a fitted sun-gain factor (needs the sun in W/m²)",
    )
    p.add_argument(
        "--column",
        action="append",
        default=[],
        metavar="ROLE=NAME",
        help="say which column is which: time, inside, outside, heater or sun (repeatable)",
    )
    order = p.add_mutually_exclusive_group()
    order.add_argument(
        "--day-first", action="store_true", help="dates like 05/11/2026 are 5 November"
    )
    order.add_argument(
        "--month-first", action="store_true", help="dates like 05/11/2026 are 11 May"
    )
    p.add_argument(
        "--write",
        action="store_true",
        help="store the fit in the house file's [calibration] (comments kept, backup made)",
    )
    p.add_argument(
        "--keep-rough",
        action="store_true",
        help=(
            "let --write store a rough fit (residual more than twice the sensor's noise); "
            "without it such a fit is shown but not stored"
        ),
    )
    p.set_defaults(run=run)


def columns_option(values: list[str]) -> dict[str, str]:
    """--column ROLE=NAME … as a dict."""
    from grower.errors import InputError
    from grower.logger import ROLES

    out: dict[str, str] = {}
    for v in values:
        role, sep, name = v.partition("=")
        role = role.strip().lower()
        if not sep or not name.strip():
            raise InputError(f'"{v}" is not ROLE=NAME (e.g. inside="Temp 1")', where="--column")
        if role not in ROLES:
            raise InputError(
                f'unknown role "{role}" (use one of {", ".join(ROLES)})', where="--column"
            )
        out[role] = name.strip()
    return out


def run(args: argparse.Namespace) -> int:
    from grower import house, logger, weather
    from grower.errors import InputError
    from grower.fit import fit_house, sensor, write_calibration
    from grower.report import common
    from grower.report import fit as report
    from grower.units import Note

    h = house.read(args.house)
    zone = h.site.timezone if h.site else None
    day_first = True if args.day_first else False if args.month_first else None
    record = logger.read_logger_csv(
        args.log, timezone=zone, columns=columns_option(args.column), day_first=day_first
    )
    record = logger.resample(record)  # 1-second readings: 5-minute means first
    if args.outside and args.weather_archive:
        raise InputError(
            "give --outside FILE or --weather-archive, not both (each gives the outside weather)",
            where="--weather-archive",
        )
    outside = weather.read_forecast_csv(args.outside, site=h.site) if args.outside else None
    if args.weather_archive:
        from grower.fit import archive

        outside = archive.for_record(h, record)
    result = fit_house(
        h,
        record,
        outside=outside,
        model=args.model,
        with_days=args.with_days,
        anchor=args.anchor,
        outside_fills=args.weather_archive,
    )
    if args.write and result.rough and not args.keep_rough:
        raise InputError(
            Note(
                "not written: the fit is rough (residual {rms} RMS, "
                f"{result.noise_ratio:.1f} times the sensor's noise of {{noise}}); "
                f"{sensor.LOG_MORE}, or add --keep-rough to store it anyway",
                rms=("delta", result.chosen.rms_k, 2),
                noise=("delta", result.noise_k, 2),
            ).text(common.unit_system(args.units, h.units)),
            where=args.house,
        )
    backup = write_calibration(args.house, result) if args.write else None
    written = None if backup is None else {"file": args.house, "backup": str(backup)}
    if args.json:
        common.emit_json(report.fit_json(result, written))
        return 0
    report.render_fit(common.console(), result, common.unit_system(args.units, h.units), written)
    return 0
