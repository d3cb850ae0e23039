"""``hunchbook desk``: the per-period table, M, each promoted idea's haircut Sharpe ratios and
the expected false promotions, as text and JSON (haircuts recomputed with scipy and
statsmodels: Harvey & Liu 2015, Journal of Portfolio Management 42(1))."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from scipy import stats
from statsmodels.stats.multitest import multipletests

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.core.verdict import CAUTION
from hunchbook.desk import EXPLANATIONS
from tests.store.test_desk_summary import build_desk


@pytest.fixture(scope="module")
def desk_path(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("desk-cli") / "desk.sqlite"
    build_desk(path)
    return path


def test_desk_prints_periods_haircuts_and_caution(desk_path: Path, tmp_path: Path,
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    out_json = tmp_path / "desk.json"
    assert main(["desk", "--catalogue", str(desk_path), "--period", "quarter",
                 "--json", str(out_json)]) == 0
    text = capsys.readouterr().out
    lines = text.splitlines()
    # counted by hand (see build_desk): 3 ideas tested, 5 trials, 4 runs, 2 promoted
    assert lines[0] == "The desk tested 3 ideas in 5 trials over 4 runs and promoted 2 " \
                       "of them."
    assert lines[4].split() == ["2024-Q4", "1", "1", "2", "2", "0"]
    assert lines[6].split() == ["2025-Q2", "1", "1", "2", "2", "1"]
    assert lines[7].split() == ["Total", "3", "4", "7", "5", "2"]
    assert "Sharpe ratio haircut for M = 3 ideas tested" in text
    assert "(now shelved)" in text  # D was promoted, then shelved
    for name, explanation in EXPLANATIONS:
        assert f"  {name}: {explanation}" in text
    assert lines[-1] == CAUTION

    data = json.loads(out_json.read_text())
    assert (data["ideas_tested"], data["trials"], data["runs"], data["promotions"]) == (3, 5, 4, 2)
    assert [p["period"] for p in data["periods"]] == ["2024-Q4", "2025-Q1", "2025-Q2"]
    assert data["caution"] == CAUTION
    # every tested idea's p-value from its latest run, adjusted with statsmodels
    with Catalogue(desk_path, read_only=True) as cat:
        ideas = cat.desk_summary().ideas
    family = [2 * stats.t.sf(abs(i.net_sharpe) * math.sqrt(i.days / 252), 12 * i.days / 252 - 1)
              for i in ideas]
    order = [i.idea_id for i in ideas]
    bhy = multipletests(family, method="fdr_by")[1]
    for promoted in data["promoted"]:
        k = order.index(promoted["idea"])
        cut = promoted["haircut"]
        assert cut["p_value"] == pytest.approx(family[k], rel=1e-10)
        assert cut["bonferroni"]["p_value"] == pytest.approx(min(3 * family[k], 1), rel=1e-10)
        assert cut["bhy"]["p_value"] == pytest.approx(bhy[k], rel=1e-10)
        assert f"{cut['bhy']['sharpe']:.2f} (-{round(100 * cut['bhy']['haircut'])} %)" in text
    assert data["expected_false_promotions"] == pytest.approx(
        2 * max(bhy[order.index(p["idea"])] for p in data["promoted"]), rel=1e-10)
    assert f"Expected false promotions under BHY: {data['expected_false_promotions']:.2f} of 2" \
        in text


def test_desk_on_a_missing_catalogue_is_one_line(tmp_path: Path,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["desk", "--catalogue", str(tmp_path / "none.sqlite")]) == 1
    err = capsys.readouterr().err
    assert err.startswith("hunchbook: error:") and len(err.strip().splitlines()) == 1
