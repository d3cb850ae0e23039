"""Fixtures for the window's tests: a copy of the invented demo catalogue, short demo data and
an open main window. Import the fixtures by name into a test module."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

#: Short demo data window: quick runs stay fast.
SHORT_START, SHORT_END = "2015-01-02", "2018-12-31"


@pytest.fixture(scope="session")
def _demo_catalogue_master(tmp_path_factory: pytest.TempPathFactory) -> Path:
    from hunchbook.demo.catalogue import build_demo_catalogue

    return build_demo_catalogue(tmp_path_factory.mktemp("desk") / "demo.sqlite")


@pytest.fixture(scope="session")
def short_data(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """Invented demo data for 2015-2018 (shared, read only)."""
    from hunchbook.demo import write_demo_data

    return write_demo_data(tmp_path_factory.mktemp("data") / "data", start=SHORT_START,
                           end=SHORT_END)


@pytest.fixture
def demo_catalogue(_demo_catalogue_master: Path, tmp_path: Path) -> Path:
    """A fresh copy of the demo catalogue for one test."""
    path = tmp_path / "demo.sqlite"
    shutil.copyfile(_demo_catalogue_master, path)
    return path


@pytest.fixture
def window(qtbot, demo_catalogue: Path, short_data: Path):
    """The main window on a copy of the demo catalogue and the short demo data, shown."""
    from hunchbook.gui.main_window import MainWindow

    win = MainWindow(processes=1)
    qtbot.addWidget(win)
    win.resize(1400, 900)
    assert win.open_catalogue(demo_catalogue)
    win.set_data_folder(short_data)
    win.show()
    qtbot.waitExposed(win)
    return win


def idea_id_by_title(win, title: str) -> int:
    """The id of the demo idea with this title."""
    return next(i.id for i in win.catalogue.list_ideas() if i.title == title)


#: The demo desk's accepted idea that has no rules yet.
ACCEPTED_TITLE = "Ten-year note trend with a volatility filter"
#: A submitted idea waiting for review.
SUBMITTED_TITLE = "Copper carry from the curve slope"
#: A tested idea with two runs.
TESTED_TITLE = "Channel midpoint breakout"
