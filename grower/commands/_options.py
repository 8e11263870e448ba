"""Options and argument parsing shared by several commands."""

from __future__ import annotations

import argparse
import datetime as dt

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


def reading_system(args: argparse.Namespace, houses) -> str | None:
    """The unit system a bare command-line temperature is read in: the report's.

    ``--units``, else the house files' ``[site] units`` (None when the houses disagree:
    a bare number is then refused), else the locale's, as `report.common.unit_system`.
    """
    from grower.report.common import unit_system

    if getattr(args, "units", None):
        return args.units
    given = {h.units for h in houses if h.units}
    if len(given) > 1:
        return None
    return unit_system(None, given.pop() if given else None)


def _is_bare(text: str) -> bool:
    try:
        float(text.strip().replace("\u2212", "-"))
    except ValueError:
        return False
    return True


def _why(args: argparse.Namespace, system: str) -> str:
    if getattr(args, "units", None):
        return f"--units {system}"
    return "the report's units"


def temperature(
    text: str | None,
    option: str,
    system: str | None = "metric",
    bound=None,
    *,
    why: str = "the report's units",
) -> float | None:
    """A command-line temperature [°C]; a bare number is read in `system` and echoed.

    `bound` (a `grower.limits.Bound`) refuses an impossible value and warns of an
    unusual one, showing the range in the user's units.
    """
    from grower import limits
    from grower.errors import note
    from grower.units import c_to_f, parse_temperature

    if text is None:
        return None
    bare = _is_bare(text)
    if bare and system is None:
        raise InputError(
            f'"{text}" has no unit and the house files use different units; write {text}C or {text}F',
            where=option,
        )
    unit = "F" if system == "us" else "C"
    value = parse_temperature(text, where=option, bare=unit)
    if bare:
        note(
            f"{text} read as {text} °{unit} ({why}; write {text}C or {text}F to be explicit)",
            where=option,
        )
    if bound is not None:
        tail = text.strip().lower()
        shown_f = tail.endswith("f") or (bare and system == "us")

        def convert(lo: float, hi: float) -> str:
            if shown_f:
                return f"{c_to_f(lo):.0f}…{c_to_f(hi):.0f} °F".replace("-", "−")
            return f"{lo:g}…{hi:g} °C".replace("-", "−")

        limits.check(value, bound, option, shown=text, convert=convert)
    return value


def difference(
    text: str | None,
    option: str,
    system: str | None = "metric",
    bound=None,
    *,
    why: str = "the report's units",
) -> float | None:
    """A command-line temperature difference [K]; a bare number in `system` (K or °F)."""
    from grower import limits
    from grower.errors import note
    from grower.units import parse_temperature_difference

    if text is None:
        return None
    bare = _is_bare(text)
    if bare and system is None:
        raise InputError(
            f'"{text}" has no unit and the house files use different units; write {text}K or {text}F',
            where=option,
        )
    unit = "F" if system == "us" else "K"
    value = parse_temperature_difference(text, where=option, bare=unit)
    if bare:
        shown = "°F" if unit == "F" else "K"
        note(
            f"{text} read as {text} {shown} ({why}; write {text}K or {text}F to be explicit)",
            where=option,
        )
    if bound is not None:
        limits.check(value, bound, option, shown=text)
    return value


def choose_threshold(args: argparse.Namespace, system: str | None = "metric"):
    """(crop, stage, ThresholdChoice) from --crop/--threshold/--margin, or Nones.

    Bare numbers in --threshold and --margin are read in `system`.
    """
    from grower import crops, limits

    why = _why(args, system or "metric")
    override = temperature(args.threshold, "--threshold", system, limits.ALARM_C, why=why)
    margin = (
        crops.DEFAULT_MARGIN_K
        if args.margin is None
        else difference(args.margin, "--margin", system, why=why)
    )
    if margin < 0:
        raise InputError("cannot be negative", where="--margin")
    limits.check(margin, limits.MARGIN_K, "--margin", shown=args.margin or None)
    if not args.crop:
        return None, None, None, override
    crop, stage = crops.load_crop(args.crop, args.crops_dir)
    return crop, stage, crops.select_threshold(stage, margin, override), override


def alarm_basis(crop, stage, choice, override: float | None) -> tuple[float | None, str]:
    """The alarm [°C] and the words for where it comes from, as `choose_threshold` gave
    them (the one rule for tonight and stock)."""
    if choice is not None:
        basis = f"{crop.name} ({stage.name}): {choice.basis}"
        if override is not None:
            basis = f"your --threshold; {basis}"
        return choice.alarm_c, basis
    return override, "your --threshold"


def setpoints(args: argparse.Namespace, house, system: str | None) -> tuple[float, float | None]:
    """`--setpoint` and `--night-setpoint` [°C], each within `limits.SETPOINT_C` and below
    the house's vent temperature; the messages in the report's units."""
    from grower import limits
    from grower.report.common import unit_system
    from grower.units import Note

    shown = unit_system(getattr(args, "units", None), house.units)
    values = []
    for option in ("--setpoint", "--night-setpoint"):
        text = getattr(args, option[2:].replace("-", "_"))
        value = temperature(text, option, system, limits.SETPOINT_C)
        if value is not None and value >= house.vent_temperature_c:
            raise InputError(
                Note(
                    "{value} is not below the house's vent temperature ({vent})",
                    value=("temp", value),
                    vent=("temp", house.vent_temperature_c),
                ).text(shown),
                where=option,
            )
        values.append(value)
    return values[0], values[1]


