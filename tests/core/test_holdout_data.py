"""Data cut at a holdout boundary before anything is built: the rows read, the contracts kept,
the events, the study's dates and a fingerprint that later rows cannot move."""

from __future__ import annotations

import datetime as dt

import pytest

from hunchbook.api import Study
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.prices import data_fingerprint, load_data
from tests.core.data_folders import rules, write_folder

BOUNDARY = dt.date(2024, 1, 4)

PRICES = """date,contract,expiry,close,open
2024-01-02,A,2024-01-10,10.0,9.9
2024-01-02,B,2024-02-10,11.0,10.9
2024-01-03,A,2024-01-10,10.5,10.1
2024-01-03,B,2024-02-10,11.5,11.1
2024-01-04,A,2024-01-10,10.7,10.6
2024-01-04,B,2024-02-10,11.7,11.6
2024-01-04,C,2024-03-10,12.7,12.6
2024-01-05,B,2024-02-10,11.9,11.8
2024-01-05,C,2024-03-10,12.9,12.8
"""
EVENTS = "date,event\n2024-01-03,report\n2024-01-05,report\n2024-01-08,meeting\n"


def _folder(tmp_path, prices=PRICES, events=EVENTS, name="d"):
    return write_folder(tmp_path / name, {"M": prices}, events=events)


def test_rows_on_and_after_the_boundary_are_dropped(tmp_path):
    data = load_data(_folder(tmp_path), before=BOUNDARY)
    frame = data.bars["M"].frame
    assert [d.date().isoformat() for d in frame["date"]] == (["2024-01-02"] * 2
                                                             + ["2024-01-03"] * 2)
    assert set(frame["contract"]) == {"A", "B"}  # C trades only from the boundary on: gone
    assert list(frame["line"]) == [2, 3, 4, 5]  # lines of the file kept
    # 2024-01-04 and 2024-01-05: two held-out dates (read, their prices dropped)
    assert (data.before, data.held_out_days) == (BOUNDARY, 2)
    whole = load_data(_folder(tmp_path, name="w"))
    assert (whole.before, whole.held_out_days, len(whole.bars["M"].frame)) == (None, 0, 9)


def test_a_market_with_nothing_before_the_boundary_is_refused(tmp_path):
    folder = _folder(tmp_path)
    with pytest.raises(DataError, match=r"M\.csv: no price rows before the holdout boundary "
                                        r"2024-01-02 \(the first is dated 2024-01-02\)"):
        load_data(folder, before=dt.date(2024, 1, 2))


def test_the_fingerprint_is_over_the_rows_read(tmp_path):
    base = data_fingerprint(load_data(_folder(tmp_path), before=BOUNDARY))
    later = PRICES.replace("2024-01-05,C,2024-03-10,12.9,12.8", "2024-01-05,C,2024-03-10,99,1")
    later += "2024-01-08,C,2024-03-10,13.1,13.0\n"
    assert data_fingerprint(load_data(_folder(tmp_path, later, name="l"),
                                      before=BOUNDARY)) == base
    earlier = PRICES.replace("2024-01-03,A,2024-01-10,10.5,10.1",
                             "2024-01-03,A,2024-01-10,10.5,10.2")
    assert data_fingerprint(load_data(_folder(tmp_path, earlier, name="e"),
                                      before=BOUNDARY)) != base
    # another boundary is another view of the data, even where the rows read are the same
    assert data_fingerprint(load_data(_folder(tmp_path), before=dt.date(2024, 1, 5))) != base
    # the whole history is fingerprinted by its files, as before
    assert data_fingerprint(load_data(_folder(tmp_path))) != base


def test_events_are_cut_too(tmp_path):
    text = rules('event("report")', ["M"])
    study = Study.from_text(text, _folder(tmp_path), before=BOUNDARY)
    assert study.data.events is not None
    assert [d.date().isoformat() for d in study.data.events.frame["date"]] == ["2024-01-03"]
    fingerprint = data_fingerprint(study.data)
    moved = EVENTS.replace("2024-01-05,report", "2024-01-04,report")
    again = Study.from_text(text, _folder(tmp_path, events=moved, name="m"), before=BOUNDARY)
    assert data_fingerprint(again.data) == fingerprint
    # an event listed only from the boundary on is not known before it
    with pytest.raises(RuleError, match="unknown event 'meeting'; events.csv lists: report"):
        Study.from_text(rules('event("meeting")', ["M"]), _folder(tmp_path, name="x"),
                        before=BOUNDARY)


def test_the_study_sees_only_the_dates_before_the_boundary(tmp_path):
    study = Study.from_text(rules("1", ["M"]), _folder(tmp_path), before=BOUNDARY)
    daily = study.run_set({}).portfolio
    assert daily.index.max().date() < BOUNDARY
    whole = Study.from_text(rules("1", ["M"]), _folder(tmp_path, name="w"))
    assert whole.run_set({}).portfolio.index.max().date() == dt.date(2024, 1, 5)
