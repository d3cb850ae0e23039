"""``hunchbook run`` over declared spaces and ``hunchbook stats`` on P&L files."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.cli import main
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import LABELS
from hunchbook.demo import write_demo_data

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    """The invented demo data over a shorter window (test input only)."""
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2014-01-02",
                           end="2019-12-31")


@pytest.mark.parametrize("example", sorted(p.name for p in EXAMPLES.glob("*.toml")))
def test_every_example_gives_sweep_statistics_and_verdict(example, demo_dir, tmp_path, capsys):
    out = tmp_path / "out.json"
    assert main(["run", str(EXAMPLES / example), "--data", str(demo_dir), "--json",
                 str(out), "--workers", "1"]) == 0
    printed = capsys.readouterr().out
    assert "Verdict:" in printed and "Deflated Sharpe" in printed and "Checks" in printed
    payload = json.loads(out.read_text())
    assert len(payload["sets"]) >= 1
    assert payload["statistics"]["n_trials"] == len(payload["sets"])
    assert payload["verdict"]["outcome"] in LABELS
    assert [c["key"] for c in payload["verdict"]["checks"]][:3] == [
        "history", "gross_edge", "beats_luck"]
    assert payload["verdict"]["reasons"]
    chosen = payload["chosen"]
    best = max(payload["sets"], key=lambda s: s["net_sharpe"] or -1e9)
    assert chosen["params"] == best["params"]
    assert chosen["performance"]["net"]["total"] == pytest.approx(best["net_total"])


def test_stats_on_a_run_pnl_file(demo_dir, tmp_path, capsys):
    rules = tmp_path / "demo.toml"
    shutil.copy(EXAMPLES / "demo.toml", rules)
    pnl = tmp_path / "pnl.csv"
    assert main(["run", str(rules), "--data", str(demo_dir), "--pnl-csv", str(pnl)]) == 0
    capsys.readouterr()
    out = tmp_path / "stats.json"
    assert main(["stats", str(pnl), "--trials", "40", "--trial-sharpe-var", "0.1",
                 "--json", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "Deflated Sharpe" in printed and "Trials counted" in printed
    payload = json.loads(out.read_text())
    # the same numbers as the statistics functions on the markets' rows summed by date
    table = pd.read_csv(pnl)
    daily = table.groupby("date")[["gross_pnl", "cost"]].sum()
    expected = first_pass_statistics(daily["gross_pnl"].to_numpy(), daily["cost"].to_numpy(),
                                     n_trials=40, trial_sharpe_var=0.1)
    assert payload["days"] == len(daily)
    assert payload["statistics"]["net"]["sharpe"] == pytest.approx(expected.net.sharpe)
    assert payload["statistics"]["dsr"] == pytest.approx(expected.dsr)
    assert payload["statistics"]["n_trials"] == 40


def test_stats_net_only_file(tmp_path, capsys):
    rng = np.random.default_rng(4)
    dates = pd.bdate_range("2015-01-01", periods=800).strftime("%Y-%m-%d")
    frame = pd.DataFrame({"date": np.repeat(dates, 2), "market": ["A", "B"] * 800,
                          "net_pnl": rng.normal(50, 1000, 1600)})
    path = tmp_path / "net.csv"
    frame.to_csv(path, index=False)
    assert main(["stats", str(path)]) == 0
    assert "800 days" in capsys.readouterr().out


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("date,pnl\n2020-01-01,1\n", "line 1: missing column(s) net_pnl"),
        ("date,net_pnl\n2020-01-01,1\n2020-01-0x,2\n", "line 3: column 'date'"),
        ("date,net_pnl\n2020-01-01,1\n2020-01-02,abc\n", "line 3: column 'net_pnl'"),
    ],
)
def test_stats_bad_files(tmp_path, capsys, text, message):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    assert main(["stats", str(path)]) == 1
    err = capsys.readouterr().err
    assert message in err and str(path) in err and err.count("\n") == 1


def test_data_check_command(demo_dir, tmp_path, capsys):
    assert main(["data", "check", str(demo_dir)]) == 0
    assert "8 ok" in capsys.readouterr().out
    broken = tmp_path / "broken"
    shutil.copytree(demo_dir, broken)
    lines = (broken / "GOLD.csv").read_text().splitlines()
    (broken / "GOLD.csv").write_text("\n".join([*lines, lines[-1]]) + "\n")  # a duplicate row
    assert main(["data", "check", str(broken)]) == 1
    out = capsys.readouterr().out
    assert "GOLD.csv" in out and f"line {len(lines) + 1}" in out and "duplicate row" in out
