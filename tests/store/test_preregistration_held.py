"""Pre-registration held: a run outside the version in force is refused; a wider space or other
markets need an amendment with a reason typed by a person first; a run outside version 1 is
then recorded only with the verdict's warning, and flagged (common practice, no source:
pre-registering a study means declaring what will be tried before trying it, and any
deviation is reported with its reason)."""

from __future__ import annotations

import sqlite3

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.core.prereg import CHECK_KEY
from hunchbook.store import SCHEMA_VERSION
from hunchbook.store.errors import CatalogueError
from hunchbook.store.migrations import migration_names
from tests.store.helpers import RULES, accepted_idea, amended_run, run_args, table_counts

SETS = [{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}]
#: The same strategy on one more market.
WITH_CORN_AND_WHEAT = RULES.replace('"CORN", "SOYBEAN"', '"CORN", "SOYBEAN", "WHEAT"')
#: A wider grid: 20 was not pre-registered.
WIDER = RULES.replace("fast = [5, 10]", "fast = [5, 10, 20]")


@pytest.fixture
def tested(cat: Catalogue) -> int:
    """An idea on CORN and SOYBEAN with its first run (the pre-registration frozen)."""
    idea = accepted_idea(cat)
    revision = cat.latest_revision(idea)
    cat.record_run(idea, revision_id=revision.id, by="Nia", **run_args(SETS, [0.2, 0.3]))
    return idea


def test_a_run_on_other_markets_is_refused_naming_what_to_amend(cat: Catalogue,
                                                                tested: int) -> None:
    revision = cat.save_rules(tested, WITH_CORN_AND_WHEAT, by="Nia")
    before = table_counts(cat)
    with pytest.raises(CatalogueError) as refused:
        cat.check_preregistration(tested, WITH_CORN_AND_WHEAT, SETS)
    message = str(refused.value)
    assert "market WHEAT was not pre-registered" in message and "version 1" in message
    assert f"hunchbook ideas amend {tested}" in message and "Amend with reason" in message
    with pytest.raises(CatalogueError, match="market WHEAT was not pre-registered"):
        cat.record_run(tested, revision_id=revision.id, by="Nia", **run_args(SETS, [0.1, 0.2]))
    assert table_counts(cat) == before  # nothing half-written


@pytest.mark.parametrize("reason", ["rule revision 3 saved", "Run on rule revision 2.",
                                    "first run", "Changed markets.", "wider", "  ", None])
def test_the_programs_own_texts_are_not_a_reason(cat: Catalogue, tested: int,
                                                 reason: str | None) -> None:
    versions = cat.preregistrations(tested)
    with pytest.raises(CatalogueError, match="reason"):
        cat.amend_preregistration(tested, by="Nia", reason=reason, rule_text=WIDER)
    with pytest.raises(CatalogueError, match="reason"):
        cat.update_idea(tested, by="Nia", reason=reason, markets=["CORN"])
    assert cat.preregistrations(tested) == versions and len(cat.revisions(tested)) == 1


def test_saving_a_wider_grid_amends_nothing(cat: Catalogue, tested: int) -> None:
    """The automatic "rule revision N saved" amendment is gone: a saved revision writes no
    pre-registration version, and its run is refused until a person amends it."""
    revision = cat.save_rules(tested, WIDER, by="Nia")
    assert len(cat.preregistrations(tested)) == 1
    assert not [e for e in cat.journal(tested) if "saved" in e.text and e.kind ==
                "preregistration"]
    sets = [*SETS, {"fast": 20.0, "slow": 50.0}]
    with pytest.raises(CatalogueError, match=r"parameter fast=20 outside the declared values "
                                             r"\(5, 10\)"):
        cat.record_run(tested, revision_id=revision.id, by="Nia",
                       **run_args(sets, [0.1, 0.2, 0.3]))


