"""The catalogue commands of ``hunchbook``: ``ideas``, ``journal``, ``runs`` and ``catalogue``.

:func:`register` adds them to the main command's ``argparse`` subparsers. Every command takes
``--catalogue PATH`` (default: ``$HUNCHBOOK_CATALOGUE``, else ``catalogue.sqlite`` in the
user's data folder) and, where it writes, ``--by NAME`` (default: ``$HUNCHBOOK_USER``, else
the login name). Handlers return an exit status and raise ``HunchbookError`` for bad input.
"""

from __future__ import annotations

import argparse
import getpass
import json
import os
import sys
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

from hunchbook.core.formats import count, date, moment, plural
from hunchbook.core.verdict import VERDICTS
from hunchbook.store.entry_text import kind_label, sentence
from hunchbook.store.errors import CatalogueError, DamagedCatalogue
from hunchbook.store.vocab import (
    BY_AUTHOR,
    CHECKLIST,
    DECISION_LABELS,
    DECISION_WORDS,
    ENTRY_WORDS,
    RATIONALE_WORDS,
    SOURCE_WORDS,
    STAGE_WORDS,
    USER_ENTRY_WORDS,
)

if TYPE_CHECKING:  # the catalogue (and SQLite) is imported only when a command opens one
    from hunchbook.catalogue import Catalogue
    from hunchbook.store.records import Family, Idea, IdeaSummary

#: Environment variable naming the person who writes (default for ``--by``).
USER_ENV = "HUNCHBOOK_USER"

Handler = Callable[[argparse.Namespace], int]


def register(subparsers: Any) -> dict[str, Any]:
    """Add ``ideas``, ``journal``, ``runs`` and ``catalogue`` to an argparse subparsers object;
    return the command groups by name (other modules add commands to them)."""
    ideas = _group(subparsers, "ideas", "the idea catalogue: list, show, add, edit, move, "
                                        "review, promote, link, amend, pack, export and import "
                                        "ideas")
    _ideas(ideas)
    _journal(_group(subparsers, "journal", "the research journal: add, list and correct "
                                           "entries"))
    runs = _group(subparsers, "runs", "runs recorded against ideas")
    _command(runs, "list", "list recorded runs, newest last (pre-reg: whether each lies "
             "within the pre-registration frozen at the first run)", _runs_list,
             "hunchbook runs list --idea 7",
             lambda p: p.add_argument("--idea", type=int, metavar="ID", help="only this idea"))
    catalogue = _group(subparsers, "catalogue", "catalogue upkeep: backup, check, demo, desk "
                                                "settings")
    _catalogue(catalogue)
    return {"ideas": ideas, "runs": runs, "catalogue": catalogue}


def _group(subparsers: Any, name: str, help_text: str) -> Any:
    parser = subparsers.add_parser(name, help=help_text, description=help_text[0].upper()
                                   + help_text[1:] + ".")
    return parser.add_subparsers(dest=f"{name}_command", required=True, metavar="COMMAND")


def _command(group: Any, name: str, help_text: str, handler: Handler, example: str,
             arguments: Callable[[argparse.ArgumentParser], Any] | None = None, *,
             writes: bool = False) -> argparse.ArgumentParser:
    parser = group.add_parser(name, help=help_text, description=help_text[0].upper()
                              + help_text[1:] + ".", epilog=f"Example: {example}")
    if arguments is not None:
        arguments(parser)
    parser.add_argument("--catalogue", type=Path, metavar="PATH",
                        help="catalogue file (default: $HUNCHBOOK_CATALOGUE or the user data "
                             "folder)")
    if writes:
        parser.add_argument("--by", metavar="NAME",
                            help="who writes this (default: $HUNCHBOOK_USER or login name)")
    parser.set_defaults(handler=handler)
    return parser


