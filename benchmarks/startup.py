"""Start-up time: importing the package, its API and its command line, and whole commands.

Prints (not a test; shared machines are noisy) min / median / max over several runs, each in a
fresh process:
- the import time of ``hunchbook``, ``hunchbook.api`` and ``hunchbook.cli``;
- the wall time of ``hunchbook --version``, ``hunchbook ideas list`` and ``hunchbook journal
  add`` on a temporary demo catalogue (target: each under 0.5 s).

Children run with bytecode caching on (as after a normal install, even where
PYTHONDONTWRITEBYTECODE is set) after one warm-up run each, so that compiling modules from
source is not counted. Run: .venv/bin/python benchmarks/startup.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

MODULES = ("hunchbook", "hunchbook.api", "hunchbook.cli")
TARGET_S = 0.5


def child_env() -> dict[str, str]:
    """The children's environment, with bytecode caching on."""
    return {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def import_seconds(module: str, env: dict[str, str]) -> float:
    """Seconds to import ``module`` in a fresh interpreter, timed inside it."""
    code = (f"import time; t = time.perf_counter(); import {module}; "
            "print(time.perf_counter() - t)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, env=env).stdout
    return float(out)


def command_seconds(argv: list[str], env: dict[str, str]) -> float:
    """Wall time of one whole command, process start to exit."""
    t0 = time.perf_counter()
    subprocess.run(argv, capture_output=True, check=True, env=env)
    return time.perf_counter() - t0


def summary(label: str, samples: list[float], target: float | None = None) -> str:
    """One line: min / median / max in seconds (and the target when there is one)."""
    line = (f"{label:<34} min {min(samples):5.3f}  median {statistics.median(samples):5.3f}  "
            f"max {max(samples):5.3f} s")
    return line + (f"  (target < {target} s)" if target else "")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="runs of each figure (default 7)")
    options = parser.parse_args()
    exe = str(Path(sys.executable).with_name("hunchbook"))
    env = child_env()
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, "
          f"{platform.python_implementation()} {platform.python_version()}; "
          f"{options.runs} runs each, in fresh processes")
    with tempfile.TemporaryDirectory() as tmp:
        catalogue = str(Path(tmp) / "demo.sqlite")
        subprocess.run([exe, "catalogue", "demo", catalogue], capture_output=True, check=True,
                       env=env)
        commands = {
            "hunchbook --version": [exe, "--version"],
            "hunchbook ideas list": [exe, "ideas", "list", "--catalogue", catalogue],
            "hunchbook journal add": [exe, "journal", "add", "--catalogue", catalogue,
                                      "--idea", "1", "--by", "Benchmark", "A timing note."],
        }
        for module in MODULES:  # warm-up: writes the bytecode caches
            import_seconds(module, env)
        for argv in commands.values():
            command_seconds(argv, env)
        for module in MODULES:
            samples = [import_seconds(module, env) for _ in range(options.runs)]
            print(summary(f"import {module}", samples))
        for label, argv in commands.items():
            samples = [command_seconds(argv, env) for _ in range(options.runs)]
            print(summary(label, samples, TARGET_S))


if __name__ == "__main__":
    main()
