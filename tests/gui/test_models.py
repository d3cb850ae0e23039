"""Item models over catalogue records: Qt's model checks, sorting, filtering, row updates."""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt

from hunchbook.catalogue import Catalogue
from hunchbook.gui.models import (
    ID_ROLE,
    SORT_ROLE,
    IdeaTableModel,
    RunTableModel,
    verdict_label,
)
from tests.gui.desk_fixtures import demo_catalogue_copy


@pytest.fixture
def catalogue(tmp_path_factory, tmp_path):
    with Catalogue(demo_catalogue_copy(tmp_path_factory, tmp_path)) as cat:
        yield cat


def _column(model, column: int, role=Qt.ItemDataRole.DisplayRole) -> list:
    return [model.index(r, column).data(role) for r in range(model.rowCount())]


def test_idea_model_passes_qt_model_checks(qtmodeltester, catalogue):
    """Qt's QAbstractItemModelTester finds nothing wrong with the idea model, whole or
    filtered."""
    model = IdeaTableModel()
    model.set_query(catalogue)
    qtmodeltester.check(model)
    filtered = IdeaTableModel()
    filtered.set_query(catalogue, stage="tested")
    qtmodeltester.check(filtered)


def test_run_model_passes_qt_model_checks(qtmodeltester, catalogue):
    """The run model passes Qt's model checks with real records."""
    runs = RunTableModel()
    runs.set_runs(catalogue.runs())
    qtmodeltester.check(runs)


def test_idea_model_shows_every_idea_with_verdict_labels(catalogue):
    """One row per idea; the verdict column shows the outcome's label, not its key."""
    ideas = catalogue.list_ideas()
    model = IdeaTableModel()
    model.set_query(catalogue)
    assert model.rowCount() == len(ideas) == 16
    labels = {i.id: verdict_label(i.last_verdict) for i in ideas}
    shown = dict(zip(_column(model, 0, ID_ROLE), _column(model, IdeaTableModel.VERDICT),
                     strict=True))
    assert shown == labels
    assert "Costs eat it" in shown.values()  # the lost_to_costs outcome's label


def test_sorting_by_net_sharpe_uses_raw_values_and_puts_missing_last(catalogue):
    """Descending net Sharpe: the order Python's sorted gives on the raw numbers (reference:
    the standard library), with ideas that have no run after every number."""
    model = IdeaTableModel()
    model.set_query(catalogue)
    model.sort(IdeaTableModel.SHARPE, Qt.SortOrder.DescendingOrder)
    raw = _column(model, IdeaTableModel.SHARPE, SORT_ROLE)
    numbers = [v for v in raw if v is not None]
    assert numbers == sorted(numbers, reverse=True)
    assert raw[:len(numbers)] == numbers and all(v is None for v in raw[len(numbers):])
    model.sort(IdeaTableModel.SHARPE, Qt.SortOrder.AscendingOrder)
    raw = _column(model, IdeaTableModel.SHARPE, SORT_ROLE)
    assert [v for v in raw if v is not None] == sorted(numbers)
    assert raw[-1] is None


def test_sorting_keeps_the_filters(catalogue):
    """A new sort reads the same filtered ideas in the new order."""
    model = IdeaTableModel()
    model.set_query(catalogue, stage="tested")
    model.sort(IdeaTableModel.TRIALS, Qt.SortOrder.AscendingOrder)
    trials = _column(model, IdeaTableModel.TRIALS, SORT_ROLE)
    assert trials == sorted(trials)
    assert len(trials) == len(catalogue.list_ideas(stage="tested"))


@pytest.mark.parametrize("filters", [
    {"stage": "submitted"}, {"verdict": "passes"}, {"market": "TNOTE10"}, {"tag": "trend"},
    {"author": "Nia Oduya-Fell"}, {"market": "GOLD", "tag": "trend"}, {"text": "grid"},
])
def test_filters_match_the_catalogue_list(catalogue, filters):
    """The model keeps the ideas the catalogue's list_ideas gives for the same filters."""
    model = IdeaTableModel()
    model.set_query(catalogue, **filters)
    expected = {i.id for i in catalogue.list_ideas(**filters)}
    assert expected  # each filter keeps some demo ideas
    assert set(_column(model, 0, ID_ROLE)) == expected
    assert model.matching_count() == len(expected)


def test_refreshing_an_idea_replaces_its_row_in_place(qtbot, catalogue):
    """Refreshing one idea after an edit changes only its row (dataChanged) and keeps the
    order the table was read in."""
    model = IdeaTableModel()
    model.set_query(catalogue)
    model.sort(IdeaTableModel.TITLE, Qt.SortOrder.AscendingOrder)
    order = _column(model, 0, ID_ROLE)
    idea_id = order[5]
    catalogue.update_idea(idea_id, by="Ines Marwood", title="AAA first now")
    with qtbot.assertNotEmitted(model.modelReset), \
            qtbot.assertNotEmitted(model.layoutChanged), \
            qtbot.waitSignal(model.dataChanged) as changed:
        model.refresh_ideas([idea_id])
    assert (changed.args[0].row(), changed.args[1].row()) == (5, 5)
    assert _column(model, 0, ID_ROLE) == order
    assert model.index(5, IdeaTableModel.TITLE).data() == "AAA first now"


def test_run_model_shows_verdict_label_and_sharpe(catalogue):
    """Each run row shows its verdict label and chosen net Sharpe as stored."""
    runs = catalogue.runs()
    model = RunTableModel()
    model.set_runs(runs)
    assert model.rowCount() == len(runs)
    for row, run in enumerate(runs):
        assert model.index(row, RunTableModel.VERDICT).data() == run.result.verdict.label
        shown = model.index(row, RunTableModel.SHARPE).data()
        if run.chosen_net_sharpe is not None and math.isfinite(run.chosen_net_sharpe):
            assert shown == f"{run.chosen_net_sharpe:.2f}"
