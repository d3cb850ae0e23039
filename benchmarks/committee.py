"""The committee work's cost: checking a run against its pre-registration, comparing two runs,
and writing a review pack.

Prints (not a test; shared machines are noisy) min / median / max over several runs of:
- ``declared_sets`` (the sets a rule file declares, the quick run's check before any data is
  read) and ``run_scope`` (every set against a pre-registered space with a constraint) for
  grids of 1,000, 10,000 and 100,000 sets;
- ``compare_runs`` of the demo desk's two breakout runs;
- the review pack of that idea: reading it with its charts, the HTML, and the PDF (offscreen).

Run: .venv/bin/python benchmarks/committee.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import statistics
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


def timed(work: Callable[[], object], runs: int) -> list[float]:
    """Seconds of each of ``runs`` calls."""
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        work()
        times.append(time.perf_counter() - start)
    return times


def show(label: str, times: list[float]) -> None:
    print(f"{label:<58} min {min(times) * 1e3:8.1f} ms  median "
          f"{statistics.median(times) * 1e3:8.1f} ms  max {max(times) * 1e3:8.1f} ms")


def grid_rules(sets: int) -> str:
    """A rule file with about ``sets`` parameter sets before its constraint (two parameters;
    the constraint keeps about half)."""
    side = round(sets ** 0.5)
    return (f'name = "grid"\nmarkets = ["CRUDE"]\n[parameters]\nfast = {{ start = 1, stop = '
            f'{side}, step = 1 }}\nslow = {{ start = 1, stop = {side}, step = 1 }}\n'
            'constraint = "fast < slow"\n[signal]\nposition = "sign(close - mean(close, fast))"\n')


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    runs = parser.parse_args().runs

    from hunchbook.core.prereg import declared_sets, run_scope
    from hunchbook.core.rules import parse_rules
    from hunchbook.store.revisions import analyse

    for size in (1_000, 10_000, 100_000):
        text = grid_rules(size)
        rules = parse_rules(text)
        sets = declared_sets(rules)
        space = analyse(text)[2]
        show(f"declared_sets, {rules.grid_size():,} sets before the constraint",
             timed(lambda rules=rules: declared_sets(rules), runs))
        show(f"run_scope, {len(sets):,} sets against the same space",
             timed(lambda sets=sets, space=space: run_scope(
                 markets=["CRUDE"], parameter_sets=sets, registered_markets=["CRUDE"],
                 registered_space=space, version=1), runs))

    from PySide6.QtWidgets import QApplication

    app = QApplication.instance() or QApplication(["bench"])  # noqa: F841 (kept alive)
    from hunchbook.catalogue import Catalogue
    from hunchbook.core.compare import compare_runs
    from hunchbook.demo.build import demo_catalogue_copy
    from hunchbook.gui.review_pack import pack_from_catalogue, pack_html, write_pack_pdf

    with tempfile.TemporaryDirectory() as folder:
        cat = Catalogue(demo_catalogue_copy(Path(folder) / "demo.sqlite"), read_only=True)
        idea = next(i.id for i in cat.list_ideas() if i.title == "Channel midpoint breakout")
        first, wide = (cat.run(r.id) for r in cat.runs(idea))
        texts = [cat.revision(r.revision_id).text for r in (first, wide)]
        show("compare_runs, the demo's two breakout runs",
             timed(lambda: compare_runs(first.result, wide.result, *texts), runs))
        show("review pack read from the catalogue, charts drawn",
             timed(lambda: pack_from_catalogue(cat, idea), runs))
        pack = pack_from_catalogue(cat, idea)
        show("review pack HTML", timed(lambda: pack_html(pack), runs))
        pdf = Path(folder) / "pack.pdf"
        show("review pack PDF (offscreen)", timed(lambda: write_pack_pdf(pdf, pack), runs))
        cat.close()


if __name__ == "__main__":
    main()
