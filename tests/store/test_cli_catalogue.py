"""The catalogue commands through argparse, as the main ``hunchbook`` parser will hold them."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli_catalogue import register
from hunchbook.core.errors import HunchbookError
from hunchbook.store import SCHEMA_VERSION
from tests.store.helpers import RULES, run_args


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="hunchbook")
    register(parser.add_subparsers(dest="command", required=True))
    return parser


def _run(*argv: str) -> int:
    args = _parser().parse_args(list(argv))
    return args.handler(args)


@pytest.fixture
def path(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia")
    return tmp_path / "desk.sqlite"


def test_the_review_workflow_from_the_command_line(path: Path, tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    rules = tmp_path / "trend.toml"
    rules.write_text(RULES)
    c = ["--catalogue", str(path)]
    assert _run("ideas", "add", *c, "--title", "Grain trend", "--hypothesis", "Grains trend.",
                "--rationale", "Hedgers adjust slowly.", "--rationale-kind", "behavioural",
                "--markets", "CORN,SOYBEAN", "--tags", "trend", "--rules", str(rules),
                "--submit") == 0
    assert "Idea 1 written down and submitted" in capsys.readouterr().out
    assert _run("ideas", "list", *c, "--stage", "submitted") == 0
    out = capsys.readouterr().out
    assert "Grain trend" in out and "1 idea\n" in out
    assert _run("ideas", "review", *c, "1", "--decision", "accept", "--by", "Ines",
                "--checked", ",".join(CHECKLIST), "--comments", "Go.") == 0
    assert "idea 1 is now 'accepted'" in capsys.readouterr().out
    with Catalogue(path) as cat:  # the lead's `run --idea` records through the API
        rev = cat.latest_revision(1)
        assert rev is not None and rev.text == RULES
        cat.record_run(1, revision_id=rev.id, by="Ines",
                       **run_args([{"fast": 5.0, "slow": 50.0}], [0.42]))
    assert _run("runs", "list", *c) == 0
    out = capsys.readouterr().out
    # the verdict's label, never its internal key
    assert "0.42" in out and "No edge" in out and "no_edge" not in out and "1 run\n" in out
    assert _run("ideas", "show", *c, "1") == 0
    out = capsys.readouterr().out
    assert "stage      : tested (last verdict: No edge)" in out and "trial count 1" in out
    assert _run("ideas", "list", *c, "--json", "--verdict", "no_edge") == 0
    (row,) = json.loads(capsys.readouterr().out)
    assert (row["id"], row["trial_count"], row["last_net_sharpe"]) == (1, 1, 0.42)


def test_journal_commands(path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    c = ["--catalogue", str(path)]
    _run("ideas", "add", *c, "--title", "t", "--hypothesis", "h")
    assert _run("journal", "add", *c, "--idea", "1", "CORN roll dates look off") == 0
    assert _run("journal", "add", *c, "--kind", "decision", "Grids stay small", "--by",
                "Ines") == 0
    entry = int(capsys.readouterr().out.split()[-2])
    assert _run("journal", "correct", *c, str(entry), "Grids stay at six sets or fewer") == 0
    capsys.readouterr()
    assert _run("journal", "list", *c, "--limit", "2") == 0
    out = capsys.readouterr().out
    assert f"(corrects {entry})" in out and "2 entries" in out
    assert _run("journal", "list", *c, "--idea", "1", "--kind", "note") == 0
    assert "CORN roll dates look off" in capsys.readouterr().out


def test_edit_stage_export_import_backup_check(path: Path, tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    c = ["--catalogue", str(path)]
    _run("ideas", "add", *c, "--title", "t", "--hypothesis", "h")
    assert _run("ideas", "edit", *c, "1", "--title", "Better title", "--tags", "a,b") == 0
    assert _run("ideas", "stage", *c, "1", "submitted", "--reason", "ready") == 0
    bundle = tmp_path / "idea.zip"
    assert _run("ideas", "export", *c, "1", str(bundle)) == 0
    other = ["--catalogue", str(tmp_path / "other.sqlite")]
    assert _run("ideas", "import", *other, str(bundle), "--by", "Ines") == 0
    assert "Idea 1 created" in capsys.readouterr().out
    assert _run("ideas", "import", *other, str(bundle)) == 0
    assert "nothing new" in capsys.readouterr().out
    assert _run("catalogue", "backup", *c, str(tmp_path / "copy.sqlite")) == 0
    assert _run("catalogue", "check", *c) == 0
    assert f"schema version {SCHEMA_VERSION}; ok" in capsys.readouterr().out
    with Catalogue(tmp_path / "other.sqlite") as cat:
        assert (cat.idea(1).title, cat.idea(1).stage) == ("Better title", "submitted")


def test_check_exits_1_on_a_damaged_catalogue(path: Path,
                                              capsys: pytest.CaptureFixture[str]) -> None:
    with Catalogue(path) as cat:
        cat.add_idea(title="t", hypothesis="h", submitted_by="Nia")
        cat.db.execute("DROP TRIGGER ideas_no_delete")
        cat.db.execute("PRAGMA foreign_keys = OFF")
        cat.db.execute("DELETE FROM ideas")
        cat.db.conn.commit()
    assert _run("catalogue", "check", "--catalogue", str(path)) == 1
    assert "foreign key: journal row" in capsys.readouterr().out


@pytest.mark.parametrize("argv", [
    ["ideas", "stage", "1", "promoted", "--reason", "keen"],
    ["ideas", "show", "7"],
    ["ideas", "review", "1", "--decision", "accept", "--checked", "vibes"],
    ["ideas", "edit", "1"],
    ["ideas", "list", "--search", "***"],
])
def test_bad_input_raises_hunchbook_errors(path: Path, argv: list[str]) -> None:
    _run("ideas", "add", "--catalogue", str(path), "--title", "t", "--hypothesis", "h")
    with pytest.raises(HunchbookError):
        _run(*argv, "--catalogue", str(path))


def test_a_missing_catalogue_is_not_created_by_reading_commands(tmp_path: Path) -> None:
    with pytest.raises(HunchbookError, match="no catalogue file"):
        _run("ideas", "list", "--catalogue", str(tmp_path / "typo.sqlite"))
    assert not (tmp_path / "typo.sqlite").exists()


def test_the_default_catalogue_comes_from_the_environment(tmp_path: Path,
                                                          monkeypatch: pytest.MonkeyPatch,
                                                          capsys: pytest.CaptureFixture[str]
                                                          ) -> None:
    monkeypatch.setenv("HUNCHBOOK_CATALOGUE", str(tmp_path / "env.sqlite"))
    assert _run("ideas", "add", "--title", "t", "--hypothesis", "h", "--by", "Theo") == 0
    assert (tmp_path / "env.sqlite").exists()


def test_the_demo_command_writes_the_invented_catalogue(tmp_path: Path,
                                                        capsys: pytest.CaptureFixture[str]
                                                        ) -> None:
    target = tmp_path / "demo.sqlite"
    assert _run("catalogue", "demo", str(target)) == 0
    assert "Invented demo catalogue" in capsys.readouterr().out
    with pytest.raises(HunchbookError, match="file exists"):
        _run("catalogue", "demo", str(target))


def test_every_command_has_help_and_an_example() -> None:
    parser = _parser()
    groups = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    seen = 0
    for group in groups.choices.values():
        leaves = next(a for a in group._actions if isinstance(a, argparse._SubParsersAction))
        for name, leaf in leaves.choices.items():
            assert leaf.description and leaf.epilog.startswith("Example: hunchbook"), name
            assert any("--catalogue" in a.option_strings for a in leaf._actions), name
            seen += 1
    assert seen >= 15
