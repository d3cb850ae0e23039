"""``hunchbook run --idea``: the run, its trial count and verdict land on the idea."""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.core.stats import deflated_sharpe
from hunchbook.demo import write_demo_data
from hunchbook.demo.rules import BOOK

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    """Invented demo data over a short window (test input only)."""
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2015-01-02",
                           end="2019-12-31")


@pytest.fixture
def catalogue_path(tmp_path):
    path = tmp_path / "cat.sqlite"
    with Catalogue(path) as cat:
        idea = cat.add_idea(title="Breakout on the demo book", hypothesis="Channels break.",
                            rationale="Slow diffusion of information.",
                            rationale_kind="behavioural", submitted_by="Theo Brackwater",
                            markets=BOOK, stage="submitted")  # the example trades all 8
        cat.save_rules(idea, (EXAMPLES / "breakout.toml").read_text(), by="Theo Brackwater")
        cat.review(idea, reviewer="Ines Marwood", decision="accept", comments="Go.",
                   checklist={"rationale_not_data_mined": True, "markets_named": True,
                              "parameter_space_declared": True,
                              "series_and_costs_stated": True})
        cat.add_idea(title="A draft", hypothesis="Not yet reviewed.", submitted_by="Nia")
    return path


def _run(rules, demo_dir, catalogue_path, idea, tmp_path, capsys):
    out = tmp_path / "run.json"
    code = main(["run", str(rules), "--data", str(demo_dir), "--idea", str(idea),
                 "--catalogue", str(catalogue_path), "--by", "Ines Marwood",
                 "--workers", "1", "--json", str(out)])
    captured = capsys.readouterr()
    return code, captured, (json.loads(out.read_text()) if out.exists() else None)


def test_trials_accumulate_across_revisions(demo_dir, catalogue_path, tmp_path, capsys):
    rules = tmp_path / "breakout.toml"
    shutil.copy(EXAMPLES / "breakout.toml", rules)
    code, captured, first = _run(rules, demo_dir, catalogue_path, 1, tmp_path, capsys)
    assert code == 0, captured.err
    sets = len(first["sets"])
    assert first["statistics"]["n_trials"] == sets and "now counts" in captured.out
    # the same strategy again: no new trials
    code, _, again = _run(rules, demo_dir, catalogue_path, 1, tmp_path, capsys)
    assert again["statistics"]["n_trials"] == sets
    # a changed signal is a new strategy: every set is a new trial, counted with the old ones
    text = rules.read_text()
    rules.write_text(text.replace("[signal]", "[signal]\ndelay = 1", 1))
    code, captured, third = _run(rules, demo_dir, catalogue_path, 1, tmp_path, capsys)
    assert code == 0, captured.err
    assert third["statistics"]["n_trials"] == 2 * sets
    with Catalogue(catalogue_path) as cat:
        assert cat.trial_count(1) == 2 * sets
        assert len(cat.revisions(1)) == 2 and len(cat.runs(1)) == 3
        run = cat.run(cat.runs(1)[-1].id)
        assert cat.idea(1).stage == "tested"
        assert run.verdict_label == third["verdict"]["outcome"]
    # the earlier revision's sets were recomputed on this data: the SPA test covers all of them,
    # and the effective number of trials (Li & Ji 2005) is estimated over both revisions' sets;
    # a one-day delay changes little, so it is well below the raw count
    statistics = third["statistics"]
    assert statistics["spa_set_count"] == 2 * sets
    effective = math.ceil(statistics["effective_trials"] - 1e-9)
    assert 1 <= effective < 2 * sets
    # the deflated Sharpe counts them (Bailey & Lopez de Prado 2014): recompute it from the
    # recorded statistics with that count
    net = statistics["net"]
    expected = deflated_sharpe(net["sharpe_per_period"], statistics["n_days"], net["skew"],
                               net["kurtosis"], effective, statistics["trial_sharpe_var"])
    assert statistics["dsr"] == pytest.approx(expected)


def test_unreviewed_idea_records_nothing(demo_dir, catalogue_path, tmp_path, capsys):
    code, captured, _ = _run(EXAMPLES / "momentum.toml", demo_dir, catalogue_path, 2,
                             tmp_path, capsys)
    assert code == 1
    assert "can run once a reviewer accepts it" in captured.err and "Traceback" not in captured.err
    assert "idea 2: it is '" in captured.err and "idea 2: idea 2" not in captured.err
    with Catalogue(catalogue_path) as cat:
        assert cat.revisions(2) == [] and cat.runs(2) == []


def test_the_unedited_starter_rules_are_refused(demo_dir, catalogue_path, tmp_path, capsys):
    """`hunchbook run --idea` on the starter template records nothing and says what to fill
    in (common practice, no source: a placeholder is not the idea)."""
    from hunchbook.starter import starter_rules

    rules = tmp_path / "starter.toml"
    rules.write_text(starter_rules("Breakout on the demo book", ["CRUDE", "GOLD"]))
    code, captured, _ = _run(rules, demo_dir, catalogue_path, 1, tmp_path, capsys)
    assert code == 1 and "Traceback" not in captured.err
    assert "unedited starter template" in captured.err and "[signal] position" in captured.err
    with Catalogue(catalogue_path) as cat:
        assert len(cat.revisions(1)) == 1 and cat.runs(1) == []
        assert cat.idea(1).stage == "accepted"
