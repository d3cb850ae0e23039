"""Qt item models over the catalogue's records: ideas and runs (the journal is a timeline of
rendered entries: :mod:`hunchbook.gui.journal_html`).

The run model is a thin adapter over lists of the catalogue's frozen records.
Each model keeps display text and raw sort values apart (``SORT_ROLE`` gives the raw value:
numbers stay numbers, missing values sort last).

The idea model reads the catalogue itself, a page at a time: filtering, full-text search and
sorting are done in SQL (``Catalogue.idea_ids``, with an index per order), which gives the
ordered ids of the matching ideas (a few milliseconds for ten thousand); their lines are read
:data:`PAGE` at a time as the view scrolls (``canFetchMore``/``fetchMore``). A list of ids is
kept rather than paging by offset so that a row refreshed in place after an edit (even one
whose sort key changed) never shifts the pages still to be read.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import (
    QAbstractTableModel,
    QModelIndex,
    QPersistentModelIndex,
    Qt,
)
from PySide6.QtGui import QColor, QFont

from hunchbook.core import formats
from hunchbook.core.formats import count, date
from hunchbook.core.verdict import VERDICTS
from hunchbook.gui.charts.run_figures import verdict_text
from hunchbook.store.records import IdeaSummary, RunRecord
from hunchbook.store.vocab import STAGE_WORDS

if TYPE_CHECKING:
    from hunchbook.catalogue import Catalogue

#: Role giving a cell's raw value for sorting.
SORT_ROLE = Qt.ItemDataRole.UserRole
#: Role giving the id of the row's record (idea, run or journal entry).
ID_ROLE = Qt.ItemDataRole.UserRole + 1
#: Idea lines read from the catalogue at a time.
PAGE = 200

Index = QModelIndex | QPersistentModelIndex


def verdict_label(outcome: str | None) -> str:
    """The product label of a verdict outcome key ('' when there is none)."""
    return VERDICTS.label(outcome)


def format_sharpe(value: float | None) -> str:
    """A Sharpe ratio with two decimals, or an en dash when unknown."""
    if value is None or not math.isfinite(value):
        return "\u2013"
    return f"{value:.2f}"


def _sort_key(value: Any, descending: bool) -> tuple[int, Any]:
    """Missing values (None, NaN, '') last in either direction."""
    missing = value is None or value == "" or (isinstance(value, float) and math.isnan(value))
    if missing:
        return (1, 0) if not descending else (-1, 0)
    return (0, value.casefold() if isinstance(value, str) else value)


class _RecordTableModel(QAbstractTableModel):
    """A read-only table over a list of records, one row each, with named columns.

    Subclasses define ``COLUMNS`` (header titles) and ``_display``/``_raw`` per column.
    """

    COLUMNS: tuple[str, ...] = ()

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[Any] = []
        self._sort_column = -1
        self._sort_order = Qt.SortOrder.AscendingOrder

    # -- the Qt model API ---------------------------------------------------------------
    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self.COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if (orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole
                and 0 <= section < len(self.COLUMNS)):
            return self.COLUMNS[section]
        return None

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid() or index.row() >= len(self._rows):
            return None
        record = self._rows[index.row()]
        column = index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            return self._display(record, column)
        if role == SORT_ROLE:
            return self._raw(record, column)
        if role == ID_ROLE:
            return record.id
        if role == Qt.ItemDataRole.ToolTipRole:
            return self._tooltip(record, column)
        if role == Qt.ItemDataRole.TextAlignmentRole and self._is_number(column):
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return self._extra(record, column, role)

    def sort(self, column: int, order: Qt.SortOrder = Qt.SortOrder.AscendingOrder) -> None:
        """Sort the rows by the raw values of ``column`` (missing values last)."""
        if not 0 <= column < len(self.COLUMNS):
            return
        self._sort_column, self._sort_order = column, order
        self.layoutAboutToBeChanged.emit()
        before = self.persistentIndexList()
        ids = [self._rows[i.row()].id for i in before]
        self._sort_rows()
        row_of = {r.id: n for n, r in enumerate(self._rows)}
        self.changePersistentIndexList(
            before, [self.index(row_of[i], p.column()) for i, p in zip(ids, before, strict=True)])
        self.layoutChanged.emit()

    # -- our API --------------------------------------------------------------------------
    def set_records(self, records: Iterable[Any]) -> None:
        """Replace every row (the current sort order is kept)."""
        self.beginResetModel()
        self._rows = list(records)
        self._sort_rows()
        self.endResetModel()

    def records(self) -> list[Any]:
        """The rows in display order."""
        return list(self._rows)

    def record_at(self, row: int) -> Any:
        """The record on ``row``."""
        return self._rows[row]

    def row_of(self, record_id: int) -> int:
        """The row holding the record with this id, or -1."""
        return next((n for n, r in enumerate(self._rows) if r.id == record_id), -1)

    # -- hooks ----------------------------------------------------------------------------
    def _display(self, record: Any, column: int) -> Any:
        return None

    def _raw(self, record: Any, column: int) -> Any:
        return self._display(record, column)

    def _tooltip(self, record: Any, column: int) -> Any:
        return None

    def _is_number(self, column: int) -> bool:
        return False

    def _extra(self, record: Any, column: int, role: int) -> Any:
        return None

    def _sort_rows(self) -> None:
        if self._sort_column < 0:
            return
        descending = self._sort_order == Qt.SortOrder.DescendingOrder
        column = self._sort_column
        self._rows.sort(key=lambda r: _sort_key(self._raw(r, column), descending),
                        reverse=descending)


class IdeaTableModel(_RecordTableModel):
    """Ideas (``IdeaSummary`` lines) of a catalogue matching filters, read a page at a time:
    title, stage, last verdict, net Sharpe, trials, updated. Sorting asks the catalogue anew
    (a model reset); :meth:`refresh_ideas` changes rows in place."""

    COLUMNS = ("Title", "Stage", "Last verdict", "Net SR", "Trials", "Updated")
    TITLE, STAGE, VERDICT, SHARPE, TRIALS, UPDATED = range(6)
    #: The catalogue's order of each column (see ``Catalogue.idea_ids``).
    ORDERS = ("title", "stage", "verdict", "sharpe", "trials", "updated")
    #: Header tooltips, one per column.
    TIPS = ("The idea's title", "Where the idea is in the pipeline",
            "Verdict of the latest run",
            "Net Sharpe ratio (after costs, annualised) of the latest run's chosen set",
            "Distinct parameter sets ever run (the trial count)", "Last change")

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._catalogue: Catalogue | None = None
        self._filters: dict[str, Any] = {}
        self._ids: list[int] = []  # every matching idea, in order; the first rows are loaded
        self._sort_column = self.UPDATED
        self._sort_order = Qt.SortOrder.DescendingOrder

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if (role == Qt.ItemDataRole.ToolTipRole and orientation == Qt.Orientation.Horizontal
                and 0 <= section < len(self.TIPS)):
            return self.TIPS[section]
        return super().headerData(section, orientation, role)

    # -- paging ---------------------------------------------------------------------------
    def canFetchMore(self, parent: Index = QModelIndex()) -> bool:  # noqa: B008, N802
        return not parent.isValid() and len(self._rows) < len(self._ids)

    def fetchMore(self, parent: Index = QModelIndex()) -> None:  # noqa: B008, N802
        if parent.isValid() or not self.canFetchMore(parent):
            return
        start = len(self._rows)
        lines = self._read(start, PAGE)
        if lines:
            self.beginInsertRows(QModelIndex(), start, start + len(lines) - 1)
            self._rows.extend(lines)
            self.endInsertRows()

    # -- our API --------------------------------------------------------------------------
    def set_query(self, catalogue: Catalogue | None, **filters: Any) -> None:
        """Show the ideas of ``catalogue`` matching ``filters`` (the keywords of
        ``Catalogue.idea_ids``) in the current sort order, the first page read.

        Raises
        ------
        HunchbookError
            A filter or the search text is refused (the rows shown stay as they were).
        """
        ids = self._query(catalogue, filters)
        self._catalogue, self._filters = catalogue, dict(filters)
        self._reset(ids)

    def sort(self, column: int, order: Qt.SortOrder = Qt.SortOrder.AscendingOrder) -> None:
        """Sort by ``column`` in SQL (missing values last): the rows are read anew."""
        if not 0 <= column < len(self.COLUMNS):
            return
        self._sort_column, self._sort_order = column, order
        if self._catalogue is not None:
            self._reset(self._query(self._catalogue, self._filters))

    def matching_count(self) -> int:
        """How many ideas match (loaded or not)."""
        return len(self._ids)

    def idea_at(self, row: int) -> IdeaSummary:
        """The idea on ``row``."""
        return self._rows[row]

    def load_row(self, idea_id: int) -> int:
        """Read pages until this idea's row is loaded; its row, or -1 when it does not match."""
        if idea_id not in self._ids:
            return -1
        position = self._ids.index(idea_id)
        while len(self._rows) <= position and self.canFetchMore():
            self.fetchMore()
        return self.row_of(idea_id)

    def refresh_ideas(self, idea_ids: Sequence[int]) -> None:
        """Read these ideas' lines anew after they changed: a loaded row is replaced in place
        (``dataChanged``, the order kept), an idea that no longer matches the filters is
        removed and one that now matches is inserted where the sort order puts it."""
        if self._catalogue is None or not idea_ids:
            return
        matching = set(self._catalogue.idea_ids(among=idea_ids, **self._filters))
        lines = {i.id: i for i in self._catalogue.idea_summaries(idea_ids)}
        for idea_id in idea_ids:
            row = self.row_of(idea_id)
            if idea_id in matching and row >= 0:
                self._rows[row] = lines[idea_id]
                self.dataChanged.emit(self.index(row, 0), self.index(row, len(self.COLUMNS) - 1))
            elif idea_id in matching and idea_id not in self._ids:
                self._insert(lines[idea_id])
            elif idea_id not in matching and row >= 0:
                self.beginRemoveRows(QModelIndex(), row, row)
                del self._rows[row]
                self._ids.remove(idea_id)
                self.endRemoveRows()
            elif idea_id not in matching and idea_id in self._ids:
                self._ids.remove(idea_id)  # not read yet: nothing shown changes

    # -- internals ------------------------------------------------------------------------
    def _order(self) -> tuple[str, bool]:
        return (self.ORDERS[self._sort_column],
                self._sort_order == Qt.SortOrder.DescendingOrder)

    def _query(self, catalogue: Catalogue | None, filters: dict[str, Any]) -> list[int]:
        if catalogue is None:
            return []
        order, descending = self._order()
        return catalogue.idea_ids(order=order, descending=descending, **filters)

    def _reset(self, ids: list[int]) -> None:
        self.beginResetModel()
        self._ids, self._rows = ids, []
        self._rows = self._read(0, PAGE)
        self.endResetModel()

    def _read(self, start: int, count: int) -> list[IdeaSummary]:
        """The lines of the ids from ``start`` on (ids of ideas gone are dropped)."""
        assert self._catalogue is not None or not self._ids
        if self._catalogue is None:
            return []
        wanted = self._ids[start:start + count]
        lines = self._catalogue.idea_summaries(wanted)
        if len(lines) < len(wanted):
            found = {i.id for i in lines}
            self._ids[start:start + count] = [i for i in wanted if i in found]
        return lines

    def _insert(self, idea: IdeaSummary) -> None:
        """Put a newly matching idea before the first idea the catalogue's order puts after
        it (at the end when none)."""
        assert self._catalogue is not None
        order, descending = self._order()
        ordered = self._catalogue.idea_ids(order=order, descending=descending, **self._filters)
        shown = set(self._ids)
        after = ordered[ordered.index(idea.id) + 1:] if idea.id in ordered else []
        position = next((self._ids.index(i) for i in after if i in shown), len(self._ids))
        if position < len(self._rows) or len(self._rows) == len(self._ids):
            self.beginInsertRows(QModelIndex(), position, position)
            self._ids.insert(position, idea.id)
            self._rows.insert(position, idea)
            self.endInsertRows()
        else:
            self._ids.insert(position, idea.id)  # among the rows not read yet

    def _display(self, idea: IdeaSummary, column: int) -> Any:
        if column == self.TITLE:
            return idea.title
        if column == self.STAGE:
            return STAGE_WORDS.label(idea.stage)
        if column == self.VERDICT:
            return verdict_label(idea.last_verdict)
        if column == self.SHARPE:
            return "" if idea.last_verdict is None else format_sharpe(idea.last_net_sharpe)
        if column == self.TRIALS:
            return count(idea.trial_count) if idea.trial_count else ""
        return date(idea.updated_at)

    def _raw(self, idea: IdeaSummary, column: int) -> Any:
        if column == self.SHARPE:
            return idea.last_net_sharpe
        if column == self.TRIALS:
            return idea.trial_count
        if column == self.UPDATED:
            return idea.updated_at
        return self._display(idea, column)

    def _tooltip(self, idea: IdeaSummary, column: int) -> Any:
        markets = ", ".join(idea.markets) or "no markets yet"
        return (f"{idea.title}\n{idea.hypothesis}\n\nBy {idea.submitted_by} \u00b7 {markets}"
                f" \u00b7 updated {formats.moment(idea.updated_at)}")

    def _is_number(self, column: int) -> bool:
        return column in (self.SHARPE, self.TRIALS)


