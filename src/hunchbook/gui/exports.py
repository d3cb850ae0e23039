"""Exports and imports of the window: the shown run as an HTML report or its daily P&L as CSV,
the current idea's review pack (HTML or PDF) or bundle file, and bundles imported into the
catalogue."""

from __future__ import annotations

import datetime as dt
import os
from pathlib import Path
from typing import TYPE_CHECKING

from PySide6.QtCore import QObject, QUrl
from PySide6.QtGui import QDesktopServices
from PySide6.QtWidgets import QFileDialog, QStyle

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.actions import make_action
from hunchbook.gui.feedback import one_line
from hunchbook.store.records import RunRecord

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class Exports(QObject):
    """The window's File menu exports and bundle import.

    Attributes
    ----------
    report_action, pnl_action, pack_action, bundle_action, import_action
        "Export report", "Export P&L CSV", "Export review pack", "Export idea bundle" and
        "Import bundle" (each asks for a file, then calls the matching method).
    """

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self._window = window
        pix = QStyle.StandardPixmap
        self.report_action = make_action(
            window, "Export report\u2026", self.choose_report_path, None,
            "Write the shown run as an HTML report", pix.SP_FileDialogDetailedView)
        self.pnl_action = make_action(window, "Export P&&L CSV\u2026", self.choose_pnl_path,
                                      None, "Write the shown run's daily P&L as CSV")
        self.pack_action = make_action(
            window, "Export review pack\u2026", self.choose_pack_path, None,
            "Write the idea as a document for a committee (HTML or PDF): rationale, "
            "pre-registration, reviews, runs, the shown run in full and the journal")
        self.bundle_action = make_action(
            window, "Export idea bundle\u2026", self.choose_bundle_export_path, None,
            "Write the idea with its history to a bundle file")
        self.import_action = make_action(window, "Import bundle\u2026",
                                         self.choose_bundle_to_import, None,
                                         "Add an idea bundle to the catalogue")

    def export_report(self, path: str | os.PathLike[str]) -> bool:
        """Write the shown run as a self-contained HTML report."""
        run, catalogue = self._shown_run(), self._window.catalogue
        if run is None or catalogue is None:
            return False
        try:
            self._window.runs.results.export_html(
                path, idea=catalogue.idea(run.idea_id), run=run,
                rule_text=catalogue.revision(run.revision_id).text)
        except (HunchbookError, OSError) as exc:
            self._window.show_error("Report not written", one_line(exc))
            return False
        self._window.status_message(f"Report written to {path}.")
        return True

    def export_pack(self, path: str | os.PathLike[str]) -> bool:
        """Write the current idea's review pack, the shown run in full: PDF when the name
        ends in ``.pdf``, else HTML."""
        idea_id, catalogue = self._window.current_idea_id(), self._window.catalogue
        if idea_id is None or catalogue is None:
            return False
        shown = self._window.runs.current_run()
        # the pack draws charts (pyqtgraph): loaded when first written, not at window start
        from hunchbook.gui.review_pack import pack_from_catalogue, write_pack_html, write_pack_pdf

        try:
            pack = pack_from_catalogue(
                catalogue, idea_id, prepared=dt.datetime.now(dt.UTC),
                run_id=shown.id if shown is not None and shown.idea_id == idea_id else None)
            if Path(path).suffix.lower() == ".pdf":
                pages = write_pack_pdf(path, pack)
                done = f"Review pack written to {path} ({pages} pages)."
            else:
                write_pack_html(path, pack)
                done = f"Review pack written to {path}."
        except (HunchbookError, OSError) as exc:
            self._window.show_error("Review pack not written", one_line(exc))
            return False
        self._window.status_message(done)
        return True

    def export_pnl_csv(self, path: str | os.PathLike[str]) -> bool:
        """Write the shown run's daily P&L (gross, cost, net) as CSV."""
        run = self._shown_run()
        if run is None or run.daily_pnl is None:
            return False
        try:
            run.daily_pnl.to_csv(path, index_label="date", lineterminator="\n")
        except OSError as exc:
            self._window.show_error("P&L not written", one_line(exc))
            return False
        self._window.status_message(f"Daily P&L of run {run.id} written to {path}.")
        return True

    def export_bundle(self, path: str | os.PathLike[str]) -> bool:
        """Write the current idea with its history to a bundle file (replacing the file)."""
        idea_id, catalogue = self._window.current_idea_id(), self._window.catalogue
        if idea_id is None or catalogue is None:
            return False
        try:
            catalogue.export_bundle(idea_id, path, overwrite=True)
        except (HunchbookError, OSError) as exc:
            self._window.show_error("Bundle not written", one_line(exc))
            return False
        self._window.status_message(f"Idea bundle written to {path}.")
        return True

    def import_bundle(self, path: str | os.PathLike[str], *, ask: bool = True) -> int | None:
        """Import an idea bundle (after confirmation when ``ask``), select the idea and return
        its id."""
        window = self._window
        catalogue = window.need_catalogue()
        if catalogue is None:
            return None
        if ask and not window.confirm("Import bundle?",
                                      f"Import the idea bundle {Path(path).name} into this "
                                      "catalogue? Records already present are skipped; "
                                      "nothing is overwritten."):
            return None
        try:
            report = catalogue.import_bundle(path, by=window.user)
        except (HunchbookError, OSError) as exc:
            window.show_error("Bundle not imported", one_line(exc))
            return None
        window.catalogue_panel.reload()
        window.select_idea(report.idea_id)
        added = sum(report.added.values())
        what = "new idea" if report.created else "idea already in the catalogue"
        conflicts = f"; {len(report.conflicts)} difference(s) kept as they were" \
            if report.conflicts else ""
        window.status_message(f"Imported {Path(path).name}: {what}, {added} record(s) added"
                              f"{conflicts}.")
        return report.idea_id

    def choose_report_path(self) -> None:
        """Ask where to write the HTML report of the shown run, write it and open it."""
        run = self._shown_run()
        if run is not None:
            path = self._save_path("Export report", f"run-{run.id}.html", "HTML (*.html)")
            if path and self.export_report(path):
                QDesktopServices.openUrl(QUrl.fromLocalFile(path))

    def choose_pack_path(self) -> None:
        """Ask where to write the current idea's review pack (HTML or PDF), write it and open
        it."""
        idea_id = self._window.current_idea_id()
        if idea_id is None:
            self._window.show_error("No idea selected", "Select an idea first.")
            return
        path = self._save_path("Export review pack", f"idea-{idea_id}-review-pack.pdf",
                               "PDF (*.pdf);;HTML (*.html)")
        if path and self.export_pack(path):
            QDesktopServices.openUrl(QUrl.fromLocalFile(path))

    def choose_pnl_path(self) -> None:
        """Ask where to write the shown run's daily P&L."""
        run = self._shown_run()
        if run is not None:
            path = self._save_path("Export P&L", f"run-{run.id}-pnl.csv", "CSV (*.csv)")
            if path:
                self.export_pnl_csv(path)

    def choose_bundle_export_path(self) -> None:
        """Ask where to write the current idea's bundle."""
        idea_id = self._window.current_idea_id()
        if idea_id is not None:
            path = self._save_path("Export idea bundle", f"idea-{idea_id}.zip",
                                   "Idea bundle (*.zip)")
            if path:
                self.export_bundle(path)

    def choose_bundle_to_import(self) -> None:
        """Ask for a bundle file to import."""
        path, _ = QFileDialog.getOpenFileName(self._window, "Import bundle", str(Path.home()),
                                              "Idea bundle (*.zip)")
        if path:
            self.import_bundle(path)

    def _save_path(self, title: str, name: str, filter_: str) -> str:
        path, _ = QFileDialog.getSaveFileName(self._window, title, str(Path.home() / name),
                                              filter_)
        return path

    def _shown_run(self) -> RunRecord | None:
        run = self._window.runs.current_run()
        if run is None:
            self._window.show_error("No run shown",
                                    "Open the Runs section and choose a run first.")
        return run
