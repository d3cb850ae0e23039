"""The Idea section: an idea's own fields, autosaved through ``Catalogue.update_idea``.

Edits are saved after a short quiet time (and before another idea is shown). After the first
run, pre-registration freezes the rationale, the markets and the parameter space: they show
read-only with a note, and the "Amend with reason" dialog changes them with a reason the person
types (``Catalogue.amend_preregistration`` keeps it as a new pre-registration version). The
dialog offers the parameter space of the rules given (a refused quick run gives the editor's)
or of the latest saved revision, when it differs from the pre-registered one.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from PySide6.QtCore import Qt, QTime, QTimer, Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QFrame,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QListWidget,
    QListWidgetItem,
    QPlainTextEdit,
    QPushButton,
    QScrollArea,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError
from hunchbook.core.prereg import describe_space
from hunchbook.gui.feedback import one_line
from hunchbook.gui.sections.base import IdeaSection, SectionContext
from hunchbook.gui.widgets.family_panel import FamilyPanel
from hunchbook.store.records import Idea
from hunchbook.store.revisions import analyse
from hunchbook.store.vocab import RATIONALE_KINDS, RATIONALE_WORDS, SOURCE_KINDS, SOURCE_WORDS

#: Quiet time after the last edit before the idea is saved (ms).
AUTOSAVE_DELAY_MS = 700


class MarketPicker(QListWidget):
    """Checkable markets: the data folder's market library plus any market already chosen
    (those not in the library are marked)."""

    changed = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("marketPicker")
        self.setMaximumHeight(150)
        self.itemChanged.connect(lambda _item: self.changed.emit())

    def set_markets(self, library: Iterable[str], chosen: Iterable[str]) -> None:
        """List ``library`` ∪ ``chosen`` with ``chosen`` ticked (no signal)."""
        chosen = tuple(chosen)
        known = list(library)
        self.blockSignals(True)
        self.clear()
        for symbol in [*known, *(m for m in chosen if m not in known)]:
            label = symbol if symbol in known or not known else f"{symbol} (not in library)"
            item = QListWidgetItem(label, self)
            item.setData(Qt.ItemDataRole.UserRole, symbol)
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            item.setCheckState(Qt.CheckState.Checked if symbol in chosen
                               else Qt.CheckState.Unchecked)
        self.blockSignals(False)

    def chosen(self) -> tuple[str, ...]:
        """The ticked markets, in list order."""
        return tuple(self.item(n).data(Qt.ItemDataRole.UserRole) for n in range(self.count())
                     if self.item(n).checkState() == Qt.CheckState.Checked)

    def set_checked(self, symbol: str, checked: bool) -> None:
        """Tick or untick one market."""
        for n in range(self.count()):
            if self.item(n).data(Qt.ItemDataRole.UserRole) == symbol:
                self.item(n).setCheckState(Qt.CheckState.Checked if checked
                                           else Qt.CheckState.Unchecked)


class AmendDialog(QDialog):
    """Change the frozen rationale, markets and (when ``rule_text`` is given) parameter space,
    with the reason for the change.

    ``space_note`` describes the rules' parameter space beside the pre-registered one;
    ``propose_markets`` are ticked besides the idea's (those a refused run needs).
    """

    def __init__(self, idea: Idea, library: Iterable[str], parent: QWidget | None = None, *,
                 rule_text: str | None = None, space_note: str = "",
                 propose_markets: Sequence[str] = ()) -> None:
        super().__init__(parent)
        self.setWindowTitle("Amend the pre-registration")
        self.setObjectName("amendDialog")
        self.rule_text = rule_text
        self.rationale = QPlainTextEdit(idea.rationale, self)
        self.markets = MarketPicker(self)
        self.markets.set_markets(library, dict.fromkeys([*idea.markets, *propose_markets]))
        self.space = QCheckBox(f"Pre-register the rules' parameter space: {space_note}", self)
        self.space.setObjectName("amendSpace")
        self.space.setChecked(rule_text is not None)
        self.space.setVisible(rule_text is not None)
        self.reason = QLineEdit(self)
        self.reason.setPlaceholderText("Why the pre-registered idea changes, in your own words "
                                       "(required)")
        note = QLabel("The trial count keeps counting: amending after testing is recorded as "
                      "a new pre-registration version, with your reason. Runs outside the "
                      "first version carry a warning in their verdict.", self)
        note.setWordWrap(True)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel, self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self._ok = buttons.button(QDialogButtonBox.StandardButton.Ok)
        self._ok.setEnabled(False)
        self.reason.textChanged.connect(lambda t: self._ok.setEnabled(bool(t.strip())))
        form = QFormLayout(self)
        form.addRow(note)
        form.addRow("Rationale", self.rationale)
        form.addRow("Markets", self.markets)
        form.addRow(self.space)
        form.addRow("Reason", self.reason)
        form.addRow(buttons)

    def changes(self) -> dict[str, Any]:
        """The new rationale and markets, and the rule text whose space is pre-registered
        (when ticked)."""
        changes: dict[str, Any] = {"rationale": self.rationale.toPlainText(),
                                   "markets": self.markets.chosen()}
        if self.rule_text is not None and self.space.isChecked():
            changes["rule_text"] = self.rule_text
        return changes


class IdeaForm(IdeaSection):
    """The Idea section: title, hypothesis, rationale and its kind, source, submitted by,
    markets and tags, and the idea's family (:class:`FamilyPanel`), in a scroll area;
    ``idea_changed`` follows each saved edit and a recorded variant link."""

    key = "idea"
    tab_title = "Idea"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.scroll = QScrollArea(self)
        self.scroll.setWidgetResizable(True)
        self.scroll.setFrameShape(QFrame.Shape.NoFrame)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        outer.addWidget(self.scroll)
        self._idea: Idea | None = None
        self._library: list[str] = []
        self._timer = QTimer(self, singleShot=True, interval=AUTOSAVE_DELAY_MS)
        self._timer.timeout.connect(self.save_now)

        body = QWidget(self)
        self.title = QLineEdit(body)
        self.title.setObjectName("titleEdit")
        self.hypothesis = QLineEdit(body)
        self.hypothesis.setObjectName("hypothesisEdit")
        self.rationale = QPlainTextEdit(body)
        self.rationale.setObjectName("rationaleEdit")
        self.rationale.setTabChangesFocus(True)
        self.rationale.setMinimumHeight(70)
        self.rationale.setMaximumHeight(130)
        self.rationale_kind = _choice(body, RATIONALE_KINDS, RATIONALE_WORDS.labels)
        self.source_kind = _choice(body, SOURCE_KINDS, SOURCE_WORDS.labels)
        self.citation = QLineEdit(body)
        self.citation.setPlaceholderText("Author, title, year \u2014 where the idea comes from")
        self.link = QLineEdit(body)
        self.link.setPlaceholderText("https://\u2026")
        self.submitted_by = QLabel(body)
        self.reviewer = QLabel(body)
        self.markets = MarketPicker(body)
        self.tags = QLineEdit(body)
        self.tags.setObjectName("tagsEdit")
        self.tags.setPlaceholderText("Comma-separated, e.g. trend, energy")
        self.frozen_note = QLabel(body)
        self.frozen_note.setObjectName("frozenNote")
        self.frozen_note.setWordWrap(True)
        self.amend = QPushButton("Amend with reason\u2026", body)
        self.amend.setObjectName("amendButton")
        self.amend.clicked.connect(self.open_amend_dialog)
        self.saved_label = QLabel(body)
        self.saved_label.setObjectName("savedLabel")
        self.saved_label.setWordWrap(True)
        self.family = FamilyPanel(body)
        self.family.linked.connect(self.idea_changed)
        self.family.member_chosen.connect(self.idea_requested)
        self.family.message.connect(self.message)

        frozen_row = QHBoxLayout()
        frozen_row.addWidget(self.frozen_note, 1)
        frozen_row.addWidget(self.amend)
        form = QFormLayout()
        form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.ExpandingFieldsGrow)
        form.addRow("Title", self.title)
        form.addRow("Hypothesis", self.hypothesis)
        form.addRow("Rationale", self.rationale)
        form.addRow("Kind of rationale", self.rationale_kind)
        form.addRow("Source", self.source_kind)
        form.addRow("Citation", self.citation)
        form.addRow("Link", self.link)
        form.addRow("Markets", self.markets)
        form.addRow("Tags", self.tags)
        form.addRow("Submitted by", self.submitted_by)
        form.addRow("Reviewer", self.reviewer)
        form.addRow("Family", self.family)
        layout = QVBoxLayout(body)
        layout.addLayout(frozen_row)
        layout.addLayout(form)
        layout.addWidget(self.saved_label)
        layout.addStretch(1)
        self.scroll.setWidget(body)

        for edit in (self.title, self.hypothesis, self.citation, self.link, self.tags):
            edit.textEdited.connect(self._edited)
        self.rationale.textChanged.connect(self._edited)
        self.rationale_kind.currentIndexChanged.connect(self._edited)
        self.source_kind.currentIndexChanged.connect(self._edited)
        self.markets.changed.connect(self._edited)
        self._set_enabled(False)

    # -- public API -----------------------------------------------------------------------
    def set_context(self, context: SectionContext) -> None:
        """As the base; the markets are picked from the data folder's market library."""
        markets_changed = context.markets != self.context.markets
        super().set_context(context)
        if markets_changed:
            self.set_market_choices(context.markets)

    def set_market_choices(self, symbols: Iterable[str]) -> None:
        """The market library the markets are picked from."""
        self._library = list(symbols)
        if self._idea is not None:
            self.markets.set_markets(self._library, self.markets.chosen())

    def show_idea(self, idea_id: int | None) -> None:
        """Show an idea (saving pending edits of the previous one first); None clears."""
        self.save_now()
        self.idea_id = idea_id
        if idea_id is None or self.catalogue is None:
            self._idea = None
            self._set_enabled(False)
            self.family.show_family(None, None, self.context.user)
            return
        self._fill(self.catalogue.idea(idea_id))
        self.family.show_family(self.catalogue, idea_id, self.context.user)

    def idea(self) -> Idea | None:
        """The idea shown, as last saved."""
        return self._idea

    def has_pending_edits(self) -> bool:
        """Whether an edit waits for the autosave."""
        return self._timer.isActive()

    def save_now(self) -> bool:
        """Save pending edits now; True when nothing is left unsaved."""
        self._timer.stop()
        if self._idea is None or self.catalogue is None:
            return True
        changes = self._changes()
        if not changes:
            return True
        try:
            idea = self.catalogue.update_idea(self._idea.id, by=self.context.user, **changes)
        except HunchbookError as exc:
            self.saved_label.setText(f"Not saved: {one_line(exc)}")
            self.message.emit(f"Idea not saved: {one_line(exc)}")
            return False
        self._idea = idea
        self._show_frozen(idea)
        self.saved_label.setText(f"Saved at {QTime.currentTime().toString('HH:mm:ss')}.")
        self.idea_changed.emit(idea.id)
        return True

    def open_amend_dialog(self, rule_text: str | None = None,
                          markets: Sequence[str] = ()) -> AmendDialog | None:
        """Open the dialog that changes frozen fields with a reason (window-modal).

        ``rule_text`` (default: the latest saved revision) is offered for its parameter space
        when that differs from the pre-registered one; ``markets`` are proposed ticked.
        """
        if self._idea is None or self.catalogue is None:
            return None
        if rule_text is None:
            latest = self.catalogue.latest_revision(self._idea.id)
            rule_text = latest.text if latest is not None else None
        offered, note = None, ""
        versions = self.catalogue.preregistrations(self._idea.id)
        if rule_text is not None and versions:
            try:
                space = analyse(rule_text)[2]
            except HunchbookError:
                space = None
            if space is not None and space != versions[-1].parameter_space:
                offered = rule_text
                note = (f"{describe_space(space)} (pre-registered now: "
                        f"{describe_space(versions[-1].parameter_space)})")
        dialog = AmendDialog(self._idea, self._library, self, rule_text=offered,
                             space_note=note, propose_markets=markets)
        dialog.accepted.connect(lambda: self.amend_frozen(dialog.reason.text(),
                                                          **dialog.changes()))
        dialog.open()
        return dialog

    def amend_frozen(self, reason: str, **changes: Any) -> bool:
        """Amend the pre-registration with a reason: any of ``rationale``, ``markets`` and
        ``rule_text`` (whose parameter space is pre-registered); a new version."""
        if self._idea is None or self.catalogue is None:
            return False
        try:
            self.catalogue.amend_preregistration(
                self._idea.id, by=self.context.user, reason=reason,
                rationale=changes.get("rationale"), markets=changes.get("markets"),
                rule_text=changes.get("rule_text"))
        except HunchbookError as exc:
            self.message.emit(f"Not amended: {one_line(exc)}")
            self.error.emit("Pre-registration not amended", one_line(exc))
            return False
        idea = self.catalogue.idea(self._idea.id)
        self._fill(idea)
        self.message.emit("Pre-registration amended; the reason is in the journal.")
        self.idea_changed.emit(idea.id)
        return True

    # -- internals ------------------------------------------------------------------------
    def _fill(self, idea: Idea) -> None:
        self._idea = idea
        widgets = (self.title, self.hypothesis, self.rationale, self.rationale_kind,
                   self.source_kind, self.citation, self.link, self.tags, self.markets)
        for widget in widgets:
            widget.blockSignals(True)
        self.title.setText(idea.title)
        self.hypothesis.setText(idea.hypothesis)
        self.rationale.setPlainText(idea.rationale)
        self.rationale_kind.setCurrentIndex(max(0, self.rationale_kind.findData(
            idea.rationale_kind)))
        self.source_kind.setCurrentIndex(max(0, self.source_kind.findData(idea.source_kind)))
        self.citation.setText(idea.citation or "")
        self.link.setText(idea.link or "")
        self.tags.setText(", ".join(idea.tags))
        for edit in (self.title, self.hypothesis, self.citation, self.link, self.tags):
            if not edit.hasFocus():  # a long line shows its start, not its end
                edit.setCursorPosition(0)
        self.markets.set_markets(self._library, idea.markets)
        for widget in widgets:
            widget.blockSignals(False)
        self.submitted_by.setText(idea.submitted_by)
        self.reviewer.setText(idea.reviewer or "not reviewed yet")
        self.saved_label.setText("Edits are saved as you type.")
        self._set_enabled(True)
        self._show_frozen(idea)

    def _show_frozen(self, idea: Idea) -> None:
        frozen = idea.frozen_at is not None
        self.rationale.setReadOnly(frozen)
        self.markets.setEnabled(not frozen)
        self.frozen_note.setVisible(frozen)
        self.amend.setVisible(frozen)
        if frozen:
            self.frozen_note.setText(
                f"Rationale, markets and parameter space were frozen by pre-registration at "
                f"the first run ({formats.date(idea.frozen_at)}). Changing them needs a reason.")

    def _changes(self) -> dict[str, Any]:
        idea = self._idea
        assert idea is not None
        now: dict[str, Any] = {
            "title": self.title.text().strip(),
            "hypothesis": self.hypothesis.text().strip(),
            "rationale_kind": self.rationale_kind.currentData(),
            "source_kind": self.source_kind.currentData(),
            "citation": self.citation.text().strip() or None,
            "link": self.link.text().strip() or None,
            "tags": tuple(t.strip() for t in self.tags.text().split(",") if t.strip()),
        }
        if idea.frozen_at is None:
            now["rationale"] = self.rationale.toPlainText()
            now["markets"] = self.markets.chosen()
        return {k: v for k, v in now.items() if getattr(idea, k) != v}

    def _edited(self, *_: object) -> None:
        if self._idea is not None:
            self.saved_label.setText("Editing\u2026")
            self._timer.start()

    def _set_enabled(self, enabled: bool) -> None:
        for widget in (self.title, self.hypothesis, self.rationale, self.rationale_kind,
                       self.source_kind, self.citation, self.link, self.markets, self.tags):
            widget.setEnabled(enabled)
        if not enabled:
            self.frozen_note.hide()
            self.amend.hide()


def _choice(parent: QWidget, keys: Iterable[str], labels: Mapping[str, str]) -> QComboBox:
    combo = QComboBox(parent)
    for key in keys:
        combo.addItem(labels.get(key, key), key)
    return combo
