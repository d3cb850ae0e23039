"""Catalogue speed: 10,000 ideas and 100,000 journal entries; list, filter and search timed.

Run: ``.venv/bin/python benchmarks/catalogue.py [--ideas N] [--entries M] [--keep PATH]``.
Prints the time to build the catalogue through the public API, then min / median / max of 7
timings of each query (target: under 50 ms each): the lists, filters and searches, the idea
table's sorted and paged reads (ids in SQL order, one page of 200 lines, one idea's line
refreshed) and the runs of all ideas, parsed or as short lines. Not a test: figures depend on
the machine.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from tests.store.helpers import RULES, run_args  # noqa: E402  (the store tests' run records)

from hunchbook.catalogue import CHECKLIST, Catalogue

MARKETS = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]
PEOPLE = ["Ines Marwood", "Theo Brackwater", "Nia Oduya-Fell", "Ada Quill", "Rui Tamsin"]
TAGS = ["trend", "carry", "reversion", "seasonal", "flow", "calendar", "spread", "event"]
#: Desk words, each drawn 1 time in 100 (so a word like "backwardation" is in about a third
#: of the ideas); the other words come from 5,000 made-up ones.
WORDS = ["hedgers", "roll", "curve", "backwardation", "contango", "inventory", "momentum",
         "drift", "reversal", "storage", "harvest", "pension", "rebalancing", "volatility",
         "liquidity", "spread", "carry", "yield", "breakout", "channel", "average", "filter",
         "costs", "slippage", "tick", "calendar", "season", "weather", "crop", "report"]
FILLER = [f"x{k:04d}" for k in range(5_000)]
TARGET_MS = 50.0


def _text(rng: np.random.Generator, words: int) -> str:
    picks = [WORDS[int(rng.integers(len(WORDS)))] if rng.random() < 0.3
             else FILLER[int(rng.integers(len(FILLER)))] for _ in range(words)]
    return " ".join(picks) + f" w{rng.integers(0, 50_000)}"


def build(path: Path, ideas: int, entries: int, runs: int) -> dict[str, float]:
    """Fill a new catalogue through the public API (grouped in transactions of 1,000)."""
    rng = np.random.default_rng(7)
    timings = {}
    start = time.perf_counter()
    with Catalogue(path) as cat:
        for first in range(0, ideas, 1_000):
            with cat.transaction():
                for k in range(first, min(first + 1_000, ideas)):
                    cat.add_idea(title=f"Idea {k}: {_text(rng, 4)}", hypothesis=_text(rng, 10),
                                 rationale=_text(rng, 40), submitted_by=PEOPLE[k % 5],
                                 source_kind=("own", "paper", "book", "web", "colleague")[k % 5],
                                 markets=(["CORN", "SOYBEAN"] if k % 4 == 3 else
                                          list(rng.choice(MARKETS, 1 + k % 3, replace=False))),
                                 tags=[TAGS[k % 8]], stage="submitted" if k % 4 else "draft")
        timings["build ideas"] = time.perf_counter() - start
        start = time.perf_counter()
        ids = rng.integers(1, ideas + 1, entries)
        for first in range(0, entries, 5_000):
            with cat.transaction():
                for k in range(first, min(first + 5_000, entries)):
                    cat.add_entry(idea_id=int(ids[k]), kind="note", text=_text(rng, 25),
                                  by=PEOPLE[k % 5])
        timings["build journal"] = time.perf_counter() - start
        start = time.perf_counter()
        with cat.transaction():
            for idea in range(4, 4 + runs * 4, 4):  # submitted ideas (k % 4 != 0), on CORN
                author = cat.idea(idea).submitted_by
                cat.save_rules(idea, RULES, by=author)
                reviewer = next(p for p in PEOPLE if p != author)  # four eyes
                cat.review(idea, reviewer=reviewer, checklist=dict.fromkeys(CHECKLIST, True),
                           decision="accept", comments="ok")
                cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by=author,
                               **run_args([{"fast": 5.0, "slow": 50.0}], [float(rng.normal())],
                                          seed=idea, outcome=("passes", "no_edge")[idea // 4 % 2]))
        timings["build runs"] = time.perf_counter() - start
    return timings


def _time(action: Callable[[], object], repeats: int = 7) -> tuple[list[float], object]:
    result = action()  # warm the page cache once
    samples = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = action()
        samples.append((time.perf_counter() - start) * 1_000)
    return samples, result


def queries(path: Path) -> list[tuple[str, list[float], int]]:
    """Each query's times (ms) and row count, on a freshly opened catalogue."""
    with Catalogue(path, create=False) as cat:
        checks: list[tuple[str, Callable[[], list]]] = [
            ("list all ideas", lambda: cat.list_ideas()),
            ("list first 100 ideas", lambda: cat.list_ideas(limit=100)),
            ("filter stage=draft", lambda: cat.list_ideas(stage="draft")),
            ("filter market=COPPER", lambda: cat.list_ideas(market="COPPER")),
            ("filter tag=carry", lambda: cat.list_ideas(tag="carry")),
            ("filter author+source", lambda: cat.list_ideas(author="Ada Quill",
                                                            source_kind="book")),
            ("filter verdict=passes", lambda: cat.list_ideas(verdict="passes")),
            ("search one common word", lambda: cat.list_ideas(text="backwardation")),
            ("search two words", lambda: cat.list_ideas(text="harvest pension")),
            ("search rare word (journal)", lambda: cat.list_ideas(text="w12345")),
            ("search prefix + filters", lambda: cat.list_ideas(text="rebal", stage="submitted",
                                                               market="CORN")),
            ("search, first 50", lambda: cat.list_ideas(text="carry", limit=50)),
            ("journal of one idea", lambda: cat.journal(5_000)),
            ("journal newest 100", lambda: cat.journal(limit=100)),
            ("ids by title", lambda: cat.idea_ids(order="title")),
            ("ids by net Sharpe, ascending", lambda: cat.idea_ids(order="sharpe",
                                                                  descending=False)),
            ("ids by verdict label", lambda: cat.idea_ids(order="verdict")),
            ("ids, search + sort by trials", lambda: cat.idea_ids(text="backwardation",
                                                                  order="trials")),
            ("ids waiting for a person", lambda: cat.idea_ids(waiting_for="Ada Quill")),
            ("one page of 200 lines", lambda: cat.idea_summaries(page)),
            ("refresh one idea's line", lambda: cat.idea_ids(among=[5_000], stage="submitted")
             + cat.idea_summaries([5_000])),
            ("runs of all ideas (records)", lambda: cat.runs()),
            ("runs of all ideas (lines)", lambda: cat.run_lines()),
        ]
        page = cat.idea_ids(order="title")[4_000:4_200]
        return [(name, *_measure(action)) for name, action in checks]


