"""Menu and toolbar actions, made one way: text, slot, shortcut, status tip and icon."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import QStyle, QWidget


def make_action(parent: QWidget, text: str, slot: Callable[[], Any], shortcut: Any = None,
                tip: str = "", pixmap: QStyle.StandardPixmap | None = None) -> QAction:
    """An action that calls ``slot()`` when triggered.

    Parameters
    ----------
    parent
        Owner of the action (its style gives the icon).
    text
        Menu text (``&&`` for a literal ``&``; a trailing ellipsis marks a dialog).
    slot
        Called without arguments.
    shortcut
        A key sequence, a standard key or None; shown in the tooltip.
    tip
        Status-bar tip (also the tooltip when there is no shortcut).
    pixmap
        A standard icon of the style, or None.
    """
    act = QAction(text, parent)
    if shortcut is not None:
        act.setShortcut(QKeySequence(shortcut))
    if pixmap is not None:
        act.setIcon(parent.style().standardIcon(pixmap))
    act.setStatusTip(tip)
    name = text.rstrip(".\u2026").replace("&&", "&")
    act.setToolTip(f"{name} ({act.shortcut().toString()})" if shortcut is not None
                   else tip or name)
    act.triggered.connect(lambda _checked=False: slot())
    return act
