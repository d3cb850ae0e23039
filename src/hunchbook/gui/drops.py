"""Files and folders dropped on the window: what each is (a rule file, a data folder or an idea
bundle) and where it goes."""

from __future__ import annotations

import os
import tomllib
import zipfile
from collections.abc import Iterable
from pathlib import Path
from typing import TYPE_CHECKING

from PySide6.QtCore import QEvent, QObject
from PySide6.QtGui import QDragEnterEvent, QDropEvent

from hunchbook.core.markets import LIBRARY_FILE

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow

#: Largest TOML file read to decide what a dropped file is (bytes).
MAX_DROPPED_TOML = 1_048_576


def classify_drop(path: str | os.PathLike[str]) -> tuple[str, Path] | None:
    """What a dropped path is: ``("rules", file)``, ``("data", folder)``, ``("bundle", file)``
    or None (not something the window takes).

    A folder, a CSV file (its folder) and a market library file (its folder) choose the data
    folder; a TOML file with a ``[signal]`` table is a rule file; a zip archive is an idea
    bundle.
    """
    p = Path(path)
    if p.is_dir():
        return ("data", p)
    if not p.is_file():
        return None
    suffix = p.suffix.lower()
    if suffix == ".csv":
        return ("data", p.parent)
    if suffix == ".zip" or zipfile.is_zipfile(p):
        return ("bundle", p)
    if suffix == ".toml" and p.stat().st_size <= MAX_DROPPED_TOML:
        try:
            doc = tomllib.loads(p.read_text(encoding="utf-8-sig"))
        except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
            return None
        if isinstance(doc.get("signal"), dict):
            return ("rules", p)
        if p.name == LIBRARY_FILE:
            return ("data", p.parent)
    return None


class DropHandler(QObject):
    """Takes what is dropped on the window (an event filter on it): rule files go to the
    Rules section, folders, CSV files and market libraries choose the data folder, bundles are
    imported after confirmation; anything else gets a status line."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self._window = window
        window.setAcceptDrops(True)
        window.installEventFilter(self)

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:  # noqa: N802 (Qt override)
        """Accept local files and folders dragged over the window; take them when dropped."""
        if event.type() == QEvent.Type.DragEnter and isinstance(event, QDragEnterEvent):
            if event.mimeData().hasUrls() and any(u.isLocalFile()
                                                  for u in event.mimeData().urls()):
                event.acceptProposedAction()
            else:
                event.ignore()
            return True
        if event.type() == QEvent.Type.Drop and isinstance(event, QDropEvent):
            paths = [u.toLocalFile() for u in event.mimeData().urls() if u.isLocalFile()]
            event.acceptProposedAction()
            self.handle(paths)
            return True
        return False

    def handle(self, paths: Iterable[str | os.PathLike[str]]) -> None:
        """Load each dropped path where it belongs (see :func:`classify_drop`)."""
        window = self._window
        for path in paths:
            kind = classify_drop(path)
            if kind is None:
                window.status_message(f"{Path(path).name}: not a rule file, data folder, "
                                      "price file or idea bundle.")
            elif kind[0] == "rules":
                window.rules.load_file(kind[1])
            elif kind[0] == "data":
                window.set_data_folder(kind[1])
                window.status_message(f"Data folder: {kind[1]}")
            else:
                window.exports.import_bundle(kind[1])