class RunTableModel(_RecordTableModel):
    """An idea's runs: number, when, rule revision, sets, chosen set, net Sharpe, verdict,
    trials counted, and whether it lies within the pre-registration frozen at the first run
    (a run outside is marked in the warning colour, its finding in the tooltip)."""

    COLUMNS = ("Run", "Recorded", "Revision", "Sets", "Chosen set", "Net Sharpe", "Verdict",
               "Trials", "Pre-registration")
    RUN, RECORDED, REVISION, SETS, CHOSEN, SHARPE, VERDICT, TRIALS, PREREG = range(9)
    #: Colour of a run outside the pre-registration.
    OUTSIDE_COLOUR = QColor(176, 120, 0)

    def set_runs(self, runs: Sequence[RunRecord]) -> None:
        """Show these runs."""
        self.set_records(runs)

    def run_at(self, row: int) -> RunRecord:
        """The run on ``row``."""
        return self._rows[row]

    def _display(self, run: RunRecord, column: int) -> Any:
        if column == self.RUN:
            return str(run.id)
        if column == self.RECORDED:
            return formats.moment(run.recorded_at)
        if column == self.REVISION:
            return str(run.revision_number)
        if column == self.SETS:
            return str(run.set_count)
        if column == self.CHOSEN:
            return ", ".join(f"{k}={v:g}" for k, v in run.chosen_params.items()) or "\u2013"
        if column == self.SHARPE:
            return format_sharpe(run.chosen_net_sharpe)
        if column == self.VERDICT:
            return verdict_text(run).label
        if column == self.PREREG:
            return prereg_label(run)
        return str(run.trial_count)

    def _raw(self, run: RunRecord, column: int) -> Any:
        raw = {self.RUN: run.id, self.RECORDED: run.recorded_at,
               self.REVISION: run.revision_number, self.SETS: run.set_count,
               self.SHARPE: run.chosen_net_sharpe, self.TRIALS: run.trial_count}
        return raw[column] if column in raw else self._display(run, column)

    def _tooltip(self, run: RunRecord, column: int) -> Any:
        if column == self.PREREG:
            prereg = run.preregistration
            if prereg is None:
                return "Recorded without a pre-registration to check it against."
            return prereg.finding or (f"Within the pre-registration frozen at the first run "
                                      f"(version {prereg.version} in force).")
        return "\n".join(verdict_text(run).reasons) or None

    def _is_number(self, column: int) -> bool:
        return column in (self.RUN, self.REVISION, self.SETS, self.SHARPE, self.TRIALS)

    def _extra(self, run: RunRecord, column: int, role: int) -> Any:
        outside = run.preregistration is not None and not run.preregistration.within
        if outside and role == Qt.ItemDataRole.ForegroundRole and column in (self.RUN,
                                                                           self.PREREG):
            return self.OUTSIDE_COLOUR
        if outside and role == Qt.ItemDataRole.FontRole and column == self.PREREG:
            font = QFont()
            font.setBold(True)
            return font
        return None


def prereg_label(run: RunRecord) -> str:
    """The runs table's word for a run against its pre-registration."""
    prereg = run.preregistration
    if prereg is None:
        return "not checked"
    return "within" if prereg.within else "\u26a0 outside"