def _ideas(group: Any) -> None:
    def list_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("--stage", type=STAGE_WORDS.parse, help=STAGE_WORDS.help())
        p.add_argument("--verdict", type=VERDICTS.parse,
                       help="last verdict: " + VERDICTS.help())
        p.add_argument("--market")
        p.add_argument("--tag")
        p.add_argument("--author", help="who submitted the idea")
        p.add_argument("--source", type=SOURCE_WORDS.parse, help=SOURCE_WORDS.help())
        p.add_argument("--search", metavar="WORDS",
                       help="full-text search of titles, hypotheses, rationales and journal")
        p.add_argument("--waiting-for-me", action="store_true",
                       help="only ideas whose next step is yours: submitted ideas others wrote "
                            "(your review), your returned ideas (your rework), your accepted "
                            "ideas (your run), tested ideas others wrote (promotion review)")
        p.add_argument("--by", metavar="NAME",
                       help="who 'me' is (default: $HUNCHBOOK_USER or login name)")
        p.add_argument("--limit", type=int, metavar="N")
        p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    _command(group, "list", "list ideas, most recently updated first", _ideas_list,
             "hunchbook ideas list --stage submitted --search carry", list_args)

    def show_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--json", action="store_true", help="print JSON instead of text")
    _command(group, "show", "show an idea with its revisions, runs, reviews and journal",
             _ideas_show, "hunchbook ideas show 7", show_args)

    def add_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("--title", required=True)
        p.add_argument("--hypothesis", required=True, help="one line")
        _idea_fields(p)
        p.add_argument("--submit", action="store_true",
                       help="submit for review at once (stage 'submitted')")
        p.add_argument("--rules", type=Path, metavar="RULEFILE",
                       help="keep this rule file as revision 1")
        p.add_argument("--variant-of", type=int, metavar="ID",
                       help="record it as a variant of this idea (its family's trials count "
                            "for its deflated Sharpe); needs --reason")
        p.add_argument("--reason", help="why it is a variant (with --variant-of)")
    _command(group, "add", "write a new idea down", _ideas_add,
             'hunchbook ideas add --title "Grain carry" --hypothesis "..." --markets CORN,SOYBEAN'
             " --rationale-kind risk_premium --by Nia", add_args, writes=True)

    def edit_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--title")
        p.add_argument("--hypothesis")
        _idea_fields(p)
        p.add_argument("--reviewer")
        p.add_argument("--reason", help="why (required to change frozen rationale or markets)")
    _command(group, "edit", "edit an idea's fields (journalled)", _ideas_edit,
             "hunchbook ideas edit 7 --tags carry,grains --by Nia", edit_args, writes=True)

    def stage_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("stage", type=STAGE_WORDS.parse, help=STAGE_WORDS.help())
        p.add_argument("--reason", required=True)
    _command(group, "stage", "move an idea to another stage (journalled with who and why)",
             _ideas_stage, 'hunchbook ideas stage 7 submitted --reason "ready" --by Nia',
             stage_args, writes=True)

    def review_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--decision", required=True, type=DECISION_WORDS.parse,
                       help=DECISION_WORDS.help() + " (or their keys: "
                       + ", ".join(DECISION_WORDS.keys) + ")")
        p.add_argument("--checked", default="", metavar="ITEM,...",
                       help="checklist items satisfied (others count as not): "
                            + ", ".join(CHECKLIST))
        p.add_argument("--comments", default="")
    _command(group, "review", "review a submitted idea: checklist, decision, comments",
             _ideas_review, "hunchbook ideas review 7 --decision accept --checked "
             + ",".join(CHECKLIST) + " --by Ines", review_args, writes=True)

    def rules_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("rules", type=Path, metavar="RULEFILE")
    _command(group, "rules", "keep a rule file as the idea's next revision", _ideas_rules,
             "hunchbook ideas rules 7 carry.toml --by Nia", rules_args, writes=True)

    def export_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("bundle", type=Path, metavar="BUNDLE")
        p.add_argument("--overwrite", action="store_true", help="replace an existing file")
    _command(group, "export", "write an idea and its history to a bundle file (zip of text)",
             _ideas_export, "hunchbook ideas export 7 grain-carry.zip", export_args)

    _command(group, "import", "import an idea bundle (never overwrites; conflicts reported)",
             _ideas_import, "hunchbook ideas import grain-carry.zip --by Ines",
             lambda p: p.add_argument("bundle", type=Path, metavar="BUNDLE"), writes=True)