def test_after_an_amendment_the_run_is_recorded_with_the_flag(cat: Catalogue,
                                                              tested: int) -> None:
    reason = "WHEAT shares the grain-market hedging flows of the rationale"
    version = cat.amend_preregistration(tested, by="Ines", reason=reason,
                                        markets=["CORN", "SOYBEAN", "WHEAT"],
                                        rule_text=WITH_CORN_AND_WHEAT)
    assert (version.version, version.markets, version.reason) == (
        2, ("CORN", "SOYBEAN", "WHEAT"), reason)
    entry = cat.journal(tested, kind="preregistration")[-1]
    assert reason in entry.text and "version 2" in entry.text
    (warning,) = cat.check_preregistration(tested, WITH_CORN_AND_WHEAT, SETS)
    assert warning.key == CHECK_KEY and warning.status == "warn"
    assert "market WHEAT was not pre-registered" in warning.finding and reason in warning.finding
    # the verdict must say so: without the warning the run is refused
    revision = cat.latest_revision(tested)
    with pytest.raises(CatalogueError, match="its verdict does not say so"):
        cat.record_run(tested, revision_id=revision.id, by="Ines", **run_args(SETS, [0.1, 0.2]))
    run_id = cat.record_run(tested, revision_id=revision.id, by="Ines",
                            **run_args(SETS, [0.1, 0.2], warnings=(warning,)))
    run = cat.run(run_id)
    assert run.preregistration is not None and not run.preregistration.within
    assert run.preregistration.version == 2
    assert run.preregistration.scope.extra_markets == ("WHEAT",)
    assert run.preregistration.finding == warning.finding
    assert warning.finding in run.result.verdict.reasons
    assert warning.finding in cat.journal(tested, kind="run")[-1].text
    first = cat.runs(tested)[0]
    assert first.preregistration.within and first.preregistration.finding == ""


def test_narrowing_stays_within_and_needs_no_amendment(cat: Catalogue, tested: int) -> None:
    narrow = RULES.replace("fast = [5, 10]", "fast = [10]").replace('"CORN", "SOYBEAN"',
                                                                    '"CORN"')
    revision = cat.save_rules(tested, narrow, by="Nia")
    sets = [{"fast": 10.0, "slow": 50.0}]
    assert cat.check_preregistration(tested, narrow, sets) == ()
    run = cat.run(cat.record_run(tested, revision_id=revision.id, by="Nia",
                                 **run_args(sets, [0.4])))
    assert run.preregistration.within and len(cat.preregistrations(tested)) == 1


def test_amending_needs_a_first_run_and_a_change(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    with pytest.raises(CatalogueError, match="no pre-registration yet"):
        cat.amend_preregistration(idea, by="Nia", reason="A wider grid is worth a look",
                                  rule_text=WIDER)
    cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Nia",
                   **run_args(SETS, [0.2, 0.3]))
    with pytest.raises(CatalogueError, match="nothing to amend"):
        cat.amend_preregistration(idea, by="Nia", reason="Nothing really changes here",
                                  markets=["CORN", "SOYBEAN"], rule_text=RULES)
    with pytest.raises(CatalogueError, match="does not parse"):
        cat.amend_preregistration(idea, by="Nia", reason="A broken file is not a space",
                                  rule_text=RULES.replace("[signal]", "[signal]\nbad = 1"))


def test_a_first_run_on_markets_the_idea_does_not_name_is_refused(cat: Catalogue) -> None:
    """An idea registered on one market cannot have its first run on all of them: the first
    run freezes the idea's markets, so they are named first."""
    idea = accepted_idea(cat, markets=["CORN"])
    revision = cat.latest_revision(idea)
    with pytest.raises(CatalogueError, match=r"trades SOYBEAN, not among the idea's markets "
                                             r"\(CORN\).*hunchbook ideas edit"):
        cat.check_preregistration(idea, RULES, SETS)
    with pytest.raises(CatalogueError, match="not among the idea's markets"):
        cat.record_run(idea, revision_id=revision.id, by="Nia", **run_args(SETS, [0.1, 0.2]))
    assert cat.preregistrations(idea) == [] and cat.runs(idea) == []


