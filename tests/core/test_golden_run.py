"""A stored golden run: the whole record of a small generated sweep (two contract-level markets,
a two-average grid, statistics, SPA, walk-forward, PBO and verdict), kept so that work on the
engine's speed can show it changes no result.

This is the engine against its own earlier record (no outside source): the figures themselves
are checked against outside sources in the other tests. Numbers must agree to 1e-12 relative
(or 1e-12 absolute near zero); text, counts and flags exactly. After a change that is meant to
change results, write the record again with
``.venv/bin/python -m tests.core.test_golden_run`` and say why in the commit.
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path
from typing import Any

from hunchbook.api import Study
from hunchbook.core.runners import InProcess
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

GOLDEN = Path(__file__).resolve().parents[1] / "data" / "golden_run.json"
RULES = """
name = "Golden two-average grid"
markets = ["M1", "M2"]
[parameters]
fast = [5, 10, 20]
slow = [40, 80, 160]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[sizing]
contracts = 2
"""


def golden_record(folder: Path) -> dict[str, Any]:
    """The run record of the golden sweep over generated data written into ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    write_random_contracts(folder / "M1.csv", seed=11, start="2012-01-02", periods=1500,
                           holidays=12)
    write_random_contracts(folder / "M2.csv", seed=12, start="2012-03-01", periods=1400,
                           holidays=9)
    study = Study.from_text(RULES, folder)
    report = study.sweep(runner=InProcess(), spa_reps=200, seed=3)
    chosen = study.run_set(report.sets[report.chosen])
    summary = report.summarise(chosen, currency=study.panel.currency, data_folder="golden")
    return json.loads(json.dumps(summary.to_dict(), allow_nan=False))


def _differences(got: Any, want: Any, path: str = "") -> list[str]:
    if isinstance(want, dict) and isinstance(got, dict):
        keys = sorted(set(want) | set(got))
        return [d for k in keys for d in _differences(got.get(k), want.get(k), f"{path}.{k}")]
    if isinstance(want, list) and isinstance(got, list) and len(want) == len(got):
        return [d for i, (g, w) in enumerate(zip(got, want, strict=True))
                for d in _differences(g, w, f"{path}[{i}]")]
    if isinstance(want, float) and isinstance(got, (int, float)) and not isinstance(got, bool):
        if math.isclose(got, want, rel_tol=1e-12, abs_tol=1e-12):
            return []
    elif got == want:
        return []
    return [f"{path}: {got!r} != {want!r}"]


def test_the_golden_run_is_reproduced(tmp_path: Path) -> None:
    want = json.loads(GOLDEN.read_text())
    got = golden_record(tmp_path / "data")
    differences = _differences(got, want)
    assert not differences, "\n".join(differences[:20])


if __name__ == "__main__":  # write the record again (see the module docstring)
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        record = golden_record(Path(tmp) / "data")
    GOLDEN.write_text(json.dumps(record, indent=1, sort_keys=True) + "\n")
    print(f"wrote {GOLDEN}", file=sys.stderr)