def _idea_fields(p: argparse.ArgumentParser) -> None:
    p.add_argument("--rationale", help="why it should work (or use --rationale-file)")
    p.add_argument("--rationale-file", type=Path, metavar="PATH")
    p.add_argument("--rationale-kind", type=RATIONALE_WORDS.parse, help=RATIONALE_WORDS.help())
    p.add_argument("--source", type=SOURCE_WORDS.parse,
                   help="where the idea came from: " + SOURCE_WORDS.help())
    p.add_argument("--citation")
    p.add_argument("--link")
    p.add_argument("--markets", type=_names, metavar="A,B,...")
    p.add_argument("--tags", type=_names, metavar="a,b,...")


def _journal(group: Any) -> None:
    def add_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("text", help="the entry; '-' reads it from standard input")
        p.add_argument("--idea", type=int, metavar="ID", help="the idea (default: general)")
        p.add_argument("--kind", type=USER_ENTRY_WORDS.parse, default="note",
                       help=USER_ENTRY_WORDS.help())
    _command(group, "add", "append an entry to the journal", _journal_add,
             'hunchbook journal add --idea 7 "Roll dates look wrong in CORN" --by Theo',
             add_args, writes=True)

    def list_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("--idea", type=int, metavar="ID")
        p.add_argument("--kind", type=ENTRY_WORDS.parse, help=ENTRY_WORDS.help())
        p.add_argument("--limit", type=int, metavar="N", help="only the newest N")
    _command(group, "list", "list journal entries, oldest first", _journal_list,
             "hunchbook journal list --idea 7", list_args)

    def correct_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("entry", type=int, metavar="ENTRY")
        p.add_argument("text", help="the corrected text; '-' reads standard input")
    _command(group, "correct", "append a correction of an entry (entries never change)",
             _journal_correct, 'hunchbook journal correct 42 "CORN only, not SOYBEAN" --by Theo',
             correct_args, writes=True)


def _catalogue(group: Any) -> None:
    _command(group, "backup", "copy the catalogue with SQLite's online backup", _cat_backup,
             "hunchbook catalogue backup desk-2026-03-01.sqlite",
             lambda p: p.add_argument("destination", type=Path, metavar="PATH"))
    _command(group, "check", "check integrity, indexes and records (exit 1 on problems)",
             _cat_check, "hunchbook catalogue check")
    _command(group, "demo", "write the invented demo desk's catalogue to a new file", _cat_demo,
             "hunchbook catalogue demo build/demo-catalogue.sqlite",
             lambda p: p.add_argument("destination", type=Path, metavar="PATH"))


class HelpText(argparse.HelpFormatter):
    """Help text wrapped between words only: an example's long argument (a list of
    checklist items) moves whole to its own line instead of being cut mid-word."""

    def _fill_text(self, text: str, width: int, indent: str) -> str:
        import textwrap

        return textwrap.fill(" ".join(text.split()), width, initial_indent=indent,
                             subsequent_indent=indent + ("  " if text.startswith("Example:")
                                                         else ""),
                             break_long_words=False, break_on_hyphens=False)

    def _split_lines(self, text: str, width: int) -> list[str]:
        import textwrap

        return textwrap.wrap(" ".join(text.split()), width, break_long_words=False,
                             break_on_hyphens=False)


def use_help_text(parser: argparse.ArgumentParser) -> argparse.ArgumentParser:
    """Give ``parser`` and every parser below it :class:`HelpText`; return ``parser``."""
    parser.formatter_class = HelpText
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                use_help_text(sub)
    return parser


#: How other command modules (:mod:`hunchbook.cli_holdout`) add a group and a command.
group, command = _group, _command


# -- handlers ------------------------------------------------------------------------------
def open_catalogue(args: argparse.Namespace, *, create: bool = False,
                   read_only: bool = False) -> Catalogue:
    """The catalogue of ``--catalogue`` (or the default one, made by the first write).

    ``read_only`` for commands that only read: they never create or change a file.
    """
    from hunchbook.catalogue import Catalogue, default_catalogue_path

    path = args.catalogue
    if path is None:
        path = default_catalogue_path()
        if read_only and not path.exists():
            raise CatalogueError("no catalogue here yet: the first 'hunchbook ideas add' makes "
                                 "one (or give --catalogue PATH)", where=str(path))
        if not read_only:
            path.parent.mkdir(parents=True, exist_ok=True)
            create = True
    return Catalogue(path, create=create, read_only=read_only)


def _verdict_label(outcome: str | None) -> str:
    """The product label of a stored verdict outcome (older records may hold a label)."""
    return VERDICTS.label(outcome)


