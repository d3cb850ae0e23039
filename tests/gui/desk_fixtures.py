"""Helpers behind the window tests' fixtures: a copy of the invented demo catalogue, short
demo data (each built once per test session) and an open main window."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

#: Short demo data window: quick runs stay fast.
SHORT_START, SHORT_END = "2015-01-02", "2018-12-31"
#: The demo desk's accepted idea that has rules and no run yet.
ACCEPTED_TITLE = "Crude roll-yield tilt"
#: A submitted idea waiting for review.
SUBMITTED_TITLE = "Copper carry from the curve slope"
#: A tested idea with two runs.
TESTED_TITLE = "Channel midpoint breakout"

_BUILT: dict[tuple[str, Path], Path] = {}


def _once(kind: str, factory: pytest.TempPathFactory) -> Path:
    key = (kind, factory.getbasetemp())
    if key not in _BUILT:
        if kind == "catalogue":
            from hunchbook.demo.build import CATALOGUE_FILE, built_demo

            _BUILT[key] = built_demo() / CATALOGUE_FILE
        else:
            from hunchbook.demo import write_demo_data

            _BUILT[key] = write_demo_data(factory.mktemp("data") / "data", start=SHORT_START,
                                          end=SHORT_END)
    return _BUILT[key]


def demo_catalogue_copy(factory: pytest.TempPathFactory, folder: Path) -> Path:
    """A fresh copy of the demo catalogue in ``folder`` (the original is built once)."""
    path = folder / "demo.sqlite"
    shutil.copyfile(_once("catalogue", factory), path)
    return path


def short_demo_data(factory: pytest.TempPathFactory) -> Path:
    """Invented demo data for 2015-2018, written once per session (read only)."""
    return _once("data", factory)


def open_window(qtbot, catalogue: Path, data: Path):
    """The main window on ``catalogue`` and ``data``, shown (quick runs in the worker thread,
    no worker processes)."""
    from hunchbook.core.runners import InProcess
    from hunchbook.gui.main_window import MainWindow

    win = MainWindow(runner=InProcess())
    qtbot.addWidget(win)
    win.resize(1400, 900)
    assert win.open_catalogue(catalogue)
    win.set_data_folder(data)
    win.show()
    qtbot.waitExposed(win)
    return win


def idea_id_by_title(win, title: str) -> int:
    """The id of the demo idea with this title."""
    return next(i.id for i in win.catalogue.list_ideas() if i.title == title)
