"""Dated events from a data folder's events file, read by a rule as ``event("name")``.

Source: the events-file format (docs/rule-files.md): an event listed for a market is 1 on its
date for that market only; one with a blank market is 1 for every market; else 0. Expected
values below are written out by hand from the files.
"""

from __future__ import annotations

import pytest

from hunchbook.api import Study
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.prices import data_fingerprint
from tests.core.data_folders import rules, write_folder

PRICES = {
    "A": "date,close\n2024-03-04,1\n2024-03-05,2\n2024-03-06,3\n2024-03-07,4\n2024-03-08,5\n",
    "B": "date,close\n2024-03-04,1\n2024-03-06,2\n2024-03-07,3\n2024-03-08,4\n",
}
EVENTS = """date,event,market
2024-03-05,report,A
2024-03-07,report,
2024-03-06,crop report,B
2024-03-09,report,
2024-03-08,meeting,
"""


def _values(study: Study, key: str, j: int) -> list[float]:
    n = int(study.panel.lengths[j])
    return study.panel.series[key][:n, j].tolist()


def test_event_values_per_market(tmp_path) -> None:
    folder = write_folder(tmp_path, PRICES, EVENTS)
    position = 'event("report") + event("crop report") + event("meeting")'
    study = Study.from_text(rules(position, ["A", "B"]), folder)
    # A trades Mar 4-8: report on Mar 5 (A's own) and Mar 7 (every market); Mar 9 is no
    # trading day of A. B trades Mar 4, 6, 7, 8: report only on Mar 7.
    assert _values(study, 'event("report")', 0) == [0, 1, 0, 1, 0]
    assert _values(study, 'event("report")', 1) == [0, 0, 1, 0]
    assert _values(study, 'event("crop report")', 0) == [0, 0, 0, 0, 0]
    assert _values(study, 'event("crop report")', 1) == [0, 1, 0, 0]
    assert _values(study, 'event("meeting")', 0) == [0, 0, 0, 0, 1]
    assert _values(study, 'event("meeting")', 1) == [0, 0, 0, 1]
    # the events file is part of the data the run read
    assert study.data.events is not None and study.data.events.file.endswith("events.csv")
    plain = Study.from_text(rules("close", ["A", "B"]), folder)
    assert plain.data.events is None
    assert data_fingerprint(study.data) != data_fingerprint(plain.data)


def test_a_file_without_a_market_column_lists_events_of_every_market(tmp_path) -> None:
    folder = write_folder(tmp_path, PRICES, "date,event\n2024-03-06,report\n")
    study = Study.from_text(rules('event("report")', ["A", "B"]), folder)
    assert _values(study, 'event("report")', 0) == [0, 0, 1, 0, 0]
    assert _values(study, 'event("report")', 1) == [0, 1, 0, 0]


@pytest.mark.parametrize(("events", "listed"), [
    (EVENTS, "events.csv lists: crop report, meeting, report"),
    (None, "the data folder has no events.csv"),
    ("date,event,market\n", "events.csv lists no events"),
])
def test_an_unknown_event_is_an_error_at_its_name(tmp_path, events, listed) -> None:
    folder = write_folder(tmp_path, PRICES, events)
    # Source: hand count. Line 4 is: position = 'close * event("reprt")'
    # In the expression, 'close * event("' is 15 characters: the name starts at column 16;
    # in the line, after "position = '" (12 characters), at column 28, ending before 33.
    with pytest.raises(RuleError) as caught:
        Study.from_text(rules('close * event("reprt")', ["A"]), folder, file="days.toml")
    error = caught.value
    assert (error.kind, error.key, error.column) == ("expression", "signal.position", 16)
    assert (error.span.line, error.span.column, error.span.end_column) == (4, 28, 33)
    assert str(error) == (f"days.toml, key 'signal.position', line 4, column 28: unknown event "
                          f"'reprt'; {listed}")


def test_the_same_error_from_a_rule_file(tmp_path) -> None:
    folder = write_folder(tmp_path, PRICES, EVENTS)
    path = tmp_path / "days.toml"
    path.write_text(rules('event("reprt")', ["A"]))
    with pytest.raises(RuleError) as caught:
        Study.from_file(path, folder)
    assert caught.value.span is not None and caught.value.file == str(path)


@pytest.mark.parametrize(("events", "line", "words"), [
    ("date,market\n2024-03-05,A\n", 1, "missing column(s) event"),
    ("date,event\n2024-03-05,report\n05/03/2024,report\n", 3, "cannot read '05/03/2024'"),
    ("date,event\n2024-03-05,\n", 2, "expected a name made of letters"),
    ("date,event\n2024-03-05,a\"b\n", 2, "expected a name made of letters"),
    ("date,event,market\n2024-03-05,report,GOLD\n", 2, "'GOLD' is not in the market library"),
])
def test_a_bad_events_file_is_one_line_naming_it(tmp_path, events, line, words) -> None:
    folder = write_folder(tmp_path, PRICES, events)
    with pytest.raises(DataError) as caught:
        Study.from_text(rules('event("report")', ["A"]), folder)
    assert caught.value.line == line and words in caught.value.problem
    assert str(caught.value).startswith(f"{folder / 'events.csv'}, line {line}: ")
    # a rule that reads no event does not read the file
    Study.from_text(rules("close", ["A"]), folder)
