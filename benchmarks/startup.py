"""Start-up time: importing the package, its API and its command line, and whole commands.

Prints (not a test; shared machines are noisy) min / median / max over several runs, each in a
fresh process:
- the import time of ``hunchbook``, ``hunchbook.api`` and ``hunchbook.cli``;
- the wall time of ``hunchbook --version``, ``hunchbook ideas list`` and ``hunchbook journal
  add`` on a temporary copy of the demo catalogue (target: each under 0.5 s).

Children run with bytecode caching on, as after a normal install, and one warm-up run each
(``--compile`` measures them compiling every module from source instead, as with
PYTHONDONTWRITEBYTECODE set). Run: .venv/bin/python benchmarks/startup.py [--runs N]
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


def child_env(compile_always: bool) -> dict[str, str]:
    """The children's environment: bytecode cached unless ``compile_always``."""
    env = dict(os.environ)
    if compile_always:
        env["PYTHONDONTWRITEBYTECODE"] = "1"
    else:
        env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


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
    parser.add_argument("--compile", action="store_true",
                        help="compile every module from source in each run (no bytecode cache)")
    options = parser.parse_args()
    env = child_env(options.compile)
    exe = str(Path(sys.executable).with_name("hunchbook"))
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, "
          f"{platform.python_implementation()} {platform.python_version()}; "
          f"{options.runs} runs each; bytecode {'not cached' if options.compile else 'cached'}")
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
        for module in MODULES:  # warm-up: writes the bytecode caches when they are on
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
