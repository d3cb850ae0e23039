"""What the window keeps between sessions (QSettings): the last catalogue and data folder, the
window geometry, toolbar state and splitter positions."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from PySide6.QtCore import QByteArray, QSettings
from PySide6.QtWidgets import QMainWindow, QSplitter

#: Where settings are kept (organisation and application name of QSettings).
SETTINGS_SCOPE = ("hunchbook", "hunchbook")
#: Keys of the last catalogue and data folder.
LAST_CATALOGUE, LAST_DATA = "catalogue/last", "data/last"


def app_settings() -> QSettings:
    """The user's Hunchbook settings."""
    return QSettings(QSettings.defaultFormat(), QSettings.Scope.UserScope, *SETTINGS_SCOPE)


def remember_path(key: str, path: Path) -> None:
    """Keep ``path`` under ``key`` (:data:`LAST_CATALOGUE` or :data:`LAST_DATA`)."""
    app_settings().setValue(key, str(path))


def remembered_paths() -> tuple[Path | None, Path | None]:
    """The last catalogue and data folder kept in the settings."""
    settings = app_settings()
    catalogue, data = settings.value(LAST_CATALOGUE), settings.value(LAST_DATA)
    return (Path(catalogue) if catalogue else None, Path(data) if data else None)


def has_saved_layout() -> bool:
    """Whether the settings hold a window geometry from an earlier session."""
    return app_settings().contains("window/geometry")


def has_saved_splitter(key: str) -> bool:
    """Whether the settings hold the positions of the splitter kept under ``key``."""
    return app_settings().contains(key)


def restore_layout(window: QMainWindow, splitters: Sequence[tuple[str, QSplitter]]) -> None:
    """Restore the window's geometry and toolbar state, and each ``(key, splitter)``'s
    positions, where the settings hold them."""
    settings = app_settings()
    for key, restore in (("window/geometry", window.restoreGeometry),
                         ("window/state", window.restoreState),
                         *((key, splitter.restoreState) for key, splitter in splitters)):
        value = settings.value(key)
        if isinstance(value, QByteArray):
            restore(value)


def restore_splitters(splitters: Sequence[tuple[str, QSplitter]]) -> None:
    """Restore each ``(key, splitter)``'s positions where the settings hold them (again once
    the window is shown: a splitter restored before it has its size shares the size out
    anew)."""
    settings = app_settings()
    for key, splitter in splitters:
        value = settings.value(key)
        if isinstance(value, QByteArray):
            splitter.restoreState(value)


def save_layout(window: QMainWindow, splitters: Sequence[tuple[str, QSplitter]]) -> None:
    """Keep the window's geometry and toolbar state, and each ``(key, splitter)``'s positions."""
    settings = app_settings()
    settings.setValue("window/geometry", window.saveGeometry())
    settings.setValue("window/state", window.saveState())
    for key, splitter in splitters:
        settings.setValue(key, splitter.saveState())
    settings.sync()
