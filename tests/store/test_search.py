"""Listing ideas: every filter, full-text search over ideas and journal text, safe queries."""

from __future__ import annotations

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import RULES, accepted_idea, run_args


@pytest.fixture
def filled(cat: Catalogue) -> dict[str, int]:
    ids = {
        "carry": cat.add_idea(title="Copper carry", hypothesis="Backwardation pays holders.",
                              rationale="Scarce inventories earn a convenience yield.",
                              submitted_by="Nia", source_kind="paper", markets=["COPPER"],
                              tags=["carry", "metals"]),
        "flow": cat.add_idea(title="Month-end flow", hypothesis="Index rises at month end.",
                             rationale="Pension funds rebalance.", submitted_by="Nia",
                             markets=["EQIDX"], tags=["calendar"], stage="submitted"),
        "reversion": accepted_idea(cat, "Grain reversion", tags=["reversion"],
                                   source_kind="web"),
    }
    rev = cat.save_rules(ids["reversion"], RULES, by="Nia")
    cat.record_run(ids["reversion"], revision_id=rev.id, by="Theo",
                   **run_args([{"fast": 5.0, "slow": 50.0}], [0.1], outcome="lost_to_costs"))
    cat.add_entry(idea_id=ids["flow"], kind="note", by="Theo",
                  text="Rebalancing calendars of large pension schemes attached.")
    return ids


def _ids(rows: list) -> set[int]:
    return {r.id for r in rows}


def test_filters_select_the_matching_ideas(cat: Catalogue, filled: dict[str, int]) -> None:
    assert _ids(cat.list_ideas(stage="submitted")) == {filled["flow"]}
    assert _ids(cat.list_ideas(verdict="lost_to_costs")) == {filled["reversion"]}
    assert _ids(cat.list_ideas(market="COPPER")) == {filled["carry"]}
    assert _ids(cat.list_ideas(market="CORN")) == {filled["reversion"]}
    assert _ids(cat.list_ideas(tag="carry")) == {filled["carry"]}
    assert _ids(cat.list_ideas(author="Nia")) == set(filled.values())
    assert _ids(cat.list_ideas(source_kind="web")) == {filled["reversion"]}
    assert _ids(cat.list_ideas(tag="carry", market="EQIDX")) == set()


def test_list_rows_carry_verdict_sharpe_trials_and_newest_first(
        cat: Catalogue, filled: dict[str, int]) -> None:
    rows = cat.list_ideas()
    assert [r.updated_at for r in rows] == sorted((r.updated_at for r in rows), reverse=True)
    row = next(r for r in rows if r.id == filled["reversion"])
    assert (row.last_verdict, row.last_net_sharpe, row.trial_count) == ("lost_to_costs", 0.1, 1)
    assert row.markets == ("CORN", "SOYBEAN") and row.tags == ("reversion",)
    assert len(cat.list_ideas(limit=2)) == 2


def test_search_finds_words_in_titles_rationales_and_journal(cat: Catalogue,
                                                             filled: dict[str, int]) -> None:
    assert _ids(cat.list_ideas(text="convenience")) == {filled["carry"]}     # rationale
    assert _ids(cat.list_ideas(text="copper")) == {filled["carry"]}          # title, any case
    assert _ids(cat.list_ideas(text="schemes")) == {filled["flow"]}          # journal only
    assert _ids(cat.list_ideas(text="pension")) == {filled["flow"]}          # both
    assert _ids(cat.list_ideas(text="rebal")) == {filled["flow"]}            # word prefix
    assert _ids(cat.list_ideas(text="pension copper")) == set()              # every word
    assert _ids(cat.list_ideas(text="pension", stage="draft")) == set()


@pytest.mark.parametrize("typed", ['"unbalanced', "carry AND OR NOT", "NEAR(", "*", "a:b",
                                   "copper)"])
def test_search_syntax_typed_by_people_is_never_an_error(cat: Catalogue,
                                                        filled: dict[str, int],
                                                        typed: str) -> None:
    if typed == "*":
        with pytest.raises(CatalogueError, match="no words"):
            cat.list_ideas(text=typed)
    else:
        assert isinstance(cat.list_ideas(text=typed), list)


def test_unknown_filter_values_are_refused(cat: Catalogue) -> None:
    with pytest.raises(CatalogueError, match="expected one of draft"):
        cat.list_ideas(stage="thinking")
    with pytest.raises(CatalogueError, match="whole number"):
        cat.list_ideas(limit=0)


def test_edits_and_new_entries_are_searchable_at_once(cat: Catalogue,
                                                      filled: dict[str, int]) -> None:
    carry = filled["carry"]
    cat.update_idea(carry, by="Nia", title="Aluminium carry")
    assert _ids(cat.list_ideas(text="aluminium")) == {carry}
    # The old title stays findable: the edit's journal entry records it.
    assert _ids(cat.list_ideas(text="copper")) == {carry}
    row = cat.db.execute("SELECT title FROM idea_search WHERE rowid = ?", [carry]).fetchone()
    assert row == ("Aluminium carry",)
    cat.add_entry(idea_id=carry, kind="note", text="Smelter outages matter", by="Theo")
    assert _ids(cat.list_ideas(text="smelter outages")) == {carry}
    cat.add_entry(idea_id=None, kind="note", text="zeppelin", by="Theo")  # general entry
    assert cat.list_ideas(text="zeppelin") == []
