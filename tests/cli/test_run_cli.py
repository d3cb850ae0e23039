"""The ``hunchbook run`` command: output files, the real WTI series, and clean failures."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

from hunchbook.cli import main
from hunchbook.core.results import RunSummary
from tests.reference_impl import backtest

WTI_LIBRARY = """
[WTI]
name = "WTI spot as a continuous market (public data shipped with arch)"
multiplier = 1000
tick_size = 0.01
currency = "USD"
commission = 0.85
exchange_fee = 1.45
regulatory_fee = 0.02
slippage_ticks = 1
"""
RULE = """
name = "WTI two-average cross"
markets = ["WTI"]
[parameters]
fast = [10, 20]
slow = [100]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[sizing]
contracts = 2.5
"""


@pytest.fixture(scope="module")
def wti_dir(tmp_path_factory):
    """The daily WTI spot series that the arch package ships (FRED DCOILWTICO, public data),
    holidays (NaN) dropped, as an already-continuous market."""
    arch_wti = pytest.importorskip("arch.data.wti")
    series = arch_wti.load()["DCOILWTICO"].dropna()
    folder = tmp_path_factory.mktemp("wti")
    (folder / "markets.toml").write_text(WTI_LIBRARY)
    pd.DataFrame({"date": series.index.strftime("%Y-%m-%d"), "close": series.to_numpy()}) \
        .to_csv(folder / "WTI.csv", index=False)
    return folder, series


def test_wti_through_cli_matches_pandas_reference(tmp_path, wti_dir, capsys):
    folder, series = wti_dir
    rules = tmp_path / "wti.toml"
    rules.write_text(RULE)
    pnl_csv, out_json = tmp_path / "pnl.csv", tmp_path / "out.json"
    code = main(["run", str(rules), "--data", str(folder), "--params", "fast=20,slow=100",
                 "--pnl-csv", str(pnl_csv), "--json", str(out_json)])
    assert code == 0
    printed = capsys.readouterr().out
    assert "Gross" in printed and "Net" in printed and "not investment advice" in printed

    # in-test reference: continuous market, no rolls; change = close difference
    frame = pd.DataFrame({"contract": "WTI", "change": series.diff().fillna(0.0),
                          "roll": False}, index=series.index)
    target = 2.5 * np.sign(series.rolling(20).mean() - series.rolling(100).mean())
    cost = 0.85 + 1.45 + 0.02 + 0.01 * 1000  # one tick of crude = $10 (common practice)
    expected = backtest(frame, target, 1000.0, cost)

    got = pd.read_csv(pnl_csv)
    assert list(got.columns[:8]) == ["date", "market", "contract", "position", "price_change",
                                     "gross_pnl", "contracts_traded", "cost"]
    assert "net_pnl" in got.columns
    assert list(got["date"]) == list(expected["date"].dt.strftime("%Y-%m-%d"))
    for col in ("position", "gross_pnl", "cost", "net_pnl"):
        np.testing.assert_allclose(got[col], expected[col], rtol=1e-9, atol=1e-6)

    payload = json.loads(out_json.read_text())
    # --params picks the judged set, but both declared sets ran and count as trials
    assert len(payload["sets"]) == 2 and payload["statistics"]["n_trials"] == 2
    assert "picked with --params out of the 2 declared sets" in printed
    (only,) = [s for s in payload["sets"] if s["params"] == {"fast": 20, "slow": 100}]
    assert payload["chosen"]["params"] == {"fast": 20, "slow": 100}
    assert only["net_total"] == pytest.approx(expected["net_pnl"].sum())
    assert only["gross_total"] == pytest.approx(expected["gross_pnl"].sum())
    assert payload["chosen"]["performance"]["net"]["total"] == pytest.approx(
        expected["net_pnl"].sum())
    assert [m["market"] for m in payload["chosen"]["markets"]] == ["WTI"]
    # the JSON is the run record itself: it reads back into the same record
    assert RunSummary.from_dict(payload).to_dict() == {k: v for k, v in payload.items()
                                                       if k != "caution"}


def test_sweep_summary_and_pnl_of_the_judged_set(tmp_path, wti_dir, capsys):
    folder, _ = wti_dir
    rules = tmp_path / "wti.toml"
    rules.write_text(RULE)
    out_json = tmp_path / "sweep.json"
    assert main(["run", str(rules), "--data", str(folder), "--json", str(out_json)]) == 0
    assert len(json.loads(out_json.read_text())["sets"]) == 2
    assert "2 parameter sets" in capsys.readouterr().out
    # the record is written on one line by json's C encoder and reads back as the same record
    text = out_json.read_text()
    assert text.count("\n") == 1 and text.endswith("}\n")
    record = json.loads(text)
    assert RunSummary.from_dict(record).to_dict() == {k: v for k, v in record.items()
                                                      if k != "caution"}
    # without --params the P&L file is the best set's, the one the statistics judge
    sweep = json.loads(out_json.read_text())
    best = sweep["sets"][sweep["statistics"]["chosen"]]
    code = main(["run", str(rules), "--data", str(folder), "--pnl-csv", str(tmp_path / "p.csv")])
    assert code == 0
    written = pd.read_csv(tmp_path / "p.csv")
    assert written["net_pnl"].sum() == pytest.approx(best["net_total"])


@pytest.mark.parametrize(
    ("rule_text", "args", "message"),
    [
        (RULE, ["--params", "fast=15"], "fast=15 is not one of the declared values"),
        # blamed on the rule file's markets key (line 3), not on the library
        (RULE.replace('"WTI"', '"BRENT"'), [], "r.toml, key 'markets', line 3, column 11: "
         "unknown market 'BRENT': the data folder's market library ("),
        (RULE.replace('"WTI"', '"BRENT"'), [], "markets.toml) has no such market; known "
         "markets: WTI"),
        (RULE.replace('"WTI"', '"WIT"'), [], "did you mean 'WTI'?"),
        (RULE.replace('name = "WTI two-average cross"', 'name = "WTI two-average cross'), [],
         "line 2, column 30: TOML syntax error: the string opened with \" at column 8 is not "
         "closed before the end of the line"),
        (RULE.replace("mean(close, fast)", "mean(clsoe, fast)"), [], "clsoe"),
        (RULE.replace("[sizing]", "[sizng]"), [], "sizng"),
    ],
)
def test_bad_input_is_one_clear_line(tmp_path, wti_dir, capsys, rule_text, args, message):
    folder, _ = wti_dir
    rules = tmp_path / "r.toml"
    rules.write_text(rule_text)
    assert main(["run", str(rules), "--data", str(folder), *args]) == 1
    err = capsys.readouterr().err
    assert message in err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_no_traceback_in_a_real_process(tmp_path):
    rules = tmp_path / "r.toml"
    rules.write_text("name = \n")
    proc = subprocess.run([sys.executable, "-m", "hunchbook.cli", "run", str(rules), "--data",
                           str(tmp_path)], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 1
    assert proc.stderr.startswith("hunchbook: error:") and "Traceback" not in proc.stderr
    assert str(rules) in proc.stderr
