"""The journal's entries as sentences: every automatic kind put in words from its stored text
(human labels, no field or checklist keys, no braces), the stored text itself untouched."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.demo.build import CATALOGUE_FILE, prepare_demo
from hunchbook.store.entry_text import SENTENCES, kind_label, sentence
from hunchbook.store.vocab import ENTRY_KINDS, FIELD_LABELS, PROMOTION_CHECKLIST
from tests.store.helpers import accepted_idea

#: Keys of the catalogue that must never reach a reader.
KEYS = re.compile(r"\b(?:" + "|".join([*CHECKLIST, *PROMOTION_CHECKLIST, "one_person_desk",
                                        *(k for k in FIELD_LABELS if "_" in k)]) + r")\b")
AUTOMATIC = ("run", "stage", "review", "edit", "preregistration")


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Catalogue:
    catalogue, _ = prepare_demo(tmp_path_factory.mktemp("demo"))
    return Catalogue(Path(catalogue.parent) / CATALOGUE_FILE, create=False)


def test_every_kind_has_one_sentence_function_and_a_label():
    assert set(SENTENCES) == set(ENTRY_KINDS)
    assert all("_" not in kind_label(kind) for kind in ENTRY_KINDS)
    assert kind_label("preregistration") == "Pre-registration"


def test_every_automatic_entry_of_the_demo_reads_as_a_sentence(demo: Catalogue):
    entries = demo.journal()
    assert {e.kind for e in entries} == set(ENTRY_KINDS)  # the demo has every kind
    for entry in entries:
        shown = sentence(entry)
        assert shown.strip() and "{" not in shown and not KEYS.search(shown), shown
        if entry.kind in AUTOMATIC:
            assert " -> " not in shown and "(s)" not in shown.split("Comments:")[0], shown
            assert "[x]" not in shown and "[ ]" not in shown, shown
        else:  # a person's Markdown is shown as written
            assert entry.kind == "decision" or shown == entry.text


def test_run_entries_read_with_the_figures_of_their_run_record(demo: Catalogue):
    """Each run's sentence carries its run record's set count, chosen net Sharpe ratio
    (two decimals) and verdict label: the record is the outside reference of the text."""
    runs = {r.id: r for r in demo.runs()}
    read = 0
    for entry in demo.journal(kind="run"):
        shown = sentence(entry)
        match = re.match(r"Quick run (\d+) on rule revision (\d+): (\d+) sets?, ", shown)
        if match is None:
            assert shown.startswith("Held-out years unlocked by "), shown
            continue
        run = runs[int(match[1])]
        assert int(match[2]) == run.revision_number and int(match[3]) == run.set_count
        assert f"net Sharpe {run.chosen_net_sharpe:.2f}, verdict {run.result.verdict.label}." \
            in shown
        read += 1
    assert read == len(runs)


def test_review_names_the_items_not_ticked_by_their_question(cat: Catalogue):
    idea = cat.add_idea(title="Grain trend", hypothesis="Trends.", submitted_by="Nia",
                        stage="submitted")
    ticks = {**dict.fromkeys(CHECKLIST, True), "markets_named": False}
    cat.review(idea, reviewer="Ines", checklist=ticks, decision="return",
               comments="Name *the* markets.")
    entry = cat.journal(idea, kind="review")[-1]
    assert "markets_named" in entry.text  # stored as written
    assert sentence(entry) == (
        "Returned with comments; 3 of 4 checklist items ticked; not ticked: "
        f"\u201c{CHECKLIST['markets_named'].rstrip('.')}\u201d. Comments: Name *the* markets.")


def test_edits_and_desk_settings_read_with_labels(cat: Catalogue):
    idea = accepted_idea(cat)
    cat.update_idea(idea, by="Nia", rationale_kind="behavioural", title="Grain trends")
    edit = cat.journal(idea, kind="edit")[-1]
    shown = sentence(edit)
    assert "Kind of rationale from Other to Behavioural" in shown
    assert "Title from \u201cGrain trend\u201d to \u201cGrain trends\u201d" in shown
    cat.set_desk_setting("one_person_desk", True, by="Nia", reason="a desk of one")
    desk = cat.journal(kind="decision")[-1]
    assert "one_person_desk" in desk.text
    assert sentence(desk).startswith("Desk setting \u201cone person desk\u201d turned on (")
    assert sentence(desk).endswith(": a desk of one")


def test_stage_changes_and_unmatched_text():
    from hunchbook.store.records import Entry

    def entry(kind: str, text: str) -> Entry:
        return Entry(id=1, uuid="u", idea_id=1, kind=kind, text=text, by="Nia", at="")

    assert sentence(entry("stage", "Stage draft -> submitted. Ready.")) == (
        "Moved from draft to submitted: Ready.")
    # a text of another pattern (older entries, bundles) is shown with its keys in words
    shown = sentence(entry("review", "Looked at markets_named only."))
    assert shown == f"Looked at \u201c{CHECKLIST['markets_named'].rstrip('.')}\u201d only."
