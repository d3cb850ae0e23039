"""The research journal: append-only entries, corrections, general and per-idea entries."""

from __future__ import annotations

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.store.errors import CatalogueError


def test_entries_are_listed_oldest_first_with_author_and_kind(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo")
    general = cat.add_entry(idea_id=None, kind="decision", text="Grids stay small.", by="Ines")
    note = cat.add_entry(idea_id=idea, kind="note", text="Roll dates look off.", by="Theo")
    assert [(e.id, e.kind, e.by, e.idea_id) for e in cat.journal()][-2:] == [
        (general, "decision", "Ines", None), (note, "note", "Theo", idea)]
    assert [e.id for e in cat.journal(idea, kind="note")] == [note]
    assert [e.id for e in cat.journal(limit=1)] == [note]
    times = [e.at for e in cat.journal()]
    assert times == sorted(times)


def test_a_correction_is_appended_and_the_original_kept(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo")
    original = cat.add_entry(idea_id=idea, kind="note", text="CORN and SOYBEAN", by="Theo")
    fix = cat.correct_entry(original, "CORN only", by="Theo")
    entries = cat.journal(idea)
    first, correction = entries[-2], entries[-1]
    assert (first.id, first.text, first.corrected_by) == (original, "CORN and SOYBEAN", fix)
    assert (correction.kind, correction.corrects, correction.idea_id) == (
        "correction", original, idea)
    assert cat.entry(original).text == "CORN and SOYBEAN"


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"kind": "run"}, "expected one of note, decision"),
    ({"kind": "stage"}, "expected one of note, decision"),
    ({"text": "   "}, "must not be empty"),
    ({"text": "bell\x07"}, "control characters"),
    ({"text": "y" * 100_000_000}, "longer than the limit"),
    ({"by": ""}, "must not be empty"),
    ({"idea_id": 99}, "no idea 99"),
])
def test_bad_entries_are_refused(cat: Catalogue, kwargs: dict, message: str) -> None:
    args = {"idea_id": None, "kind": "note", "text": "fine", "by": "Theo"} | kwargs
    with pytest.raises(CatalogueError, match=message):
        cat.add_entry(**args)
    assert cat.journal() == []


def test_correcting_a_missing_entry_is_refused(cat: Catalogue) -> None:
    with pytest.raises(CatalogueError, match="no journal entry 5"):
        cat.correct_entry(5, "text", by="Theo")


def test_a_failed_group_of_writes_leaves_nothing(cat: Catalogue) -> None:
    """transaction(): all writes kept or none (SQLite rollback)."""
    with pytest.raises(CatalogueError), cat.transaction():
        cat.add_entry(idea_id=None, kind="note", text="first", by="Theo")
        cat.add_entry(idea_id=None, kind="note", text="", by="Theo")
    assert cat.journal() == []
