"""Options and argument parsing shared by several commands."""

from __future__ import annotations

import argparse

from grower.errors import InputError


def add_crop_options(p: argparse.ArgumentParser, *, required: bool = False) -> None:
    g = p.add_argument_group("crop")
    g.add_argument(
        "--crop",
        metavar="NAME[:STAGE]",
        required=required,
        help="crop and optional stage, e.g. tomato or strawberry:open-blossom (see `grower crops`)",
    )
    g.add_argument(
        "--threshold",
        metavar="T",
        help="your own alarm temperature for the plants, e.g. 1C or 34F (replaces crop + margin)",
    )
    g.add_argument(
        "--margin",
        metavar="DT",
        default=None,
        help="safety margin above the crop's damage temperature (default 1 K), e.g. 2C or 3F",
    )
    g.add_argument("--crops-dir", metavar="DIR", help="a folder of your own crop files")


def temperature(text: str | None, option: str) -> float | None:
    from grower.units import parse_temperature

    return None if text is None else parse_temperature(text, where=option)


def choose_threshold(args: argparse.Namespace):
    """(crop, stage, ThresholdChoice) from --crop/--threshold/--margin, or Nones."""
    from grower import crops
    from grower.units import parse_temperature_difference

    override = temperature(args.threshold, "--threshold")
    margin = (
        crops.DEFAULT_MARGIN_K
        if args.margin is None
        else parse_temperature_difference(args.margin, where="--margin")
    )
    if margin < 0:
        raise InputError("cannot be negative", where="--margin")
    if not args.crop:
        return None, None, None, override
    crop, stage = crops.load_crop(args.crop, args.crops_dir)
    return crop, stage, crops.select_threshold(stage, margin, override), override


def speed(text: str, option: str) -> float:
    from grower.units import parse_quantity

    v = parse_quantity(text, "speed", where=option)
    if v < 0:
        raise InputError("cannot be negative", where=option)
    return v


def add_forecast_options(p: argparse.ArgumentParser, *, live_days: int = 3) -> None:
    g = p.add_argument_group(
        "forecast",
        "default: the live forecast for the house's [site] (Open-Meteo, cached for an hour)",
    )
    src = g.add_mutually_exclusive_group()
    src.add_argument("--forecast", metavar="FILE", help="an hourly forecast CSV (see README)")
    src.add_argument(
        "--low", metavar="T", help="tonight's forecast low, e.g. -4C; builds the night's curve"
    )
    g.add_argument(
        "--high", metavar="T", help="with --low: today's forecast high (default low + 10 K)"
    )
    g.add_argument("--dew-point", metavar="T", help="with --low: the dew point tonight")
    g.add_argument(
        "--cloud", metavar="PCT", help="with --low: cloud cover tonight, 0–100 %% (default clear)"
    )
    g.add_argument("--wind", metavar="V", help="with --low: wind tonight, e.g. 2 m/s or 5 mph")
    g.add_argument(
        "--start",
        metavar="TIME",
        help="start of the run, ISO 8601 (default now), e.g. 2026-12-03T18:00",
    )
    p.set_defaults(live_days=live_days)


def _parse_time(text: str, tz_name: str | None, option: str):
    import pandas as pd

    try:
        t = pd.Timestamp(text.replace(" ", "T", 1) if "T" not in text else text)
    except (ValueError, TypeError) as exc:
        raise InputError(
            f'"{text}" is not an ISO 8601 time (e.g. 2026-12-03T18:00)', where=option
        ) from exc
    if t.tzinfo is None:
        if tz_name is None:
            raise InputError(
                f'"{text}" has no UTC offset and the house has no [site] time zone; add one, e.g. {text}-05:00',
                where=option,
            )
        try:
            t = t.tz_localize(tz_name, ambiguous=True, nonexistent="raise")
        except Exception as exc:  # pytz/zoneinfo raise several types for a missing hour
            raise InputError(
                f'"{text}" does not exist in {tz_name} (a clock change)', where=option
            ) from exc
    return t


def start_time(args: argparse.Namespace, house, forecast):
    """The --start time as a tz-aware Timestamp in the forecast's zone, or None (now)."""
    if not getattr(args, "start", None):
        return None
    tz = house.site.timezone if house.site else forecast.timezone
    return _parse_time(args.start, tz, "--start").tz_convert(forecast.frame.index.tz)


def get_forecast(args: argparse.Namespace, house, *, days: int | None = None):
    """The forecast the options ask for: a file, a forecast low, or the live service."""
    import datetime as dt

    from grower import weather
    from grower.units import parse_quantity

    site = house.site
    extras = [o for o in ("high", "dew_point", "cloud", "wind") if getattr(args, o, None)]
    if args.forecast:
        if extras:
            raise InputError(
                f"--{extras[0].replace('_', '-')} goes with --low, not with a forecast file",
                where="grower",
            )
        return weather.read_forecast_csv(args.forecast, site=site)
    if args.low:
        if site is None:
            raise InputError(
                "--low needs a [site] (latitude, longitude, time zone) in the house file for sunrise and sunset",
                where=house.path,
            )
        start = _parse_time(args.start, site.timezone, "--start") if args.start else None
        now = dt.datetime.now(dt.UTC)
        cloud = (
            None
            if args.cloud is None
            else parse_quantity(args.cloud.rstrip("%"), "fraction", where="--cloud")
        )
        return weather.forecast_from_low(
            site,
            temperature(args.low, "--low"),
            (start.to_pydatetime() if start is not None else now),
            high_c=temperature(args.high, "--high"),
            dew_point_c=temperature(args.dew_point, "--dew-point"),
            cloud_pct=cloud,
            wind_m_s=None if args.wind is None else speed(args.wind, "--wind"),
            step_s=900.0,
        )
    if extras:
        raise InputError(f"--{extras[0].replace('_', '-')} goes with --low", where="grower")
    if site is None:
        raise InputError(
            "no forecast: give --forecast FILE or --low T, or add a [site] to the house file for the live forecast",
            where=house.path,
        )
    return live_forecast(site, days or args.live_days)


def live_forecast(site, days: int):
    """Fetch the live forecast with a spinner on the terminal."""
    import sys

    from grower import weather

    if sys.stderr.isatty():
        from rich.console import Console

        with Console(stderr=True).status("fetching the forecast…") as status:
            return weather.fetch_forecast(site, days=days, status=lambda text: status.update(text))
    return weather.fetch_forecast(site, days=days)
