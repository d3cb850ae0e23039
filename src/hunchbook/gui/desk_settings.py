"""The desk's settings in the window: "Desk settings…" shows each desk setting of the catalogue
(``one_person_desk``: an author may review their own ideas, and the review says so; ``capital``:
the amount figures are measured in % of when a rule file gives none) and changes it with a
reason, which the catalogue journals."""

from __future__ import annotations

from typing import TYPE_CHECKING

from PySide6.QtWidgets import (
    QCheckBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QWidget,
)

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.actions import make_action
from hunchbook.gui.feedback import one_line
from hunchbook.store.records import DeskSetting
from hunchbook.store.setting_kinds import AMOUNT, ON_OFF, SettingValue
from hunchbook.store.vocab import DESK_SETTINGS

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class DeskSettingsDialog(QDialog):
    """One field per desk setting (a checkbox for on/off, a number field for an amount: empty
    is not set) and the reason for a change (required to save one)."""

    def __init__(self, values: dict[str, SettingValue], history: list[DeskSetting],
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("deskSettingsDialog")
        self.setWindowTitle("Desk settings")
        self.setMinimumWidth(520)
        self.values = dict(values)
        form = QFormLayout(self)
        self.boxes: dict[str, QCheckBox] = {}
        self.amounts: dict[str, QLineEdit] = {}
        for key, spec in DESK_SETTINGS.items():
            label = key.replace("_", " ").capitalize()
            if spec.kind is ON_OFF:
                box = QCheckBox(label, self)
                box.setObjectName(f"setting_{key}")
                box.setChecked(bool(values[key]))
                box.toggled.connect(self._update)
                form.addRow(box)
                self.boxes[key] = box
            else:
                field = QLineEdit(_amount_text(values[key]), self)
                field.setObjectName(f"setting_{key}")
                field.setPlaceholderText("not set")
                field.textChanged.connect(self._update)
                form.addRow(label, field)
                self.amounts[key] = field
            latest = [s for s in history if s.key == key]
            state = QLabel(f"{spec.meaning} " + (
                f"Never changed: {spec.kind.show(spec.default)} by default." if not latest else
                f"Set to {spec.kind.show(latest[-1].value)} by {latest[-1].set_by} on "
                f"{latest[-1].set_at[:10]}: {latest[-1].reason}"), self)
            state.setWordWrap(True)
            form.addRow(state)
        self.problem = QLabel(self)
        self.problem.setObjectName("deskSettingProblem")
        self.problem.setWordWrap(True)
        form.addRow(self.problem)
        self.reason = QLineEdit(self)
        self.reason.setObjectName("deskSettingReason")
        self.reason.setPlaceholderText("Why the desk's rule changes (required; journalled)")
        self.reason.textChanged.connect(self._update)
        form.addRow("Reason", self.reason)
        note = QLabel("Four eyes: an idea is reviewed, and promoted, by someone other than its "
                      "author unless the desk is a one-person desk. The capital is used when a "
                      "rule file's [sizing] gives none.", self)
        note.setWordWrap(True)
        form.addRow(note)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel, self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.ok = buttons.button(QDialogButtonBox.StandardButton.Ok)
        form.addRow(buttons)
        self._update()

    def changes(self) -> dict[str, SettingValue]:
        """The settings the dialog changes, with their new values (an amount that does not
        read is left out: :meth:`problems` names it)."""
        out: dict[str, SettingValue] = {
            k: b.isChecked() for k, b in self.boxes.items() if b.isChecked() != self.values[k]}
        for key, field in self.amounts.items():
            try:
                value = DESK_SETTINGS[key].kind.parse(field.text(), key)
            except HunchbookError:
                continue
            if value != self.values[key]:
                out[key] = value
        return out

    def problems(self) -> list[str]:
        """One line per amount field that does not read as its setting's kind."""
        found = []
        for key, field in self.amounts.items():
            try:
                DESK_SETTINGS[key].kind.parse(field.text(), key)
            except HunchbookError as exc:
                found.append(one_line(exc))
        return found

    def _update(self, *_: object) -> None:
        problems = self.problems()
        self.problem.setText("\n".join(problems))
        self.problem.setVisible(bool(problems))
        self.ok.setEnabled(not problems and bool(self.changes())
                           and bool(self.reason.text().strip()))


def _amount_text(value: SettingValue) -> str:
    """An amount as the field shows it (empty when not set)."""
    return "" if value is None else AMOUNT.stored(value)


class DeskSettings:
    """The "Desk settings…" action of the window and what it does.

    Attributes
    ----------
    action
        "Desk settings…" for the File menu.
    dialog
        The dialog last opened (for tests), or None.
    """

    def __init__(self, window: MainWindow) -> None:
        self._window = window
        self.dialog: DeskSettingsDialog | None = None
        self.action = make_action(window, "Desk settings\u2026", self.open_dialog, None,
                                  "See or change the desk's settings, such as a one-person "
                                  "desk or the desk's capital (a reason is required)")

    def update_actions(self) -> None:
        """Enabled while a catalogue is open."""
        self.action.setEnabled(self._window.catalogue is not None)

    def open_dialog(self) -> DeskSettingsDialog | None:
        """Open the settings dialog (window-modal); saving writes each change."""
        catalogue = self._window.need_catalogue()
        if catalogue is None:
            return None
        dialog = self.dialog = DeskSettingsDialog(
            {key: catalogue.desk_setting(key) for key in DESK_SETTINGS},
            catalogue.desk_settings(), self._window)
        dialog.accepted.connect(lambda: self.apply(dialog.changes(), dialog.reason.text()))
        dialog.finished.connect(dialog.deleteLater)
        dialog.open()
        return dialog

    def apply(self, changes: dict[str, SettingValue], reason: str) -> bool:
        """Write the changed settings with the reason, then show the shown idea anew (who may
        review it may have changed)."""
        window = self._window
        catalogue = window.need_catalogue()
        if catalogue is None:
            return False
        try:
            with catalogue.transaction():
                for key, value in changes.items():
                    catalogue.set_desk_setting(key, value, by=window.user, reason=reason)
        except HunchbookError as exc:
            window.show_error("Desk setting not changed", one_line(exc))
            return False
        window.catalogue_panel.apply_filters()
        idea_id = window.current_idea_id()
        if idea_id is not None:
            window.refresh_idea(idea_id)
        window.status_message("Desk settings changed: " + ", ".join(
            f"{k} {DESK_SETTINGS[k].kind.show(v)}" for k, v in changes.items()) + ".")
        return True
