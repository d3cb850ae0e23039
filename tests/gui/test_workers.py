"""Workers: how they end (finished, failed, cancelled), progress, and the quick-run worker
on its own catalogue connection."""

from __future__ import annotations

import pandas as pd
import pytest

from hunchbook.api import Study
from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import DataError
from hunchbook.core.runners import InProcess
from hunchbook.gui.workers import CallWorker, RunIdeaWorker, Worker, set_curves
from tests.gui.desk_fixtures import ACCEPTED_TITLE, demo_catalogue_copy

RULES = """name = "Rates trend"
markets = ["CRUDE"]  # the accepted idea's market (a first run freezes it)

[parameters]
n = [20, 60]

[signal]
position = "sign(close - mean(close, n))"
"""


@pytest.fixture
def demo_catalogue(tmp_path_factory, tmp_path):
    return demo_catalogue_copy(tmp_path_factory, tmp_path)


def _accepted_id(path) -> int:
    with Catalogue(path) as cat:
        return next(i.id for i in cat.list_ideas() if i.title == ACCEPTED_TITLE)


def test_call_worker_returns_its_result(qtbot):
    """The function's return value arrives through ``finished`` on the UI thread."""
    worker = CallWorker(sum, [1, 2, 3])
    with qtbot.waitSignal(worker.signals.finished, timeout=5000) as blocker:
        worker.start()
    assert blocker.args == [6]


def test_user_error_fails_with_its_one_line_message(qtbot):
    """A HunchbookError ends in ``failed`` with its message, not a traceback."""
    def bad() -> None:
        raise DataError("no price file for CRUDE", file="/data/CRUDE.csv")

    worker = CallWorker(bad)
    with qtbot.waitSignal(worker.signals.failed, timeout=5000) as blocker:
        worker.start()
    assert blocker.args == ["/data/CRUDE.csv: no price file for CRUDE"]


def test_unexpected_error_names_its_kind(qtbot, caplog):
    """Other exceptions are logged whole and reported as one line with their kind."""
    worker = CallWorker(lambda: {}["missing"])
    with qtbot.waitSignal(worker.signals.failed, timeout=5000) as blocker:
        worker.start()
    assert blocker.args[0].startswith("KeyError:")
    assert "Traceback" in caplog.text


def test_cancelled_work_ends_in_cancelled_not_finished(qtbot):
    """A worker cancelled while working reports ``cancelled`` and never ``finished``."""
    class Counting(Worker):
        def work(self) -> object:
            for n in range(1000):
                self.report_progress(n, 1000)
                if n == 3:
                    self.cancel()
                if self.is_cancelled():
                    return None
            return "all"

    worker = Counting()
    with qtbot.assertNotEmitted(worker.signals.finished), \
            qtbot.waitSignal(worker.signals.cancelled, timeout=5000):
        worker.start()


def test_run_worker_records_a_run_and_reports_progress(qtbot, demo_catalogue, short_data):
    """The quick-run worker opens its own catalogue, reports sets done out of the total,
    and the run it returns is in the store."""
    idea_id = _accepted_id(demo_catalogue)
    worker = RunIdeaWorker(demo_catalogue, idea_id, RULES, short_data, by="Test Reviewer",
                           runner=InProcess())
    progress: list[tuple[int, int]] = []
    worker.signals.progress.connect(lambda done, total: progress.append((done, total)))
    with qtbot.waitSignal(worker.signals.finished, timeout=60000) as blocker:
        worker.start()
    result = blocker.args[0]
    assert progress and progress[-1] == (2, 2)
    with Catalogue(demo_catalogue) as cat:
        assert [r.id for r in cat.runs(idea_id)] == [result.run_id]
        assert cat.idea(idea_id).stage == "tested"


def test_run_worker_cancelled_records_nothing(qtbot, demo_catalogue, short_data):
    """Cancelled before the sweep ends: ``cancelled``, no run and no revision stored."""
    idea_id = _accepted_id(demo_catalogue)
    with Catalogue(demo_catalogue) as cat:
        revisions = cat.revisions(idea_id)  # the rule file it was accepted with
    worker = RunIdeaWorker(demo_catalogue, idea_id, RULES, short_data, by="Test Reviewer",
                           runner=InProcess())
    worker.cancel()
    with qtbot.waitSignal(worker.signals.cancelled, timeout=60000):
        worker.start()
    with Catalogue(demo_catalogue) as cat:
        assert cat.runs(idea_id) == []
        assert cat.revisions(idea_id) == revisions


def test_run_worker_bad_data_folder_fails_clearly(qtbot, demo_catalogue, tmp_path):
    """A folder without price files fails with a one-line data error."""
    idea_id = _accepted_id(demo_catalogue)
    worker = RunIdeaWorker(demo_catalogue, idea_id, RULES, tmp_path, by="Test Reviewer")
    with qtbot.waitSignal(worker.signals.failed, timeout=30000) as blocker:
        worker.start()
    message = blocker.args[0]
    assert "\n" not in message and str(tmp_path) in message


def test_set_curves_gives_the_sets_daily_pnl(short_data):
    """One set's curves: net = gross - cost on every day (common practice, no source), and
    the same days as the API's own run of that set."""
    params, daily, verdict = set_curves(RULES, short_data, {"n": 60.0})
    assert params == {"n": 60.0} and verdict is None  # no run to judge it against
    pd.testing.assert_series_equal(daily["net_pnl"], daily["gross_pnl"] - daily["cost"],
                                   check_names=False)
    study = Study.from_text(RULES, short_data)
    assert daily.index.equals(study.run_set({"n": 60.0}).portfolio.index)


def test_set_curves_rejects_an_undeclared_value(short_data):
    """A value the rule file does not declare is a rule error."""
    from hunchbook.core.errors import RuleError

    with pytest.raises(RuleError, match="not one of the declared values"):
        set_curves(RULES, short_data, {"n": 30.0})