def author(args: argparse.Namespace) -> str:
    return args.by or os.environ.get(USER_ENV) or getpass.getuser()


def _ideas_list(args: argparse.Namespace) -> int:
    me = author(args) if args.waiting_for_me else None
    with open_catalogue(args, read_only=True) as cat:
        rows = cat.list_ideas(stage=args.stage, verdict=args.verdict, market=args.market,
                              tag=args.tag, author=args.author, source_kind=args.source,
                              text=args.search, waiting_for=me, limit=args.limit)
        steps = [cat.next_step(r.id, me) if me else None for r in rows]
    if args.json:
        print(json.dumps([{**_plain(r), **({"next_step": step} if me else {})}
                          for r, step in zip(rows, steps, strict=True)], indent=1))
        return 0
    headers = ["id", "stage", "verdict", "net SR", "trials", "author", "title"]
    table = [_summary_row(r) for r in rows]
    if me:
        headers.insert(2, "your next step")
        for row, step in zip(table, steps, strict=True):
            row.insert(2, step or "")
    print(_table(headers, table))
    print(plural(len(rows), "idea") + (f" waiting for {me}" if me else ""))
    return 0


def _summary_row(r: IdeaSummary) -> list[str]:
    sharpe = "" if r.last_net_sharpe is None else f"{r.last_net_sharpe:.2f}"
    return [str(r.id), STAGE_WORDS.label(r.stage), _verdict_label(r.last_verdict), sharpe,
            count(r.trial_count),
            r.submitted_by, r.title]


