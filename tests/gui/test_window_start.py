"""Fast window start: until the window is on screen, neither pandas, the charts (pyqtgraph) nor
the statistics (scipy) are loaded; the Runs section builds its results view (and so loads them)
when an idea is first shown. Each check runs in a fresh interpreter and reads its
``sys.modules`` (no clock is read)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue

HEAVY = ("pandas", "pyqtgraph", "scipy")

PROBE = f"HEAVY = {HEAVY!r}\n" + """
import json, sys
from PySide6.QtCore import QCoreApplication
from hunchbook.gui.app import parse_args, start
from hunchbook.gui.workers import DemoDeskWorker

DemoDeskWorker.start = lambda self: None  # only what shows the window, not the demo's copy
session = start(parse_args(sys.argv[1:]))
QCoreApplication.processEvents()
shown = {"visible": session.window.isVisible(),
         "loaded": [m for m in HEAVY if m in sys.modules]}
if session.window.catalogue is not None:
    session.window.select_idea(1)
    QCoreApplication.processEvents()
shown["after_idea"] = [m for m in HEAVY if m in sys.modules]
shown["results_built"] = session.window.runs.results_area.widget() is not None
print(json.dumps(shown))
"""


def _probe(tmp_path: Path, *argv: str) -> dict:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", "HOME": str(tmp_path),
           "XDG_CONFIG_HOME": str(tmp_path / "config"), "HUNCHBOOK_USER": "Test Reviewer"}
    proc = subprocess.run([sys.executable, "-c", PROBE, *argv], capture_output=True,
                          text=True, check=True, env=env, cwd=tmp_path)
    return json.loads(proc.stdout.splitlines()[-1])


def test_demo_window_shows_without_pandas_charts_or_statistics(tmp_path: Path) -> None:
    shown = _probe(tmp_path, "--demo")
    assert shown["visible"] and shown["loaded"] == []
    assert not shown["results_built"]  # no idea shown yet: no results view


@pytest.fixture
def catalogue(tmp_path: Path) -> Path:
    path = tmp_path / "desk.sqlite"
    with Catalogue(path) as cat:
        cat.add_idea(title="Grain trend", hypothesis="Grains trend.", submitted_by="Nia")
    return path


def test_own_catalogue_window_loads_the_charts_when_an_idea_is_shown(
        tmp_path: Path, catalogue: Path) -> None:
    shown = _probe(tmp_path, "--catalogue", str(catalogue))
    assert shown["visible"] and shown["loaded"] == []
    # showing the idea builds the Runs section's results view, charts and all
    assert shown["results_built"] and "pyqtgraph" in shown["after_idea"]