def test_an_idea_naming_no_markets_takes_those_of_its_first_run(cat: Catalogue) -> None:
    idea = accepted_idea(cat, markets=[])
    cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Nia",
                   **run_args(SETS, [0.1, 0.2]))
    assert cat.idea(idea).markets == ("CORN", "SOYBEAN")
    assert cat.preregistrations(idea)[0].markets == ("CORN", "SOYBEAN")


def test_each_amendment_after_another_keeps_the_first_version_as_the_yardstick(
        cat: Catalogue, tested: int) -> None:
    amended_run(cat, tested, WIDER, [{"fast": 20.0, "slow": 50.0}], [0.5],
                reason="A slower fast average is worth one trial")
    cat.update_idea(tested, by="Ines", reason="The rationale names the crop reports",
                    rationale="Hedgers adjust slowly after the crop reports.")
    runs = cat.runs(tested)
    assert [r.preregistration.within for r in runs] == [True, False]
    assert [p.version for p in cat.preregistrations(tested)] == [1, 2, 3]
    # a run after the rationale amendment still cites the amendment of the space (version 2)
    (warning,) = cat.check_preregistration(tested, WIDER, [{"fast": 20.0, "slow": 50.0}])
    assert "amendment 2" in warning.finding and "amendment 3" not in warning.finding


def test_runs_stored_before_the_check_existed_are_flagged_when_migrated(
        cat_path, tmp_path) -> None:
    """Derived like the trials: a catalogue written before this schema version gets every
    run's row computed on opening, equal to what recording it now writes."""
    with Catalogue(cat_path) as cat:
        idea = accepted_idea(cat)
        cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Nia",
                       **run_args(SETS, [0.2, 0.3]))
        amended_run(cat, idea, WIDER, [{"fast": 20.0, "slow": 50.0}], [0.5],
                    reason="A slower fast average is worth one trial")
        recorded = [r.preregistration for r in cat.runs(idea)]
    conn = sqlite3.connect(cat_path)
    for trigger in ("no_update", "no_delete", "no_replace"):
        conn.execute(f"DROP TRIGGER run_preregistration_{trigger}")
    conn.execute("DROP TABLE run_preregistration")
    later = migration_names()[migration_names().index("0008_run_preregistration"):]
    for name in ("ideas_by_title", "ideas_by_stage_id", "ideas_by_sharpe",
                 "ideas_by_sharpe_known", "ideas_by_trials"):  # 0009_idea_orders undone too
        conn.execute(f"DROP INDEX {name}")
    conn.executemany("DELETE FROM _sqlite_migrations WHERE name = ?", [(n,) for n in later])
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION - len(later)}")
    conn.commit()
    conn.close()
    with Catalogue(cat_path) as cat:
        assert cat.schema_version() == SCHEMA_VERSION
        assert [r.preregistration for r in cat.runs(idea)] == recorded
        assert cat.check() == []


def test_check_finds_a_flag_rewritten_behind_the_catalogues_back(cat_path) -> None:
    """The rows are derived: ``catalogue check`` recomputes each and names a run whose flag
    was changed or removed by a plain SQLite tool."""
    with Catalogue(cat_path) as cat:
        idea = accepted_idea(cat)
        cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Nia",
                       **run_args(SETS, [0.2, 0.3]))
        run_id = amended_run(cat, idea, WIDER, [{"fast": 20.0, "slow": 50.0}], [0.5],
                             reason="A slower fast average is worth one trial")
        assert cat.check() == []
    conn = sqlite3.connect(cat_path)
    conn.execute("DROP TRIGGER run_preregistration_no_update")
    conn.execute("UPDATE run_preregistration SET within = 1, finding = '' WHERE run_id = ?",
                 [run_id])
    conn.commit()
    conn.close()
    with Catalogue(cat_path, read_only=True) as cat:
        assert cat.check() == [f"pre-registration check of run(s) {run_id} does not match the "
                               "runs and the pre-registration versions"]
