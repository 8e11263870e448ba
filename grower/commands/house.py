"""`grower house FILE`: the envelope, conductances and heat capacity of a house."""

from __future__ import annotations

import argparse

from grower.commands import Subcommands


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "house",
        parents=[common],
        help="heat-loss breakdown of a house: areas, U-values, K, C and time constant",
        description=(
            "Show what a house file describes: each surface's area, cover and UA, air "
            "exchange, perimeter and sky radiation, the overall conductance K, the heat "
            "capacity C and the time constant C/K."
        ),
    )
    p.add_argument("files", nargs="+", metavar="FILE", help="house file(s) (TOML)")
    p.add_argument(
        "--wind",
        default="15 mph",
        metavar="V",
        help="wind speed, e.g. '5 m/s' or '0 mph' (default 15 mph, the wind the tables' "
        "U-values hold at; K in calm air is shown beside)",
    )
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from grower import house, network
    from grower.report import common
    from grower.report import house as report
    from grower.units import parse_quantity

    wind = parse_quantity(args.wind, "speed", where="--wind")
    if wind < 0:
        from grower.errors import InputError

        raise InputError("cannot be negative", where="--wind")
    summaries = [network.describe(house.read(f), wind_m_s=wind) for f in args.files]
    notes = [calibration_line(s.house) for s in summaries]
    if args.json:
        docs = [
            {**report.house_json(s), "calibration_note": None if n is None else n[0]}
            for s, n in zip(summaries, notes, strict=True)
        ]
        common.emit_json(docs[0] if len(docs) == 1 else {"houses": docs})
        return 0
    out = common.console()
    for s, n in zip(summaries, notes, strict=True):
        system = common.unit_system(args.units, s.house.units)
        report.render_house(out, s, system, n)
    return 0


def calibration_line(h) -> tuple[str, bool] | None:
    """What the house file's [calibration] holds and whether the plans use it (the
    breakdown above is the geometry's either way); True when it is a warning."""
    from grower.plans import model as hm

    if not h.calibration:
        return None
    kind = h.calibration.get("model")
    note = hm.calibration_note(h, kind if kind in ("lumped", "two-node") else "two-node")
    if note is None:
        return None
    warning = hm.calibration_warning(h)
    if warning is None and hm.calibration_of(h) is not None:
        note += " — the figures above are the geometry's; tonight, stock and size use the fit's"
    return note, warning is not None
