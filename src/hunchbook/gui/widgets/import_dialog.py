"""The price import dialog: sources, the data folder, the column mapping and expiry rules, a
preview of the first file as the import reads it, and the import run on a worker thread."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QListWidget,
    QPlainTextEdit,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.data_import import DEFAULT_PATTERN, ImportSettings, import_data
from hunchbook.core.data_import.importer import ImportReport, source_files
from hunchbook.core.data_import.preview import preview_file
from hunchbook.core.errors import DataError, HunchbookError


def _pairs(text: str, what: str) -> dict[str, str]:
    pairs = {}
    for item in filter(None, (s.strip() for s in text.replace("\n", ",").split(","))):
        key, sep, value = item.partition("=")
        if not sep or not key.strip() or not value.strip():
            raise DataError(f"{what}: {item!r} is not NAME=VALUE")
        pairs[key.strip()] = value.strip()
    return pairs


class _Done(QObject):
    finished = Signal(object)


class _ImportJob(QRunnable):
    def __init__(self, settings: ImportSettings, folder: Path, replace: bool) -> None:
        super().__init__()
        self.settings, self.folder, self.replace = settings, folder, replace
        self.done = _Done()

    def run(self) -> None:
        try:
            result: object = import_data(self.settings, self.folder, replace_files=self.replace)
        except HunchbookError as exc:
            result = exc
        self.done.finished.emit(result)


class ImportDialog(QDialog):
    """Import price files into a data folder (see ``docs/data-import.md``).

    ``imported`` carries the data folder once an import has written it.
    """

    imported = Signal(object)

    def __init__(self, folder: Path | None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Import prices")
        self.resize(900, 640)
        self.sources = QListWidget()
        add_files, add_folder = QPushButton("Add files\u2026"), QPushButton("Add folder\u2026")
        add_files.clicked.connect(self._add_files)
        add_folder.clicked.connect(self._add_folder)
        buttons = QHBoxLayout()
        buttons.addWidget(add_files)
        buttons.addWidget(add_folder)
        buttons.addStretch()
        self.into = QLineEdit(str(folder) if folder else "")
        self.pattern = QLineEdit(DEFAULT_PATTERN)
        self.mapping = QLineEdit()
        self.mapping.setPlaceholderText("e.g. close=Settle, date=Trade Date (blank: guessed)")
        self.expiry = QLineEdit()
        self.expiry.setPlaceholderText("e.g. CORN=before-day:15:1, *=third-friday")
        self.date_format = QLineEdit()
        self.date_format.setPlaceholderText("guessed, e.g. %d/%m/%Y")
        self.library = QLineEdit()
        self.library.setPlaceholderText("a market library to copy missing markets from")
        self.replace = QCheckBox("Replace market files already in the folder")
        form = QFormLayout()
        form.addRow("Into data folder", self.into)
        form.addRow("Contract file names", self.pattern)
        form.addRow("Columns", self.mapping)
        form.addRow("Expiry rules", self.expiry)
        form.addRow("Date format", self.date_format)
        form.addRow("Market library", self.library)
        form.addRow("", self.replace)
        self.shape = QLabel("Add files or a folder, then Preview.")
        self.shape.setWordWrap(True)
        self.table = QTableWidget()
        self.report = QPlainTextEdit()
        self.report.setReadOnly(True)
        self.report.setMaximumHeight(140)
        box = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        self.preview_button = box.addButton("Preview", QDialogButtonBox.ButtonRole.ActionRole)
        self.import_button = box.addButton("Import", QDialogButtonBox.ButtonRole.AcceptRole)
        self.preview_button.clicked.connect(self.preview)
        self.import_button.clicked.connect(self.start_import)
        box.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(QLabel("Sources (per-contract files like CORNZ2019.csv, per-market "
                                "files, or one long file; CSV or Parquet)"))
        layout.addWidget(self.sources, 1)
        layout.addLayout(buttons)
        layout.addLayout(form)
        layout.addWidget(self.shape)
        layout.addWidget(self.table, 2)
        layout.addWidget(self.report)
        layout.addWidget(box)
        self._job: _ImportJob | None = None

    def add_sources(self, paths: list[str]) -> None:
        """Add files or folders to the sources."""
        for path in paths:
            self.sources.addItem(str(path))

    def _add_files(self) -> None:
        files, _ = QFileDialog.getOpenFileNames(self, "Price files", "",
                                                "Prices (*.csv *.txt *.tsv *.parquet *.pq)")
        self.add_sources(files)

    def _add_folder(self) -> None:
        folder = QFileDialog.getExistingDirectory(self, "Folder of price files")
        if folder:
            self.add_sources([folder])

    def settings(self) -> ImportSettings:
        """The import the dialog describes.

        Raises
        ------
        DataError
            When no source is given or a NAME=VALUE list does not read.
        """
        sources = tuple(str(Path(self.sources.item(i).text()).resolve())
                        for i in range(self.sources.count()))
        if not sources:
            raise DataError("add the price files or folders to import")
        library = self.library.text().strip()
        return ImportSettings(sources=sources, pattern=self.pattern.text().strip()
                              or DEFAULT_PATTERN, mapping=_pairs(self.mapping.text(), "Columns"),
                              date_format=self.date_format.text().strip() or None,
                              expiry=_pairs(self.expiry.text(), "Expiry rules"),
                              library=str(Path(library).resolve()) if library else None)

    def preview(self) -> None:
        """Show the first source file's first rows, its columns' fields and its shape."""
        try:
            settings = self.settings()
            files, _ = source_files(settings.sources)
            if not files:
                raise DataError("no CSV or Parquet files in the sources")
            shown = preview_file(files[0], settings)
        except HunchbookError as exc:
            self.shape.setText(f"<b>Cannot read:</b> {exc}")
            return
        self.shape.setText(f"{len(files)} files. First: {Path(shown.file).name} \u2014 "
                           f"{shown.shape}")
        rows = shown.rows
        self.table.clear()
        self.table.setRowCount(len(rows))
        self.table.setColumnCount(len(rows.columns))
        self.table.setHorizontalHeaderLabels(
            [f"{c}\n\u2192 {shown.fields.get(str(c), 'not read')}" for c in rows.columns])
        for r, values in enumerate(rows.itertuples(index=False)):
            for c, value in enumerate(values):
                self.table.setItem(r, c, QTableWidgetItem(str(value)))
        self.table.resizeColumnsToContents()

    def start_import(self) -> None:
        """Run the import on a worker thread; the report shows when it ends."""
        try:
            settings = self.settings()
            if not self.into.text().strip():
                raise DataError("name the data folder to import into")
        except HunchbookError as exc:
            self.report.setPlainText(f"Not imported: {exc}")
            return
        self.import_button.setEnabled(False)
        self.report.setPlainText("Importing\u2026")
        self._job = _ImportJob(settings, Path(self.into.text().strip()),
                               self.replace.isChecked())
        self._job.done.finished.connect(self._finished)
        QThreadPool.globalInstance().start(self._job)

    def _finished(self, result: object) -> None:
        self.import_button.setEnabled(True)
        if isinstance(result, ImportReport):
            from hunchbook.cli_data import format_report

            self.report.setPlainText(format_report(result))
            self.imported.emit(Path(result.folder))
        else:
            self.report.setPlainText(f"Not imported: {result}")
