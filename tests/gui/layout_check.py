"""Find what a window shows cut short: labels whose text does not fit, header sections narrower
than their text, tables that need sideways scrolling, buttons squeezed below their text, widgets
running past the right edge of the area that shows them, and chart titles, axis labels and tick
labels drawn outside their chart.

Used by the layout tests at the window sizes the window must work at; each problem is one line
naming the widget and what does not fit.
"""

from __future__ import annotations

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QFontMetrics, QImage, QPainter, QTextDocument
from PySide6.QtGui import Qt as GuiQt
from PySide6.QtWidgets import (
    QAbstractButton,
    QAbstractScrollArea,
    QHeaderView,
    QLabel,
    QStyle,
    QTabBar,
    QWidget,
)

#: Pixels of rounding allowed before something counts as cut.
SLACK = 1


def _name(widget: QWidget) -> str:
    names = []
    while widget is not None and len(names) < 4:
        names.append(widget.objectName() or type(widget).__name__)
        widget = widget.parentWidget()
    return "/".join(reversed(names))


def _text_size(label: QLabel) -> tuple[float, float]:
    """Width and height the label's text needs unwrapped."""
    if label.textFormat() == Qt.TextFormat.RichText or (
            label.textFormat() == Qt.TextFormat.AutoText and GuiQt.mightBeRichText(label.text())):
        document = QTextDocument()
        document.setDefaultFont(label.font())
        document.setDocumentMargin(0)
        document.setHtml(label.text())
        return document.idealWidth(), document.size().height()
    metrics = QFontMetrics(label.font())
    lines = label.text().split("\n")
    return (max(metrics.horizontalAdvance(line) for line in lines),
            metrics.lineSpacing() * len(lines))


def label_problem(label: QLabel) -> str | None:
    """Why a label's text does not fit its box (None when it does)."""
    if not label.text() or label.pixmap() is not None and not label.pixmap().isNull():
        return None
    room = label.contentsRect().adjusted(label.margin(), label.margin(),
                                         -label.margin(), -label.margin())
    if label.wordWrap():
        need = label.heightForWidth(label.width())
        if need > label.height() + SLACK:
            return (f"label {_name(label)} needs {need} px of height, has {label.height()}: "
                    f"{label.text()[:60]!r}")
        return None
    width, _ = _text_size(label)
    if width > room.width() + SLACK:
        return (f"label {_name(label)} needs {width:.0f} px of width, has {room.width()}: "
                f"{label.text()[:60]!r}")
    return None


def header_problems(header: QHeaderView) -> list[str]:
    """Sections whose text is wider than the section, and a horizontal header longer than its
    table (which then needs scrolling sideways to be read)."""
    model = header.model()
    if model is None:
        return []
    out = []
    metrics = header.fontMetrics()
    margin = header.style().pixelMetric(QStyle.PixelMetric.PM_HeaderMargin, None, header)
    arrow = header.style().pixelMetric(QStyle.PixelMetric.PM_HeaderMarkSize, None, header)
    horizontal = header.orientation() == Qt.Orientation.Horizontal
    for section in range(header.count()):
        if header.isSectionHidden(section):
            continue
        text = model.headerData(section, header.orientation(), Qt.ItemDataRole.DisplayRole)
        if not text:
            continue
        need = max(metrics.horizontalAdvance(line) for line in str(text).splitlines()) + 2 * margin
        if header.isSortIndicatorShown() and header.sortIndicatorSection() == section:
            need += arrow
        size = header.sectionSize(section) if horizontal else header.width()
        if need > size + SLACK:
            out.append(f"header {_name(header)} section {text!r} needs {need} px, has {size}")
    if horizontal and header.length() > header.viewport().width() + SLACK:
        out.append(f"header {_name(header)} is {header.length()} px long in "
                   f"{header.viewport().width()} px: its table scrolls sideways")
    return out


def button_problem(button: QAbstractButton) -> str | None:
    """A button (or check box) narrower than its text needs."""
    if not button.text():
        return None
    need = button.sizeHint().width()
    if need > button.width() + SLACK:
        return f"button {_name(button)} needs {need} px, has {button.width()}: {button.text()!r}"
    return None


def tab_bar_problem(bar: QTabBar) -> str | None:
    """A tab bar whose tabs do not all fit (scroll arrows or elided titles)."""
    need = sum(bar.tabRect(i).width() for i in range(bar.count()))
    if need > bar.width() + SLACK:
        return f"tab bar {_name(bar)} needs {need} px, has {bar.width()}"
    return None


