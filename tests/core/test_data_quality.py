"""The data quality checks: planted faults found one for one, clean data left quiet.

Outside sources: the robust scale against scipy's ``median_abs_deviation(scale="normal")``
(reference library; the constant 1.4826 is Huber 1981 / Rousseeuw & Croux 1993); the price
series of ``arch.data.wti`` (FRED DCOILWTICO, public data shipped with arch); the rest are
facts of the trade (a close lies within the day's low and high; two contracts of one market
never share an expiry; month codes F G H J K M N Q U V X Z: common practice, no source).
"""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.core.data_check import check_data_folder
from hunchbook.core.data_quality import (
    ERROR,
    MAD_TO_SD,
    QUALITY_CHECKS,
    WARNING,
    QualityThresholds,
    check_bars,
    describe,
    quality_warnings,
    refuse_errors,
    robust_sd,
)
from hunchbook.core.errors import DataError
from hunchbook.core.markets import MarketSpec
from hunchbook.core.prices import MarketBars, read_market_csv
from hunchbook.core.rules.model import RollSpec
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.services import run_idea

_CODES = "FGHJKMNQUVXZ"
GRAINS = MarketSpec("TST", 50.0, 0.25, "USD", 1.0, 0.0, 0.0, 0.0, sector="grains")
ENERGY = replace(GRAINS, sector="energy")


def _generated(seed: int, years: int = 4) -> pd.DataFrame:
    """A clean invented market: quarterly contracts (9 months listed each) on weekdays minus a
    few single-day holidays, one common random walk with a small carry and tiny contract noise,
    consistent open/high/low and a moving volume."""
    rng = np.random.default_rng(seed)
    days = pd.bdate_range("2010-01-04", periods=252 * years)
    days = days.delete(rng.choice(len(days), size=6 * years, replace=False))
    walk = 100.0 * np.exp(np.cumsum(rng.normal(0.0, 0.012, len(days))))
    rows = []
    for year in range(2010, 2011 + years):
        for month in (3, 6, 9, 12):
            expiry = pd.Timestamp(year, month, 15)
            on = (days > expiry - pd.DateOffset(months=9)) & (days <= expiry)
            if on.sum() < 5:
                continue
            left = (expiry - days[on]).days.to_numpy() / 365.0
            close = walk[on] * np.exp(0.03 * left + rng.normal(0.0, 0.0005, on.sum()))
            spread = np.abs(rng.normal(0.0, 0.006, (3, on.sum())))
            rows.append(pd.DataFrame({
                "date": days[on].strftime("%Y-%m-%d"),
                "contract": f"TST{_CODES[month - 1]}{year}",
                "expiry": expiry.strftime("%Y-%m-%d"),
                "open": close * np.exp(spread[2] - spread[1] / 2),
                "high": close * np.exp(spread[0] + spread[2]),
                "low": close * np.exp(-spread[1]), "close": close,
                "volume": rng.integers(1000, 5000, on.sum())}))
    frame = pd.concat(rows, ignore_index=True)
    frame["open"] = frame["open"].clip(frame["low"], frame["high"])
    return frame


def _bars(frame: pd.DataFrame, tmp_path: Path, name: str = "TST") -> MarketBars:
    path = tmp_path / f"{name}.csv"
    frame.sort_values(["date", "contract"]).to_csv(path, index=False)
    return read_market_csv(path, name)


def _by_check(findings) -> dict[str, int]:
    """Rows at fault per check (one per finding, except row faults which count rows)."""
    counts: dict[str, int] = {}
    for f in findings:
        n = len(f.dates) if f.check in ("ohlc", "non_positive", "ratio_non_positive") else 1
        counts[f.check] = counts.get(f.check, 0) + n
    return counts


def _inner_rows(frame: pd.DataFrame, rng: np.random.Generator, n: int) -> np.ndarray:
    """``n`` rows, each inside a contract's life (not its first two or last two rows) and of
    distinct contracts' well-separated dates."""
    picks: list[int] = []
    for contract in rng.permutation(frame["contract"].unique()):
        idx = frame.index[frame["contract"] == contract].to_numpy()
        if len(idx) > 10:
            picks.append(int(rng.choice(idx[2:-2])))
        if len(picks) == n:
            break
    return np.array(picks)


