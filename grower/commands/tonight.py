"""`grower tonight HOUSE… --crop NAME`: tonight's frost risk with no heat."""

from __future__ import annotations

import argparse

from grower.commands import Subcommands
from grower.commands._options import add_crop_options, add_forecast_options, temperature

#: as grower.plans.chance (not imported here: `grower --help` stays light)
DEFAULT_DRAWS = 300
DEFAULT_SEED = 12


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "tonight",
        parents=[common],
        help="will the crop make it tonight with no heat? when, how cold, what heat holds it",
        description=(
            "If no heat is given tonight (heater failure, power cut, unheated tunnel): at "
            "what time the crop reaches its damage temperature, how cold it gets, and the "
            "heat that would hold it safe. The night runs from now (or --start) to two "
            "hours after sunrise."
        ),
        epilog=(
            "Exit status: 0 done (and, with --alert-status, safe); 2 bad input; with "
            "--alert-status, 3 when action is needed and the installed heater holds the alarm, "
            "4 when damage is expected even with the installed heat (the worst house counts)."
        ),
    )
    p.add_argument("houses", nargs="+", metavar="HOUSE", help="house file(s) (TOML)")
    add_crop_options(p)
    add_forecast_options(p)
    p.add_argument("--inside-now", metavar="T", help="inside air temperature measured now, e.g. 6C")
    p.add_argument("--soil-now", metavar="T", help="soil temperature at 5 cm measured now, e.g. 8C")
    p.add_argument(
        "--model",
        choices=("two-node", "lumped"),
        default="two-node",
        help="two-node: air + soil and water mass (default); lumped: one node, the handbook model",
    )
    p.add_argument(
        "--colder",
        default="2 K",
        metavar="DT",
        help="also show the night this much colder (default 2 K)",
    )
    p.add_argument(
        "--brief",
        action="store_true",
        help="print only the verdict lines: what to do, and the night with no heat",
    )
    g = p.add_argument_group(
        "chance of damage",
        "live: the forecast's own ensemble (Open-Meteo); from a file or --low: nights "
        "drawn from a published forecast error and the house's K spread",
    )
    g.add_argument(
        "--draws",
        metavar="N",
        default=str(DEFAULT_DRAWS),
        help=f"nights to draw for a file or --low, or when the live ensemble cannot be had "
        f"(default {DEFAULT_DRAWS}; 0 leaves the chance out)",
    )
    g.add_argument(
        "--seed",
        metavar="N",
        default=str(DEFAULT_SEED),
        help=f"seed of the drawn nights and K factors (default {DEFAULT_SEED}: the same "
        "answer every run)",
    )
    p.add_argument("--plot", metavar="FILE", help="write the chart as an image (.png or .svg)")
    p.add_argument(
        "--alert-status",
        action="store_true",
        help="graded exit status for cron jobs: 0 safe, 3 heat needed and the heater holds, "
        "4 damage expected even with the installed heat",
    )
    p.add_argument(
        "--no-calibration",
        action="store_true",
        help=(
            "ignore the house file's [calibration] (grower fit): run on the geometry's K and C; "
            "the file is left as it is"
        ),
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    import warnings

    from grower import house, limits
    from grower.commands._options import (
        alarm_basis,
        check_house,
        choose_threshold,
        difference,
        get_forecast,
        reading_system,
        start_time,
    )
    from grower.errors import EXIT_OK, InputError, InputNote
    from grower.plans import tonight
    from grower.report import common
    from grower.report import tonight as report

    if args.plot and len(args.houses) > 1:
        raise InputError("--plot takes one house", where="--plot")
    houses = [house.read(f) for f in args.houses]
    system = reading_system(args, houses)  # bare numbers are read in the report's units
    crop, stage, choice, override = choose_threshold(args, system)
    if choice is None and override is None:
        raise InputError(
            "say what to protect: --crop NAME (see `grower crops`) or --threshold T",
            where="grower tonight",
        )
    colder = difference(args.colder, "--colder", system)
    if not 0 < colder <= 15:
        raise InputError("must be between 0 and 15 K", where="--colder")
    inside = temperature(args.inside_now, "--inside-now", system, limits.INSIDE_AIR_C)
    soil = temperature(args.soil_now, "--soil-now", system, limits.SOIL_C)
    for h in houses:
        check_house(h, use_calibration=not args.no_calibration)
    draws, seed = _count(args.draws, "--draws", limits.DRAWS), _count(args.seed, "--seed")
    results = []
    for i, h in enumerate(houses):
        with warnings.catch_warnings():
            if i:  # a bare --low (--high, --dew-point) is read once for all: said once
                warnings.simplefilter("ignore", InputNote)
            forecast = get_forecast(args, h, houses=houses)
        start = start_time(args, h, forecast)
        members = _members(args, h, draws, seed)
        threshold, basis = alarm_basis(crop, stage, choice, override)
        alarm = tonight.Alarm(
            threshold_c=threshold,
            basis=basis,
            damage_c=choice.damage_c if choice else None,
            margin_k=choice.margin_k if choice else 0.0,
            crop=crop.name if crop else None,
            stage=stage.name if stage else None,
            crop_origin=(crop.path if crop and crop.origin == "user" else None),
            chill_c=choice.chill_c if choice else None,
            chill_hours=choice.chill_hours if choice else None,
        )
        results.append(
            tonight.tonight(
                h,
                forecast,
                alarm,
                tonight.Readings(inside_c=inside, soil_c=soil, start=start),
                kind=args.model,
                colder_by_k=colder,
                use_calibration=not args.no_calibration,
                members=members,
            )
        )
    if args.plot:
        report.write_image(args.plot, results[0], common.unit_system(args.units, houses[0].units))
    if args.json:
        docs = [report.tonight_json(r) for r in results]
        common.emit_json(docs[0] if len(docs) == 1 else {"houses": report.by_urgency(docs)})
    else:
        out = common.console()
        system = common.unit_system(args.units, houses[0].units)
        if args.brief:
            report.render_brief(out, results, system)
        elif len(results) > 1:
            report.render_summary(out, results, system)
        else:
            report.render_tonight(out, results[0], system)
    if args.alert_status:
        return max((r.exit_status for r in results), default=EXIT_OK)
    return EXIT_OK


def _count(text: str, option: str, bound=None) -> int:
    """A whole number from the command line (0 or more)."""
    from grower import limits
    from grower.errors import InputError

    try:
        value = int(str(text).strip().replace("_", "").replace(",", ""))
    except ValueError:
        raise InputError(f'"{text}" is not a whole number', where=option) from None
    if value < 0:
        raise InputError(f'"{text}" cannot be negative', where=option)
    if bound is not None and value != 0:  # 0: leave it out, said in the help
        limits.check(
            value, bound, option, shown=str(text), convert=lambda lo, hi: f"{lo:,.0f}…{hi:,.0f}"
        )
    if value >= 2**63:
        raise InputError(f'"{text}" is too large', where=option)
    return value


def _members(args: argparse.Namespace, house, draws: int, seed: int):
    """What the chance of damage runs: the live ensemble for a live forecast (drawn
    nights, with a note, when it cannot be had), drawn nights for a file or --low."""
    from grower.errors import InputError
    from grower.plans import chance

    if draws == 0:
        return None
    live = not args.forecast and not args.low
    if not live:
        return chance.Spec(draws=draws, seed=seed)
    try:
        ensemble = _live_ensemble(house.site, args.live_days)
    except InputError as exc:
        return chance.Spec(
            draws=draws, seed=seed, notes=(f"no ensemble: {exc}; the nights are drawn instead",)
        )
    notes = ()
    if ensemble.stale:
        notes = ("the ensemble service could not be reached: its cached answer is used",)
    return chance.Spec(draws=draws, seed=seed, ensemble=ensemble, notes=notes)


#: the ensemble is a second opinion: wait for it less long than for the forecast [s]
ENSEMBLE_TIMEOUT_S = 5.0


def _live_ensemble(site, days: int):
    import sys

    from grower import weather

    if sys.stderr.isatty():
        from rich.console import Console

        with Console(stderr=True).status("fetching the ensemble…") as status:
            return weather.ensemble_forecasts(
                site,
                days=days,
                timeout=ENSEMBLE_TIMEOUT_S,
                status=lambda text: status.update(text),
            )
    return weather.ensemble_forecasts(site, days=days, timeout=ENSEMBLE_TIMEOUT_S)
