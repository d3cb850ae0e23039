"""Window speed: command to window shown with the demo catalogue, and idea-table model
operations on 10,000 ideas.

Run: ``.venv/bin/python benchmarks/window_start.py [--ideas N] [--repeats R]``.
Targets: window shown under 1.5 s after the command starts (a fresh interpreter, as a user's
``hunchbook --demo``); every model operation (list, sort, filter, search, refresh one idea)
under 50 ms with a table view attached. Prints min / median / max of the repeats. Not a test:
figures depend on the machine. Without a display the offscreen platform is used.
"""

from __future__ import annotations

import argparse
import os
import random
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

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


def _spread(samples: list[float], unit: str = "s", scale: float = 1.0) -> str:
    values = [x * scale for x in samples]
    digits = 2 if unit == "s" else 1
    return (f"min {min(values):.{digits}f}  median {statistics.median(values):.{digits}f}  "
            f"max {max(values):.{digits}f} {unit}")


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
    print(f"hunchbook --demo, {repeats} runs (target: shown < 1.5 s)")
    print(f"  window shown               {_spread(shown)}")
    print(f"  demo desk open, idea shown {_spread(ready)}")


def model_operations(n: int, repeats: int) -> None:
    """Time the idea table over ``n`` ideas written through the catalogue (with a view)."""
    if not os.environ.get("DISPLAY"):
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import Qt
    from PySide6.QtWidgets import QApplication, QTableView

    from hunchbook.catalogue import Catalogue
    from hunchbook.gui.models import IdeaTableModel

    app = QApplication.instance() or QApplication([])
    with tempfile.TemporaryDirectory() as tmp:
        cat = Catalogue(Path(tmp) / "ideas.sqlite")
        _write_ideas(cat, n)
        model = IdeaTableModel()
        view = QTableView()
        view.setModel(model)
        view.setSortingEnabled(True)
        view.resize(900, 700)
        view.show()
        model.set_query(cat)
        app.processEvents()
        target = cat.idea_ids()[n // 2]
        cycle = iter(range(10**9))
        operations: list[tuple[str, Callable[[], None]]] = [
            ("list (first page)", lambda: model.set_query(cat)),
            ("next page (fetchMore)", lambda: model.fetchMore()),
            ("sort by title", lambda: model.sort(IdeaTableModel.TITLE,
                                                 Qt.SortOrder.AscendingOrder)),
            ("sort by net Sharpe", lambda: model.sort(IdeaTableModel.SHARPE,
                                                      Qt.SortOrder.DescendingOrder)),
            ("sort by verdict", lambda: model.sort(IdeaTableModel.VERDICT,
                                                   Qt.SortOrder.AscendingOrder)),
            ("sort by updated", lambda: model.sort(IdeaTableModel.UPDATED,
                                                   Qt.SortOrder.DescendingOrder)),
            ("filter stage", lambda: model.set_query(cat, stage="submitted")),
            ("filter market + tag", lambda: model.set_query(cat, market="GOLD", tag="trend")),
            ("search one word", lambda: model.set_query(cat, text="backwardation")),
            ("search two words + stage", lambda: model.set_query(cat, text="harvest pension",
                                                                  stage="submitted")),
            ("waiting for me", lambda: model.set_query(cat, waiting_for="Ada Quill")),
            ("clear filters", lambda: model.set_query(cat)),
            ("select idea in the middle", lambda: model.load_row(target)),
            ("refresh one idea", lambda: _refresh(cat, model, next(cycle))),
        ]
        print(f"Idea table over {n:,} ideas, {repeats} runs each (target < 50 ms):")
        for name, operation in operations:
            times = []
            for _ in range(repeats):
                began = time.perf_counter()
                operation()
                app.processEvents()  # the view's update is part of the cost
                times.append(time.perf_counter() - began)
            print(f"  {name:<27} {_spread(times, 'ms', 1000)}")
        view.close()
        cat.close()


def _write_ideas(cat: object, n: int) -> None:
    """``n`` ideas through the catalogue's API (one transaction per 1,000)."""
    rng = random.Random(7)
    markets = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]
    people = ["Ines Marwood", "Theo Brackwater", "Nia Oduya-Fell", "Ada Quill"]
    tags = ["trend", "carry", "reversion", "seasonal", "flow"]
    words = ["backwardation", "harvest", "pension", "storage", "momentum", "drift"]
    for first in range(0, n, 1_000):
        with cat.transaction():  # type: ignore[attr-defined]
            for _ in range(first, min(first + 1_000, n)):
                cat.add_idea(  # type: ignore[attr-defined]
                    title=f"Idea {rng.randrange(10**6):06d} on {rng.choice(markets).lower()}",
                    hypothesis=" ".join(rng.sample(words, 3)) + ".",
                    submitted_by=rng.choice(people), markets=rng.sample(markets, 2),
                    tags=rng.sample(tags, 1), stage=rng.choice(("draft", "submitted")))


def _refresh(cat: object, model: object, n: int) -> None:
    """Edit the tenth idea shown and refresh its row."""
    from hunchbook.gui.models import ID_ROLE

    idea_id = model.index(10, 0).data(ID_ROLE)  # type: ignore[attr-defined]
    cat.update_idea(idea_id, by="Ada Quill", title=f"Edited {n}")  # type: ignore[attr-defined]
    model.refresh_ideas([idea_id])  # type: ignore[attr-defined]


def main() -> int:
    """Run both benchmarks."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--ideas", type=int, default=10_000)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    window_start(args.repeats)
    model_operations(args.ideas, args.repeats)
    return 0


if __name__ == "__main__":
    sys.exit(main())