def _ideas_show(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        idea = cat.idea(args.idea)
        revisions, runs = cat.revisions(idea.id), cat.runs(idea.id)
        reviews, entries = cat.reviews(idea.id), cat.journal(idea.id)
        prereg = cat.preregistrations(idea.id)
        seen = cat.holdout_view(idea.id)
        family = cat.family(idea.id)
    if args.json:
        print(json.dumps({"idea": _plain(idea), "revisions": [_plain(r) for r in revisions],
                          "preregistrations": [_plain(p) for p in prereg],
                          "runs": [{**_plain(r), "result": r.result and r.result.to_dict(),
                                    "preregistration": _prereg_plain(r.preregistration)}
                                   for r in runs],
                          "reviews": [_plain(r) for r in reviews],
                          "journal": [_plain(e) for e in entries],
                          "holdout": None if seen is None else {
                              **_plain(seen), "boundary": seen.boundary.isoformat(),
                              "figures": seen.figures.to_dict()},
                          "family": {"trial_count": family.trial_count, "members": [
                              {**_plain(m), "depth": depth, "children": [
                                  c.id for c in m.children],
                               "link": m.link and _plain(m.link)}
                              for depth, m in family.members()]}}, indent=1))
        return 0
    print(_idea_text(idea))
    if len(family) > 1:
        print("\n" + "\n".join(family_lines(family)))
    if prereg:
        from hunchbook.core.prereg import describe_space

        print(f"Pre-registered {date(prereg[0].frozen_at)} (version {prereg[-1].version}): "
              f"markets {', '.join(prereg[-1].markets) or '(none)'}; parameter space "
              f"{describe_space(prereg[-1].parameter_space)}")
    print(f"\nRule revisions ({len(revisions)}):")
    for r in revisions:
        print(f"  {r.number}  {moment(r.saved_at)}  {r.saved_by}  sha256 {r.sha256[:12]}")
    print(f"\nRuns ({len(runs)}), trial count {count(idea.trial_count)}:")
    for run in runs:
        sharpe = "n/a" if run.chosen_net_sharpe is None else f"{run.chosen_net_sharpe:.2f}"
        print(f"  run {run.id}  {date(run.recorded_at)}  revision {run.revision_number}  "
              f"{plural(run.set_count, 'set')}  net SR {sharpe}  verdict "
              f"{_verdict_label(run.verdict_label)}")
        reasons = run.result.verdict.reasons if run.result else ()
        flag = prereg_flag(run.preregistration)
        print("      pre-registration: " + ("OUTSIDE (the verdict's warning below)"
                                            if flag in reasons else flag))
        for reason in reasons:
            print(f"      - {reason}")
        if run.result is not None and run.result.book is not None:
            from hunchbook.core.book_presenter import book_line

            print(f"      {book_line(run.result.book)}")
    if seen is not None:
        print(f"\nHoldout seen by {seen.seen_by} on {date(seen.seen_at)} (run {seen.run_id}): "
              + seen.figures.finding())
    print(f"\nReviews ({len(reviews)}):")
    for v in reviews:
        own = f" ({BY_AUTHOR})" if v.by_author else ""
        print(f"  {date(v.at)}  {v.reviewer}: {DECISION_LABELS.get(v.decision, v.decision)}"
              f"{own}. {v.comments}")
    print(f"\nJournal ({len(entries)}):")
    for e in entries:
        print(_entry_line(e))
    return 0


def family_lines(family: Family) -> list[str]:
    """The family as an indented tree: each member's id, title, stage, last verdict and own
    trials, the idea asked about marked."""
    lines = [f"Family ({plural(len(family), 'idea')}, {plural(family.trial_count, 'trial')} "
             "counted for each one's deflated Sharpe):"]
    for depth, m in family.members():
        mark = "*" if m.id == family.idea_id else " "
        verdict = _verdict_label(m.last_verdict) or "no run yet"
        lines.append(f" {mark}{'    ' * depth}{'└─ ' if depth else ''}{m.id}  {m.title}  "
                     f"[{m.stage}; {verdict}; {plural(m.own_trials, 'own trial')}]")
    return lines


def _idea_text(idea: Idea) -> str:
    lines = [f"Idea {idea.id}: {idea.title}", f"  hypothesis : {idea.hypothesis}",
             f"  stage      : {idea.stage}"
             + (f" (last verdict: {_verdict_label(idea.last_verdict)})"
                if idea.last_verdict else ""),
             f"  rationale  : [{RATIONALE_WORDS.label(idea.rationale_kind)}] "
             f"{idea.rationale or '(none yet)'}",
             f"  source     : {SOURCE_WORDS.label(idea.source_kind)}"
             + (f"; {idea.citation}" if idea.citation else "")
             + (f" <{idea.link}>" if idea.link else ""),
             f"  markets    : {', '.join(idea.markets) or '(none)'}",
             f"  tags       : {', '.join(idea.tags) or '(none)'}",
             f"  people     : submitted by {idea.submitted_by}; reviewer "
             f"{idea.reviewer or '(none yet)'}",
             f"  dates      : created {moment(idea.created_at)}, updated "
             f"{moment(idea.updated_at)}",
             f"  uuid       : {idea.uuid}"]
    return "\n".join(lines)


def _ideas_add(args: argparse.Namespace) -> int:
    fields = _given_fields(args)
    if (args.variant_of is None) != (args.reason is None):
        raise CatalogueError("--variant-of and --reason go together: say which idea it is a "
                             "variant of, and why", field="--variant-of")
    rules_text = _read_text(args.rules) if args.rules else None
    with open_catalogue(args, create=True) as cat, cat.transaction():
        idea_id = cat.add_idea(title=args.title, hypothesis=args.hypothesis,
                               submitted_by=author(args), **fields)
        if args.variant_of is not None:
            cat.set_variant_of(idea_id, args.variant_of, by=author(args), reason=args.reason)
        if rules_text is not None:
            cat.save_rules(idea_id, rules_text, by=author(args))
        if args.submit:
            cat.set_stage(idea_id, "submitted", by=author(args), reason="Submitted on creation.")
    print(f"Idea {idea_id} written down" + (" and submitted for review." if args.submit
                                             else " (draft).")
          + (f" It is a variant of idea {args.variant_of}." if args.variant_of else ""))
    return 0


def _given_fields(args: argparse.Namespace) -> dict[str, Any]:
    if args.rationale is not None and args.rationale_file is not None:
        raise CatalogueError("give --rationale or --rationale-file, not both")
    fields = {"rationale": args.rationale, "rationale_kind": args.rationale_kind,
              "source_kind": args.source, "citation": args.citation, "link": args.link,
              "markets": args.markets, "tags": args.tags}
    if args.rationale_file is not None:
        fields["rationale"] = _read_text(args.rationale_file)
    return {k: v for k, v in fields.items() if v is not None}


def _ideas_edit(args: argparse.Namespace) -> int:
    fields = _given_fields(args)
    fields.update({k: getattr(args, k) for k in ("title", "hypothesis", "reviewer")
                   if getattr(args, k) is not None})
    if not fields:
        raise CatalogueError("nothing to change: give at least one field option")
    with open_catalogue(args) as cat:
        before = cat.idea(args.idea)
        after = cat.update_idea(args.idea, by=author(args), reason=args.reason, **fields)
    print(f"Idea {after.id} " + ("unchanged." if after == before else "updated."))
    return 0


def _ideas_stage(args: argparse.Namespace) -> int:
    with open_catalogue(args) as cat:
        cat.set_stage(args.idea, args.stage, by=author(args), reason=args.reason)
    print(f"Idea {args.idea} is now '{args.stage}'.")
    return 0


def _ideas_review(args: argparse.Namespace) -> int:
    checked = _names(args.checked) if args.checked else []
    unknown = [c for c in checked if c not in CHECKLIST]
    if unknown:
        raise CatalogueError(f"unknown checklist item(s) {', '.join(unknown)}; items: "
                             f"{', '.join(CHECKLIST)}", field="--checked")
    with open_catalogue(args) as cat:
        review_id = cat.review(args.idea, reviewer=author(args),
                               checklist={k: k in checked for k in CHECKLIST},
                               decision=args.decision, comments=args.comments)
        stage = cat.idea(args.idea).stage
    print(f"Review {review_id} recorded; idea {args.idea} is now '{stage}'.")
    return 0


def _ideas_rules(args: argparse.Namespace) -> int:
    text = _read_text(args.rules)
    with open_catalogue(args) as cat:
        before = cat.latest_revision(args.idea)
        revision = cat.save_rules(args.idea, text, by=author(args))
    same = before is not None and before.id == revision.id
    print(f"Rule file {'unchanged since' if same else 'kept as'} revision {revision.number} "
          f"(sha256 {revision.sha256[:12]}).")
    return 0


def _ideas_export(args: argparse.Namespace) -> int:
    if args.bundle.exists() and not args.overwrite:
        raise CatalogueError("file exists; choose another name, or give --overwrite to replace "
                             "it", where=str(args.bundle))
    with open_catalogue(args, read_only=True) as cat:
        cat.export_bundle(args.idea, args.bundle, overwrite=args.overwrite)
    print(f"Idea {args.idea} written to {args.bundle}")
    return 0


def _ideas_import(args: argparse.Namespace) -> int:
    with open_catalogue(args, create=True) as cat:
        report = cat.import_bundle(args.bundle, by=author(args))
    verb = "created" if report.created else "already in the catalogue; appended to"
    added = ", ".join(_record_count(n, k) for k, n in report.added.items() if n) \
        or "nothing new"
    print(f"Idea {report.idea_id} {verb}: {added}.")
    for conflict in report.conflicts:
        print(f"  conflict: {conflict}")
    return 0


#: A bundle's kinds of record (``store.bundles.RECORD_KINDS``) as one record and as several.
_RECORD_WORDS = {"revisions": ("rule revision", "rule revisions"),
                 "preregistrations": ("pre-registration", "pre-registrations"),
                 "journal": ("journal entry", "journal entries"),
                 "reviews": ("review", "reviews"), "runs": ("run", "runs"),
                 "holdout": ("holdout unlocking", "holdout unlockings"),
                 "variant_link": ("variant link", "variant links")}


def _record_count(n: int, kind: str) -> str:
    """``1 review``, ``3 runs``, ``2 journal entries``: a count of a bundle's records."""
    one, many = _RECORD_WORDS.get(kind, (kind, kind))
    return plural(n, one, many)


def _journal_add(args: argparse.Namespace) -> int:
    text = sys.stdin.read() if args.text == "-" else args.text
    with open_catalogue(args) as cat:
        entry_id = cat.add_entry(idea_id=args.idea, kind=args.kind, text=text, by=author(args))
    print(f"Journal entry {entry_id} added.")
    return 0


def _journal_list(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        entries = cat.journal(args.idea, kind=args.kind, limit=args.limit)
    for e in entries:
        print(_entry_line(e))
    print(plural(len(entries), "entry", "entries"))
    return 0


def _entry_line(e: Any) -> str:
    about = f"idea {e.idea_id}" if e.idea_id is not None else "general"
    note = f" (corrects {e.corrects})" if e.corrects else ""
    note += f" [corrected by {e.corrected_by}]" if e.corrected_by else ""
    return (f"  #{e.id}  {moment(e.at)}  {about:>8}  {kind_label(e.kind):<16} {e.by}: "
            f"{sentence(e)}{note}")


def _journal_correct(args: argparse.Namespace) -> int:
    text = sys.stdin.read() if args.text == "-" else args.text
    with open_catalogue(args) as cat:
        entry_id = cat.correct_entry(args.entry, text, by=author(args))
    print(f"Correction {entry_id} appended to entry {args.entry}.")
    return 0


def _runs_list(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        runs = cat.runs(args.idea)
    rows = [[str(r.id), str(r.idea_id), date(r.recorded_at), str(r.revision_number),
             count(r.set_count), count(r.trial_count),
             "" if r.chosen_net_sharpe is None else f"{r.chosen_net_sharpe:.2f}",
             _verdict_label(r.verdict_label), _prereg_cell(r.preregistration), r.recorded_by]
            for r in runs]
    print(_table(["run", "idea", "date", "rev", "sets", "trials", "net SR", "verdict",
                  "pre-reg", "by"], rows))
    print(plural(len(runs), "run"))
    for r in runs:
        if r.preregistration is not None and not r.preregistration.within:
            print(f"run {r.id}: {r.preregistration.finding}")
    return 0


def prereg_flag(prereg: Any) -> str:
    """A run's place against its pre-registration in words."""
    if prereg is None:
        return "not checked (recorded without a pre-registration to check against)"
    if prereg.within:
        return f"within (version {prereg.version} in force)"
    return prereg.finding


def _prereg_cell(prereg: Any) -> str:
    return "?" if prereg is None else "within" if prereg.within else "OUTSIDE"


def _prereg_plain(prereg: Any) -> dict[str, Any] | None:
    if prereg is None:
        return None
    return {"version": prereg.version, "within": prereg.within,
            "scope": prereg.scope.to_dict(), "finding": prereg.finding}


def _cat_backup(args: argparse.Namespace) -> int:
    with open_catalogue(args, read_only=True) as cat:
        cat.backup(args.destination)
    print(f"Catalogue copied to {args.destination}")
    return 0


def _cat_check(args: argparse.Namespace) -> int:
    try:
        cat = open_catalogue(args, read_only=True)
    except DamagedCatalogue as exc:  # too damaged to open: that is the finding
        print(f"problem: {exc.problem}")
        print(f"{exc.where}: 1 problem")
        return 1
    with cat:
        problems = cat.check()
        version = cat.schema_version()
    for problem in problems:
        print(f"problem: {problem}")
    print(f"{cat.path}: schema version {version}; "
          + ("ok" if not problems else plural(len(problems), "problem")))
    return 1 if problems else 0


def _cat_demo(args: argparse.Namespace) -> int:
    from hunchbook.demo.build import demo_catalogue_copy

    path = demo_catalogue_copy(args.destination)
    print(f"Invented demo catalogue written to {path} (its runs were made on the invented "
          "demo data: hunchbook demo-data DIR writes it)")
    return 0


# -- small helpers -------------------------------------------------------------------------
def _names(text: str) -> list[str]:
    return [part.strip() for part in text.split(",") if part.strip()]


def _read_text(path: Path) -> str:
    try:
        return Path(path).read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise CatalogueError("not UTF-8 text", where=str(path)) from None
    except OSError as exc:
        raise CatalogueError(f"cannot read the file ({exc.strerror or exc})",
                             where=str(path)) from None


def _plain(record: Any) -> dict[str, Any]:
    fields = record._asdict() if isinstance(record, tuple) else dict(record.__dict__)
    return {k: v for k, v in fields.items() if k != "daily_pnl"}


def _table(headers: list[str], rows: list[list[str]]) -> str:
    widths = [max([len(h), *(len(r[i]) for r in rows)]) for i, h in enumerate(headers)]
    widths[-1] = len(headers[-1])  # the last column runs free
    lines = ["  ".join(h.ljust(w) for h, w in zip(headers, widths, strict=True)).rstrip()]
    lines += ["  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip()
              for r in rows]
    return "\n".join(lines)


#: How other command modules read comma-separated names and text files.
names, read_text = _names, _read_text
