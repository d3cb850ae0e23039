"""How a whole sweep grows: with the sets (1,000, 10,000, 100,000 over 20 markets x 10,000
days) and with the markets (20 against 100 at 1,000 sets); and the estimate of a
177,000-set grid.

Prints, for each case, one whole ``hunchbook run`` (a child process): seconds, seconds per
1,000 sets, peak memory of the largest process, and the ratios to the 1,000-set, 20-market run
(targets: 100,000 sets under 2 GB of memory with time linear in the sets; 100 markets at most
5x the 20-market time). Not a test: shared machines are noisy; the load average is printed.
Inputs are generated (benchmark data only).
Run: .venv/bin/python benchmarks/sweep_scale.py [--skip-100k]
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from sweep import FAST, SLOW, machine, run_cli, write_folder  # noqa: E402

from hunchbook.api import Study  # noqa: E402

CASES = [  # label, markets, fast values, slow values
    ("1,000 sets, 20 markets", 20, FAST, SLOW),
    ("10,000 sets, 20 markets", 20, FAST, list(range(50, 550))),
    ("100,000 sets, 20 markets", 20, list(range(2, 202, 2)), list(range(50, 1050))),
    ("1,000 sets, 100 markets", 100, FAST, SLOW),
]


def main() -> None:
    skip = "--skip-100k" in sys.argv
    print(machine())
    base = None
    for label, markets, fast, slow in CASES:
        if skip and label.startswith("100,000"):
            continue
        with tempfile.TemporaryDirectory() as tmp:
            rules = write_folder(Path(tmp), markets=markets, fast=fast, slow=slow)
            seconds, peak = run_cli(rules, Path(tmp))
        sets = len(fast) * len(slow)
        per_k = seconds / sets * 1000
        base = base or (seconds, per_k)
        print(f"{label:<26} {seconds:8.1f} s  {per_k:6.2f} s per 1,000 sets  "
              f"peak {peak:6.0f} MB  time x{seconds / base[0]:6.1f}  "
              f"per-set time x{per_k / base[1]:5.2f}")
    with tempfile.TemporaryDirectory() as tmp:
        slow = list(range(10, 1001))
        rules = write_folder(Path(tmp), fast=list(range(2, 201)), slow=slow)
        text = rules.read_text().replace("[signal]", 'constraint = "fast < slow"\n[signal]')
        study = Study.from_text(text, tmp)
        estimate = study.estimate()
        print(f"199 x 991 grid with fast < slow: {estimate.describe()}; "
              f"{'fits' if estimate.fits else 'refused'}, "
              f"{'asks first' if estimate.needs_confirmation else 'runs without asking'}")


if __name__ == "__main__":
    main()
