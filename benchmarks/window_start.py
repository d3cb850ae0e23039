"""Window speed: command to window shown with the demo catalogue, and idea-table model
operations on 10,000 ideas.

Run: ``.venv/bin/python benchmarks/window_start.py [--ideas N] [--repeats R]``.
Targets: window shown under 2 s after the command starts (a fresh interpreter, as a user's
``hunchbook --demo``); every model operation (reset, sort, filter) under 50 ms with a table
view attached. Prints the median of the repeats. Not a test: figures depend on the machine.
Without a display the offscreen platform is used.
"""

from __future__ import annotations

import argparse
import os
import random
import statistics
import subprocess
import sys
import time
from collections.abc import Callable

# The child reports when its window is on screen; the demo data is still being written then.
_CHILD = """
import time
from PySide6.QtCore import QCoreApplication
from hunchbook.gui.app import parse_args, start
session = start(parse_args(["--demo"]))
window = session.window
while not window.isVisible() or window.windowHandle() is None \\
        or not window.windowHandle().isExposed():
    QCoreApplication.processEvents()
QCoreApplication.processEvents()
print("shown", time.time(), flush=True)
session.wait_for_demo_data()
print("data", time.time(), flush=True)
window.keep_layout = False  # leave the user's saved window layout alone
window.close()
session.cleanup()
"""


def window_start(repeats: int) -> None:
    """Time ``hunchbook --demo`` from process start to window shown (and to data ready)."""
    env = dict(os.environ)
    if not env.get("DISPLAY") and not env.get("WAYLAND_DISPLAY"):
        env.setdefault("QT_QPA_PLATFORM", "offscreen")
    shown, ready = [], []
    for _ in range(repeats):
        began = time.time()
        out = subprocess.run([sys.executable, "-c", _CHILD], env=env, capture_output=True,
                             text=True, check=True).stdout
        stamps = dict(line.split() for line in out.splitlines() if line[:5] in ("shown", "data "))
        shown.append(float(stamps["shown"]) - began)
        ready.append(float(stamps["data"]) - began)
    print(f"hunchbook --demo: window shown after {statistics.median(shown):.2f} s "
          f"(target < 2 s; runs: {', '.join(f'{s:.2f}' for s in shown)})")
    print(f"  demo data written on a worker, ready after {statistics.median(ready):.2f} s")


def _ideas(n: int) -> list:
    from hunchbook.store.records import IdeaSummary
    from hunchbook.store.vocab import STAGES

    rng = random.Random(7)
    markets = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]
    outcomes = [None, "no_edge", "too_little_data", "lost_to_costs", "selection_luck", "passes"]
    people = ["Ines Marwood", "Theo Brackwater", "Nia Oduya-Fell", "Ada Quill"]
    tags = ["trend", "carry", "reversion", "seasonal", "flow"]
    out = []
    for i in range(1, n + 1):
        verdict = rng.choice(outcomes)
        out.append(IdeaSummary(
            id=i, uuid=f"{i:032x}", title=f"Idea {rng.randrange(10**6):06d} on "
            f"{rng.choice(markets).lower()}", hypothesis="Prices drift after a shock.",
            stage=rng.choice(STAGES), submitted_by=rng.choice(people), reviewer=None,
            source_kind="own", markets=tuple(rng.sample(markets, rng.randint(1, 4))),
            tags=tuple(rng.sample(tags, rng.randint(0, 2))), last_verdict=verdict,
            last_net_sharpe=None if verdict is None else rng.gauss(0.3, 0.5),
            trial_count=0 if verdict is None else rng.randint(1, 60),
            updated_at=f"2025-{rng.randint(1, 12):02d}-{rng.randint(1, 28):02d}T10:00:00Z"))
    return out


def model_operations(n: int, repeats: int) -> None:
    """Time reset, sort and filter of the idea table with a view attached."""
    if not os.environ.get("DISPLAY"):
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import Qt
    from PySide6.QtWidgets import QApplication, QTableView

    from hunchbook.gui.models import IdeaSortProxy, IdeaTableModel

    app = QApplication.instance() or QApplication([])
    ideas = _ideas(n)
    model, proxy = IdeaTableModel(), IdeaSortProxy()
    proxy.setSourceModel(model)
    view = QTableView()
    view.setModel(proxy)
    view.resize(900, 700)
    view.show()
    model.set_ideas(ideas)
    app.processEvents()
    some_ids = [i.id for i in ideas[::3]]
    operations: list[tuple[str, Callable[[], None]]] = [
        ("reset (set 10,000 ideas)", lambda: model.set_ideas(ideas)),
        ("sort by title", lambda: proxy.sort(IdeaTableModel.TITLE, Qt.SortOrder.AscendingOrder)),
        ("sort by net Sharpe", lambda: proxy.sort(IdeaTableModel.SHARPE,
                                                  Qt.SortOrder.DescendingOrder)),
        ("sort by updated", lambda: proxy.sort(IdeaTableModel.UPDATED,
                                               Qt.SortOrder.DescendingOrder)),
        ("filter stage", lambda: proxy.set_filters(stage="tested")),
        ("filter market + tag", lambda: proxy.set_filters(market="GOLD", tag="trend")),
        ("filter search ids", lambda: proxy.set_filters(ids=some_ids)),
        ("clear filters", lambda: proxy.set_filters()),
        ("refresh one idea", lambda: model.update_idea(ideas[500]._replace(title="Zed"))),
    ]
    print(f"Idea table with {n:,} ideas (median of {repeats}, target < 50 ms):")
    for name, operation in operations:
        times = []
        for _ in range(repeats):
            began = time.perf_counter()
            operation()
            app.processEvents()  # the view's update is part of the cost
            times.append(time.perf_counter() - began)
        print(f"  {name:<26} {statistics.median(times) * 1000:7.1f} ms")
    view.close()


def main() -> int:
    """Run both benchmarks."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--ideas", type=int, default=10_000)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    window_start(max(1, args.repeats // 2))
    model_operations(args.ideas, args.repeats)
    return 0


if __name__ == "__main__":
    sys.exit(main())
