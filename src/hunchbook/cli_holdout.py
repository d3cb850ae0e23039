"""The ``hunchbook holdout`` commands: show the catalogue's holdout boundary and which ideas have
seen their held-out years, set the boundary (with a reason), unlock an idea's holdout once.

Like the other catalogue commands they take ``--catalogue PATH`` and, where they write,
``--by NAME`` (see :mod:`hunchbook.cli_catalogue`). Unlocking asks for confirmation on the
terminal unless ``--yes`` is given.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path
from typing import Any

from hunchbook.cli_catalogue import author, command, group, open_catalogue
from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError


def register(subparsers: Any) -> None:
    """Add ``holdout show|set|unlock`` to an argparse subparsers object."""
    holdout = group(subparsers, "holdout", "the held-out years: the catalogue's boundary, and "
                                           "each idea's one look at them")

    command(holdout, "show", "show the holdout boundary, who set it, and which ideas have "
            "seen their held-out years", _show, "hunchbook holdout show",
            lambda p: p.add_argument("--json", action="store_true",
                                     help="print JSON instead of text"))

    def set_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("date", metavar="DATE", help="the new boundary, YYYY-MM-DD: runs see "
                                                    "the dates before it")
        p.add_argument("--reason", required=True, help="why the boundary moves (journalled)")
    command(holdout, "set", "set the catalogue's holdout boundary (journalled with the "
            "reason)", _set, 'hunchbook holdout set 2021-01-04 --reason "keep five years '
            'out" --by Ines', set_args, writes=True)

    def unlock_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="IDEA")
        p.add_argument("--data", required=True, type=Path, metavar="DIR",
                       help="the data folder the idea's latest run was made on")
        p.add_argument("--yes", action="store_true", help="do not ask for confirmation")
        p.add_argument("--json", metavar="PATH", type=Path,
                       help="write the held-out figures as JSON")
    command(holdout, "unlock", "run an idea's pre-registered chosen set once on its "
            "held-out years (journalled; once per idea)", _unlock,
            "hunchbook holdout unlock 7 --data build/demo-data --by Ines", unlock_args,
            writes=True)


def _show(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        settings = cat.holdout_boundaries()
        views = cat.holdout_views()
        titles = {v.idea_id: cat.idea(v.idea_id).title for v in views}
    if args.json:
        print(json.dumps({
            "boundary": settings[-1].boundary.isoformat() if settings else None,
            "settings": [{"boundary": s.boundary.isoformat(), "set_by": s.set_by,
                          "set_at": s.set_at, "reason": s.reason} for s in settings],
            "seen": [{"idea": v.idea_id, "title": titles[v.idea_id], "seen_by": v.seen_by,
                      "seen_at": v.seen_at, "run": v.run_id, "revision": v.revision_number,
                      "chosen_params": v.chosen_params, "figures": v.figures.to_dict()}
                     for v in views]}, indent=1))
        return 0
    if not settings:
        print("No holdout boundary yet: the first quick run sets the default (the last 20 % "
              "of the data folder's common history), or set one with 'hunchbook holdout set'.")
    else:
        now = settings[-1]
        print(f"Holdout boundary {now.boundary}: runs see the dates before it.")
        print(f"  set by {now.set_by} on {formats.date(now.set_at)}: {now.reason}")
        for old in reversed(settings[:-1]):
            print(f"  earlier: {old.boundary}, set by {old.set_by} on {formats.date(old.set_at)}: "
                  f"{old.reason}")
    print(f"\nIdeas that have seen their held-out years ({len(views)}):")
    for v in views:
        f = v.figures
        print(f"  idea {v.idea_id} {titles[v.idea_id]}: by {v.seen_by} on "
              f"{formats.date(v.seen_at)}, "
              f"run {v.run_id} (revision {v.revision_number}); net Sharpe in "
              f"{_num(f.in_sample_net_sharpe)}, out {_num(f.net_sharpe)}, consistency p "
              f"{_num(f.p_value, 3)}")
    return 0


def _set(args: argparse.Namespace) -> int:
    with open_catalogue(args) as cat:
        before = cat.holdout_boundary()
        after = cat.set_holdout_boundary(args.date, by=author(args), reason=args.reason)
    if before is not None and before.id == after.id:
        print(f"Holdout boundary unchanged: {after.boundary}.")
    else:
        print(f"Holdout boundary set to {after.boundary} (journalled).")
    return 0


def _unlock(args: argparse.Namespace) -> int:
    from hunchbook.report import format_holdout, format_holdout_plan
    from hunchbook.services import holdout_plan, unlock_holdout

    with open_catalogue(args) as cat:
        plan = holdout_plan(cat, args.idea, args.data)
        print(format_holdout_plan(plan, by=author(args)))
        if not args.yes and not _confirmed():
            print("Nothing unlocked.")
            return 1
        view = unlock_holdout(cat, args.idea, args.data, by=author(args))
    print(format_holdout(view))
    if args.json:
        from hunchbook.core.atomic import write_atomically

        payload = {"idea": view.idea_id, "run": view.run_id, "revision": view.revision_number,
                   "chosen_params": view.chosen_params, "seen_by": view.seen_by,
                   "seen_at": view.seen_at, "figures": view.figures.to_dict()}
        write_atomically(args.json, json.dumps(payload, indent=2, allow_nan=False).encode())
    return 0


def _confirmed() -> bool:
    if not sys.stdin.isatty():
        raise HunchbookError("unlocking asks for confirmation on a terminal; give --yes to "
                             "unlock without one")
    answer = input("Unlock it now? This can be done once for this idea. [y/N] ")
    return answer.strip().lower() in ("y", "yes")


def _num(value: float, digits: int = 2) -> str:
    return "n/a" if math.isnan(value) else f"{value:.{digits}f}"
