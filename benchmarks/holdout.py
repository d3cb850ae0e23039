"""Holdout speed on the invented demo data (eight markets, 2008-2025): what the holdout adds to a
quick run and what unlocking costs.

Timed: the default boundary of the data folder (every price file read for its dates: done once,
by a catalogue's first quick run); reading a rule file's markets with and without the cut at the
boundary, with the fingerprint of what was read; unlocking an idea (the in-sample data read again
for the fingerprint check, the chosen set run over the whole history, the figures and the
record).

Run: ``.venv/bin/python benchmarks/holdout.py [--repeats R]``. Prints min / median / max over the
repeats. Not a test: figures depend on the machine and on what else runs on it.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from timing import repeat_times  # noqa: E402

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.history import common_history, default_boundary
from hunchbook.core.prices import data_fingerprint, load_data
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.services import run_idea, unlock_holdout

RULES = """name = "Two-average trend across the book"
markets = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]

[parameters]
fast = [10, 20, 40]
slow = [120, 250]

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
"""
MARKETS = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]


def _show(label: str, seconds: list[float]) -> None:
    print(f"{label:<58} min {min(seconds):6.3f} s  median {statistics.median(seconds):6.3f} s"
          f"  max {max(seconds):6.3f} s")


def _unlock_time(folder: Path, data: Path, k: int) -> float:
    """Seconds to unlock a freshly run idea in a new catalogue."""
    with Catalogue(folder / f"desk{k}.sqlite") as cat:
        idea = cat.add_idea(title="Trend", hypothesis="h", submitted_by="B", stage="submitted")
        cat.save_rules(idea, RULES, by="B")
        cat.review(idea, reviewer="R", checklist=dict.fromkeys(CHECKLIST, True),
                   decision="accept", comments="")
        run_idea(cat, idea, RULES, data, by="B", runner=InProcess(), spa_reps=100)
        start = time.perf_counter()
        unlock_holdout(cat, idea, data, by="B")
        return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        data = write_demo_data(folder / "data")
        boundary = default_boundary(common_history(data))
        print(f"demo data 2008-2025, 8 markets; default boundary {boundary}")
        _show("default boundary (common history of every file)",
              repeat_times(lambda: default_boundary(common_history(data)), args.repeats))
        _show("read 8 markets, whole history, + fingerprint",
              repeat_times(lambda: data_fingerprint(load_data(data, MARKETS)), args.repeats))
        _show("read 8 markets, cut at the boundary, + fingerprint",
              repeat_times(lambda: data_fingerprint(load_data(data, MARKETS, before=boundary)),
                     args.repeats))
        _show("unlock an idea (6-set run's chosen set, 8 markets)",
              [_unlock_time(folder, data, k) for k in range(args.repeats)])


if __name__ == "__main__":
    main()
