"""Desk-wide multiple testing: how many ideas the desk tested, and each promoted idea's Sharpe
ratio haircut for that number (Harvey & Liu 2015), as the ``hunchbook desk`` command and the
window's Desk dialog show it.

M is the number of **ideas** tested (ideas with at least one run), not of trials: the trials
within an idea are corrected for by that idea's own verdict (the deflated Sharpe ratio over its
trials, the SPA test), while this haircut corrects for the desk picking its promotions among
the ideas it tested. Each tested idea's latest run gives its annualised net Sharpe ratio and
history (days / 252 years), hence its p-value (:func:`hunchbook.core.stats.haircut.
sharpe_p_value`); a promoted idea is adjusted among the desk's M p-values. Ideas whose
p-value is unknown (a run without a Sharpe ratio) are drawn from the Harvey-Liu-Zhu model.
See docs/statistics.md, "Desk-wide multiple testing".
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from hunchbook.core.formats import pct, plural
from hunchbook.core.plain import json_safe
from hunchbook.core.stats.haircut import (
    DRAWS,
    METHOD_NAMES,
    MONTHS_PER_YEAR,
    Haircut,
    expected_false_promotions,
    sharpe_haircut,
    sharpe_p_value,
)
from hunchbook.core.verdict import CAUTION
from hunchbook.store.desk import DeskPeriod, DeskSummary, TestedIdea

if TYPE_CHECKING:
    from hunchbook.catalogue import Catalogue

#: What each figure means, in words a non-statistician can read (the command and the window).
EXPLANATIONS = (
    ("Ideas tested (M)", "The more ideas a desk tests, the more of them look good by luck "
     "alone, so each promoted idea's Sharpe ratio is cut back for every idea the desk tried."),
    ("Bonferroni", "Multiplies the chance that a result is a fluke by the number of ideas "
     "tested: the strictest cut."),
    ("Holm", "The same, step by step from the strongest idea down: never harsher than "
     "Bonferroni."),
    ("BHY", "Limits the share of promotions that are flukes instead of the chance of any "
     "fluke: milder when several ideas are strong, harsher when the others look like noise."),
    ("Haircut Sharpe", "The Sharpe ratio that is as convincing after the cut as the idea's "
     "own was before it; the haircut is the share of the Sharpe ratio taken away."),
    ("Expected false promotions", "How many of the promotions BHY expects to be flukes."),
)


@dataclass(frozen=True)
class PromotedHaircut:
    """A promoted idea and its haircut (None, with ``problem`` saying why, when its latest
    run has no Sharpe ratio or too short a history)."""

    idea: TestedIdea
    haircut: Haircut | None
    problem: str | None = None


@dataclass(frozen=True)
class DeskReport:
    """The desk's testing (``summary``) and its promoted ideas' haircuts.

    ``tests`` is M, the number of ideas tested; ``unknown`` how many of their p-values were
    not known and were drawn (``draws`` draws, ``seed``) from the Harvey-Liu-Zhu model;
    ``expected_false`` the expected number of false promotions under BHY (see
    :func:`hunchbook.core.stats.haircut.expected_false_promotions`).
    """

    summary: DeskSummary
    tests: int
    unknown: int
    promoted: tuple[PromotedHaircut, ...]
    expected_false: float
    draws: int
    seed: int

    def to_dict(self) -> dict[str, Any]:
        """JSON-safe dict of every figure, with the explanations and the caution line."""
        s = self.summary
        return json_safe({
            "period": s.period, "ideas_tested": self.tests, "runs": s.runs,
            "sets_run": s.sets_run, "trials": s.trials, "promotions": s.promotions,
            "unknown_p_values": self.unknown, "draws": self.draws, "seed": self.seed,
            "periods": [vars(p) for p in s.periods],
            "promoted": [{"idea": p.idea.idea_id, "title": p.idea.title, "stage": p.idea.stage,
                          "promoted_at": p.idea.promoted_at, "run": p.idea.run_id,
                          "days": p.idea.days, "years": p.idea.years,
                          "haircut": None if p.haircut is None else p.haircut.to_dict(),
                          "problem": p.problem} for p in self.promoted],
            "expected_false_promotions": self.expected_false,
            "explanations": dict(EXPLANATIONS), "caution": CAUTION})


def idea_p_value(idea: TestedIdea) -> float:
    """The two-sided p-value of a tested idea's latest net Sharpe ratio (NaN when unknown)."""
    years = idea.years
    if idea.net_sharpe is None or years is None or not math.isfinite(idea.net_sharpe) \
            or years * MONTHS_PER_YEAR <= 1:
        return math.nan
    return sharpe_p_value(idea.net_sharpe, years)


