"""The desk's commands: ``hunchbook ideas link`` (record an idea as a variant of another),
``hunchbook ideas promote`` (the promotion review), and ``hunchbook catalogue settings`` /
``hunchbook catalogue set`` (desk settings: ``one_person_desk`` on or off, the desk's
``capital``).

They are added to the ``ideas`` and ``catalogue`` groups of :mod:`hunchbook.cli_catalogue`
and take its ``--catalogue PATH`` and ``--by NAME``.
"""

from __future__ import annotations

import argparse
import json
from typing import Any

from hunchbook.cli_catalogue import author, command, family_lines, open_catalogue
from hunchbook.store.errors import CatalogueError
from hunchbook.store.setting_kinds import AMOUNT, ON_OFF, SettingValue
from hunchbook.store.vocab import DESK_SETTINGS, PROMOTION_CHECKLIST


def register(groups: dict[str, Any]) -> None:
    """Add ``link`` and ``promote`` to the ``ideas`` group and ``settings`` and ``set`` to
    the ``catalogue`` group (as returned by :func:`hunchbook.cli_catalogue.register`)."""
    ideas, catalogue = groups["ideas"], groups["catalogue"]

    def link_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--variant-of", type=int, required=True, metavar="PARENT",
                       help="the idea it is a variant of")
        p.add_argument("--reason", required=True, help="why it is a variant (journalled)")
    command(ideas, "link", "record an idea as a variant of another: from then on the family's "
            "trials all count for each member's deflated Sharpe (once per idea, never undone)",
            _link, 'hunchbook ideas link 12 --variant-of 7 --reason "same trend, other '
            'markets" --by Nia', link_args, writes=True)

    def promote_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--checked", default="", metavar="ITEM,...",
                       help="promotion checklist items satisfied (others count as not): "
                            + ", ".join(PROMOTION_CHECKLIST))
        p.add_argument("--comments", default="")
        p.add_argument("--decline", action="store_true",
                       help="decline the promotion (comments required; the idea stays tested)")
    command(ideas, "promote", "the promotion review of a tested idea, by someone other than "
            "its author: checklist, promote or decline, comments (journalled as a review)",
            _promote, "hunchbook ideas promote 7 --checked " + ",".join(PROMOTION_CHECKLIST)
            + ' --comments "held-out year holds up" --by Theo', promote_args, writes=True)

    command(catalogue, "settings", "show the desk settings in force and every change to them",
            _settings, "hunchbook catalogue settings",
            lambda p: p.add_argument("--json", action="store_true",
                                     help="print JSON instead of text"))

    def set_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("setting", choices=list(DESK_SETTINGS))
        p.add_argument("value", help="on or off for " + ", ".join(
            k for k, s in DESK_SETTINGS.items() if s.kind is ON_OFF) + "; a positive amount "
            "in the run currency (or none to unset it) for " + ", ".join(
            k for k, s in DESK_SETTINGS.items() if s.kind is AMOUNT))
        p.add_argument("--reason", required=True, help="why (journalled)")
    command(catalogue, "set", "change a desk setting (journalled with the reason): "
            "one_person_desk lets an author review their own ideas; capital is the amount a "
            "run's returns and drawdowns are measured against when its rule file gives none",
            _set, 'hunchbook catalogue set capital 1000000 --reason "the desk\'s allocation" '
            '--by Ines', set_args, writes=True)


def _link(args: argparse.Namespace) -> int:
    with open_catalogue(args) as cat:
        cat.set_variant_of(args.idea, args.variant_of, by=author(args), reason=args.reason)
        family = cat.family(args.idea)
    print(f"Idea {args.idea} is now a variant of idea {args.variant_of}.")
    print("\n".join(family_lines(family)))
    return 0


def _promote(args: argparse.Namespace) -> int:
    checked = [c.strip() for c in args.checked.split(",") if c.strip()]
    unknown = [c for c in checked if c not in PROMOTION_CHECKLIST]
    if unknown:
        raise CatalogueError(f"unknown promotion checklist item(s) {', '.join(unknown)}; items: "
                             f"{', '.join(PROMOTION_CHECKLIST)}", field="--checked")
    with open_catalogue(args) as cat:
        review_id = cat.review(args.idea, reviewer=author(args),
                               checklist={k: k in checked for k in PROMOTION_CHECKLIST},
                               decision="decline" if args.decline else "promote",
                               comments=args.comments)
        review = cat.reviews(args.idea)[-1]
        stage = cat.idea(args.idea).stage
    own = " It says so: one-person desk, reviewed by the author." if review.by_author else ""
    print(f"Promotion review {review_id} recorded; idea {args.idea} is now '{stage}'.{own}")
    return 0


def _settings(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        current = {key: cat.desk_setting(key) for key in DESK_SETTINGS}
        changes = cat.desk_settings()
    if args.json:
        print(json.dumps({"settings": current, "changes": [c.__dict__ for c in changes]},
                         indent=1))
        return 0
    for key, value in current.items():
        print(f"{key}: {_shown(key, value)}  ({DESK_SETTINGS[key].meaning})")
    for c in changes:
        print(f"  {c.set_at[:16].replace('T', ' ')}  {c.key} {_shown(c.key, c.value)} "
              f"by {c.set_by}: {c.reason}")
    return 0


def _set(args: argparse.Namespace) -> int:
    with open_catalogue(args) as cat:
        setting = cat.set_desk_setting(args.setting, args.value, by=author(args),
                                       reason=args.reason)
    print(f"{setting.key} is {_shown(setting.key, setting.value)} (set by {setting.set_by} on "
          f"{setting.set_at[:10]}).")
    return 0


def _shown(key: str, value: SettingValue) -> str:
    """A setting's value in words (``on``, ``1,000,000``, ``not set``)."""
    return DESK_SETTINGS[key].kind.show(value)
