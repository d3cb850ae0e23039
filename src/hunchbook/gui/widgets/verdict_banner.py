"""Verdict banner: the run's verdict label, next action and reasons, coloured by outcome."""

from __future__ import annotations

from PySide6.QtCore import QEvent, QRectF, QSize, Qt
from PySide6.QtGui import (
    QColor,
    QFont,
    QPainter,
    QPainterPath,
    QPaintEvent,
    QPalette,
    QResizeEvent,
)
from PySide6.QtWidgets import (
    QFrame,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QLayout,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.verdict import Check
from hunchbook.gui.charts.run_figures import VerdictText

#: Hue of each verdict outcome; unknown outcomes are grey.
OUTCOME_HUES = {
    "passes": QColor(38, 140, 74),
    "selection_luck": QColor(196, 142, 0),
    "lost_to_costs": QColor(214, 102, 28),
    "too_little_data": QColor(44, 112, 196),
    "no_edge": QColor(192, 52, 52),
}
NEUTRAL_HUE = QColor(128, 128, 128)
#: Mark and hue of each check status (the first failing check decides the outcome).
STATUS_MARKS = {"pass": ("\u2713", QColor(38, 140, 74)), "fail": ("\u2717", QColor(192, 52, 52)),
                "warn": ("!", QColor(196, 142, 0)), "skip": ("\u2013", NEUTRAL_HUE)}
#: Most checks shown side by side in the banner, and the gap between their columns (pixels).
CHECK_COLUMNS, COLUMN_GAP = 3, 18
#: Width of the coloured stripe and corner radius, in pixels.
STRIPE = 6
RADIUS = 4


def mix_colours(a: QColor, b: QColor, share_of_b: float) -> QColor:
    """Blend of two colours with the given share of the second."""
    s = share_of_b
    return QColor(round(a.red() * (1 - s) + b.red() * s),
                  round(a.green() * (1 - s) + b.green() * s),
                  round(a.blue() * (1 - s) + b.blue() * s))


def banner_colours(outcome: str, palette: QPalette) -> tuple[QColor, QColor, QColor]:
    """Background, stripe and label colours of an outcome, readable on the given palette."""
    hue = OUTCOME_HUES.get(outcome, NEUTRAL_HUE)
    window = palette.color(QPalette.ColorGroup.Active, QPalette.ColorRole.Window)
    dark = window.lightnessF() < 0.5
    background = mix_colours(window, hue, 0.26 if dark else 0.13)
    label = hue.lighter(150) if dark else hue.darker(135)
    return background, hue, label


def _plain_label(text: str = "", *, wrap: bool = True) -> QLabel:
    label = QLabel(text)
    label.setTextFormat(Qt.TextFormat.PlainText)
    label.setWordWrap(wrap)
    label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    return label


class VerdictBanner(QFrame):
    """Large verdict label with the action beside it, reasons as sentences below and a small
    line naming the run; background and stripe follow the outcome and the palette."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("verdictBanner")
        self.outcome = ""
        self.label = _plain_label(wrap=False)
        font = QFont(self.label.font())
        font.setPointSizeF(font.pointSizeF() * 1.8)
        font.setBold(True)
        self.label.setFont(font)
        self.action = _plain_label()
        action_font = QFont(self.action.font())
        action_font.setPointSizeF(action_font.pointSizeF() * 1.1)
        action_font.setBold(True)
        self.action.setFont(action_font)
        self.reasons = _plain_label()
        self.checks = ChecksGrid()
        self.subtitle = _plain_label()
        small = QFont(self.subtitle.font())
        small.setPointSizeF(small.pointSizeF() * 0.9)
        self.subtitle.setFont(small)

        top = QHBoxLayout()
        top.setSpacing(16)
        top.addWidget(self.label, 0, Qt.AlignmentFlag.AlignVCenter)
        top.addWidget(self.action, 1, Qt.AlignmentFlag.AlignVCenter)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(STRIPE + 12, 8, 12, 8)
        layout.setSpacing(4)
        layout.addWidget(self.subtitle)
        layout.addLayout(top)
        layout.addWidget(self.reasons)
        layout.addWidget(self.checks)
        self.clear()

    def set_verdict(self, verdict: VerdictText, *, subtitle: str = "") -> None:
        """Show a verdict; ``subtitle`` names the run (title, chosen set, date)."""
        self.outcome = verdict.outcome
        self.label.setText(verdict.label)
        self.action.setText(verdict.action)
        self.reasons.setText("\n".join(f"•  {r}" for r in verdict.reasons))
        self.reasons.setVisible(bool(verdict.reasons))
        self.checks.set_checks(verdict.checks)
        self.subtitle.setText(subtitle)
        self.subtitle.setVisible(bool(subtitle))
        self._recolour()

    def clear(self) -> None:
        """Show that no run is open."""
        self.set_verdict(VerdictText("", "No run shown", "Run an idea or choose one of its "
                                     "runs to see the verdict here.", ()))

    def changeEvent(self, event: QEvent) -> None:  # noqa: N802 (Qt override)
        """Recolour the texts when the palette changes (light/dark switch)."""
        super().changeEvent(event)
        if event.type() == QEvent.Type.PaletteChange:
            self._recolour()

    def paintEvent(self, event: QPaintEvent) -> None:  # noqa: N802 (Qt override)
        """Tinted rounded background with the outcome's stripe on the left."""
        background, stripe, _ = banner_colours(self.outcome, self.palette())
        painter = QPainter(self)
        painter.setRenderHint(QPainter.RenderHint.Antialiasing)
        painter.setPen(Qt.PenStyle.NoPen)
        rect = QRectF(self.rect())
        path = QPainterPath()
        path.addRoundedRect(rect, RADIUS, RADIUS)
        painter.fillPath(path, background)
        painter.setClipPath(path)
        painter.fillRect(QRectF(rect.left(), rect.top(), STRIPE, rect.height()), stripe)
        painter.end()

    def _recolour(self) -> None:
        background, _, label = banner_colours(self.outcome, self.palette())
        text = self.palette().color(QPalette.ColorGroup.Active, QPalette.ColorRole.WindowText)
        _set_text_colour(self.label, label)
        _set_text_colour(self.action, text)
        _set_text_colour(self.reasons, text)
        self.checks.recolour(text, dark=self.palette().color(
            QPalette.ColorGroup.Active, QPalette.ColorRole.Window).lightnessF() < 0.5)
        _set_text_colour(self.subtitle, mix_colours(background, text, 0.7))
        self.update()


class ChecksGrid(QWidget):
    """Every check of the verdict in order, side by side: a pass/fail mark, the check's name
    and its figure; hovering shows the check's finding in a sentence. As many columns of checks
    as the width holds (at most :data:`CHECK_COLUMNS`), so a narrow banner grows taller
    instead of running past its edge."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.grid = QGridLayout(self)
        self.grid.setContentsMargins(0, 4, 0, 0)
        self.grid.setHorizontalSpacing(6)
        self.grid.setVerticalSpacing(1)
        # the widget's least width is one column (see minimumSizeHint), not the grid's
        self.grid.setSizeConstraint(QLayout.SizeConstraint.SetNoConstraint)
        self.rows: list[tuple[Check, QLabel, QLabel, QLabel]] = []
        self.columns = 0

    def set_checks(self, checks: tuple[Check, ...]) -> None:
        """Show these checks (none hides the grid)."""
        while self.grid.count():
            item = self.grid.takeAt(0)
            if item.widget() is not None:
                item.widget().deleteLater()
        self.rows = []
        for check in checks:
            mark = QLabel(STATUS_MARKS.get(check.status, STATUS_MARKS["skip"])[0], self)
            name = _plain_label(check.name, wrap=False)
            figure = _plain_label(check.figure, wrap=False)
            for widget in (mark, name, figure):
                widget.setToolTip(check.finding)
            mark.setAccessibleName(f"{check.name}: {check.status}")
            self.rows.append((check, mark, name, figure))
        self.columns = 0
        self._place(self._fitting(self.width() if self.isVisible() else 10**6))
        self.setVisible(bool(checks))

    def _column_width(self) -> int:
        widest = [max((row[k].sizeHint().width() for row in self.rows), default=0)
                  for k in (1, 2, 3)]
        return sum(widest) + 2 * self.grid.horizontalSpacing() + COLUMN_GAP

    def _fitting(self, width: int) -> int:
        """How many columns of checks fit ``width``."""
        if not self.rows:
            return 1
        fit = (width + COLUMN_GAP) // max(self._column_width(), 1)
        return max(1, min(CHECK_COLUMNS, len(self.rows), fit))

    def _place(self, columns: int) -> None:
        if columns == self.columns:
            return
        self.columns = columns
        while self.grid.count():
            self.grid.takeAt(0)  # the labels stay; only their places change
        per_column = -(-len(self.rows) // columns) if self.rows else 0
        for i, (_check, mark, name, figure) in enumerate(self.rows):
            row, column = i % per_column, 3 * (i // per_column)
            self.grid.addWidget(mark, row, column)
            self.grid.addWidget(name, row, column + 1)
            self.grid.addWidget(figure, row, column + 2)
        for column in range(3 * CHECK_COLUMNS):
            self.grid.setColumnStretch(column, 1 if column % 3 == 2 and
                                       column < 3 * columns else 0)
        for row in range(self.grid.rowCount()):
            self.grid.setRowStretch(row, 0)
        self.updateGeometry()

    def resizeEvent(self, event: QResizeEvent) -> None:  # noqa: N802 (Qt override)
        """Lay the checks out again in as many columns as the new width holds."""
        super().resizeEvent(event)
        self._place(self._fitting(event.size().width()))

    def minimumSizeHint(self) -> QSize:  # noqa: N802 (Qt override)
        """One column of checks wide, as tall as the present rows."""
        height = self.grid.minimumSize().height()
        return QSize(self._column_width() if self.rows else 0, height)

    def recolour(self, text: QColor, *, dark: bool) -> None:
        """Colour the marks by status, readable on a light or dark background, and the names
        and figures in the banner's text colour."""
        for check, mark, name, figure in self.rows:
            _set_text_colour(name, text)
            _set_text_colour(figure, text)
            hue = STATUS_MARKS.get(check.status, STATUS_MARKS["skip"])[1]
            _set_text_colour(mark, hue.lighter(150) if dark else hue)
            font = QFont(mark.font())
            font.setBold(True)
            mark.setFont(font)


def _set_text_colour(label: QLabel, colour: QColor) -> None:
    palette = label.palette()
    palette.setColor(QPalette.ColorRole.WindowText, colour)
    label.setPalette(palette)
