"""Commands that prepare an idea for its committee: ``hunchbook ideas amend`` (the
pre-registration, with a person's reason), ``hunchbook runs compare`` (two runs side by side),
``hunchbook runs show`` (one run in full, with its year-by-year and monthly returns) and
``hunchbook ideas pack`` (the review pack: HTML, and PDF).

They join the ``ideas`` and ``runs`` groups of :mod:`hunchbook.cli_catalogue` and take its
``--catalogue PATH`` and ``--by NAME``. The pack draws its charts with the window's code,
offscreen (``QT_QPA_PLATFORM=offscreen`` is set for it): no display is needed.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

from hunchbook.cli_catalogue import author, command, names, open_catalogue, read_text
from hunchbook.core import formats
from hunchbook.store.errors import CatalogueError

if TYPE_CHECKING:
    from hunchbook.core.compare import FigurePair, RunComparison

#: Narrowest label column of the comparison's tables.
LABEL_WIDTH = 34
#: Width of each value column.
VALUE_WIDTH = 13


def register(groups: dict[str, Any]) -> None:
    """Add ``ideas amend``, ``ideas pack`` and ``runs compare`` to the command groups of
    :func:`hunchbook.cli_catalogue.register`."""
    def amend_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--reason", required=True,
                       help="why the pre-registration changes, in your own words (a sentence; "
                            "'rule revision 3 saved' and the like are refused)")
        p.add_argument("--rules", type=Path, metavar="RULEFILE",
                       help="pre-register this rule file's parameter space (kept as the "
                            "idea's next revision)")
        p.add_argument("--markets", type=names, metavar="A,B,...",
                       help="the pre-registered markets from now on")
        p.add_argument("--rationale", help="the pre-registered rationale from now on")
    command(groups["ideas"], "amend", "amend an idea's pre-registration after testing began "
            "(markets, parameter space, rationale), with a reason typed by a person", _amend,
            'hunchbook ideas amend 7 --rules wider.toml --reason "the best length sat at the '
            'edge of the grid" --by Nia', amend_args, writes=True)

    def pack_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("idea", type=int, metavar="ID")
        p.add_argument("--html", type=Path, metavar="PATH", help="write the pack as HTML")
        p.add_argument("--pdf", type=Path, metavar="PATH", help="write the pack as PDF")
        p.add_argument("--run", type=int, metavar="RUN",
                       help="the run shown in full (default: the idea's latest)")
    command(groups["ideas"], "pack", "write an idea's review pack for a committee: rationale, "
            "pre-registration, reviews, runs, the chosen run in full and the journal",
            _pack, "hunchbook ideas pack 7 --html idea-7.html --pdf idea-7.pdf", pack_args)

    def compare_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("first", type=int, metavar="RUN_A")
        p.add_argument("second", type=int, metavar="RUN_B")
        p.add_argument("--context", type=int, default=3, metavar="N",
                       help="lines of context around each change of the rule files")
        p.add_argument("--json", action="store_true", help="print JSON instead of text")
    command(groups["runs"], "compare", "two runs side by side: figures, verdict checks and "
            "the line-by-line difference of their rule files", _compare,
            "hunchbook runs compare 2 3", compare_args)

    def show_args(p: argparse.ArgumentParser) -> None:
        p.add_argument("run", type=int, metavar="RUN")
        p.add_argument("--monthly", action="store_true",
                       help="also the chosen set's net returns month by month")
    command(groups["runs"], "show", "one recorded run in full: the chosen set's figures in "
            "currency and in % of capital, its year-by-year table, statistics and verdict",
            _show, "hunchbook runs show 3 --monthly", show_args)


# -- handlers ------------------------------------------------------------------------------
def _amend(args: argparse.Namespace) -> int:
    if args.rules is None and args.markets is None and args.rationale is None:
        raise CatalogueError("nothing to amend: give --rules, --markets or --rationale")
    text = read_text(args.rules) if args.rules is not None else None
    with open_catalogue(args) as cat:
        version = cat.amend_preregistration(args.idea, by=author(args), reason=args.reason,
                                            rationale=args.rationale, markets=args.markets,
                                            rule_text=text)
    print(f"Pre-registration of idea {args.idea} amended (version {version.version}); the "
          "reason is in the journal. Runs outside the first version carry a warning.")
    return 0


def _compare(args: argparse.Namespace) -> int:
    from hunchbook.core.compare import compare_runs, run_label

    with open_catalogue(args, read_only=True) as cat:
        runs = [cat.run(args.first), cat.run(args.second)]
        texts = [cat.revision(r.revision_id).text for r in runs]
        titles = [cat.idea(r.idea_id).title for r in runs]
    for run in runs:
        if run.result is None:
            raise CatalogueError(f"run {run.id} was recorded by an earlier version in another "
                                 "shape: it has no figures to compare; run the idea again",
                                 field="runs")
    names = (run_label(runs[0].id, runs[0].idea_id, runs[0].revision_number),
             run_label(runs[1].id, runs[1].idea_id, runs[1].revision_number))
    comparison = compare_runs(runs[0].result, runs[1].result, texts[0], texts[1],
                              names=names, context=max(args.context, 0))
    if args.json:
        print(json.dumps({"runs": [{"id": r.id, "idea": r.idea_id, "title": t,
                                    "revision": r.revision_number} for r, t in
                                   zip(runs, titles, strict=True)], **comparison.to_dict()},
                         indent=1))
        return 0
    print(comparison_text(comparison, titles))
    return 0


def _show(args: argparse.Namespace) -> int:
    from hunchbook.report import format_judgement, format_monthly, format_single

    with open_catalogue(args, read_only=True) as cat:
        run = cat.run(args.run)
    if run.result is None:
        raise CatalogueError(f"run {run.id} was recorded by an earlier version in another "
                             "shape: it has no figures to show; run the idea again",
                             field="runs")
    print(f"Run {run.id} of idea {run.idea_id} (rule revision {run.revision_number}), "
          f"{formats.moment(run.recorded_at)} by {run.recorded_by}")
    print(format_single(run.result))
    if args.monthly:
        from hunchbook.core.capital_figures import monthly_returns

        if run.daily_pnl is None or "net_pnl" not in run.daily_pnl:
            raise CatalogueError(f"run {run.id} kept no daily P&L: no monthly returns",
                                 field="runs")
        figures = run.result.capital
        print()
        print(format_monthly(run.result, monthly_returns(
            run.daily_pnl["net_pnl"], None if figures is None else figures.capital)))
    print()
    print(format_judgement(run.result))
    return 0


def _pack(args: argparse.Namespace) -> int:
    if args.html is None and args.pdf is None:
        raise CatalogueError("say where to write the pack: --html PATH and/or --pdf PATH")
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")  # charts are drawn, never shown
    from hunchbook.gui.review_pack import (
        ensure_application,
        pack_from_catalogue,
        write_pack_html,
        write_pack_pdf,
    )

    app = ensure_application()  # noqa: F841  (kept while the charts and the PDF are drawn)
    with open_catalogue(args, read_only=True) as cat:
        pack = pack_from_catalogue(cat, args.idea, run_id=args.run,
                                   prepared=dt.datetime.now(dt.UTC))
    if args.html is not None:
        write_pack_html(args.html, pack)
        print(f"Review pack of idea {args.idea} written to {args.html}")
    if args.pdf is not None:
        pages = write_pack_pdf(args.pdf, pack)
        print(f"Review pack of idea {args.idea} written to {args.pdf} ({pages} pages)")
    return 0


# -- text ----------------------------------------------------------------------------------
def comparison_text(comparison: RunComparison, titles: list[str]) -> str:
    """The comparison as the command line prints it."""
    a, b = comparison.names
    lines = [f"A: {a}  {titles[0]}", f"B: {b}  {titles[1]}",
             f"Verdict: A {comparison.labels[0]}; B {comparison.labels[1]}", "",
             "Chosen set over its whole history", *_figure_lines(comparison.performance), "",
             "How far to trust it (days all sets share)",
             *_figure_lines(comparison.statistics), "", "Verdict checks"]
    for pair in comparison.checks:
        lines.append(f"  {pair.name}")
        for side, check in (("A", pair.a), ("B", pair.b)):
            lines.append(f"    {side}: " + ("(no such check)" if check is None else
                                          f"{check.status:<5} {check.figure}: {check.finding}"))
    lines += ["", "Rule files"]
    if comparison.same_rules:
        lines.append("  the same text")
    lines += [d.unified() for d in comparison.diff]
    return "\n".join(lines)


def _figure_lines(pairs: tuple[FigurePair, ...]) -> list[str]:
    from hunchbook.core.presenter import format_value

    def cells(row: Any) -> tuple[str, str]:
        if row is None:
            return "", ""
        gross = "" if row.gross is None else format_value(row.gross, row.kind)
        return gross, format_value(row.net, row.kind)

    width = max([LABEL_WIDTH, *(len(p.label) + 2 for p in pairs)])
    head = "".join(f"{h:>{VALUE_WIDTH}}" for h in ("A gross", "A net", "B gross", "B net"))
    lines = [f"{'':<{width}}{head}"]
    for pair in pairs:
        values = (*cells(pair.a), *cells(pair.b))
        lines.append(f"{pair.label:<{width}}" + "".join(f"{v:>{VALUE_WIDTH}}" for v in values))
    return lines
