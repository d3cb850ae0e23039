"""A quick run from the window against the same run from the command line: 20 markets x 10,000
days x 1,000 sets of a two-average cross (the case of ``benchmarks/sweep.py``), recorded on an
accepted idea of a fresh catalogue each time.

Prints min / median / max over the repeats of:
(a) ``hunchbook run RULES --data DIR --idea 1 --catalogue C`` as a child process (interpreter
    start and imports included; no thread runs there, so its sweep workers are forked);
(b) the window's path: in this process, with a Qt application and a worker on Qt's thread
    pool, the quick-run worker (``RunIdeaWorker``, i.e. ``services.run_idea``) through a warm
    pool started beforehand; the first run is shown apart (it also imports the statistics);
(c) the window's old path for contrast: the same through ``LocalProcesses()`` (the sweep's
    default), which spawns fresh workers for every sweep because threads run here;
the part of (b) and (c) spent in the sweep, and the ratios of the medians (target: (b) / (a)
at most 1.2). The three paths take turns, so that all meet the same load of the machine.

Chunks carry back only their sets' figures and their part of the statistics (never daily
rows), so what crosses between processes is small. Inputs are generated (benchmark data
only). Not a test. Run:
``.venv/bin/python benchmarks/quick_run.py [--repeats R]``
"""

from __future__ import annotations

import argparse
import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from sweep import write_folder  # noqa: E402

from hunchbook.catalogue import CHECKLIST, Catalogue  # noqa: E402
from hunchbook.core.runners import LocalProcesses  # noqa: E402
from hunchbook.core.sweep import SweepRunner  # noqa: E402
from hunchbook.core.sweep_job import SweepJob  # noqa: E402
from hunchbook.core.warm_pool import WarmPool  # noqa: E402

BY = "Bench"


def base_catalogue(path: Path, rules: Path) -> int:
    """A catalogue with one accepted idea holding the rule file; returns its id."""
    with Catalogue(path) as cat:
        idea = cat.add_idea(title="Cross", hypothesis="Trends persist.", submitted_by=BY,
                            stage="submitted")
        cat.save_rules(idea, rules.read_text(), by=BY)
        cat.review(idea, reviewer="Lead", checklist=dict.fromkeys(CHECKLIST, True),
                   decision="accept", comments="ok")
    return idea


def timed(base: Path, work: Callable[[Path], None]) -> float:
    """Seconds of ``work(copy)`` on a fresh copy of the base catalogue."""
    copy = base.with_name(f"run{time.perf_counter_ns()}.sqlite")
    shutil.copyfile(base, copy)
    start = time.perf_counter()
    work(copy)
    return time.perf_counter() - start


def cli_run(rules: Path, data: Path, idea: int) -> Callable[[Path], None]:
    exe = Path(sys.executable).with_name("hunchbook")

    def work(catalogue: Path) -> None:
        proc = subprocess.run([str(exe), "run", str(rules), "--data", str(data), "--idea",
                               str(idea), "--catalogue", str(catalogue), "--by", BY],
                              capture_output=True, text=True)
        if proc.returncode:
            raise SystemExit(proc.stderr)

    return work


def window_run(rules: Path, data: Path, idea: int,
               runner: SweepRunner | None) -> Callable[[Path], None]:
    """The window's quick-run worker on Qt's thread pool, waited for."""
    from hunchbook.gui.workers import RunIdeaWorker

    text = rules.read_text()

    def work(catalogue: Path) -> None:
        worker = RunIdeaWorker(catalogue, idea, text, data, by=BY, runner=runner)
        failed: list[str] = []
        worker.signals.failed.connect(failed.append)
        worker.start()
        worker.done.wait()
        if failed:
            raise SystemExit(failed[0])

    return work


class TimedRunner:
    """A sweep runner that keeps the seconds each sweep took on another runner."""

    def __init__(self, runner: SweepRunner) -> None:
        self.runner = runner
        self.seconds: list[float] = []

    def run(self, job: SweepJob) -> None:
        start = time.perf_counter()
        self.runner.run(job)
        self.seconds.append(time.perf_counter() - start)


def show(label: str, times: list[float]) -> float:
    median = statistics.median(times)
    print(f"{label:<58} min {min(times):5.2f} s  median {median:5.2f} s  "
          f"max {max(times):5.2f} s")
    return median


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    repeats = parser.parse_args().repeats
    import numpy as np
    import pandas as pd
    from PySide6.QtCore import QCoreApplication, QRunnable, QThreadPool

    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, "
          f"{platform.python_implementation()} {platform.python_version()}, "
          f"numpy {np.__version__}, pandas {pd.__version__}")
    print("1,000 sets over 20 markets x 10,000 days, recorded on an idea (holdout: last 20 %)")
    app = QCoreApplication.instance() or QCoreApplication([])
    hold = threading.Event()

    class Bystander(QRunnable):  # a live thread of Qt's pool, as in the window
        def run(self) -> None:
            hold.wait()

    QThreadPool.globalInstance().start(Bystander())
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        rules = write_folder(folder)
        base = folder / "base.sqlite"
        idea = base_catalogue(base, rules)
        pool = WarmPool()
        sweeps = {"b": TimedRunner(pool), "c": TimedRunner(LocalProcesses())}
        paths = {"a": ("(a) `hunchbook run --idea` as a child process",
                       cli_run(rules, folder, idea)),
                 "b": ("(b) window, warm pool (started, one run made before)",
                       window_run(rules, folder, idea, sweeps["b"])),
                 "c": ("(c) window, old path (workers spawned per sweep)",
                       window_run(rules, folder, idea, sweeps["c"]))}
        with pool:
            start = time.perf_counter()
            pool.start()
            print(f"warm pool start (fork server and {pool.workers} workers; off the UI thread "
                  f"in the window): {time.perf_counter() - start:.2f} s")
            print(f"(b) first run (imports the statistics too): "
                  f"{timed(base, paths['b'][1]):.2f} s")
            sweeps["b"].seconds.clear()
            times: dict[str, list[float]] = {key: [] for key in paths}
            for _ in range(repeats):  # in turns, so that all three meet the same machine load
                for key, (_, work) in paths.items():
                    times[key].append(timed(base, work))
        medians = {key: show(label, times[key]) for key, (label, _) in paths.items()}
        for key, runner in sweeps.items():
            show(f"    ({key}) of which its sweep", runner.seconds)
    hold.set()
    QThreadPool.globalInstance().waitForDone()
    del app
    print(f"ratio (b) / (a): {medians['b'] / medians['a']:.2f} (target <= 1.20)")
    print(f"ratio (c) / (a): {medians['c'] / medians['a']:.2f}")


if __name__ == "__main__":
    main()
