"""Idea families: variant links (once per idea, journalled, no circles) and the family's trials
counted for each member.

The counting rules are house rules (common practice, no source): every distinct backtest run
for any member of a family is a trial of each member; the same rule text and parameters run
under two members is one backtest, so one trial. Expected counts are worked out by hand in each
test from the sets and strategies it runs.
"""

from __future__ import annotations

import pytest

from hunchbook.catalogue import Catalogue, CatalogueError
from tests.store.helpers import RULES, accepted_idea, run_args, table_counts

#: The same strategy as RULES with another signal: every set of it is a new trial.
OTHER_SIGNAL = RULES.replace("mean(close, fast) - mean(close, slow)",
                             "mean(close, fast) - mean(close, slow) - 1")
#: RULES with a wider grid (same strategy: the signal, markets and costs are unchanged).
WIDER = RULES.replace("fast = [5, 10]", "fast = [5, 10, 20]")


def _run(cat: Catalogue, idea: int, text: str, fasts: list[float], seed: int = 1) -> int:
    revision = cat.save_rules(idea, text, by="Nia")
    sets = [{"fast": f, "slow": 50.0} for f in fasts]
    return cat.record_run(idea, revision_id=revision.id, by="Nia",
                          **run_args(sets, [0.1 * (k + 1) for k in range(len(sets))],
                                     seed=seed))


def test_a_variant_link_is_journalled_on_both_ideas_and_kept_as_a_record(
        cat: Catalogue) -> None:
    parent = cat.add_idea(title="Grain trend", hypothesis="h", submitted_by="Nia")
    child = cat.add_idea(title="Grain trend, slower", hypothesis="h", submitted_by="Theo")
    link = cat.set_variant_of(child, parent, by="Theo", reason="Same trend, slower averages.")
    assert (link.idea_id, link.parent_id, link.set_by, link.reason) == (
        child, parent, "Theo", "Same trend, slower averages.")
    assert cat.variant_link(child) == link and cat.variant_link(parent) is None
    own = cat.journal(child)[-1]
    assert (own.kind, own.by) == ("edit", "Theo")
    assert own.text.startswith(f"Recorded as a variant of idea {parent} 'Grain trend': Same "
                               "trend, slower averages.")
    assert cat.journal(parent)[-1].text == (f"Idea {child} 'Grain trend, slower' recorded as a "
                                            "variant of this idea: Same trend, slower averages.")
    assert cat.check() == []


@pytest.mark.parametrize("case", ["itself", "twice", "circle", "missing parent", "no reason"])
def test_bad_links_are_refused_in_one_line_and_write_nothing(cat: Catalogue, case: str) -> None:
    a = cat.add_idea(title="a", hypothesis="h", submitted_by="Nia")
    b = cat.add_idea(title="b", hypothesis="h", submitted_by="Nia")
    c = cat.add_idea(title="c", hypothesis="h", submitted_by="Nia")
    cat.set_variant_of(b, a, by="Nia", reason="r")
    cat.set_variant_of(c, b, by="Nia", reason="r")
    before = table_counts(cat)
    idea, parent, reason, message = {
        "itself": (a, a, "r", "cannot be a variant of itself"),
        "twice": (b, c, "r", f"idea {b} is already a variant of idea {a}"),
        "circle": (a, c, "r", f"idea {c} is a variant of idea {a} .*circle"),
        "missing parent": (a, 99, "r", "there is no idea 99"),
        "no reason": (a, b, " ", "reason: must not be empty"),
    }[case]
    with pytest.raises(CatalogueError, match=message) as caught:
        cat.set_variant_of(idea, parent, by="Nia", reason=reason)
    assert "\n" not in str(caught.value)
    assert f"idea {idea}: idea {idea}" not in str(caught.value)  # the idea named once
    assert table_counts(cat) == before
    assert len(cat.db.execute("SELECT * FROM variant_links").fetchall()) == 2


def test_the_family_is_the_whole_tree_with_each_members_verdict_and_own_trials(
        cat: Catalogue) -> None:
    root = accepted_idea(cat, "Root")
    left = accepted_idea(cat, "Left")
    deep = accepted_idea(cat, "Deep")
    right = cat.add_idea(title="Right", hypothesis="h", submitted_by="Theo")
    lone = cat.add_idea(title="Lone", hypothesis="h", submitted_by="Theo")
    cat.set_variant_of(left, root, by="Nia", reason="r")
    cat.set_variant_of(right, root, by="Theo", reason="r")
    cat.set_variant_of(deep, left, by="Nia", reason="r")
    _run(cat, root, RULES, [5.0, 10.0])
    _run(cat, deep, OTHER_SIGNAL, [5.0])
    for asked in (root, left, right, deep):
        family = cat.family(asked)
        assert family.idea_id == asked
        shape = [(depth, m.title) for depth, m in family.members()]
        assert shape == [(0, "Root"), (1, "Left"), (2, "Deep"), (1, "Right")]
        assert family.trial_count == 3  # 2 sets of RULES + 1 of OTHER_SIGNAL
    members = {m.title: m for _, m in cat.family(deep).members()}
    assert members["Root"].own_trials == 2 and members["Deep"].own_trials == 1
    assert members["Right"].own_trials == 0 and members["Right"].last_verdict is None
    assert members["Root"].last_verdict == "no_edge" and members["Root"].link is None
    assert members["Deep"].link.parent_id == left
    assert [m.title for _, m in cat.family(lone).members()] == ["Lone"]
    assert cat.family(lone).trial_count == 0