def test_robust_sd_matches_scipy():
    # reference library: scipy.stats.median_abs_deviation(scale="normal") divides by
    # Phi^-1(3/4) = 0.67449, i.e. multiplies by 1.4826 (Huber 1981; Rousseeuw & Croux 1993)
    stats = pytest.importorskip("scipy.stats")
    values = np.random.default_rng(3).standard_t(3, 500)
    assert robust_sd(values) == pytest.approx(
        stats.median_abs_deviation(values, scale="normal"), rel=1e-4)
    assert pytest.approx(stats.norm.ppf(0.75), rel=1e-4) == 1 / MAD_TO_SD


@pytest.mark.parametrize("seed", range(50))
def test_clean_generated_data_is_quiet(seed, tmp_path):
    assert check_bars(_bars(_generated(seed), tmp_path), GRAINS) == ()


@pytest.mark.parametrize("seed", range(5))
def test_planted_faults_are_found_one_for_one(seed, tmp_path):
    rng = np.random.default_rng(100 + seed)
    frame = _generated(seed)
    rows = _inner_rows(frame, rng, 8)
    spikes, crossed, outside, stale_at = rows[:2], rows[2:4], rows[4:6], rows[6]
    # spikes: one close (and its high) x1.3 for a day, back the next (about 20 robust SDs)
    frame.loc[spikes, ["close", "high"]] *= 1.3
    # a close above the day's high; a low above the high (fact of the trade: low <= close <= high)
    frame.loc[outside, "high"] = frame.loc[outside, "close"] * 0.999
    frame.loc[outside, "open"] = frame.loc[outside, "low"]
    frame.loc[crossed, "low"] = frame.loc[crossed, "high"] * 1.01
    frame.loc[crossed, "open"] = frame.loc[crossed, "high"]
    # a stale run: 8 rows of one contract at one close while its volume moves
    contract = frame.at[stale_at, "contract"]
    run = frame.index[frame["contract"] == contract][10:18]
    frame.loc[run, "close"] = frame.at[stale_at, "close"]
    frame.loc[run, "high"] = frame.loc[run, ["high", "close"]].max(axis=1)
    frame.loc[run, "low"] = frame.loc[run, ["low", "close"]].min(axis=1)
    frame.loc[run, "open"] = frame.loc[run, "close"]
    # a fortnight missing (10 business days), away from the other faults
    dates = np.sort(frame["date"].unique())
    planted = set(frame.loc[[*rows, *run], "date"])
    start = next(i for i in range(20, len(dates), 25)
                 if planted.isdisjoint(dates[i - 3:i + 13]))
    frame = frame[~frame["date"].isin(dates[start:start + 10])]
    found = _by_check(check_bars(_bars(frame, tmp_path), GRAINS))
    assert found == {"spike": 2, "ohlc": 4, "stale": 1, "missing_days": 1}


def test_roll_gap_of_a_contract_priced_ten_times(tmp_path):
    frame = _generated(7)
    contracts = list(dict.fromkeys(frame.sort_values("expiry")["contract"]))
    wrong = contracts[6]  # a whole contract in the wrong unit: its roll in and out jump
    frame.loc[frame["contract"] == wrong, ["open", "high", "low", "close"]] *= 10
    findings = check_bars(_bars(frame, tmp_path), GRAINS)
    assert _by_check(findings) == {"roll_gap": 2}
    assert {f.contract for f in findings} == {f"{contracts[5]}, {wrong}",
                                              f"{wrong}, {contracts[7]}"}


def test_non_positive_prices_by_sector_and_adjustment(tmp_path):
    frame = _generated(8)
    low_rows = frame.index[frame["contract"] == frame.at[50, "contract"]][3:6]
    frame.loc[low_rows, "low"] = -0.5
    bars = _bars(frame, tmp_path)
    grains = check_bars(bars, GRAINS)
    assert _by_check(grains) == {"non_positive": 3}
    assert {f.severity for f in grains} == {WARNING}
    assert check_bars(bars, ENERGY) == ()  # energy trades below zero (WTI, 20 April 2020)
    ratio = check_bars(bars, ENERGY, roll=RollSpec(adjust="ratio"))
    assert _by_check(ratio) == {"ratio_non_positive": 3}
    assert all(f.severity == ERROR and "ratio" in f.message for f in ratio)


