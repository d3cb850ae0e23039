"""Families and four eyes from the command line: ``ideas add --variant-of``, ``ideas link``,
``ideas show`` (the family tree), ``ideas list --waiting-for-me``, ``ideas promote``,
``catalogue settings|set``, and a bundle import carrying a family link. House rules (common
practice, no source): a second person reviews and promotes; a family's trials count together."""

from __future__ import annotations

import argparse
from pathlib import Path

import pytest

from hunchbook.catalogue import CHECKLIST, PROMOTION_CHECKLIST, Catalogue
from hunchbook.cli_catalogue import register
from hunchbook.cli_settings import register as register_desk
from hunchbook.core.errors import HunchbookError
from tests.store.helpers import RULES, run_args


def _run(*argv: str) -> int:
    parser = argparse.ArgumentParser(prog="hunchbook")
    register_desk(register(parser.add_subparsers(dest="command", required=True)))
    args = parser.parse_args(list(argv))
    return args.handler(args)


@pytest.fixture
def desk(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> list[str]:
    """A catalogue with Nia's tested idea 1 (its verdict says promote) and Theo's draft 2."""
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia")
    path = tmp_path / "desk.sqlite"
    rules = tmp_path / "trend.toml"
    rules.write_text(RULES)
    c = ["--catalogue", str(path)]
    assert _run("ideas", "add", *c, "--title", "Grain trend", "--hypothesis", "Grains trend.",
                "--rules", str(rules), "--submit") == 0
    assert _run("ideas", "review", *c, "1", "--decision", "accept", "--by", "Ines",
                "--checked", ",".join(CHECKLIST)) == 0
    with Catalogue(path) as cat:
        cat.record_run(1, revision_id=cat.latest_revision(1).id, by="Nia",
                       **run_args([{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}],
                                  [0.4, 0.6], chosen=1, outcome="passes"))
    assert _run("ideas", "add", *c, "--title", "Soy trend", "--hypothesis", "Soy trends.",
                "--by", "Theo") == 0
    return c


def test_variants_from_the_command_line(desk: list[str], tmp_path: Path,
                                        capsys: pytest.CaptureFixture[str]) -> None:
    c = desk
    assert _run("ideas", "add", *c, "--title", "Grain trend, slower", "--hypothesis", "h",
                "--variant-of", "1", "--reason", "Slower averages.") == 0
    assert "Idea 3 written down (draft). It is a variant of idea 1." in capsys.readouterr().out
    assert _run("ideas", "link", *c, "2", "--variant-of", "3", "--reason",
                "Same trend on soybeans.", "--by", "Theo") == 0
    out = capsys.readouterr().out
    assert out.splitlines() == [
        "Idea 2 is now a variant of idea 3.",
        "Family (3 ideas, 2 trials counted for each one's deflated Sharpe):",
        "  1  Grain trend  [tested; Promote; 2 own trials]",
        "      └─ 3  Grain trend, slower  [draft; no run yet; 0 own trials]",
        " *        └─ 2  Soy trend  [draft; no run yet; 0 own trials]"]
    assert _run("ideas", "show", *c, "2") == 0
    shown = capsys.readouterr().out
    assert "Family (3 ideas, 2 trials" in shown and " *        └─ 2  Soy trend" in shown
    with Catalogue(Path(c[1])) as cat:
        assert cat.trial_count(2) == 2 and cat.variant_link(2).set_by == "Theo"
    # a second link, a circle or a missing reason: one line each, nothing written
    for argv, message in ((["ideas", "link", "2", "--variant-of", "1", "--reason", "x"],
                           "already a variant of idea 3"),
                          (["ideas", "link", "1", "--variant-of", "2", "--reason", "x"],
                           "would make a circle"),
                          (["ideas", "add", "--title", "t", "--hypothesis", "h",
                            "--variant-of", "1"], "--variant-of and --reason go together")):
        with pytest.raises(HunchbookError, match=message):
            _run(*argv, *c)
    with Catalogue(Path(c[1])) as cat:
        assert len(cat.list_ideas()) == 3


def test_a_bundle_import_carries_the_family_link(desk: list[str], tmp_path: Path,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    c = desk
    _run("ideas", "link", *c, "2", "--variant-of", "1", "--reason", "Same trend, soybeans.")
    for idea in ("1", "2"):
        assert _run("ideas", "export", *c, idea, str(tmp_path / f"{idea}.zip")) == 0
    other = ["--catalogue", str(tmp_path / "other.sqlite")]
    assert _run("ideas", "import", *other, str(tmp_path / "2.zip")) == 0
    out = capsys.readouterr().out
    assert "conflict: the idea is a variant of 'Grain trend'" in out
    assert _run("ideas", "import", *other, str(tmp_path / "1.zip")) == 0
    assert _run("ideas", "import", *other, str(tmp_path / "2.zip")) == 0
    out = capsys.readouterr().out
    # the variant came in first (idea 1 here), its parent second (idea 2)
    assert "Idea 1 already in the catalogue; appended to: 1 variant link." in out
    assert _run("ideas", "show", *other, "2") == 0
    out = capsys.readouterr().out
    assert "Family (2 ideas, 2 trials" in out and "└─ 1  Soy trend" in out


def test_four_eyes_and_the_promotion_review(desk: list[str],
                                            capsys: pytest.CaptureFixture[str]) -> None:
    c = desk
    capsys.readouterr()
    assert _run("ideas", "list", *c, "--waiting-for-me", "--by", "Theo") == 0
    out = capsys.readouterr().out.splitlines()
    assert out[0].split()[:5] == ["id", "stage", "your", "next", "step"]
    assert out[1].startswith("1   tested  promotion review") and out[-1] == (
        "1 idea waiting for Theo")
    assert _run("ideas", "list", *c, "--waiting-for-me") == 0  # Nia (HUNCHBOOK_USER)
    assert capsys.readouterr().out.endswith("0 ideas waiting for Nia\n")
    with pytest.raises(HunchbookError, match="promoted by a promotion review, not a stage "
                                             "change"):
        _run("ideas", "stage", *c, "1", "promoted", "--reason", "strong", "--by", "Theo")
    with pytest.raises(HunchbookError, match="Nia wrote this idea, so someone else reviews it"):
        _run("ideas", "promote", *c, "1", "--checked", "book_correlation_seen,costs_checked",
             "--decline", "--comments", "mine")
    with pytest.raises(HunchbookError, match="unknown promotion checklist item.*vibes"):
        _run("ideas", "promote", *c, "1", "--checked", "vibes", "--by", "Theo")
    with pytest.raises(HunchbookError, match="have not been unlocked"):
        _run("ideas", "promote", *c, "1", "--checked", ",".join(PROMOTION_CHECKLIST),
             "--by", "Theo")
    assert _run("ideas", "promote", *c, "1", "--checked", "book_correlation_seen,costs_checked",
                "--decline", "--comments", "Unlock the held-out years first.",
                "--by", "Theo") == 0
    assert "Promotion review 2 recorded; idea 1 is now 'tested'." in capsys.readouterr().out
    # a desk of one: the author may review, and it says so everywhere
    assert _run("catalogue", "set", *c, "one_person_desk", "on", "--reason",
                "Theo is away for a month.") == 0
    assert "one_person_desk is on (set by Nia" in capsys.readouterr().out
    assert _run("catalogue", "settings", *c) == 0
    out = capsys.readouterr().out
    assert out.startswith("one_person_desk: on") and "by Nia: Theo is away for a month." in out
    assert _run("ideas", "promote", *c, "1", "--checked", "book_correlation_seen,costs_checked",
                "--decline", "--comments", "Still locked.") == 0
    assert "one-person desk, reviewed by the author" in capsys.readouterr().out
    assert _run("ideas", "show", *c, "1") == 0
    out = capsys.readouterr().out
    assert "Nia: Promotion declined (one-person desk: reviewed by the author). Still locked." \
        in out
    assert "Theo: Promotion declined. Unlock the held-out years first." in out
    with pytest.raises(HunchbookError, match="one_person_desk: expected on or off"):
        _run("catalogue", "set", *c, "one_person_desk", "maybe", "--reason", "x")
