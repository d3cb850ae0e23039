"""Real processes: a writer killed with SIGKILL mid-batch, and two writers at once."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

import hunchbook
from hunchbook.catalogue import Catalogue
from tests.store.helpers import RULES, accepted_idea

SRC = str(Path(hunchbook.__file__).resolve().parents[1])
ROOT = str(Path(__file__).resolve().parents[2])
BATCH = 20

WRITER = f"""
import sys, numpy as np, pandas as pd
sys.path[:0] = [{SRC!r}, {ROOT!r}]
from hunchbook.catalogue import Catalogue
from tests.store.helpers import run_summary
cat = Catalogue(sys.argv[1], create=False)
idea, revision = int(sys.argv[2]), int(sys.argv[3])
days = pd.bdate_range("2020-01-01", periods=2000)
for batch in range(100000):
    with cat.transaction():
        for item in range({BATCH}):
            cat.add_entry(idea_id=idea, kind="note", text=f"batch {{batch}} item {{item}}",
                          by="writer")
        if batch % 3 == 0:
            pnl = pd.DataFrame(np.full((2000, 3), float(batch)), index=days,
                               columns=["gross_pnl", "cost", "net_pnl"])
            cat.record_run(idea, revision_id=revision, by="writer", data_fingerprint="x",
                           engine_version="t", summary=run_summary([{{"fast": 5.0, "slow": 50.0,
                                                      "b": float(batch)}}], [0.1]),
                           daily_pnl=pnl)
    print(batch, flush=True)
"""

APPENDER = f"""
import sys, time
sys.path.insert(0, {SRC!r})
from hunchbook.catalogue import Catalogue
path, name, count, go = sys.argv[1], sys.argv[2], int(sys.argv[3]), sys.argv[4]
print("ready", flush=True)
while not __import__("os").path.exists(go):
    time.sleep(0.001)
cat = Catalogue(path)
for i in range(count):
    cat.add_entry(idea_id=None, kind="note", text=f"{{name}} {{i}}", by=name)
    time.sleep(0.002)  # a pause between writes, so that the two writers take turns
print("done", flush=True)
"""


@pytest.mark.parametrize("kill_after", [1, 7, 25])
def test_sigkill_mid_batch_loses_nothing_committed(tmp_path: Path, kill_after: int) -> None:
    """SQLite's integrity_check is the reference for a sound file; the writer prints each batch
    number only after its transaction committed, so every printed batch must be there whole,
    and the batch in flight is either complete or absent."""
    path = tmp_path / "c.sqlite"
    with Catalogue(path) as cat:
        idea = accepted_idea(cat)
        # every batch number the writer may reach lies in the pre-registered space
        revision = cat.save_rules(idea, RULES.replace(
            "slow = [50]", "slow = [50]\nb = { start = 0, stop = 3000, step = 3 }"),
            by="Nia").id
    writer = subprocess.Popen([sys.executable, "-c", WRITER, str(path), str(idea),
                               str(revision)], stdout=subprocess.PIPE, text=True)
    assert writer.stdout is not None
    committed = []
    while len(committed) < kill_after:
        line = writer.stdout.readline()
        assert line, "writer stopped early"
        committed.append(int(line))
    time.sleep(0.003 * kill_after)  # land somewhere inside a later batch
    os.kill(writer.pid, signal.SIGKILL)
    writer.wait()
    committed += [int(line) for line in writer.stdout.read().split()]
    writer.stdout.close()
    assert writer.returncode == -signal.SIGKILL

    with Catalogue(path, create=False) as cat:
        assert cat.db.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
        assert cat.check() == []
        counts: dict[int, int] = {}
        for entry in cat.journal(idea, kind="note"):
            batch = int(entry.text.split()[1])
            counts[batch] = counts.get(batch, 0) + 1
        runs = {int(r.parameter_sets[0]["b"]) for r in cat.runs(idea)}
        for batch in committed:
            assert counts.get(batch) == BATCH
        assert set(counts.values()) == {BATCH}  # no half batch
        assert sorted(counts) == list(range(len(counts)))  # no gaps
        assert runs == {b for b in counts if b % 3 == 0}
        for run in cat.runs(idea):
            assert (cat.run(run.id).daily_pnl.to_numpy() == run.parameter_sets[0]["b"]).all()


def test_two_processes_appending_at_once_keep_every_entry_once(tmp_path: Path) -> None:
    """Both processes also open the not-yet-existing catalogue at the same moment, so the
    schema is created under the same contention."""
    path, go, count = tmp_path / "shared.sqlite", tmp_path / "go", 300
    procs = [subprocess.Popen([sys.executable, "-c", APPENDER, str(path), name, str(count),
                               str(go)], stdout=subprocess.PIPE, text=True)
             for name in ("alpha", "beta")]
    for proc in procs:
        assert proc.stdout is not None and proc.stdout.readline().strip() == "ready"
    go.touch()
    for proc in procs:
        out, _ = proc.communicate(timeout=120)
        assert proc.returncode == 0 and out.strip() == "done"
    with Catalogue(path, create=False) as cat:
        texts = [e.text for e in cat.journal()]
        assert cat.check() == []
    expected = {f"{name} {i}" for name in ("alpha", "beta") for i in range(count)}
    assert len(texts) == 2 * count and set(texts) == expected
    # The writers really overlapped: their entries interleave in the journal.
    authors = [t.split()[0] for t in texts]
    assert sum(a != b for a, b in zip(authors, authors[1:], strict=False)) >= 10
    # Each writer's entries keep their own order.
    for name in ("alpha", "beta"):
        mine = [int(t.split()[1]) for t in texts if t.startswith(name)]
        assert mine == list(range(count))
