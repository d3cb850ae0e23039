"""``hunchbook run`` asks before a long or large sweep (``--yes`` answers), and refuses one that
cannot fit in memory, each with one clear line and before any set runs."""

from __future__ import annotations

import pytest

from hunchbook.cli import main
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

RULES = """
name = "estimate check"
markets = ["M1"]
[parameters]
fast = [3, 5]
slow = [20, 40]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
"""


@pytest.fixture
def files(tmp_path):
    (tmp_path / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    write_random_contracts(tmp_path / "M1.csv", 3, "2018-01-02", 600, holidays=5)
    rules = tmp_path / "rules.toml"
    rules.write_text(RULES)
    return rules, tmp_path


def test_a_long_sweep_needs_yes_without_a_terminal(files, capsys, monkeypatch):
    monkeypatch.setattr("hunchbook.core.sweep_estimate.CONFIRM_SECONDS", 0.0)
    rules, folder = files
    args = ["run", str(rules), "--data", str(folder), "--workers", "1"]
    assert main(args) == 1
    err = capsys.readouterr().err
    assert "This sweep: 4 parameter sets x" in err and "of memory (" in err
    assert "Not started: add --yes to run it without asking." in err
    assert "hunchbook: error: sweep not started" in err
    assert main([*args, "--yes"]) == 0
    out = capsys.readouterr()
    assert "This sweep: 4 parameter sets" in out.err and "Verdict" in out.out


def test_a_sweep_that_cannot_fit_is_refused(files, capsys, monkeypatch):
    monkeypatch.setattr("hunchbook.core.sweep_estimate.available_memory", lambda: 50 * 2**20)
    rules, folder = files
    assert main(["run", str(rules), "--data", str(folder), "--workers", "1", "--yes"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("hunchbook: error: this sweep would need about")
    assert "50 MB is free" in err[0] and "--cluster" in err[0]
