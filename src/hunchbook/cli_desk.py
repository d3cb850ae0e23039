"""The ``hunchbook desk`` command: ideas tested, runs, trials and promotions per period, and
each promoted idea's Sharpe ratio haircut for the number of ideas tested (see
:mod:`hunchbook.desk`). Reads the catalogue only."""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from typing import Any

from hunchbook.cli_catalogue import open_catalogue
from hunchbook.store.desk import PERIODS


def register(subparsers: Any) -> None:
    """Add ``desk`` to an argparse subparsers object."""
    text = ("the desk's multiple testing: ideas tested, trials and promotions per period, and "
            "each promoted idea's Sharpe ratio haircut for the ideas tested")
    parser = subparsers.add_parser(
        "desk", help=text, description=text[0].upper() + text[1:] + " (Bonferroni, Holm and "
        "BHY, Harvey & Liu 2015).", epilog="Example: hunchbook desk --period quarter")
    parser.add_argument("--period", choices=PERIODS, default="year",
                        help="group by year, quarter or month (default: year)")
    parser.add_argument("--json", metavar="PATH", type=Path,
                        help="also write every figure as JSON")
    parser.add_argument("--catalogue", type=Path, metavar="PATH",
                        help="catalogue file (default: $HUNCHBOOK_CATALOGUE or the user data "
                             "folder)")
    parser.set_defaults(handler=_desk)


def _desk(args: argparse.Namespace) -> int:
    from hunchbook.core.atomic import write_atomically
    from hunchbook.desk import format_desk, load_desk_report

    with open_catalogue(args, read_only=True) as cat:
        report = load_desk_report(cat, args.period)
    print(format_desk(report))
    if args.json:
        write_atomically(args.json, json.dumps(report.to_dict(), indent=2,
                                               allow_nan=False).encode("utf-8"))
    return 0
