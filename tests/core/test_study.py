"""Preparing a study from rule text or a rule file: the same study either way, and every
rule error names the rule file."""

from __future__ import annotations

import pytest

from hunchbook.api import Study
from hunchbook.core.errors import RuleError
from hunchbook.core.prices import load_data
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

RULES = """
name = "study check"
markets = ["M1", "M2"]
[parameters]
fast = [3, 5]
slow = [20]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[roll]
days_before_expiry = 2
"""


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("study")
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    for market, seed in (("M1", 21), ("M2", 22)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 120, holidays=4)
    (folder / "rules.toml").write_text(RULES)
    return folder


def test_text_and_file_prepare_the_same_study(folder):
    from_file = Study.from_file(folder / "rules.toml", folder)
    from_text = Study.from_text(RULES, folder, file="rules.toml")
    assert from_file.rules == from_text.rules
    assert from_file.parameter_sets() == from_text.parameter_sets() == [
        {"fast": 3.0, "slow": 20.0}, {"fast": 5.0, "slow": 20.0}]
    assert from_file.file == str(folder / "rules.toml") and from_text.file == "rules.toml"
    # the data read is kept (for its fingerprint) and is what load_data reads
    assert sorted(from_text.data.bars) == ["M1", "M2"]
    assert from_text.data.folder == load_data(folder, ["M1", "M2"]).folder
    one, other = (s.run_set({"fast": 5.0, "slow": 20.0}) for s in (from_file, from_text))
    assert one.pnl.equals(other.pnl)


def test_rule_errors_name_the_file(folder):
    with pytest.raises(RuleError) as bad_toml:
        Study.from_text(RULES + "[signal\n", folder, file="idea.toml")
    assert str(bad_toml.value).startswith("idea.toml")
    study = Study.from_text(RULES, folder, file="idea.toml")
    with pytest.raises(RuleError) as unknown:
        study.parameter_sets({"medium": 4.0})
    assert str(unknown.value).startswith("idea.toml, key 'parameters': unknown parameter")
    with pytest.raises(RuleError) as undeclared:
        study.parameter_sets({"fast": 4.0})
    assert (unknown.value.file, undeclared.value.file) == ("idea.toml", "idea.toml")
    assert undeclared.value.key == "parameters.fast"


def test_a_market_without_data_names_the_folder(folder):
    # a market the library lacks is blamed on the rule file's markets key (with its line)
    with pytest.raises(RuleError) as missing:
        Study.from_text(RULES.replace('"M2"', '"M3"'), folder)
    assert str(folder) in str(missing.value) and missing.value.key == "markets"
    assert missing.value.span is not None and "known markets: M1, M2" in str(missing.value)


def test_a_missing_rule_file_is_one_clear_error(folder):
    with pytest.raises(RuleError, match="rule file not found"):
        Study.from_file(folder / "absent.toml", folder)
