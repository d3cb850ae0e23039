"""The one look of the window's read-only figure tables: no row numbers, no editing, no grid,
alternating rows, one line per cell, never focused."""

from __future__ import annotations

from typing import TypeVar

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QAbstractItemView, QTableView

View = TypeVar("View", bound=QTableView)


def read_only(table: View, *, select_rows: bool = False) -> View:
    """Set ``table`` up as a read-only figure table and return it; ``select_rows`` lets a row
    be selected (else nothing can be)."""
    table.verticalHeader().hide()
    table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    if select_rows:
        table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    else:
        table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
    table.setAlternatingRowColors(True)
    table.setShowGrid(False)
    table.setWordWrap(False)
    table.setFocusPolicy(Qt.FocusPolicy.NoFocus)
    return table
