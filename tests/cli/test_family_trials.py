"""``hunchbook run --idea`` on a variant: the family's trials all count for its deflated Sharpe.

The deflated Sharpe ratio is recomputed here from the recorded statistics with the family's
trial count by the formula of Bailey & Lopez de Prado (2014), "The Deflated Sharpe Ratio",
Journal of Portfolio Management 40(5), written out with scipy's normal distribution (not the
engine's code) and checked first against the paper's numerical example. Which trials count is a
house rule (common practice, no source): every distinct backtest of any member of the family,
a backtest two members share counting once.
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import pytest
from scipy.stats import norm

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli import main
from hunchbook.demo import write_demo_data

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
EULER_GAMMA = 0.5772156649015329


def _dsr(sr: float, days: int, skew: float, kurt: float, trials: int, var: float,
         periods: int = 252) -> float:
    """DSR = PSR(SR0): SR0 = sqrt(V)((1 - g) Z^-1[1 - 1/N] + g Z^-1[1 - 1/(N e)]) annualised,
    per period SR0 / sqrt(periods); PSR(SR*) = Z[(SR - SR*) sqrt(T - 1) /
    sqrt(1 - g3 SR + (g4 - 1) / 4 SR^2)] (Bailey & Lopez de Prado 2014)."""
    sr0 = 0.0 if trials == 1 else math.sqrt(var) * (
        (1 - EULER_GAMMA) * norm.ppf(1 - 1 / trials)
        + EULER_GAMMA * norm.ppf(1 - 1 / (trials * math.e)))
    star = sr0 / math.sqrt(periods)
    return float(norm.cdf((sr - star) * math.sqrt(days - 1)
                          / math.sqrt(1 - skew * sr + (kurt - 1) / 4 * sr**2)))


def test_the_formula_reproduces_the_papers_example() -> None:
    """N = 100, V = 1/2, SR 2.5 a year over 250 days a year, T = 1250, skew -3, kurtosis 10:
    DSR 0.9004 (Bailey & Lopez de Prado 2014, numerical example; see methods.md)."""
    assert _dsr(2.5 / math.sqrt(250), 1250, -3, 10, 100, 0.5, periods=250) == pytest.approx(
        0.9004, abs=1e-4)


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    """Invented demo data over a short window (test input only)."""
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2015-01-02",
                           end="2019-12-31")


@pytest.fixture
def desk(tmp_path):
    """Three accepted ideas with the breakout rules: 1 the original, 2 its variant, 3 alone."""
    path = tmp_path / "cat.sqlite"
    text = (EXAMPLES / "breakout.toml").read_text()
    with Catalogue(path) as cat:
        for title in ("Breakout", "Breakout, a day late", "Breakout, a day late, alone"):
            idea = cat.add_idea(title=title, hypothesis="Channels break.",
                                submitted_by="Theo Brackwater", stage="submitted")
            cat.save_rules(idea, text, by="Theo Brackwater")
            cat.review(idea, reviewer="Ines Marwood", decision="accept", comments="Go.",
                       checklist=dict.fromkeys(CHECKLIST, True))
    assert main(["ideas", "link", "2", "--variant-of", "1", "--reason", "The same channel "
                 "rule acted on a day later.", "--catalogue", str(path), "--by", "Theo"]) == 0
    return path


def _run(rules: Path, demo_dir: Path, catalogue: Path, idea: int, tmp_path: Path,
         capsys: pytest.CaptureFixture[str]) -> dict:
    out = tmp_path / f"run-{idea}.json"
    out.unlink(missing_ok=True)
    code = main(["run", str(rules), "--data", str(demo_dir), "--idea", str(idea),
                 "--catalogue", str(catalogue), "--by", "Ines Marwood", "--workers", "1",
                 "--json", str(out)])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(out.read_text())["statistics"]


def test_a_variants_deflated_sharpe_counts_its_familys_trials(demo_dir, desk, tmp_path,
                                                              capsys):
    rules = tmp_path / "breakout.toml"
    shutil.copy(EXAMPLES / "breakout.toml", rules)
    first = _run(rules, demo_dir, desk, 1, tmp_path, capsys)
    sets = first["n_sets"]
    assert first["n_trials"] == sets
    late = tmp_path / "late.toml"
    late.write_text(rules.read_text().replace("[signal]", "[signal]\ndelay = 1", 1))
    variant = _run(late, demo_dir, desk, 2, tmp_path, capsys)
    alone = _run(late, demo_dir, desk, 3, tmp_path, capsys)
    # the variant counts its parent's sets too, recomputed on the data (the SPA test and the
    # effective number of trials cover them); the same rules alone start from their own sets
    assert variant["n_trials"] == variant["spa_set_count"] == 2 * sets
    assert alone["n_trials"] == alone["spa_set_count"] == sets
    assert variant["net"]["sharpe"] == pytest.approx(alone["net"]["sharpe"])
    for stats, counted in ((variant, 2 * sets), (alone, sets)):
        effective = math.ceil(stats["effective_trials"] - 1e-9)
        assert 1 <= effective <= counted
        net = stats["net"]
        assert stats["dsr"] == pytest.approx(_dsr(
            net["sharpe_per_period"], stats["n_days"], net["skew"], net["kurtosis"],
            effective, stats["trial_sharpe_var"]), abs=1e-9)
    assert variant["expected_max_sharpe"] > 0 and alone["dsr"] != variant["dsr"]
    # the parent rerun: its family's trials count for it now, the shared ones once
    again = _run(rules, demo_dir, desk, 1, tmp_path, capsys)
    assert again["n_trials"] == 2 * sets
    # the variant runs the parent's own rules: those backtests are already counted
    shared = _run(rules, demo_dir, desk, 2, tmp_path, capsys)
    assert shared["n_trials"] == 2 * sets
    with Catalogue(desk) as cat:
        assert [r.trial_count for r in cat.runs()] == [sets, 2 * sets, sets, 2 * sets,
                                                       2 * sets]
        assert cat.idea(1).trial_count == cat.idea(2).trial_count == 2 * sets
        assert cat.idea(3).trial_count == sets
        assert cat.check() == []