def speed(text: str, option: str, system: str | None = "metric") -> float:
    """A command-line wind speed [m/s]; a bare number is read in `system` (m/s or mph,
    as the report's forecasts give it) and echoed, like a bare temperature."""
    from grower import limits
    from grower.errors import note
    from grower.units import parse_quantity

    if _is_bare(text):
        if system is None:
            raise InputError(
                f'"{text}" has no unit and the house files use different units; write {text} m/s or {text} mph',
                where=option,
            )
        unit = "mph" if system == "us" else "m/s"
        note(
            f"{text} read as {text} {unit} (the report's units; write the unit to be explicit)",
            where=option,
        )
        text = f"{text} {unit}"
    v = parse_quantity(text, "speed", where=option)
    if v < 0:
        raise InputError("cannot be negative", where=option)
    return limits.check(v, limits.WIND_M_S, option, shown=text)


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


def _parse_time(text: str, tz_name: str | None, option: str) -> dt.datetime:
    """An ISO 8601 time from the command line as an aware datetime; a time without a UTC
    offset is read in `tz_name` (in a clock change's repeated hour, the first of the two;
    an hour the change skips is refused). The standard library's parser, not pandas':
    `tonight --start` stays under its import floor."""
    import datetime as dt
    import zoneinfo

    from grower import limits

    clean = text.strip()
    clean = clean.replace(" ", "T", 1) if "T" not in clean else clean
    try:
        t = dt.datetime.fromisoformat(clean)
    except ValueError as exc:
        raise InputError(
            f'"{text}" is not an ISO 8601 time (e.g. 2026-12-03T18:00)', where=option
        ) from exc
    limits.check_year(t.year, option)
    if t.tzinfo is not None:
        return t
    if tz_name is None:
        raise InputError(
            f'"{text}" has no UTC offset and the house has no [site] time zone; add one, e.g. {text}-05:00',
            where=option,
        )
    zone = zoneinfo.ZoneInfo(tz_name)
    local = t.replace(tzinfo=zone, fold=0)  # fold 0: the first of a repeated hour
    if local.astimezone(dt.UTC).astimezone(zone).replace(tzinfo=None) != t:
        raise InputError(f'"{text}" does not exist in {tz_name} (a clock change)', where=option)
    return local


def start_time(args: argparse.Namespace, house, forecast):
    """The --start time as an aware datetime in the forecast's zone, or None (now)."""
    if not getattr(args, "start", None):
        return None
    tz = house.site.timezone if house.site else forecast.timezone
    return _parse_time(args.start, tz, "--start").astimezone(forecast.tz)


def get_forecast(args: argparse.Namespace, house, *, days: int | None = None, houses=None):
    """The forecast the options ask for: a file, a forecast low, or the live service.

    Bare numbers (``--low -4``) are read in the units of `houses`, the run's houses
    (default: this one): one number means one temperature for every house of the run,
    and it is refused when their units disagree."""
    import datetime as dt

    from grower import limits, weather
    from grower.units import parse_quantity

    site = house.site
    system = reading_system(args, houses if houses is not None else [house])
    why = _why(args, system or "metric")
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
        low = temperature(args.low, "--low", system, limits.OUTSIDE_AIR_C, why=why)
        high = temperature(args.high, "--high", system, limits.OUTSIDE_AIR_C, why=why)
        dew = temperature(args.dew_point, "--dew-point", system, limits.DEW_POINT_C, why=why)
        return weather.forecast_from_low(
            site,
            low,
            (start if start is not None else now),
            high_c=high,
            dew_point_c=dew,
            cloud_pct=cloud,
            wind_m_s=None if args.wind is None else speed(args.wind, "--wind", system),
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


def check_house(h, *, use_calibration: bool = True) -> None:
    """Checks of a house that need its model: a ``[calibration]`` against the geometry."""
    if use_calibration and h.calibration:
        from grower.house import check_calibration

        check_calibration(h)


def limit_days(forecast, start, days: int, option: str = "--days"):
    """The forecast cut to `days` days from the run's start (a file's rows beyond are
    dropped, said in the forecast's warnings), so a long file costs one read, not a
    long simulation. `start` None means now, or the file's first row when it begins
    later; one row either side of the window is kept for interpolation.
    """
    import datetime as dt

    import numpy as np

    utc = forecast.utc_s
    now = dt.datetime.now(forecast.tz).timestamp()
    begin = (
        start.timestamp() if start is not None else (now if utc[0] <= now <= utc[-1] else utc[0])
    )
    end = begin + days * 86400.0
    if utc[-1] <= end:
        return forecast
    last = int(np.searchsorted(utc, end, side="left"))  # first row at or after the end
    first = max(int(np.searchsorted(utc, begin, side="right")) - 1, 0)
    rows = last + 1 - first
    if rows < 2:
        return forecast
    label = f"{option} {days}:" if option == "--days" else option
    kept = f"{label} the forecast's {utc.size:,} rows cut to the {rows:,} of the {days} day(s) from the start"
    return forecast.between(first, last + 1, warnings=(*forecast.warnings, kept))