def overflow_problem(widget: QWidget) -> str | None:
    """A widget running past the right edge of the scroll area's viewport (or window) that
    shows it: its right part cannot be seen without scrolling sideways."""
    parent = widget.parentWidget()
    while parent is not None and not isinstance(parent, QAbstractScrollArea):
        parent = parent.parentWidget()
    frame = parent.viewport() if parent is not None else widget.window()
    right = widget.mapTo(frame, widget.rect().topRight()).x() if frame.isAncestorOf(
        widget) else None
    if right is not None and right > frame.width() + SLACK:
        return (f"{type(widget).__name__} {_name(widget)} reaches x={right}, past the "
                f"{frame.width()} px it is shown in")
    return None


def chart_problems(chart) -> list[str]:
    """Titles, axis labels, tick labels and texts in the plot (line labels, cell values) of
    a pyqtgraph widget drawn outside it or outside their plot."""
    import pyqtgraph as pg

    view = QRectF(chart.rect())
    out = []
    image = QImage(8, 8, QImage.Format.Format_ARGB32)
    for item in chart.scene().items():
        if not item.isVisible():
            continue
        if isinstance(item, pg.LabelItem) and item.text:
            rect = _text_rect(item.item)
            if rect.width() > item.mapRectToScene(item.boundingRect()).width() + SLACK:
                out.append(f"chart {_name(chart)} title {item.text[:50]!r} is "
                           f"{rect.width():.0f} px wide in a {item.width():.0f} px place")
            elif not _inside(rect, view):
                out.append(f"chart {_name(chart)} title {item.text[:50]!r} is cut at the edge")
        if isinstance(item, pg.TextItem) and item.textItem.toPlainText():
            box = item.getViewBox()
            rect = _text_rect(item.textItem)
            if box is not None and not _inside(rect, box.mapRectToScene(box.boundingRect())):
                out.append(f"chart {_name(chart)} text {item.textItem.toPlainText()[:40]!r} "
                           "is cut at the edge of the plot")
        if isinstance(item, pg.AxisItem):
            if item.label.isVisible() and item.labelText:
                rect = _text_rect(item.label)
                if not _inside(rect, view):
                    out.append(f"chart {_name(chart)} {item.orientation} axis label "
                               f"{item.labelText!r} is cut at the edge")
                elif not _inside(rect, item.mapRectToScene(item.boundingRect())):
                    out.append(f"chart {_name(chart)} {item.orientation} axis label "
                               f"{item.labelText!r} is longer than its axis")
            painter = QPainter(image)
            try:
                specs = item.generateDrawSpecs(painter)
            finally:
                painter.end()
            if specs is None:
                continue
            for rect, _flags, text in specs[2]:
                scene = item.mapRectToScene(QRectF(rect))
                if not _inside(scene, view):
                    out.append(f"chart {_name(chart)} {item.orientation} tick label "
                               f"{text!r} is cut at the edge")
                    break
    return out


def _text_rect(text) -> QRectF:
    """Where a graphics text item's text lies in the scene (without its blank margin)."""
    margin = text.document().documentMargin()
    return text.mapRectToScene(text.boundingRect().adjusted(margin, margin, -margin, -margin))


def _inside(inner: QRectF, outer: QRectF) -> bool:
    return (inner.left() >= outer.left() - SLACK and inner.top() >= outer.top() - SLACK
            and inner.right() <= outer.right() + SLACK
            and inner.bottom() <= outer.bottom() + SLACK)


def layout_problems(root: QWidget) -> list[str]:
    """Every cut-short text of the widgets of ``root`` that are visible now (pages of tab and
    stacked widgets not in front are not visible, so they are left out)."""
    import pyqtgraph as pg

    out: list[str] = []
    for widget in [root, *root.findChildren(QWidget)]:
        if not widget.isVisible() or widget.width() <= 0 or widget.height() <= 0:
            continue
        problem: str | None = None
        if isinstance(widget, QLabel):
            problem = label_problem(widget)
        elif isinstance(widget, QAbstractButton):
            problem = button_problem(widget)
        elif isinstance(widget, QTabBar):
            problem = tab_bar_problem(widget)
        elif isinstance(widget, QHeaderView):
            out.extend(header_problems(widget))
        elif isinstance(widget, pg.GraphicsView):
            out.extend(chart_problems(widget))
        if problem:
            out.append(problem)
        if isinstance(widget, QLabel | QAbstractButton) and (problem := overflow_problem(widget)):
            out.append(problem)
    return out
