"""Comparing two runs from the window: the dialog of two chosen runs, or of the shown run and
one picked from any idea (:mod:`hunchbook.gui.widgets.compare_dialog`)."""

from __future__ import annotations

from PySide6.QtWidgets import QWidget

from hunchbook.catalogue import Catalogue
from hunchbook.core.compare import compare_runs, run_label
from hunchbook.core.errors import HunchbookError
from hunchbook.gui.widgets.compare_dialog import CompareDialog, RunPickerDialog


def comparison_dialog(catalogue: Catalogue, first: int, second: int,
                      parent: QWidget | None = None) -> CompareDialog:
    """The dialog comparing two runs (A: ``first``, B: ``second``), not yet shown.

    Raises
    ------
    HunchbookError
        A run is missing, or was recorded in an earlier shape without figures.
    """
    runs = (catalogue.run(first), catalogue.run(second))
    for run in runs:
        if run.result is None:
            raise HunchbookError(f"run {run.id} was recorded by an earlier version in another "
                                 "shape: it has no figures to compare; run the idea again")
    texts = [catalogue.revision(r.revision_id).text for r in runs]
    titles = (catalogue.idea(runs[0].idea_id).title, catalogue.idea(runs[1].idea_id).title)
    names = (run_label(runs[0].id, runs[0].idea_id, runs[0].revision_number),
             run_label(runs[1].id, runs[1].idea_id, runs[1].revision_number))
    assert runs[0].result is not None and runs[1].result is not None
    comparison = compare_runs(runs[0].result, runs[1].result, texts[0], texts[1], names=names)
    return CompareDialog(comparison, runs, titles, parent)


def run_picker(catalogue: Catalogue, parent: QWidget | None = None) -> RunPickerDialog:
    """The dialog choosing a run of any idea, newest first."""
    return RunPickerDialog(catalogue.run_lines(), parent)
