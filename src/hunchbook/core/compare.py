"""Two runs side by side: their figures, their verdict checks and the difference of their rule
files, line by line.

The runs may be of one idea or of two. Figures come from the presenter's lists
(:mod:`hunchbook.core.presenter`), paired figure by figure, so a figure added there shows here
too; checks are paired by their key, in the order the first run lists them (checks only one
run has follow); the rule files are compared with :func:`difflib.unified_diff`.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from hunchbook.core.presenter import (
    CAPITAL_FIGURES,
    PERFORMANCE_FIGURES,
    STATISTIC_FIGURES,
    Figure,
    FigureRow,
    capital_applies,
    format_value,
)
from hunchbook.core.results import RunSummary
from hunchbook.core.verdict import Check

#: Lines of context around each change in the rule-file diff.
CONTEXT_LINES = 3
#: Kinds of diff line: the two file names, a hunk header, an unchanged, removed or added line.
DIFF_KINDS = ("file", "hunk", "same", "removed", "added")


@dataclass(frozen=True)
class FigurePair:
    """One figure of both runs (``a`` or ``b`` None when it does not apply to that run)."""

    label: str
    kind: str
    note: str
    a: FigureRow | None
    b: FigureRow | None


@dataclass(frozen=True)
class CheckPair:
    """One verdict check of both runs (None where a run has no such check)."""

    key: str
    name: str
    a: Check | None
    b: Check | None


@dataclass(frozen=True)
class DiffLine:
    """One line of the rule-file diff: its kind (:data:`DIFF_KINDS`) and text, without the
    ``+``/``-``/space prefix of a unified diff."""

    kind: str
    text: str

    def unified(self) -> str:
        """The line as :func:`difflib.unified_diff` writes it (without the line end)."""
        prefix = {"same": " ", "removed": "-", "added": "+"}.get(self.kind, "")
        return prefix + self.text


@dataclass(frozen=True)
class RunComparison:
    """Two runs side by side: ``names`` of the two, figures of the chosen set over its whole
    history (``performance``) and of the statistics (``statistics``), the verdicts' ``checks``
    and the rule files' ``diff`` (empty when the texts are the same)."""

    names: tuple[str, str]
    outcomes: tuple[str, str]
    labels: tuple[str, str]
    performance: tuple[FigurePair, ...]
    statistics: tuple[FigurePair, ...]
    checks: tuple[CheckPair, ...]
    diff: tuple[DiffLine, ...]

    @property
    def same_rules(self) -> bool:
        """Whether the two rule files are the same text."""
        return not self.diff

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON values (figures formatted as the tables show them, and raw)."""
        def figure(pair: FigurePair) -> dict[str, Any]:
            return {"label": pair.label, "kind": pair.kind,
                    "a": _row_dict(pair.a), "b": _row_dict(pair.b)}

        def check(c: Check | None) -> dict[str, str] | None:
            return None if c is None else {"status": c.status, "figure": c.figure,
                                           "finding": c.finding}

        return {"names": list(self.names), "outcomes": list(self.outcomes),
                "labels": list(self.labels),
                "performance": [figure(p) for p in self.performance],
                "statistics": [figure(p) for p in self.statistics],
                "checks": [{"key": p.key, "name": p.name, "a": check(p.a), "b": check(p.b)}
                           for p in self.checks],
                "diff": [d.unified() for d in self.diff]}


def run_label(run_id: int, idea_id: int, revision: int) -> str:
    """How a run is named in a comparison: ``run 3 (idea 2, rev 2)``."""
    return f"run {run_id} (idea {idea_id}, rev {revision})"


def compare_runs(a: RunSummary, b: RunSummary, rules_a: str, rules_b: str, *,
                 names: tuple[str, str] = ("run A", "run B"),
                 context: int = CONTEXT_LINES) -> RunComparison:
    """Compare two runs' records and the rule texts they ran (``names`` head the columns
    and name the files in the diff)."""
    currency = a.currency if a.currency == b.currency else f"{a.currency} / {b.currency}"
    return RunComparison(
        names=names, outcomes=(a.verdict.outcome, b.verdict.outcome),
        labels=(a.verdict.label, b.verdict.label),
        performance=_pairs(PERFORMANCE_FIGURES, a.chosen.performance, b.chosen.performance,
                           currency)
        + _pairs(CAPITAL_FIGURES, a.capital, b.capital, currency, applies=capital_applies),
        statistics=_pairs(STATISTIC_FIGURES, a.statistics, b.statistics),
        checks=check_pairs(a.verdict.checks, b.verdict.checks),
        diff=rule_diff(rules_a, rules_b, names, context=context))


def check_pairs(a: Sequence[Check], b: Sequence[Check]) -> tuple[CheckPair, ...]:
    """The checks of two verdicts paired by key: the first verdict's order, then the checks
    only the second has."""
    by_key_a = {c.key: c for c in a}
    by_key_b = {c.key: c for c in b}
    keys = list(dict.fromkeys([*by_key_a, *by_key_b]))
    return tuple(CheckPair(key, (by_key_a.get(key) or by_key_b[key]).name,
                           by_key_a.get(key), by_key_b.get(key)) for key in keys)


def rule_diff(text_a: str, text_b: str, names: tuple[str, str] = ("run A", "run B"), *,
              context: int = CONTEXT_LINES) -> tuple[DiffLine, ...]:
    """The unified diff of two rule texts as typed lines (empty when they are equal)."""
    lines = difflib.unified_diff(text_a.splitlines(), text_b.splitlines(), fromfile=names[0],
                                 tofile=names[1], n=context, lineterm="")
    out = []
    for i, line in enumerate(lines):
        if i < 2:  # the two file names
            out.append(DiffLine("file", line))
        elif line.startswith("@@"):
            out.append(DiffLine("hunk", line))
        else:
            kind = {"-": "removed", "+": "added"}.get(line[:1], "same")
            out.append(DiffLine(kind, line[1:]))
    return tuple(out)


def _pairs(figures: Sequence[Figure[Any]], a: Any, b: Any, currency: str = "", *,
           applies: Callable[[Figure[Any], Any], bool] = lambda f, r: f.applies(r)
           ) -> tuple[FigurePair, ...]:
    out = []
    for figure in figures:
        row_a = figure.row(a, currency) if applies(figure, a) else None
        row_b = figure.row(b, currency) if applies(figure, b) else None
        if row_a is None and row_b is None:
            continue
        labels = list(dict.fromkeys(r.label for r in (row_a, row_b) if r is not None))
        first = row_a or row_b
        assert first is not None
        out.append(FigurePair(" / ".join(labels), first.kind, first.note, row_a, row_b))
    return tuple(out)


def _row_dict(row: FigureRow | None) -> dict[str, Any] | None:
    if row is None:
        return None
    return {"gross": row.gross, "net": row.net,
            "gross_text": None if row.gross is None else format_value(row.gross, row.kind),
            "net_text": format_value(row.net, row.kind)}
