"""Headless Qt for the window's tests; settings and catalogues never touch the user's own."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest  # noqa: E402

from tests.gui.desk_fixtures import (  # noqa: E402
    demo_catalogue_copy,
    open_window,
    short_demo_data,
)


@pytest.fixture(autouse=True)
def _isolated_settings(tmp_path, monkeypatch):
    """Point QSettings, the default catalogue and the user name at the test's own folder."""
    from PySide6.QtCore import QSettings

    QSettings.setDefaultFormat(QSettings.Format.IniFormat)
    QSettings.setPath(QSettings.Format.IniFormat, QSettings.Scope.UserScope,
                      str(tmp_path / "settings"))
    monkeypatch.setenv("HUNCHBOOK_CATALOGUE", str(tmp_path / "user-catalogue.sqlite"))
    monkeypatch.setenv("HUNCHBOOK_USER", "Test Reviewer")


@pytest.fixture(autouse=True)
def _no_blocking_message_boxes(monkeypatch):
    """A blocking question or warning box would hang a headless run: answer the safe way
    (No / Cancel / Ok) and record what was asked. Tests that need another answer patch again."""
    from PySide6.QtWidgets import QMessageBox

    asked: list[tuple[str, str]] = []

    def answer(kind, default):
        def box(parent, title, text, *args, **kwargs):
            asked.append((kind, title))
            return default
        return staticmethod(box)

    button = QMessageBox.StandardButton
    monkeypatch.setattr(QMessageBox, "question", answer("question", button.Cancel))
    for kind in ("warning", "critical", "information"):
        monkeypatch.setattr(QMessageBox, kind, answer(kind, button.Ok))
    return asked


@pytest.fixture
def view(qtbot):
    """A results view shown at 1200 x 800 (a test module may define its own)."""
    from hunchbook.gui.widgets.results_view import ResultsView

    widget = ResultsView()
    qtbot.addWidget(widget)
    widget.resize(1200, 800)
    widget.show()
    qtbot.waitExposed(widget)
    return widget


@pytest.fixture(scope="session")
def short_data(tmp_path_factory):
    """A short copy of the invented demo data (every window test reads the same one)."""
    return short_demo_data(tmp_path_factory)


@pytest.fixture
def window(qtbot, tmp_path_factory, tmp_path, short_data):
    """The main window on a fresh copy of the demo catalogue and the short demo data."""
    return open_window(qtbot, demo_catalogue_copy(tmp_path_factory, tmp_path), short_data)
