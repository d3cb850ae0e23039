"""The desk's settings in the window: "Desk settings…" shows each desk rule of the catalogue
(such as ``one_person_desk``: an author may review their own ideas, and the review says so)
and changes it with a reason, which the catalogue journals."""

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
from hunchbook.store.vocab import DESK_SETTINGS

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class DeskSettingsDialog(QDialog):
    """One checkbox per desk setting and the reason for a change (required to save one)."""

    def __init__(self, values: dict[str, bool], history: list[DeskSetting],
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("deskSettingsDialog")
        self.setWindowTitle("Desk settings")
        self.setMinimumWidth(520)
        self.values = dict(values)
        form = QFormLayout(self)
        self.boxes: dict[str, QCheckBox] = {}
        for key, (_, meaning) in DESK_SETTINGS.items():
            box = QCheckBox(key.replace("_", " ").capitalize(), self)
            box.setObjectName(f"setting_{key}")
            box.setChecked(values[key])
            box.toggled.connect(self._update)
            latest = [s for s in history if s.key == key]
            state = QLabel(f"{meaning} " + (
                "Never changed: off by default." if not latest else
                f"Set {'on' if latest[-1].value else 'off'} by {latest[-1].set_by} on "
                f"{latest[-1].set_at[:10]}: {latest[-1].reason}"), self)
            state.setWordWrap(True)
            form.addRow(box)
            form.addRow(state)
            self.boxes[key] = box
        self.reason = QLineEdit(self)
        self.reason.setObjectName("deskSettingReason")
        self.reason.setPlaceholderText("Why the desk's rule changes (required; journalled)")
        self.reason.textChanged.connect(self._update)
        form.addRow("Reason", self.reason)
        note = QLabel("Four eyes: an idea is reviewed, and promoted, by someone other than its "
                      "author unless the desk is a one-person desk.", self)
        note.setWordWrap(True)
        form.addRow(note)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel, self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.ok = buttons.button(QDialogButtonBox.StandardButton.Ok)
        form.addRow(buttons)
        self._update()

    def changes(self) -> dict[str, bool]:
        """The settings the dialog changes, with their new values."""
        return {k: b.isChecked() for k, b in self.boxes.items() if b.isChecked() != self.values[k]}

    def _update(self, *_: object) -> None:
        self.ok.setEnabled(bool(self.changes()) and bool(self.reason.text().strip()))


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
                                  "See or change the desk's rules, such as a one-person desk "
                                  "(a reason is required)")

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

    def apply(self, changes: dict[str, bool], reason: str) -> bool:
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
            f"{k} {'on' if v else 'off'}" for k, v in changes.items()) + ".")
        return True
