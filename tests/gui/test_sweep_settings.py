"""*File ▸ Run sweeps on…*: the place chosen is kept in the settings and carries the quick
runs, a local Dask cluster included (started from the run's worker thread), with the same
record as a run in this process."""

from __future__ import annotations

import json

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel

import hunchbook.cluster as cluster_module
from hunchbook.catalogue import Catalogue
from hunchbook.cluster import DaskRunner
from hunchbook.core.runners import InProcess
from hunchbook.gui.main_window import MainWindow
from hunchbook.gui.sweep_settings import SweepPlace, keep_place, read_place
from hunchbook.services import run_idea
from tests.gui.desk_fixtures import (
    ACCEPTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
    short_demo_data,
)


@pytest.fixture
def window(qtbot, tmp_path_factory, tmp_path):
    """The window with no runner of its own: quick runs take the place in the settings."""
    win = MainWindow()
    qtbot.addWidget(win)
    assert win.open_catalogue(demo_catalogue_copy(tmp_path_factory, tmp_path))
    win.set_data_folder(short_demo_data(tmp_path_factory))
    win.show()
    qtbot.waitExposed(win)
    return win


def test_the_place_is_chosen_in_the_dialog_and_kept(qtbot, window):
    assert read_place() == SweepPlace() and window.sweep_settings.runner() is None
    dialog = window.sweep_settings.open_dialog()
    assert dialog.choices["processes"].isChecked() and not dialog.address.isEnabled()
    qtbot.mouseClick(dialog.choices["scheduler"], Qt.MouseButton.LeftButton)
    assert dialog.address.isEnabled() and not dialog.ok.isEnabled()  # an address is needed
    qtbot.keyClicks(dialog.address, "tcp://127.0.0.1:8786")
    assert dialog.ok.isEnabled()
    qtbot.mouseClick(dialog.ok, Qt.MouseButton.LeftButton)
    assert read_place() == SweepPlace("scheduler", "tcp://127.0.0.1:8786")
    runner = window.sweep_settings.runner()
    assert isinstance(runner, DaskRunner) and runner.address == "tcp://127.0.0.1:8786"
    assert "the Dask scheduler at tcp://127.0.0.1:8786" in window.statusBar().currentMessage()
    again = window.sweep_settings.open_dialog()
    assert again.choices["scheduler"].isChecked()
    assert again.address.text() == "tcp://127.0.0.1:8786"
    again.reject()


def test_without_dask_only_local_processes_can_be_chosen(qtbot, window, monkeypatch):
    monkeypatch.setattr(cluster_module, "dask_installed", lambda: False)
    dialog = window.sweep_settings.open_dialog()
    assert dialog.choices["processes"].isEnabled()
    assert not dialog.choices["scheduler"].isEnabled()
    assert not dialog.choices["local-cluster"].isEnabled()
    note = dialog.findChild(QLabel, "sweepPlaceNote")
    assert note.text() == "Dask is not installed: pip install 'hunchbook[cluster]'"
    dialog.reject()


def _record(summary) -> str:
    return json.dumps({"sets": summary.to_dict()["sets"],
                       "statistics": summary.to_dict()["statistics"],
                       "verdict": summary.to_dict()["verdict"]}, sort_keys=True)


def test_a_quick_run_on_a_local_dask_cluster(qtbot, window, tmp_path_factory, tmp_path):
    keep_place(SweepPlace("local-cluster"))
    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    with qtbot.waitSignal(window.quick_run.finished, timeout=120000) as blocker:
        worker = window.quick_run.start()
        assert isinstance(worker.runner, DaskRunner) and worker.runner.address == "local"
    stored = window.catalogue.run(blocker.args[0])
    # the same idea run in this process on another copy of the desk
    other = tmp_path / "other"
    other.mkdir()
    with Catalogue(demo_catalogue_copy(tmp_path_factory, other)) as cat:
        here = run_idea(cat, idea_id, window.rules.text(), window.data_folder,
                        by="Test Reviewer", runner=InProcess())
    assert _record(stored.result) == _record(here.summary)


def test_an_unknown_place_or_a_scheduler_without_address_runs_here(qtbot):
    keep_place(SweepPlace("scheduler", "  "))
    assert read_place() == SweepPlace("processes", "  ") and read_place().runner() is None
    keep_place(SweepPlace("elsewhere", "tcp://127.0.0.1:8786"))
    assert read_place().on == "processes"