def desk_report(summary: DeskSummary, *, draws: int = DRAWS, seed: int = 0) -> DeskReport:
    """Haircut every promoted idea of ``summary`` for the number of ideas the desk tested."""
    p_values = {idea.idea_id: idea_p_value(idea) for idea in summary.ideas}
    tests = summary.tested
    promoted = []
    for idea in summary.promoted:
        if math.isnan(p_values[idea.idea_id]):
            promoted.append(PromotedHaircut(idea, None, "its latest run has no Sharpe ratio "
                                                        "or less than a month of history"))
            continue
        others = [p for key, p in p_values.items() if key != idea.idea_id]
        assert idea.net_sharpe is not None and idea.years is not None
        promoted.append(PromotedHaircut(idea, sharpe_haircut(
            idea.net_sharpe, idea.years, tests, others=others, draws=draws, seed=seed)))
    bhy = [p.haircut.bhy.p_value for p in promoted if p.haircut is not None]
    return DeskReport(summary=summary, tests=tests,
                      unknown=sum(math.isnan(p) for p in p_values.values()),
                      promoted=tuple(promoted), expected_false=expected_false_promotions(bhy),
                      draws=draws, seed=seed)


def load_desk_report(catalogue: Catalogue | str | os.PathLike[str], period: str = "year", *,
                     draws: int = DRAWS, seed: int = 0) -> DeskReport:
    """:func:`desk_report` of a catalogue, or of a catalogue file opened read-only (as a
    worker thread does: SQLite connections belong to their thread)."""
    from hunchbook.catalogue import Catalogue

    if isinstance(catalogue, Catalogue):
        return desk_report(catalogue.desk_summary(period), draws=draws, seed=seed)
    with Catalogue(catalogue, read_only=True) as opened:
        summary = opened.desk_summary(period)
    return desk_report(summary, draws=draws, seed=seed)


# -- text --------------------------------------------------------------------------------------
#: Column headers of the per-period table.
PERIOD_HEADERS = ("Period", "Ideas tested", "Runs", "Sets run", "New trials", "Promotions")
#: Column headers of the promoted ideas' table.
PROMOTED_HEADERS = ("Idea", "Years", "Net Sharpe", "p-value",
                    *(f"{METHOD_NAMES[m]} Sharpe" for m in ("bonferroni", "holm", "bhy")))


def period_cells(period: DeskPeriod) -> tuple[str, ...]:
    """A period's row of the per-period table."""
    return (period.period, f"{period.ideas_tested:,}", f"{period.runs:,}",
            f"{period.sets_run:,}", f"{period.new_trials:,}", f"{period.promotions:,}")


def total_cells(report: DeskReport) -> tuple[str, ...]:
    """The totals row of the per-period table."""
    s = report.summary
    return ("Total", f"{report.tests:,}", f"{s.runs:,}", f"{s.sets_run:,}", f"{s.trials:,}",
            f"{s.promotions:,}")


def promoted_cells(item: PromotedHaircut) -> tuple[str, ...]:
    """A promoted idea's row: title, years, net Sharpe, p-value, then each haircut Sharpe with
    its haircut (``0.61 (-26 %)``)."""
    idea, cut = item.idea, item.haircut
    name = f"{idea.idea_id} {idea.title}" + ("" if idea.stage == "promoted"
                                             else f" (now {idea.stage})")
    if cut is None:
        return (name, _num(idea.years, 1), _num(idea.net_sharpe), "n/a", "n/a", "n/a", "n/a")
    return (name, f"{cut.years:.1f}", f"{cut.sharpe:.2f}", _p(cut.p_value),
            *(f"{_num(a.sharpe)} ({_percent(a.haircut)})" for a in cut.adjustments))


