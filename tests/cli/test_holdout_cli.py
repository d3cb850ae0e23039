"""``hunchbook holdout show|set|unlock`` and what ``hunchbook run --idea`` says of the held-out
years, through the real command line."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli import main
from hunchbook.demo import write_demo_data
from tests.gui.run_records import ONE_PARAMETER_RULES

BOUNDARY = "2019-01-02"  # the default of 2015-2019 (see tests/services/test_unlock.py)


@pytest.fixture(scope="module")
def data(tmp_path_factory) -> Path:
    return write_demo_data(tmp_path_factory.mktemp("demo") / "data", start="2015-01-02",
                           end="2019-12-31")


@pytest.fixture
def desk(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> tuple[Path, Path]:
    monkeypatch.setenv("HUNCHBOOK_USER", "Ines Marwood")
    path = tmp_path / "desk.sqlite"
    rules = tmp_path / "channel.toml"
    rules.write_text(ONE_PARAMETER_RULES)
    with Catalogue(path) as cat:
        idea = cat.add_idea(title="Channel midpoint", hypothesis="h", submitted_by="Nia",
                            stage="submitted")
        cat.save_rules(idea, ONE_PARAMETER_RULES, by="Nia")
        cat.review(idea, reviewer="Ines", checklist=dict.fromkeys(CHECKLIST, True),
                   decision="accept", comments="Go.")
    return path, rules


def _main(*argv: str) -> int:
    return main([str(a) for a in argv])


def test_run_show_unlock_and_show_again(desk, data, tmp_path, capsys) -> None:
    path, rules = desk
    c = ("--catalogue", path)
    assert _main("holdout", "show", *c) == 0
    assert "No holdout boundary yet" in capsys.readouterr().out
    assert _main("run", rules, "--data", data, "--idea", "1", *c, "--workers", "1") == 0
    out = capsys.readouterr().out
    dates = pd.concat([pd.read_csv(data / f"{m}.csv", usecols=["date"])["date"]
                       for m in ("CRUDE", "GOLD")])  # held-out dates counted with pandas
    held = dates[dates >= BOUNDARY].nunique()
    assert (f"In-sample up to {BOUNDARY} (the holdout boundary, not included); {held:,} "
            "held-out days locked.") in out
    assert _main("holdout", "show", *c) == 0
    out = capsys.readouterr().out
    assert f"Holdout boundary {BOUNDARY}: runs see the dates before it." in out
    assert "set by Ines Marwood on" in out and "last 20 % of the common history" in out
    assert "Ideas that have seen their held-out years (0)" in out
    # without a terminal and without --yes nothing is unlocked
    assert _main("holdout", "unlock", "1", "--data", data, *c) == 1
    captured = capsys.readouterr()
    assert "chosen set : n=" in captured.out and f"{held:,} held-out days, {BOUNDARY} to " \
        "2019-12-31" in captured.out
    assert "give --yes to unlock without one" in captured.err
    with Catalogue(path) as cat:
        assert cat.holdout_view(1) is None
    out_json = tmp_path / "held.json"
    assert _main("holdout", "unlock", "1", "--data", data, *c, "--yes", "--json",
                 out_json) == 0
    out = capsys.readouterr().out
    assert "Held-out years of idea 1: 2019-01-02 to 2019-12-31, seen by Ines Marwood" in out
    assert "In-sample      Held out" in out and "Consistency p" in out
    payload = json.loads(out_json.read_text())
    with Catalogue(path) as cat:
        view = cat.holdout_view(1)
        assert view is not None and payload["figures"] == view.figures.to_dict()
        assert payload["seen_by"] == "Ines Marwood" and payload["seen_at"] == view.seen_at
    assert _main("holdout", "unlock", "1", "--data", data, *c, "--yes") == 1
    assert "already unlocked by Ines Marwood on" in capsys.readouterr().err
    assert _main("holdout", "show", *c, "--json") == 0
    shown = json.loads(capsys.readouterr().out)
    assert shown["boundary"] == BOUNDARY and [s["idea"] for s in shown["seen"]] == [1]
    assert _main("ideas", "show", "1", *c) == 0
    assert "Holdout seen by Ines Marwood on" in capsys.readouterr().out
    assert _main("ideas", "show", "1", *c, "--json") == 0
    shown = json.loads(capsys.readouterr().out)
    assert shown["holdout"]["seen_by"] == "Ines Marwood"
    assert shown["holdout"]["figures"] == payload["figures"]
    assert shown["runs"][0]["result"]["holdout_boundary"] == BOUNDARY


def test_setting_the_boundary_needs_a_reason(desk, capsys) -> None:
    path, _ = desk
    c = ("--catalogue", path)
    assert _main("holdout", "set", "2018-01-02", *c, "--reason", " ") == 1
    assert "reason: must not be empty" in capsys.readouterr().err
    with pytest.raises(SystemExit):  # argparse: --reason is required
        _main("holdout", "set", "2018-01-02", *c)
    capsys.readouterr()
    assert _main("holdout", "set", "2018-01-02", *c, "--reason", "keep two years out",
                 "--by", "Theo") == 0
    assert "Holdout boundary set to 2018-01-02 (journalled)." in capsys.readouterr().out
    assert _main("holdout", "set", "2018-01-02", *c, "--reason", "again") == 0
    assert "unchanged" in capsys.readouterr().out
    assert _main("holdout", "set", "January", *c, "--reason", "x") == 1
    assert "expected a date YYYY-MM-DD" in capsys.readouterr().err
    assert _main("journal", "list", *c, "--kind", "decision") == 0
    assert "Theo: Holdout boundary set to 2018-01-02: keep two years out" in \
        capsys.readouterr().out
