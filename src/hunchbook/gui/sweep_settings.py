"""Where quick runs run their sweeps, chosen under *File ▸ Run sweeps on…* and kept in the
window's settings: worker processes on this computer (the default), the workers of a Dask
scheduler, or a Dask cluster started on this computer for each run (see docs/cluster.md)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from PySide6.QtWidgets import (
    QButtonGroup,
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QRadioButton,
    QVBoxLayout,
    QWidget,
)

from hunchbook.gui.actions import make_action
from hunchbook.gui.window_settings import app_settings

if TYPE_CHECKING:
    from hunchbook.core.sweep import SweepRunner
    from hunchbook.gui.main_window import MainWindow

#: Settings keys: where sweeps run, and the scheduler's address.
KEY_ON, KEY_ADDRESS = "sweeps/on", "sweeps/scheduler"
#: The places a sweep can run, with their words in the dialog.
PLACES = {
    "processes": "Worker processes on this computer",
    "scheduler": "The workers of a Dask scheduler at",
    "local-cluster": "A Dask cluster started on this computer for each run",
}


@dataclass(frozen=True)
class SweepPlace:
    """Where sweeps run: one of :data:`PLACES`, and the scheduler's ``tcp://HOST:PORT``."""

    on: str = "processes"
    address: str = ""

    def runner(self) -> SweepRunner | None:
        """The sweep runner for this place (None: the sweep's own, worker processes)."""
        if self.on == "processes":
            return None
        from hunchbook.cluster import LOCAL, DaskRunner

        return DaskRunner(self.address if self.on == "scheduler" else LOCAL)

    def describe(self) -> str:
        """The place in a few words, for the status bar."""
        if self.on == "scheduler":
            return f"the Dask scheduler at {self.address}"
        return "a local Dask cluster" if self.on == "local-cluster" else "local processes"


def read_place() -> SweepPlace:
    """The place kept in the settings (worker processes when none, an unknown one, or a
    scheduler without an address)."""
    settings = app_settings()
    on, address = settings.value(KEY_ON), str(settings.value(KEY_ADDRESS) or "")
    if on not in PLACES or (on == "scheduler" and not address.strip()):
        on = "processes"
    return SweepPlace(on, address)


def keep_place(place: SweepPlace) -> None:
    """Keep ``place`` in the settings."""
    settings = app_settings()
    settings.setValue(KEY_ON, place.on)
    settings.setValue(KEY_ADDRESS, place.address)
    settings.sync()


class SweepPlaceDialog(QDialog):
    """One choice per place, the scheduler's address beside it; the Dask places are off
    (with what to install) when Dask is not installed."""

    def __init__(self, place: SweepPlace, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("sweepPlaceDialog")
        self.setWindowTitle("Run sweeps on")
        self.setMinimumWidth(480)
        from hunchbook.cluster import INSTALL_HINT, dask_installed

        layout = QVBoxLayout(self)
        self.group = QButtonGroup(self)
        self.choices: dict[str, QRadioButton] = {}
        for key, text in PLACES.items():
            button = QRadioButton(text, self)
            button.setObjectName(f"sweepsOn_{key}")
            button.setChecked(key == place.on)
            button.setEnabled(key == "processes" or dask_installed())
            self.group.addButton(button)
            self.choices[key] = button
            layout.addWidget(button)
            if key == "scheduler":
                self.address = QLineEdit(place.address, self)
                self.address.setObjectName("schedulerAddress")
                self.address.setPlaceholderText("tcp://HOST:8786")
                indented = QHBoxLayout()
                indented.setContentsMargins(24, 0, 0, 0)  # under its choice
                indented.addWidget(self.address)
                layout.addLayout(indented)
        note = QLabel("Every machine of a Dask cluster needs this version of Hunchbook with "
                      "the cluster extra; a run that cannot reach the scheduler stops with "
                      "what to check." if dask_installed() else
                      f"Dask is not installed: {INSTALL_HINT}", self)
        note.setObjectName("sweepPlaceNote")
        note.setWordWrap(True)
        layout.addWidget(note)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel, self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.ok = buttons.button(QDialogButtonBox.StandardButton.Ok)
        layout.addWidget(buttons)
        self.group.buttonToggled.connect(self._update)
        self.address.textChanged.connect(self._update)
        self._update()

    def place(self) -> SweepPlace:
        """The place chosen."""
        on = next(k for k, b in self.choices.items() if b.isChecked())
        return SweepPlace(on, self.address.text().strip())

    def _update(self, *_: object) -> None:
        scheduler = self.choices["scheduler"].isChecked()
        self.address.setEnabled(scheduler)
        self.ok.setEnabled(not scheduler or bool(self.address.text().strip()))


class SweepSettings:
    """The "Run sweeps on…" action of the window, and the runner of its quick runs.

    Attributes
    ----------
    action
        "Run sweeps on…" for the File menu.
    dialog
        The dialog last opened (for tests), or None.
    """

    def __init__(self, window: MainWindow) -> None:
        self._window = window
        self.dialog: SweepPlaceDialog | None = None
        self.action = make_action(window, "Run sweeps on\u2026", self.open_dialog, None,
                                  "Run quick runs' sweeps in processes on this computer or "
                                  "on a Dask cluster")

    def runner(self) -> SweepRunner | None:
        """The runner of the next quick run, from the place kept in the settings."""
        return read_place().runner()

    def open_dialog(self) -> SweepPlaceDialog:
        """Open the dialog (window-modal); OK keeps the place chosen."""
        dialog = self.dialog = SweepPlaceDialog(read_place(), self._window)
        dialog.accepted.connect(lambda: self.apply(dialog.place()))
        dialog.finished.connect(dialog.deleteLater)
        dialog.open()
        return dialog

    def apply(self, place: SweepPlace) -> None:
        """Keep ``place`` for the quick runs from now on."""
        keep_place(place)
        self._window.status_message(f"Quick runs run their sweeps on {place.describe()}.")
