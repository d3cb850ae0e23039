"""Fast start: ``--version`` and the everyday catalogue commands load neither the statistics
(scipy) nor pandas and numpy, so their start cannot silently slow down again. Each check runs
in a fresh interpreter and reads its ``sys.modules`` (no clock is read)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue

HEAVY = ("scipy", "pandas", "numpy", "sqlite_utils", "hunchbook.api", "hunchbook.core.engine")

PROBE = f"HEAVY = {HEAVY!r}\n" + """
import contextlib, io, json, sys
from hunchbook.cli import main
with contextlib.redirect_stdout(io.StringIO()) as out:
    try:
        status = main(sys.argv[1:])
    except SystemExit as exc:
        status = exc.code
print(json.dumps({"status": status, "out": out.getvalue(),
                  "loaded": [m for m in HEAVY if m in sys.modules]}))
"""


def _probe(*argv: str) -> dict:
    proc = subprocess.run([sys.executable, "-c", PROBE, *argv], capture_output=True,
                          text=True, check=True)
    return json.loads(proc.stdout)


def test_version_loads_nothing_heavy() -> None:
    result = _probe("--version")
    assert result["status"] == 0 and result["out"].startswith("hunchbook ")
    assert result["loaded"] == []


def test_importing_the_cli_loads_nothing_heavy() -> None:
    code = f"import sys, hunchbook.cli; print([m for m in {HEAVY!r} if m in sys.modules])"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "[]"


@pytest.fixture
def catalogue(tmp_path: Path) -> Path:
    path = tmp_path / "desk.sqlite"
    with Catalogue(path) as cat:
        cat.add_idea(title="Grain trend", hypothesis="Grains trend.", submitted_by="Nia")
    return path


def test_listing_ideas_and_writing_the_journal_load_no_pandas(catalogue: Path) -> None:
    """Only SQLite is loaded: the catalogue reads and appends without pandas, numpy or scipy,
    and sqlite-utils is imported with its optional pandas hooks left out."""
    listed = _probe("ideas", "list", "--catalogue", str(catalogue))
    assert listed["status"] == 0 and "Grain trend" in listed["out"]
    assert listed["loaded"] == ["sqlite_utils"]
    added = _probe("journal", "add", "--catalogue", str(catalogue), "--idea", "1", "--by",
                   "Nia", "Looked at the longer history.")
    assert added["status"] == 0 and added["loaded"] == ["sqlite_utils"]
    with Catalogue(catalogue) as cat:
        assert [e.text for e in cat.journal(1)][-1] == "Looked at the longer history."


def test_reading_run_records_loads_no_scipy() -> None:
    """The run record, its presenter and the verdict words (what the window and the catalogue
    read) import without the statistics library: scipy loads only when statistics are
    computed."""
    code = ("import sys, hunchbook.core.results, hunchbook.core.presenter; "
            "print('scipy' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "False"


def test_a_whole_sweep_run_with_statistics_loads_no_scipy(tmp_path: Path) -> None:
    """``hunchbook run`` of a sweep (statistics, SPA test, verdict, JSON record) in one process:
    the normal distribution comes from the standard library and the SPA test needs no FFT."""
    from hunchbook.demo import write_demo_data

    data = write_demo_data(tmp_path / "data", start="2017-01-02", end="2019-12-31")
    rules = Path(__file__).resolve().parents[2] / "examples" / "breakout.toml"
    out = tmp_path / "run.json"
    result = _probe("run", str(rules), "--data", str(data), "--workers", "1", "--json", str(out))
    assert result["status"] == 0
    assert json.loads(out.read_text())["statistics"]["spa"]["reps"] == 1000
    assert "scipy" not in result["loaded"] and "pandas" in result["loaded"]
