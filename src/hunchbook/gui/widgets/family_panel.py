"""An idea's family in the Idea section: the tree of ideas linked as variants, each with its
stage, last verdict and own trials, and the dialog that records the idea as a variant of
another (picking the parent, asking why)."""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QTreeWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from hunchbook.catalogue import Catalogue
from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError
from hunchbook.core.formats import plural
from hunchbook.gui.feedback import one_line
from hunchbook.gui.models import ID_ROLE, verdict_label
from hunchbook.store.records import Family, FamilyMember, IdeaSummary

#: Columns of the family tree.
COLUMNS = ("Idea", "Stage", "Last verdict", "Own trials")
#: Most rows the tree shows before it scrolls.
MAX_ROWS = 8


class FamilyPanel(QWidget):
    """The family tree of the shown idea (the idea in bold) and the "Variant of…" button.

    Signals
    -------
    linked(int)
        The idea was recorded as a variant (its id); the family's trial counts changed.
    member_chosen(int)
        A member was double-clicked (its id), to be shown.
    message(str)
        A line for the status bar.
    """

    linked = Signal(int)
    member_chosen = Signal(int)
    message = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("familyPanel")
        self._catalogue: Catalogue | None = None
        self._user = ""
        self.family: Family | None = None
        self.summary = QLabel(self)
        self.summary.setObjectName("familySummary")
        self.summary.setWordWrap(True)
        self.tree = QTreeWidget(self)
        self.tree.setObjectName("familyTree")
        self.tree.setColumnCount(len(COLUMNS))
        self.tree.setHeaderLabels(list(COLUMNS))
        self.tree.setRootIsDecorated(True)
        self.tree.setUniformRowHeights(True)
        header = self.tree.header()
        header.setStretchLastSection(False)
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
        for column in range(1, len(COLUMNS)):
            header.setSectionResizeMode(column, QHeaderView.ResizeMode.ResizeToContents)
        self.tree.itemDoubleClicked.connect(self._double_clicked)
        self.variant_button = QPushButton("Variant of\u2026", self)
        self.variant_button.setObjectName("variantButton")
        self.variant_button.clicked.connect(self.open_variant_dialog)
        top = QHBoxLayout()
        top.addWidget(self.summary, 1)
        top.addWidget(self.variant_button, 0, Qt.AlignmentFlag.AlignTop)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(top)
        layout.addWidget(self.tree)

    def show_family(self, catalogue: Catalogue | None, idea_id: int | None, user: str) -> None:
        """Show the family of ``idea_id`` (None clears); ``user`` records links."""
        self._catalogue, self._user = catalogue, user
        self.tree.clear()
        self.family = None
        if catalogue is None or idea_id is None:
            self.summary.clear()
            self.variant_button.setEnabled(False)
            self._fit_height(1)
            return
        family = self.family = catalogue.family(idea_id)
        items: dict[int, QTreeWidgetItem] = {}
        for _, member in family.members():
            parent = items.get(member.link.parent_id) if member.link is not None else None
            item = QTreeWidgetItem(parent if parent is not None else self.tree, _cells(member))
            item.setData(0, ID_ROLE, member.id)
            item.setToolTip(0, _tooltip(member))
            if member.id == idea_id:
                font = item.font(0)
                font.setBold(True)
                for column in range(len(COLUMNS)):
                    item.setFont(column, font)
            items[member.id] = item
        self.tree.expandAll()
        self._fit_height(len(family))
        self.summary.setText(
            f"A family of {len(family)} ideas: {plural(family.trial_count, 'trial')} in all, each "
            "counted for every member's deflated Sharpe." if len(family) > 1 else
            "Not a variant of another idea. A variant counts the trials of its whole family.")
        own = next(m for _, m in family.members() if m.id == idea_id)
        self.variant_button.setEnabled(own.link is None)
        self.variant_button.setToolTip(
            "Record this idea as a variant of another (once; never undone)" if own.link is None
            else f"A variant of idea {own.link.parent_id} since "
                 f"{formats.date(own.link.set_at)} (links are never changed)")

    def _fit_height(self, rows: int) -> None:
        """As tall as the family (up to :data:`MAX_ROWS` rows; more scroll)."""
        row = max(self.tree.sizeHintForRow(0), self.fontMetrics().height() + 4)
        self.tree.setFixedHeight(self.tree.header().sizeHint().height()
                                 + row * min(max(rows, 1), MAX_ROWS)
                                 + 2 * self.tree.frameWidth() + 4)

    def member_ids(self) -> list[int]:
        """The ids shown in the tree, top to bottom."""
        return [] if self.family is None else [m.id for _, m in self.family.members()]

    def open_variant_dialog(self) -> VariantDialog | None:
        """Ask which idea the shown idea is a variant of, and why (window-modal)."""
        if self._catalogue is None or self.family is None:
            return None
        idea_id = self.family.idea_id
        family = set(self.member_ids())
        candidates = [i for i in self._catalogue.list_ideas() if i.id not in family]
        dialog = VariantDialog(idea_id, candidates, self)
        dialog.accepted.connect(lambda: self.record_variant(dialog.parent_id(),
                                                            dialog.reason.text()))
        dialog.finished.connect(dialog.deleteLater)
        dialog.open()
        return dialog

    def record_variant(self, parent_id: int | None, reason: str) -> bool:
        """Record the shown idea as a variant of ``parent_id`` with ``reason``."""
        if self._catalogue is None or self.family is None or parent_id is None:
            return False
        idea_id = self.family.idea_id
        try:
            self._catalogue.set_variant_of(idea_id, parent_id, by=self._user,
                                           reason=reason.strip())
        except HunchbookError as exc:
            self.message.emit(f"Not linked: {one_line(exc)}")
            return False
        self.show_family(self._catalogue, idea_id, self._user)
        self.message.emit(f"Idea {idea_id} is a variant of idea {parent_id}; its family counts "
                          f"{plural(self.family.trial_count if self.family else 0, 'trial')}.")
        self.linked.emit(idea_id)
        return True

    def _double_clicked(self, item: QTreeWidgetItem, _column: int) -> None:
        member = int(item.data(0, ID_ROLE))
        if self.family is not None and member != self.family.idea_id:
            self.member_chosen.emit(member)