def test_a_variant_does_not_start_its_trial_count_afresh(cat: Catalogue) -> None:
    """Linking brings the family's trials to the variant at once; its next run counts them."""
    parent = accepted_idea(cat, "Parent")
    _run(cat, parent, RULES, [5.0, 10.0])
    variant = accepted_idea(cat, "Variant")
    assert cat.trial_count(variant) == 0
    cat.set_variant_of(variant, parent, by="Nia", reason="Same idea, other signal.")
    assert cat.trial_count(variant) == cat.idea(variant).trial_count == 2
    history = cat.prospective_trials(variant, OTHER_SIGNAL,
                                     [{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}])
    # the parent's two sets are other trials, recomputed with the parent's rule text
    assert history.total == 4
    assert [s.rule_text for s in history.earlier] == [RULES]
    assert [sorted(p["fast"] for p in s.parameter_sets) for s in history.earlier] == [[5.0, 10.0]]
    run_id = _run(cat, variant, OTHER_SIGNAL, [5.0, 10.0])
    assert cat.run(run_id).trial_count == 4
    assert cat.idea(parent).trial_count == cat.idea(variant).trial_count == 4
    assert cat.trial_count(parent) == 4  # the parent's next DSR counts its variant's trials
    assert len(cat.trial_sharpes(parent)) == 4
    assert "(with its family of 2 ideas)" in cat.journal(variant, kind="run")[-1].text
    assert cat.check() == []


def test_a_trial_two_members_share_counts_once(cat: Catalogue) -> None:
    """The variant reruns the parent's strategy on a wider grid: only the new set is a trial."""
    parent = accepted_idea(cat, "Parent")
    variant = accepted_idea(cat, "Variant")
    cat.set_variant_of(variant, parent, by="Nia", reason="Wider grid.")
    _run(cat, parent, RULES, [5.0, 10.0])
    history = cat.prospective_trials(variant, WIDER, [{"fast": f, "slow": 50.0}
                                                      for f in (5.0, 10.0, 20.0)])
    assert history.total == 3 and history.earlier == ()  # nothing outside the new space
    _run(cat, variant, WIDER, [5.0, 10.0, 20.0])
    assert cat.trial_count(parent) == cat.trial_count(variant) == 3
    family = cat.family(parent)
    assert [m.own_trials for _, m in family.members()] == [2, 3] and family.trial_count == 3


def test_linking_two_families_joins_their_trials(cat: Catalogue) -> None:
    a, b = accepted_idea(cat, "A"), accepted_idea(cat, "A variant")
    c, d = accepted_idea(cat, "C"), accepted_idea(cat, "C variant")
    cat.set_variant_of(b, a, by="Nia", reason="r")
    cat.set_variant_of(d, c, by="Nia", reason="r")
    _run(cat, b, RULES, [5.0])
    _run(cat, d, OTHER_SIGNAL, [5.0, 10.0])
    assert [cat.trial_count(i) for i in (a, b, c, d)] == [1, 1, 2, 2]
    cat.set_variant_of(c, b, by="Nia", reason="C is A's idea on other markets.")
    assert [cat.trial_count(i) for i in (a, b, c, d)] == [3, 3, 3, 3]
    assert [m.title for _, m in cat.family(d).members()] == ["A", "A variant", "C",
                                                            "C variant"]
    assert cat.check() == []


def test_a_circle_edited_into_the_file_is_found_by_the_check(cat: Catalogue) -> None:
    a = cat.add_idea(title="a", hypothesis="h", submitted_by="Nia")
    b = cat.add_idea(title="b", hypothesis="h", submitted_by="Nia")
    cat.set_variant_of(b, a, by="Nia", reason="r")
    with pytest.raises(Exception, match="append-only"):
        cat.db.execute("UPDATE variant_links SET parent_id = ?", [b])
    cat.db.execute("DROP TRIGGER variant_links_no_replace")
    cat.db.execute("INSERT INTO variant_links (id, uuid, idea_id, parent_id, reason, set_by, "
                   "set_at) VALUES (2, 'x', ?, ?, 'r', 'n', 't')", [a, b])
    cat.db.conn.commit()
    problems = cat.check()
    assert any("variants of their own variants" in p for p in problems)
    assert [m.title for _, m in cat.family(a).members()] in (["a", "b"], ["b", "a"])
