"""The catalogue side of the window: full-text search, filters and the sortable idea table
(filtered, searched and sorted in SQL, read a page at a time: see :mod:`hunchbook.gui.models`)."""

from __future__ import annotations

from collections.abc import Sequence

from PySide6.QtCore import QItemSelectionModel, QModelIndex, Qt, QTimer, Signal
from PySide6.QtGui import QResizeEvent
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QGridLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import HunchbookError
from hunchbook.core.verdict import VERDICTS
from hunchbook.gui.feedback import one_line
from hunchbook.gui.models import ID_ROLE, IdeaTableModel
from hunchbook.store.records import IdeaChoices
from hunchbook.store.vocab import STAGE_WORDS

#: Quiet time after the last key press before the search runs (ms).
SEARCH_DELAY_MS = 200
#: Room beside a cell's text, and beside a header's title for its sort arrow (pixels).
CELL_PADDING, HEADER_PADDING = 14, 26
_ANY = "Any"


#: Columns left out, in this order, while the table is too narrow to show them beside a title
#: of :data:`TITLE_CHARS` characters (they come back when it widens).
SPARE_COLUMNS = (IdeaTableModel.UPDATED, IdeaTableModel.TRIALS)
TITLE_CHARS = 18
#: Title room the catalogue asks for when the window has width to spare (most titles whole).
WANTED_TITLE_CHARS = 42


