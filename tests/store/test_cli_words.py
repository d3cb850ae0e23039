"""Every label the command line prints is one it accepts: verdicts, stages, sources, kinds of
rationale and decisions by label or by key, in any case."""

from __future__ import annotations

from pathlib import Path

import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli import main
from hunchbook.core.labels import Vocabulary
from hunchbook.core.verdict import LABELS, VERDICTS
from tests.store.helpers import RULES, run_args


@pytest.fixture
def desk(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> list[str]:
    """A catalogue with one tested idea whose last verdict is "No edge" and one draft."""
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia")
    path = tmp_path / "desk.sqlite"
    with Catalogue(path, create=True) as cat:
        tested = cat.add_idea(title="Grain trend", hypothesis="h", submitted_by="Nia",
                              markets=["CORN", "SOYBEAN"], rationale="r", source_kind="paper",
                              rationale_kind="risk_premium")
        rev = cat.save_rules(tested, RULES, by="Nia")
        cat.set_stage(tested, "submitted", by="Nia", reason="ready")
        cat.set_stage(tested, "accepted", by="Nia", reason="ok")
        cat.record_run(tested, revision_id=rev.id, by="Nia",
                       **run_args([{"fast": 5.0, "slow": 50.0}], [0.42]))
        cat.add_idea(title="Soy draft", hypothesis="h", submitted_by="Nia")
    return ["--catalogue", str(path)]


def _titles(capsys: pytest.CaptureFixture[str], *argv: str) -> list[str]:
    assert main(["ideas", "list", *argv]) == 0
    lines = capsys.readouterr().out.splitlines()[1:-1]
    return [line.split("  ")[-1].strip() for line in lines]


@pytest.mark.parametrize("verdict", ["No edge", "no edge", "NO EDGE", "no_edge"])
def test_the_verdict_filters_by_label_and_by_key(desk: list[str], verdict: str,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    assert LABELS["no_edge"] == "No edge"
    assert _titles(capsys, *desk, "--verdict", verdict) == ["Grain trend"]
    assert _titles(capsys, *desk, "--verdict", "Likely luck") == []


def test_an_unknown_verdict_is_refused_with_the_labels(desk: list[str],
                                                       capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["ideas", "list", *desk, "--verdict", "Likely lcuk"])
    err = capsys.readouterr().err
    assert stop.value.code == 2 and "unknown verdict 'Likely lcuk'" in err
    assert "'Likely luck'" in err and "did you mean 'Likely luck'?" in err


def test_runs_and_ideas_print_labels_that_are_accepted_back(
        desk: list[str], capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["runs", "list", *desk]) == 0
    out = capsys.readouterr().out
    assert "No edge" in out and "no_edge" not in out
    assert main(["ideas", "show", "1", *desk]) == 0
    shown = capsys.readouterr().out
    assert "verdict No edge" in shown and "no_edge" not in shown
    assert "[Risk premium]" in shown and "source     : Paper" in shown
    # each printed label filters back to the same idea
    assert _titles(capsys, *desk, "--source", "PAPER", "--stage", "Tested") == ["Grain trend"]
    assert _titles(capsys, *desk, "--stage", "draft") == ["Soy draft"]


def test_labels_given_to_options_are_stored_as_keys(desk: list[str],
                                                    capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["ideas", "edit", "2", *desk, "--source", "own idea", "--rationale-kind",
                 "Structural or flow"]) == 0
    with Catalogue(Path(desk[1])) as cat:
        idea = cat.idea(2)
    assert (idea.source_kind, idea.rationale_kind) == ("own", "structural")


def test_a_vocabulary_reads_its_keys_and_labels() -> None:
    words = Vocabulary.of("kind", ("risk_premium", "other"))
    assert words.labels == {"risk_premium": "Risk premium", "other": "Other"}
    assert words.key("risk premium") == "risk_premium" == words.key("RISK_PREMIUM")
    assert VERDICTS.label("selection_luck") == "Likely luck" and VERDICTS.label(None) == ""


def test_the_review_example_wraps_between_words(capsys: pytest.CaptureFixture[str],
                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("COLUMNS", "80")
    with pytest.raises(SystemExit):
        main(["ideas", "review", "--help"])
    out = capsys.readouterr().out
    items = ",".join(CHECKLIST)
    assert any(line.strip() == items for line in out.splitlines())


def test_exporting_over_a_file_names_the_option_that_replaces_it(
        desk: list[str], tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    bundle = tmp_path / "grain.zip"
    bundle.write_text("kept")
    assert main(["ideas", "export", "1", str(bundle), *desk]) == 1
    err = capsys.readouterr().err
    assert "file exists" in err and "--overwrite" in err and bundle.read_text() == "kept"
    assert main(["ideas", "export", "1", str(bundle), *desk, "--overwrite"]) == 0


def test_an_import_counts_its_records_in_words(desk: list[str], tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    bundle = tmp_path / "grain.zip"
    assert main(["ideas", "export", "1", str(bundle), *desk]) == 0
    other = ["--catalogue", str(tmp_path / "other.sqlite")]
    assert main(["ideas", "import", str(bundle), *other]) == 0
    out = capsys.readouterr().out
    assert "1 rule revision," in out and "1 run." in out and "7 journal entries" in out
    assert "(s)" not in out and "1 runs" not in out
