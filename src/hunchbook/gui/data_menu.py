"""The Data menu (data folder, market library editor, data check) and the status-bar label
naming the data folder."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from PySide6.QtCore import QObject
from PySide6.QtWidgets import QDialog, QFileDialog, QLabel, QStyle

from hunchbook.core.markets import LIBRARY_FILE
from hunchbook.gui.actions import make_action

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class DataMenu(QObject):
    """The window's data folder dialogs and label.

    Attributes
    ----------
    folder_action, library_action, check_action, import_action
        "Data folder", "Market library", "Check data" and "Import prices" for the menus and
        toolbar.
    label
        The status-bar label naming the data folder (see :meth:`show_folder`).
    """

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self._window = window
        pix = QStyle.StandardPixmap
        self.folder_action = make_action(
            window, "Data folder\u2026", self.choose_folder, None,
            "Choose the folder of price files and market library", pix.SP_DirOpenIcon)
        self.library_action = make_action(window, "Market library\u2026",
                                          self.open_market_library, None,
                                          "Edit the data folder's market library")
        self.check_action = make_action(window, "Check data\u2026", self.open_data_check, None,
                                        "Check the data folder's price files",
                                        pix.SP_DialogApplyButton)
        self.import_action = make_action(window, "Import prices\u2026", self.open_import, None,
                                         "Import price files into a data folder")
        self.label = QLabel(window)
        self.label.setObjectName("dataFolderLabel")

    def show_folder(self, folder: Path | None, markets: int) -> None:
        """Name the data folder and how many markets its library has (0: none read)."""
        if folder is None:
            self.label.setText("No data folder")
            self.label.setToolTip("Data \u25b8 Data folder\u2026, or drop a folder here")
        else:
            library = f"{markets} markets" if markets else "no market library"
            self.label.setText(f"Data: {folder.name} ({library})")
            self.label.setToolTip(str(folder))

    def choose_folder(self) -> None:
        """Ask for the data folder."""
        window = self._window
        start = str(window.data_folder or Path.home())
        folder = QFileDialog.getExistingDirectory(window, "Data folder", start)
        if folder:
            window.set_data_folder(folder)
            window.status_message(f"Data folder: {folder}")

    def open_market_library(self) -> QDialog | None:
        """Edit the data folder's market library (window-modal); the window reads it anew
        when the dialog closes."""
        window = self._window
        if window.data_folder is None:
            window.show_error("No data folder", "Choose a data folder first; its market "
                              "library is markets.toml inside it.")
            return None
        from hunchbook.gui.widgets.market_editor import MarketLibraryDialog

        dialog = MarketLibraryDialog(window.data_folder / LIBRARY_FILE, window)
        dialog.finished.connect(lambda _result: window.set_data_folder(window.data_folder))
        dialog.open()
        return dialog

    def open_data_check(self) -> QDialog | None:
        """Check the data folder's files (window-modal; the check runs on a worker)."""
        window = self._window
        if window.data_folder is None:
            window.show_error("No data folder", "Choose a data folder to check first.")
            return None
        from hunchbook.gui.widgets.data_check import DataCheckDialog  # pandas: when first used

        dialog = DataCheckDialog(window.data_folder, window)
        dialog.open()
        return dialog

    def open_import(self) -> QDialog:
        """Import price files (window-modal; the import runs on a worker); the window takes
        the folder written as its data folder."""
        window = self._window
        from hunchbook.gui.widgets.import_dialog import ImportDialog  # pandas: when first used

        dialog = ImportDialog(window.data_folder, window)
        dialog.imported.connect(window.set_data_folder)
        dialog.open()
        return dialog