class CataloguePanel(QWidget):
    """Search box, filters (stage, verdict, market, tag, author, waiting for me) and the idea
    table.

    Signals
    -------
    idea_selected(int)
        The idea chosen in the table (-1 when none is).
    """

    idea_selected = Signal(int)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._catalogue: Catalogue | None = None
        self._total = 0
        self.model = IdeaTableModel(self)

        self.search = QLineEdit(self)
        self.search.setObjectName("searchBox")
        self.search.setPlaceholderText("Search titles, hypotheses, rationales and journal\u2026")
        self.search.setClearButtonEnabled(True)
        self._search_timer = QTimer(self, singleShot=True, interval=SEARCH_DELAY_MS)
        self._search_timer.timeout.connect(self.apply_filters)
        self.search.textChanged.connect(self._search_timer.start)
        self.search.returnPressed.connect(self.apply_filters)

        # the labels the table shows (the command line prints and accepts the same ones)
        self.stage = self._combo("Stage", [(v, k) for k, v in STAGE_WORDS.labels.items()])
        self.verdict = self._combo("Verdict", [(v, k) for k, v in VERDICTS.labels.items()])
        self.market = self._combo("Market", [])
        self.tag = self._combo("Tag", [])
        self.author = self._combo("Author", [])
        self._user = ""
        self.waiting = QCheckBox("Waiting for me", self)
        self.waiting.setObjectName("waitingFilter")
        self.waiting.setToolTip(
            "Only the ideas whose next step is yours: submitted ideas others wrote (your "
            "review, unless another reviewer is named), your returned ideas (your rework), your "
            "accepted ideas (your run), tested ideas others wrote whose verdict says promote "
            "(their promotion review) and your tested ideas with another verdict (rework or "
            "shelve).")
        self.waiting.toggled.connect(self.apply_filters)

        self.table = QTableView(self)
        self.table.setObjectName("ideaTable")
        self.table.setModel(self.model)
        self.table.setSortingEnabled(True)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setAlternatingRowColors(True)
        self.table.setWordWrap(False)
        self.table.verticalHeader().hide()
        self.table.setShowGrid(False)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setSectionResizeMode(IdeaTableModel.TITLE, QHeaderView.ResizeMode.Stretch)
        # every column but the title as narrow as its longest text: the title gets the rest
        for column, texts in ((IdeaTableModel.STAGE, tuple(STAGE_WORDS.labels.values())),
                              (IdeaTableModel.VERDICT, tuple(VERDICTS.labels.values())),
                              (IdeaTableModel.SHARPE, ("-0.00",)),
                              (IdeaTableModel.TRIALS, ("9,999",)),
                              (IdeaTableModel.UPDATED, ("2000-00-00",))):
            header.resizeSection(column, self._fit(column, texts))
        self._widths = {c: header.sectionSize(c) for c in range(header.count())}
        self._title_room = TITLE_CHARS * self.fontMetrics().horizontalAdvance("0")
        header.setHighlightSections(False)
        header.setMinimumSectionSize(40)
        self.table.sortByColumn(IdeaTableModel.UPDATED, Qt.SortOrder.DescendingOrder)
        self.table.selectionModel().currentRowChanged.connect(self._current_changed)
        self._kept = -1  # the idea selected while the rows are read anew
        self.model.modelAboutToBeReset.connect(self._keep_selection)
        self.model.modelReset.connect(self._restore_selection)

        self.count = QLabel(self)
        self.count.setObjectName("ideaCount")

        filters = QGridLayout()
        filters.setContentsMargins(0, 0, 0, 0)
        for n, (label, combo) in enumerate((("Stage", self.stage), ("Verdict", self.verdict),
                                            ("Market", self.market), ("Tag", self.tag),
                                            ("Author", self.author))):
            filters.addWidget(QLabel(label, self), (n // 3) * 2, n % 3)
            filters.addWidget(combo, (n // 3) * 2 + 1, n % 3)
        filters.addWidget(self.waiting, 3, 2)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(6, 6, 6, 6)
        layout.addWidget(self.search)
        layout.addLayout(filters)
        layout.addWidget(self.table, 1)
        layout.addWidget(self.count)

    # -- public API -----------------------------------------------------------------------
    def resizeEvent(self, event: QResizeEvent) -> None:  # noqa: N802 (Qt override)
        """Leave out the spare columns the width cannot hold beside a readable title."""
        super().resizeEvent(event)
        self._fit_columns()

    def wanted_width(self) -> int:
        """The width that shows every column beside a title of :data:`WANTED_TITLE_CHARS`."""
        margins = self.layout().contentsMargins()
        title = WANTED_TITLE_CHARS * self.fontMetrics().horizontalAdvance("0")
        return (title + sum(width for c, width in self._widths.items()
                                       if c != IdeaTableModel.TITLE)
                + 2 * self.table.frameWidth() + self.table.verticalScrollBar().sizeHint().width()
                + margins.left() + margins.right())

    def _fit_columns(self) -> None:
        header = self.table.horizontalHeader()
        room = (self.table.width() - 2 * self.table.frameWidth()
                - self.table.verticalScrollBar().sizeHint().width())
        need = self._title_room + sum(width for c, width in self._widths.items()
                                      if c != IdeaTableModel.TITLE)
        for column in SPARE_COLUMNS:
            header.setSectionHidden(column, need > room)
            if need > room:
                need -= self._widths[column]
            else:
                header.resizeSection(column, self._widths[column])

    def set_user(self, user: str) -> None:
        """Whose next steps the "Waiting for me" filter shows."""
        self._user = user
        self.apply_filters()

    def set_catalogue(self, catalogue: Catalogue | None) -> None:
        """Show this catalogue's ideas (the filters are reset)."""
        self._catalogue = catalogue
        self.reload()

    def reload(self) -> None:
        """Read the ideas anew from the catalogue; keeps filters and the selected idea."""
        catalogue = self._catalogue
        self._fill_choices(catalogue.idea_choices() if catalogue is not None else
                           IdeaChoices((), (), ()))
        self._total = len(catalogue.idea_ids()) if catalogue is not None else 0
        self.apply_filters()

    def refresh_idea(self, idea_id: int) -> None:
        """Read one idea's line anew (after an edit, a run, a review), and those of its family
        (their trial counts move together): rows change in place, and an idea the filters now
        leave out (a review or run moves it to someone else's list) goes."""
        if self._catalogue is None:
            return
        self.model.refresh_ideas([m.id for _, m in self._catalogue.family(idea_id).members()])
        self._show_count()

    def idea_count(self) -> int:
        """How many ideas the catalogue holds (whatever the filters)."""
        return self._total

    def apply_filters(self) -> None:
        """Filter the table by the search text and the chosen filters."""
        self._search_timer.stop()
        text = self.search.text().strip()
        waiting = self.waiting.isChecked() and bool(self._user)
        filters = dict(stage=self.stage.currentData(), verdict=self.verdict.currentData(),
                       market=self.market.currentData(), tag=self.tag.currentData(),
                       author=self.author.currentData(), text=text or None,
                       waiting_for=self._user if waiting else None)
        try:
            self.model.set_query(self._catalogue, **filters)
            self.search.setToolTip("")
        except HunchbookError as exc:
            self.model.set_query(self._catalogue, among=())
            self.search.setToolTip(one_line(exc))
        self._show_count()

    def focus_search(self) -> None:
        """Put the keyboard in the search box with its text selected."""
        self.search.setFocus(Qt.FocusReason.ShortcutFocusReason)
        self.search.selectAll()

    def current_idea_id(self) -> int:
        """The selected idea's id, or -1."""
        index = self.table.selectionModel().currentIndex()
        return int(index.data(ID_ROLE)) if index.isValid() else -1

    def select_idea(self, idea_id: int) -> bool:
        """Select an idea in the table (clearing the filters if they hide it)."""
        row = self.model.load_row(idea_id)
        if row < 0 and self._catalogue is not None and self._catalogue.idea_summaries([idea_id]):
            self.clear_filters()
            row = self.model.load_row(idea_id)
        if row < 0:
            return False
        index = self.model.index(row, 0)
        self.table.selectionModel().setCurrentIndex(
            index, QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows)
        self.table.scrollTo(index)
        return True

    def clear_filters(self) -> None:
        """Empty the search box and set every filter to any."""
        for combo in (self.stage, self.verdict, self.market, self.tag, self.author):
            combo.setCurrentIndex(0)
        self.waiting.setChecked(False)
        self.search.clear()
        self.apply_filters()

    def visible_ids(self) -> list[int]:
        """Ids of the ideas the table has read so far, top to bottom."""
        return [int(self.model.index(r, 0).data(ID_ROLE)) for r in range(self.model.rowCount())]

    # -- internals ------------------------------------------------------------------------
    def _fit(self, column: int, texts: Sequence[str]) -> int:
        """The width of a column: its longest text, or its header with the sort arrow."""
        cells = self.table.fontMetrics()
        heading = self.table.horizontalHeader().fontMetrics()
        title = str(self.model.COLUMNS[column])
        return max(max(cells.horizontalAdvance(t) for t in texts) + CELL_PADDING,
                   heading.horizontalAdvance(title) + HEADER_PADDING)

    def _combo(self, name: str, items: Sequence[tuple[str, str]]) -> QComboBox:
        combo = QComboBox(self)
        combo.setObjectName(f"{name.lower()}Filter")
        combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        combo.setMinimumContentsLength(6)
        combo.addItem(_ANY, None)
        for label, value in items:
            combo.addItem(label, value)
        combo.currentIndexChanged.connect(self.apply_filters)
        return combo

    def _fill_choices(self, choices: IdeaChoices) -> None:
        for combo, values in ((self.market, choices.markets), (self.tag, choices.tags),
                              (self.author, choices.authors)):
            chosen = combo.currentData()
            combo.blockSignals(True)
            combo.clear()
            combo.addItem(_ANY, None)
            for value in values:
                combo.addItem(value, value)
            combo.setCurrentIndex(max(0, combo.findData(chosen)) if chosen else 0)
            combo.blockSignals(False)

    def _show_count(self) -> None:
        shown, total = self.model.matching_count(), self._total
        self.count.setText(f"{total} ideas" if shown == total else f"{shown} of {total} ideas")

    def _keep_selection(self) -> None:
        self._kept = self.current_idea_id()

    def _restore_selection(self) -> None:
        """After a new sort or filter, select the idea selected before (when it matches)."""
        kept, self._kept = self._kept, -1
        row = self.model.load_row(kept) if kept >= 0 else -1
        if row >= 0:
            index = self.model.index(row, 0)
            self.table.selectionModel().setCurrentIndex(
                index, QItemSelectionModel.SelectionFlag.ClearAndSelect
                | QItemSelectionModel.SelectionFlag.Rows)
            self.table.scrollTo(index)

    def _current_changed(self, current: QModelIndex, previous: QModelIndex) -> None:
        self.idea_selected.emit(int(current.data(ID_ROLE)) if current.isValid() else -1)