def test_overlapping_expiries(tmp_path):
    frame = _generated(9)
    names = sorted(frame["contract"].unique(), key=lambda c: frame.loc[
        frame["contract"] == c, "expiry"].iloc[0])
    # one contract given the next one's expiry; another two with swapped expiries
    frame.loc[frame["contract"] == names[3], "expiry"] = \
        frame.loc[frame["contract"] == names[4], "expiry"].iloc[0]
    first, second = (frame.loc[frame["contract"] == n, "expiry"].iloc[0] for n in names[8:10])
    frame.loc[frame["contract"] == names[8], "expiry"] = second
    frame.loc[frame["contract"] == names[9], "expiry"] = (
        pd.Timestamp(first) - pd.Timedelta(days=120)).strftime("%Y-%m-%d")
    findings = [f for f in check_bars(_bars(frame, tmp_path), GRAINS) if f.check == "expiries"]
    assert len(findings) == 2
    assert {f.severity for f in findings} == {ERROR}
    assert "share the expiry" in findings[0].message or "share the expiry" in findings[1].message


@pytest.fixture(scope="module")
def wti():
    """FRED DCOILWTICO daily WTI spot as shipped with arch (public data), holidays dropped."""
    arch_wti = pytest.importorskip("arch.data.wti")
    return arch_wti.load()["DCOILWTICO"].dropna()


def _wti_bars(series: pd.Series, tmp_path: Path) -> MarketBars:
    path = tmp_path / "WTI.csv"
    pd.DataFrame({"date": series.index.strftime("%Y-%m-%d"), "close": series.to_numpy()}) \
        .to_csv(path, index=False)
    return read_market_csv(path, "WTI")


def test_wti_clean_then_with_a_planted_spike(wti, tmp_path):
    assert check_bars(_wti_bars(wti, tmp_path), ENERGY) == ()
    spiked = wti.copy()
    spiked.iloc[4000] *= 10
    findings = check_bars(_wti_bars(spiked, tmp_path), ENERGY)
    assert [(f.check, f.dates) for f in findings] == [("spike", (wti.index[4000].date(),))]


def test_thresholds_documented():
    docs = (Path(__file__).parents[2] / "docs" / "data-quality.md").read_text()
    for check in QUALITY_CHECKS.values():
        assert check.severity in (ERROR, WARNING)
        assert check.name in docs and "{" not in describe(check)
    for name in QualityThresholds.__dataclass_fields__:
        assert f"`{name}`" in docs


def test_warnings_and_refusal_lines(tmp_path):
    frame = _generated(11)
    at = _inner_rows(frame, np.random.default_rng(0), 1)
    frame.loc[at, "high"] = frame.loc[at, "close"] * 0.99
    findings = check_bars(_bars(frame, tmp_path), GRAINS)
    with pytest.raises(DataError, match=r"run refused: market TST, high/low/close at \d{4}-"):
        refuse_errors(findings)
    dates = frame["date"].unique()
    quiet = frame[~frame["date"].isin(dates[200:212])]
    warned = quality_warnings(check_bars(_bars(quiet, tmp_path), GRAINS))
    assert [(c.key, c.status) for c in warned] == [("data_missing_days_TST", "warn")]


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2016-01-04",
                           end="2018-12-31")


def test_demo_data_is_quiet(demo):
    report = check_data_folder(demo)
    assert report.ok and report.findings == ()


RULE = """name = "quality"
markets = ["CORN"]

[signal]
position = "sign(close - mean(close, n))"

[parameters]
n = [10, 20]
"""


