"""How the window talks back: error dialogs, confirmations, the user's name, uncaught errors.

Error dialogs are opened window-modal with ``open()`` rather than ``exec()``, so the event loop
keeps running (workers still report, tests can read the dialog). Confirmations block: they ask
a yes/no question before something destructive and nothing may happen until it is answered.
"""

from __future__ import annotations

import getpass
import logging
import os
import sys
import traceback
from types import TracebackType

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QMessageBox, QWidget

#: Environment variable naming who writes journal entries, reviews and runs.
USER_ENV = "HUNCHBOOK_USER"

_log = logging.getLogger("hunchbook.gui")


def current_user() -> str:
    """The name written as author of edits: ``$HUNCHBOOK_USER``, else the login name."""
    return os.environ.get(USER_ENV) or getpass.getuser() or "unknown"


def one_line(message: object) -> str:
    """The first non-blank line of a message (errors are shown as one clear line)."""
    for line in str(message).splitlines():
        if line.strip():
            return line.strip()
    return type(message).__name__ if isinstance(message, BaseException) else "Unknown problem"


def show_error(parent: QWidget | None, title: str, message: str) -> QMessageBox:
    """Open a window-modal error dialog with ``message`` (not blocking) and return it."""
    box = QMessageBox(QMessageBox.Icon.Warning, title, one_line(message),
                      QMessageBox.StandardButton.Ok, parent)
    box.setObjectName("errorDialog")
    box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
    box.open()
    return box


def confirm(parent: QWidget | None, title: str, question: str) -> bool:
    """Ask a yes/no question (blocking); True when the user answers yes."""
    answer = QMessageBox.question(parent, title, question,
                                  QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
                                  QMessageBox.StandardButton.No)
    return answer == QMessageBox.StandardButton.Yes


def install_excepthook() -> None:
    """Route uncaught exceptions to the log (with traceback) and an error dialog (one line)."""

    def hook(kind: type[BaseException], value: BaseException,
             tb: TracebackType | None) -> None:
        _log.error("Uncaught error:\n%s", "".join(traceback.format_exception(kind, value, tb)))
        if QApplication.instance() is not None:
            show_error(QApplication.activeWindow(), "Something went wrong",
                       f"{kind.__name__}: {one_line(value)}")

    sys.excepthook = hook