class VariantDialog(QDialog):
    """Pick the idea the shown one is a variant of (filtered by typing) and say why."""

    def __init__(self, idea_id: int, candidates: list[IdeaSummary],
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("variantDialog")
        self.setWindowTitle(f"Idea {idea_id}: a variant of\u2026")
        self.filter = QLineEdit(self)
        self.filter.setObjectName("variantFilter")
        self.filter.setPlaceholderText("Type to narrow the list\u2026")
        self.filter.setClearButtonEnabled(True)
        self.ideas = QListWidget(self)
        self.ideas.setObjectName("variantParents")
        for idea in candidates:
            item = QListWidgetItem(f"{idea.id}  {idea.title}  ({idea.stage}, "
                                   f"{idea.submitted_by})", self.ideas)
            item.setData(ID_ROLE, idea.id)
        self.reason = QLineEdit(self)
        self.reason.setObjectName("variantReason")
        self.reason.setPlaceholderText("Why it is a variant (required; kept in the journal)")
        note = QLabel("From then on the trials of the whole family count for each member's "
                      "deflated Sharpe. A link is never undone.", self)
        note.setWordWrap(True)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel, self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.ok = buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.ok.setText("Record as variant")
        self.filter.textChanged.connect(self._narrow)
        self.ideas.currentItemChanged.connect(self._update)
        self.reason.textChanged.connect(self._update)
        form = QFormLayout(self)
        form.addRow(note)
        form.addRow("Find", self.filter)
        form.addRow("Variant of", self.ideas)
        form.addRow("Reason", self.reason)
        form.addRow(buttons)
        self.resize(620, 420)
        self._update()

    def parent_id(self) -> int | None:
        """The idea picked, or None."""
        item = self.ideas.currentItem()
        return None if item is None or item.isHidden() else int(item.data(ID_ROLE))

    def choose(self, idea_id: int) -> bool:
        """Pick an idea of the list by id."""
        for row in range(self.ideas.count()):
            if int(self.ideas.item(row).data(ID_ROLE)) == idea_id:
                self.ideas.setCurrentRow(row)
                return True
        return False

    def _narrow(self, text: str) -> None:
        words = text.casefold().split()
        for row in range(self.ideas.count()):
            item = self.ideas.item(row)
            item.setHidden(not all(w in item.text().casefold() for w in words))
        self._update()

    def _update(self, *_: object) -> None:
        ready = self.parent_id() is not None and bool(self.reason.text().strip())
        self.ok.setEnabled(ready)


def _cells(member: FamilyMember) -> list[str]:
    return [f"{member.id}  {member.title}", member.stage,
            verdict_label(member.last_verdict) or "no run yet", str(member.own_trials)]


def _tooltip(member: FamilyMember) -> str:
    text = f"By {member.submitted_by}."
    if member.link is not None:
        text += (f" Variant of idea {member.link.parent_id}, linked by {member.link.set_by} on "
                 f"{formats.date(member.link.set_at)}: {member.link.reason}")
    return text