def test_close_times_ten_is_caught_and_refused(demo, tmp_path, capsys):
    # the case of issue 13: one held contract's close x10, above that day's high
    bad = tmp_path / "bad"
    bad.mkdir()
    for file in demo.iterdir():
        (bad / file.name).write_bytes(file.read_bytes())
    frame = pd.read_csv(bad / "CORN.csv", dtype=str)
    at = 400
    frame.loc[at, "close"] = f"{float(frame.loc[at, 'close']) * 10:.4f}"
    frame.to_csv(bad / "CORN.csv", index=False)
    assert main(["data", "check", str(bad)]) == 1
    out = capsys.readouterr().out
    assert "error CORN high/low/close" in out and "error CORN price spike" in out
    rules = tmp_path / "rules.toml"
    rules.write_text(RULE)
    assert main(["run", str(rules), "--data", str(bad)]) != 0
    err = capsys.readouterr().err
    assert "run refused: market CORN, high/low/close" in err
    assert frame.loc[at, "date"] in err


def _demo_copy(demo: Path, target: Path, change) -> Path:
    """A copy of the demo folder with CORN's rows changed by ``change`` (text frame)."""
    target.mkdir()
    for file in demo.iterdir():
        (target / file.name).write_bytes(file.read_bytes())
    frame = pd.read_csv(target / "CORN.csv", dtype=str)
    change(frame)
    frame.to_csv(target / "CORN.csv", index=False)
    return target


def _stale_corn(frame: pd.DataFrame) -> None:
    """Eight rows of the held CORN contract at one close from row 400 on (volume moves)."""
    contract = frame.loc[400, "contract"]
    rows = frame.index[(frame["contract"] == contract) & (frame.index >= 400)][:8]
    value = float(frame.loc[400, "close"])
    frame.loc[rows, "close"] = f"{value:.4f}"
    for column, pick in (("high", max), ("low", min)):
        frame.loc[rows, column] = [f"{pick(float(v), value):.4f}" for v in frame.loc[rows, column]]
    frame.loc[rows, "open"] = f"{value:.4f}"


def test_warning_recorded_beside_the_verdict(demo, tmp_path, capsys):
    folder = _demo_copy(demo, tmp_path / "stale", _stale_corn)
    rules = tmp_path / "rules.toml"
    rules.write_text(RULE)
    out = tmp_path / "run.json"
    assert main(["run", str(rules), "--data", str(folder), "--json", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "Data: stale prices (CORN)" in printed and "CORN at" in printed
    checks = json.loads(out.read_text())["verdict"]["checks"]
    assert [c["status"] for c in checks if c["key"] == "data_stale_CORN"] == ["warn"]


def _accepted_idea(path: Path) -> int:
    with Catalogue(path) as cat:
        idea = cat.add_idea(title="Corn trend", hypothesis="Trends persist.",
                            rationale="Slow diffusion.", rationale_kind="behavioural",
                            submitted_by="Theo", markets=("CORN",), stage="submitted")
        cat.save_rules(idea, RULE, by="Theo")
        cat.review(idea, reviewer="Ines", decision="accept", comments="Go.",
                   checklist={"rationale_not_data_mined": True, "markets_named": True,
                              "parameter_space_declared": True,
                              "series_and_costs_stated": True})
    return idea


def test_run_idea_refuses_errors_and_records_warnings(demo, tmp_path):
    path = tmp_path / "cat.sqlite"
    idea = _accepted_idea(path)

    def times_ten(frame: pd.DataFrame) -> None:
        frame.loc[400, "close"] = f"{float(frame.loc[400, 'close']) * 10:.4f}"

    bad = _demo_copy(demo, tmp_path / "bad", times_ten)
    stale = _demo_copy(demo, tmp_path / "stale", _stale_corn)
    with Catalogue(path) as cat:
        with pytest.raises(DataError, match="run refused: market CORN, high/low/close"):
            run_idea(cat, idea, RULE, bad, by="Ines", runner=InProcess(), spa_reps=50)
        assert cat.runs(idea) == []  # nothing recorded
        outcome = run_idea(cat, idea, RULE, stale, by="Ines", runner=InProcess(), spa_reps=50)
        stored = cat.runs(idea)[0].result.verdict.checks
    checks = outcome.summary.verdict.checks
    assert [c.status for c in checks if c.key == "data_stale_CORN"] == ["warn"]
    assert [c.key for c in stored if c.status == "warn"] == [
        c.key for c in outcome.summary.verdict.checks if c.status == "warn"]
