"""UI-thread responsiveness during a quick run: the longest gap between ticks of a 10 ms timer
on the UI thread while a 447-set sweep over eight markets runs in the worker thread (the worst
case: no worker processes, so the sweep shares this process with the UI).

Run: ``.venv/bin/python benchmarks/ui_stall.py [--repeats R]``.
Target: longest gap under 100 ms. Prints min / median / max over the repeats (each on a fresh
window and a fresh copy of the demo catalogue). Not a test: figures depend on the machine and
on what else runs on it. Without a display the offscreen platform is used.
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

#: The sweep: 149 x 3 parameter sets over the eight demo markets.
HEAVY_RULES = """name = "Trend grid across the book"
markets = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]

[parameters]
fast = { start = 2, stop = 150, step = 1 }
slow = [60, 120, 250]

[signal]
position = "sign(ewm(close, fast) - ewm(close, slow))"
"""
#: The accepted demo idea the run is recorded on.
ACCEPTED_TITLE = "Ten-year note trend with a volatility filter"
#: Demo data window (as the window tests use).
START, END = "2015-01-02", "2018-12-31"


def one_run(catalogue: Path, data: Path) -> tuple[float, int]:
    """One quick run on a fresh window; returns (longest UI gap in seconds, ticks)."""
    from PySide6.QtCore import QEventLoop, QTimer

    from hunchbook.gui.main_window import MainWindow

    window = MainWindow(remember=False, keep_layout=False, processes=1, user="Benchmark")
    window.resize(1400, 900)
    window.open_catalogue(catalogue)
    window.set_data_folder(data)
    window.show()
    assert window.catalogue is not None
    idea = next(i.id for i in window.catalogue.list_ideas() if i.title == ACCEPTED_TITLE)
    window.select_idea(idea)
    window.rules.editor.set_text(HEAVY_RULES)
    ticks: list[float] = []
    timer = QTimer(window, interval=10)
    timer.timeout.connect(lambda: ticks.append(time.perf_counter()))
    loop = QEventLoop()
    outcome: list[str] = []
    window.runner.finished.connect(lambda _run: (outcome.append("ok"), loop.quit()))
    window.runner.failed.connect(lambda message: (outcome.append(message), loop.quit()))
    timer.start()
    if window.runner.start() is None:
        raise SystemExit(f"the quick run did not start: {window.last_error}")
    loop.exec()
    timer.stop()
    window.close()
    if outcome != ["ok"]:
        raise SystemExit(f"the quick run failed: {outcome}")
    gaps = [b - a for a, b in zip(ticks, ticks[1:], strict=False)]
    return max(gaps), len(ticks)


def main() -> int:
    """Build the demo catalogue and data once, then time the repeats."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    if not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"):
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtWidgets import QApplication

    from hunchbook.demo import write_demo_data
    from hunchbook.demo.catalogue import build_demo_catalogue

    app = QApplication.instance() or QApplication([])
    work = Path(tempfile.mkdtemp(prefix="hunchbook-ui-stall-"))
    try:
        original = build_demo_catalogue(work / "demo.sqlite")
        data = write_demo_data(work / "data", start=START, end=END)
        longest, counts = [], []
        for n in range(max(1, args.repeats)):
            catalogue = work / f"run-{n}.sqlite"
            shutil.copyfile(original, catalogue)
            gap, ticks = one_run(catalogue, data)
            longest.append(gap * 1000)
            counts.append(ticks)
            app.processEvents()
        print(f"Longest UI-thread gap during a 447-set quick run ({len(longest)} runs, "
              f"10 ms timer, target < 100 ms):")
        print(f"  min {min(longest):.0f} ms, median {statistics.median(longest):.0f} ms, "
              f"max {max(longest):.0f} ms  (runs: {', '.join(f'{g:.0f}' for g in longest)}; "
              f"median {statistics.median(counts):.0f} ticks per run)")
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
