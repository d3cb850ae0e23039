"""The verdict banner stays readable after its window section was disabled for a moment."""

from __future__ import annotations

from PySide6.QtGui import QPalette
from PySide6.QtWidgets import QWidget

from hunchbook.gui.widgets.verdict_banner import VerdictBanner, VerdictText


def test_text_colour_survives_a_disabled_parent(qtbot):
    parent = QWidget()
    qtbot.addWidget(parent)
    banner = VerdictBanner(parent)
    parent.setEnabled(False)  # the window disables its sections while no idea is selected
    banner.set_verdict(VerdictText("passes", "Promote", "Promote the idea.", ("A reason.",)))
    parent.setEnabled(True)
    role = QPalette.ColorRole.WindowText
    expected = banner.palette().color(QPalette.ColorGroup.Active, role)
    assert banner.reasons.palette().color(QPalette.ColorGroup.Active, role) == expected
    assert banner.action.palette().color(QPalette.ColorGroup.Active, role) == expected