def headline(report: DeskReport) -> str:
    """One sentence: ideas tested, trials, promotions."""
    s = report.summary
    return (f"The desk tested {plural(report.tests, 'idea')} in {plural(s.trials, 'trial')} "
            f"over {plural(s.runs, 'run')} and promoted {len(report.promoted):,} of them.")


def evidence_note(report: DeskReport) -> str:
    """Where the other tests' p-values come from."""
    if report.unknown == 0:
        return (f"Each promoted idea is adjusted among the p-values of the {report.tests:,} "
                "ideas tested (each idea's latest run: net Sharpe ratio over its history, "
                "Student t).")
    have = "has" if report.unknown == 1 else "have"
    return (f"{plural(report.unknown, 'tested idea')} {have} no Sharpe ratio: their p-values are "
            f"drawn from the Harvey-Liu-Zhu model (median of {report.draws:,} draws, seed "
            f"{report.seed}).")


def false_note(report: DeskReport) -> str:
    """The expected number of false promotions, as a sentence."""
    counted = sum(p.haircut is not None for p in report.promoted)
    if not counted:
        return "Expected false promotions under BHY: none to count (no promotion with a " \
               "Sharpe ratio)."
    return (f"Expected false promotions under BHY: {report.expected_false:.2f} of {counted:,} "
            "(the largest BHY p-value among them times the number of promotions).")


def format_desk(report: DeskReport) -> str:
    """The desk view as plain text (what ``hunchbook desk`` prints)."""
    s = report.summary
    lines = [headline(report), "", f"By {s.period}:",
             *_table(PERIOD_HEADERS, [period_cells(p) for p in s.periods]
                     + [total_cells(report)]), ""]
    if report.promoted:
        lines += [f"Promoted ideas, Sharpe ratio haircut for M = {report.tests:,} ideas tested "
                  "(haircut in brackets):",
                  *_table(PROMOTED_HEADERS, [promoted_cells(p) for p in report.promoted])]
        lines += [f"  {p.idea.idea_id}: {p.problem}" for p in report.promoted if p.problem]
    else:
        lines.append("No idea has been promoted yet: nothing to haircut.")
    lines += ["", evidence_note(report), false_note(report), "", "What they mean:"]
    lines += [f"  {name}: {text}" for name, text in EXPLANATIONS]
    lines += ["", "Harvey & Liu (2015), \"Backtesting\", Journal of Portfolio Management 42(1).",
              CAUTION]
    return "\n".join(lines)


def _table(headers: tuple[str, ...], rows: list[tuple[str, ...]]) -> list[str]:
    widths = [max([len(h), *(len(r[i]) for r in rows)]) for i, h in enumerate(headers)]
    def line(cells: tuple[str, ...]) -> str:
        return "  ".join(c.ljust(w) if i == 0 else c.rjust(w)
                         for i, (c, w) in enumerate(zip(cells, widths, strict=True))).rstrip()
    return [line(headers), *(line(r) for r in rows)]


def _num(value: float | None, digits: int = 2) -> str:
    return "n/a" if value is None or not math.isfinite(value) else f"{value:.{digits}f}"


def _p(value: float) -> str:
    return f"{value:.4f}" if value >= 1e-4 else f"{value:.1e}"


def _percent(value: float) -> str:
    """A haircut as a cut in whole percent (``-26 %``); one just below all of the Sharpe
    ratio reads ``cut > 99 %``, never ``-100 %``."""
    if not math.isfinite(value):
        return "n/a"
    text = pct(value, 0)
    if value == 0:
        return text
    return f"-{text}" if text[0].isdigit() else f"cut {text}"
