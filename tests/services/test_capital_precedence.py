"""Which capital a catalogue run is measured against, end to end through ``run_idea`` on
invented demo data: the rule file's ``[sizing] capital``, else the one given for the run, else
the desk's capital setting, else none; the record says which, and the annual return in % of
capital is the chosen set's daily net P&L against that capital, recomputed with pandas."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.core.presenter import capital_sentence
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.services import run_idea
from tests.store.helpers import RULES, accepted_idea

SIZED = RULES + "\n[sizing]\ntarget_vol = 0.10\ncapital = 2_000_000\n"
DESK, GIVEN = 1_000_000.0, 500_000.0


@pytest.fixture(scope="module")
def data(tmp_path_factory) -> Path:
    return write_demo_data(tmp_path_factory.mktemp("demo") / "data", start="2016-01-04",
                           end="2018-12-31")


@pytest.mark.parametrize("rules, given, desk, capital, source", [
    (SIZED, GIVEN, DESK, 2_000_000.0, "sizing"),  # the rule file first
    (RULES, GIVEN, DESK, GIVEN, "run option"),  # then the one given for the run
    (RULES, None, DESK, DESK, "desk setting"),  # then the desk's setting
    (RULES, None, None, None, "none"),  # else none: figures in currency only
])
def test_rule_file_then_run_then_desk_then_none(tmp_path: Path, data: Path, rules: str,
                                                given: float | None, desk: float | None,
                                                capital: float | None, source: str) -> None:
    with Catalogue(tmp_path / "desk.sqlite", create=True) as cat:
        idea = accepted_idea(cat)
        if desk is not None:
            cat.set_desk_setting("capital", desk, by="Ines", reason="The desk's allocation.")
        outcome = run_idea(cat, idea, rules, data, by="Nia", runner=InProcess(), spa_reps=50,
                           capital=given)
        stored = cat.runs(idea)[-1].result
    figures = outcome.summary.capital
    assert figures is not None and (figures.capital, figures.capital_source) == (capital, source)
    assert stored.capital == figures  # the record kept says the same
    net = outcome.chosen.portfolio["net_pnl"]
    if capital is None:
        assert math.isnan(figures.net_return)
        assert "desk's capital" in capital_sentence(outcome.summary)  # how to give one
        return
    # reference library: pandas; simple returns on a fixed capital, mean x 252 a year
    # (common practice, no source)
    assert figures.net_return == pytest.approx(net.mean() * 252 / capital, rel=1e-9)
    if source == "desk setting":
        assert "the desk's capital setting" in capital_sentence(outcome.summary)
