"""`grower size HOUSE --outside T`: the backup heater for a design-cold, windy, clear night."""

from __future__ import annotations

import argparse

from grower.commands import Subcommands
from grower.commands._options import add_crop_options, choose_threshold, speed, temperature


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "size",
        parents=[common],
        help="size a backup heater: output and nameplate input at a design night",
        description=(
            "Heat loss of a house at a design outside temperature, wind and a clear sky; "
            "the heater output and nameplate input that hold a temperature, a split into "
            "common unit sizes, the combustion-air opening and fuel per hour at full fire."
        ),
    )
    p.add_argument("house", metavar="HOUSE", help="house file (TOML)")
    p.add_argument(
        "--outside",
        required=True,
        metavar="T",
        help="design outside temperature, e.g. -25C or -13F",
    )
    p.add_argument("--wind", default="15 mph", metavar="V", help="design wind (default 15 mph)")
    p.add_argument("--hold", metavar="T", help="inside temperature to hold, e.g. 5C or 40F")
    add_crop_options(p)
    p.add_argument(
        "--fuel",
        metavar="KIND",
        help="propane, natural-gas, heating-oil, kerosene, electricity, wood-pellets",
    )
    p.add_argument(
        "--appliance", metavar="TYPE", help="heater type (default: the fuel's usual one)"
    )
    p.add_argument(
        "--safety-factor",
        type=float,
        default=None,
        metavar="F",
        help="output over heat loss (default 1.2)",
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
    from grower import house, limits
    from grower.commands._options import check_house, reading_system
    from grower.errors import InputError
    from grower.plans import model, size
    from grower.report import common
    from grower.report import size as report
    from grower.units import Note

    h = house.read(args.house)
    system = reading_system(args, [h])  # bare numbers are read in the report's units
    check_house(h, use_calibration=not args.no_calibration)
    outside = temperature(args.outside, "--outside", system, limits.OUTSIDE_AIR_C)
    wind = speed(args.wind, "--wind", system)
    crop, stage, choice, override = choose_threshold(args, system)
    hold = temperature(args.hold, "--hold", system, limits.HOLD_C)
    if hold is not None and (crop or override is not None):
        raise InputError("give --hold or --crop/--threshold, not both", where="grower size")
    if hold is not None:
        basis = "set with --hold"
    elif choice is not None or override is not None:
        alarm = choice.alarm_c if choice else override
        # on a clear design night leaves run below the air: hold the air that much warmer
        offset = model.LEAF_BELOW_AIR_CLEAR_K * h.roof_material.longwave_transmittance
        hold = alarm + offset
        what = f"{crop.name} ({stage.name})" if crop else "your threshold"
        if offset < 0.05:
            basis = Note(
                f"{what}: plants at {{alarm}} (the roof passes almost no thermal IR: leaves "
                "at air temperature)",
                alarm=("temp", alarm),
            )
        else:
            basis = Note(
                f"{what}: plants at {{alarm}}, air {{offset}} warmer "
                "(leaves run below the air on a clear night)",
                alarm=("temp", alarm),
                offset=("delta", offset),
            )
    else:
        raise InputError("say what to hold: --hold T, or --crop NAME", where="grower size")
    if hold <= outside:
        raise InputError(
            Note(
                "the temperature to hold ({hold}) is not above the design outside "
                "temperature ({outside})",
                hold=("temp", hold),
                outside=("temp", outside),
            ).text(common.unit_system(args.units, h.units)),
            where="--hold",
        )
    factor = size.SAFETY_FACTOR if args.safety_factor is None else args.safety_factor
    if not 1.0 <= factor <= 3.0:
        raise InputError(f"{factor:g} must be within 1–3", where="--safety-factor")
    result = size.size(
        h,
        design_outside_c=outside,
        hold_c=hold,
        hold_basis=basis,
        wind_m_s=wind,
        fuel_name=args.fuel,
        appliance_name=args.appliance,
        safety_factor=factor,
        use_calibration=not args.no_calibration,
    )
    if args.json:
        common.emit_json(report.size_json(result))
        return 0
    report.render_size(common.console(), result, common.unit_system(args.units, h.units))
    return 0
