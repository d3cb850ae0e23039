"""Stored times as people read them: one format, ``YYYY-MM-DD HH:MM`` in UTC."""

from hunchbook.core.when import readable_time


def test_stored_utc_stamps_read_as_date_and_minutes():
    # ISO 8601 (common practice, no source): 'Z' is UTC; the seconds are dropped, not rounded
    assert readable_time("2025-01-24T17:02:59.999999Z") == "2025-01-24 17:02"
    assert readable_time("2025-01-24T17:02:59.999999Z", time=False) == "2025-01-24"


def test_other_offsets_are_shown_in_utc():
    # 23:30 at +02:00 is 21:30 UTC (ISO 8601 offsets; common practice, no source)
    assert readable_time("2025-01-01T23:30:00+02:00") == "2025-01-01 21:30"
    assert readable_time("2025-01-01T01:30:00+02:00") == "2024-12-31 23:30"


def test_missing_or_unparsable_stamps():
    assert readable_time(None) == "" and readable_time("") == ""
    assert readable_time("last spring") == "last spring"
