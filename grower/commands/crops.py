"""`grower crops [QUERY]`: the crops grower knows, their stages, thresholds and sources."""

from __future__ import annotations

import argparse
from pathlib import Path

from grower.commands import Subcommands


def add_crops_dir_argument(parser: argparse.ArgumentParser) -> None:
    """The ``--crops-dir DIR`` option (any command that looks crops up can add it)."""
    from grower.crops import user_crops_dir

    parser.add_argument(
        "--crops-dir",
        type=Path,
        metavar="DIR",
        default=None,
        help=(
            "a directory of your own crop files (TOML, see crops/README.md); a crop there "
            "replaces a shipped one of the same name. Also read, if present: "
            f"{user_crops_dir()}"
        ),
    )


def register(subparsers: Subcommands, common: argparse.ArgumentParser) -> None:
    parser = subparsers.add_parser(
        "crops",
        parents=[common],
        help="list crops and their damage temperatures, with sources",
        description=(
            "List the crops grower knows. With QUERY, list those whose name or alias "
            "contains it; when QUERY names one crop (or CROP:STAGE), show its stages, "
            "damage, chilling and kill temperatures and the source of each."
        ),
    )
    parser.add_argument(
        "query",
        nargs="?",
        default=None,
        metavar="QUERY",
        help='a crop name, alias or part of one ("pepp", "tomatoes"), or CROP:STAGE',
    )
    add_crops_dir_argument(parser)
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    # imported here, not at start-up: `grower --help` stays quick
    from grower.crops import DEFAULT_MARGIN_K, MARGIN_BASIS, load_crops
    from grower.errors import InputError, did_you_mean
    from grower.report.common import emit_json, unit_system
    from grower.report.crops import crops_document, render_detail, render_list

    book = load_crops(args.crops_dir)
    system = unit_system(args.units)
    query = args.query.strip() if args.query else None
    stage = None
    if not query:
        crops, exact = book.crops, False
    elif ":" in query:
        crop, stage = book.resolve(query)
        crops, exact = (crop,), True
    elif (crop := book.get(query)) is not None:
        crops, exact = (crop,), True
    else:
        crops, exact = book.search(query), False
        if not crops:
            names = [c.name for c in book.crops] + [
                a.lower() for c in book.crops for a in c.aliases
            ]
            raise InputError(
                f'no crop matches "{query}"{did_you_mean(query.lower(), names)}; '
                "`grower crops` lists them all",
                where="crops",
            )
    if args.json:
        emit_json(
            crops_document(
                crops,
                query=query,
                exact=exact,
                margin_k=DEFAULT_MARGIN_K,
                margin_basis=MARGIN_BASIS,
                stage=stage,
            )
        )
    elif exact:
        render_detail(
            crops[0], system, margin_k=DEFAULT_MARGIN_K, margin_basis=MARGIN_BASIS, stage=stage
        )
    else:
        render_list(crops, system, query)
    return 0
