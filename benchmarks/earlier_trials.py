"""Cost of recomputing an idea's earlier trials in a catalogue run (for the SPA test and the
effective number of trials over every set the idea ever ran).

One idea of the invented demo desk (the two-average trend over eight markets, six sets) is run
through ``run_idea`` on the demo data: first alone, then after an earlier revision with a changed
signal (a one-day delay: six more trials, recomputed on the data). Prints min / median / max over
several repeats of each and the ratio of the medians. Not a test. Run:
.venv/bin/python benchmarks/earlier_trials.py
"""

from __future__ import annotations

import statistics
import tempfile
import time
from pathlib import Path

from hunchbook.catalogue import Catalogue
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.demo.rules import TREND
from hunchbook.services import run_idea
from hunchbook.store.vocab import CHECKLIST

REPEATS = 5
DELAYED = TREND.replace("[signal]\n", "[signal]\ndelay = 1\n", 1)


def one_run(folder: Path, data: Path, *, earlier: bool) -> float:
    """Seconds of one catalogue run of TREND (after a recorded delayed revision if asked)."""
    with Catalogue(folder / f"c{time.perf_counter_ns()}.sqlite") as cat:
        idea = cat.add_idea(title="Trend", hypothesis="Drift persists.", rationale="Slow news.",
                            rationale_kind="behavioural", submitted_by="Bench",
                            markets=["CORN"], stage="submitted")
        cat.save_rules(idea, TREND, by="Bench")
        cat.review(idea, reviewer="Lead", checklist=dict.fromkeys(CHECKLIST, True),
                   decision="accept", comments="ok")
        if earlier:
            run_idea(cat, idea, DELAYED, data, by="Bench", runner=InProcess(), spa_reps=1000)
        t0 = time.perf_counter()
        run_idea(cat, idea, TREND, data, by="Bench", runner=InProcess(), spa_reps=1000)
        return time.perf_counter() - t0


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        data = write_demo_data(folder / "data")
        results = {}
        for earlier in (False, True):
            times = [one_run(folder, data, earlier=earlier) for _ in range(REPEATS)]
            results[earlier] = statistics.median(times)
            label = "after 6 earlier trials" if earlier else "no earlier trials"
            print(f"{label:<24} min {min(times):.2f} s  median {statistics.median(times):.2f} s  "
                  f"max {max(times):.2f} s")
        print(f"ratio of medians: {results[True] / results[False]:.2f}")


if __name__ == "__main__":
    main()