def _measure(action: Callable[[], list]) -> tuple[list[float], int]:
    samples, rows = _time(action)
    return samples, len(rows)  # type: ignore[arg-type]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--ideas", type=int, default=10_000)
    parser.add_argument("--entries", type=int, default=100_000)
    parser.add_argument("--runs", type=int, default=500)
    parser.add_argument("--keep", type=Path, help="build the catalogue here and keep it")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        path = args.keep or Path(tmp) / "bench.sqlite"
        if not path.exists():
            for name, seconds in build(path, args.ideas, args.entries, args.runs).items():
                print(f"{name:<28}{seconds:8.1f} s")
        print(f"catalogue file: {path.stat().st_size / 1e6:.0f} MB; "
              f"{args.ideas:,} ideas, {args.entries:,} journal entries, {args.runs} runs")
        results = queries(path)
    worst = 0.0
    print(f"{'':<30}{'min':>8}{'median':>8}{'max':>8}")
    for name, samples, rows in results:
        ms = statistics.median(samples)
        worst = max(worst, ms)
        mark = "ok" if ms < TARGET_MS else "SLOW"
        print(f"{name:<30}{min(samples):8.1f}{ms:8.1f}{max(samples):8.1f} ms  {rows:>6} rows  "
              f"{mark}")
    print(f"slowest median: {worst:.1f} ms (target < {TARGET_MS:.0f} ms each)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
