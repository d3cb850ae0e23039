"""Headless Qt for the window's tests; settings and catalogues never touch the user's own."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest  # noqa: E402


@pytest.fixture(autouse=True)
def _isolated_settings(tmp_path, monkeypatch):
    """Point QSettings, the default catalogue and the user name at the test's own folder."""
    from PySide6.QtCore import QSettings

    QSettings.setDefaultFormat(QSettings.Format.IniFormat)
    QSettings.setPath(QSettings.Format.IniFormat, QSettings.Scope.UserScope,
                      str(tmp_path / "settings"))
    monkeypatch.setenv("HUNCHBOOK_CATALOGUE", str(tmp_path / "user-catalogue.sqlite"))
    monkeypatch.setenv("HUNCHBOOK_USER", "Test Reviewer")
