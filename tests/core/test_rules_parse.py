"""Reading rule files: valid files give the spec the format describes, bad ones a located RuleError.

Source for every expected value below: the rule-file format as specified in docs/rule-files.md
(and, for TOML syntax, the TOML 1.0.0 specification, https://toml.io/en/v1.0.0).
"""

from __future__ import annotations

import datetime as dt
import tomllib

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RuleError
from hunchbook.core.rules import (
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
    parse_rules,
    read_rules,
)

EXAMPLE = """\
# Two-average cross on invented energy markets (example)
name = "Two-average cross"
description = "Optional free text"
markets = ["CRUDE", "GASOIL"]
start = 2012-01-01
end = "2020-12-31"

[parameters]
fast = [10, 20, 50]
slow = { start = 100, stop = 250, step = 50 }
constraint = "fast < slow"

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
delay = 1

[roll]
days_before_expiry = 7
adjust = "ratio"

[sizing]
contracts = 1.5

[costs]
slippage_ticks = 2
[costs.CRUDE]
commission = 1.10
"""

MINIMAL = """\
name = "Minimal"
markets = ["GOLD"]
[signal]
position = "sign(close - lag(close, 1))"
"""


def test_example_file_gives_the_documented_spec() -> None:
    # Expected values written by hand from the example file and the format's mapping rules.
    spec = parse_rules(EXAMPLE)
    assert spec == RuleSpec(
        name="Two-average cross",
        description="Optional free text",
        markets=("CRUDE", "GASOIL"),
        start=dt.date(2012, 1, 1),
        end=dt.date(2020, 12, 31),
        parameters=(Parameter("fast", (10.0, 20.0, 50.0)),
                    Parameter("slow", ParamRange(100.0, 250.0, 50.0))),
        constraint="fast < slow",
        position="sign(mean(close, fast) - mean(close, slow))",
        delay=1,
        roll=RollSpec(rule="days_before_expiry", days_before_expiry=7, adjust="ratio"),
        sizing=SizingSpec(contracts=1.5),
        costs={"*": {"slippage_ticks": 2.0}, "CRUDE": {"commission": 1.1}},
    )
    # Range semantics: stop inclusive, so 100..250 step 50 is 100, 150, 200, 250 (format spec);
    # grid = 3 x 4 combinations (common practice, no source: size of a Cartesian product).
    assert spec.parameters[1].values() == (100.0, 150.0, 200.0, 250.0)
    assert spec.grid_size() == 12


def test_minimal_file_takes_the_documented_defaults() -> None:
    # Defaults from the format spec: no parameters, delay 0, roll 5 business days before expiry
    # with difference adjustment, 1 contract, no cost overrides, no date window.
    spec = parse_rules(MINIMAL)
    assert spec.parameters == () and spec.constraint is None
    assert spec.delay == 0
    assert spec.roll == RollSpec("days_before_expiry", 5, "difference")
    assert spec.sizing == SizingSpec(contracts=1.0, target_vol=None, capital=None, vol_window=25)
    assert spec.costs == {}
    assert spec.start is None and spec.end is None and spec.description is None


def test_volume_switch_and_volatility_target() -> None:
    # Format spec: `switch` sets the roll rule; target_vol + capital select volatility sizing
    # with vol_window defaulting to 25 bars.
    text = MINIMAL + """
[roll]
switch = "open_interest"
adjust = "none"
[sizing]
target_vol = 0.2
capital = 1_000_000
"""
    spec = parse_rules(text)
    assert spec.roll.rule == "open_interest" and spec.roll.adjust == "none"
    assert spec.sizing == SizingSpec(contracts=None, target_vol=0.2, capital=1e6, vol_window=25)


def test_costs_for_markets_only_and_utf8_bom() -> None:
    # A byte-order mark is not part of the TOML text; per-market tables without common overrides
    # give no "*" entry (format spec).
    text = "\ufeff" + MINIMAL.replace('["GOLD"]', '["GOLD", "SILVER.X"]') + """
[costs."SILVER.X"]
exchange_fee = 0
regulatory_fee = 0.02
"""
    assert parse_rules(text).costs == {"SILVER.X": {"exchange_fee": 0.0,
                                                    "regulatory_fee": 0.02}}


def test_range_as_its_own_table() -> None:
    # Format spec: a range may be written as a [parameters.NAME] table.
    text = MINIMAL + ("[parameters]\nfast = [5]\n"
                      "[parameters.slow]\nstart = 10\nstop = 30\nstep = 10\n")
    assert parse_rules(text).parameters == (Parameter("fast", (5.0,)),
                                            Parameter("slow", ParamRange(10.0, 30.0, 10.0)))


def test_fractional_range_has_no_rounding_noise() -> None:
    # 0.1, 0.2, 0.3 are the decimal values of the range (by hand); float steps must not give
    # 0.30000000000000004 or drop the inclusive stop.
    spec = parse_rules(MINIMAL + "[parameters]\nk = { start = 0.1, stop = 0.3, step = 0.1 }\n")
    assert spec.parameters[0].values() == (0.1, 0.2, 0.3)


def _error(text: str) -> RuleError:
    with pytest.raises(RuleError) as info:
        parse_rules(text, file="rules.toml")
    return info.value


def _replace(old: str, new: str, text: str = EXAMPLE) -> str:
    assert old in text
    return text.replace(old, new, 1)


# (rule text, key the error must name, words the message must contain); expectations from the
# validation rules of the format spec.
BAD_FILES = {
    "unknown top key": (_replace('name = ', 'nmae = "x"\nname = '), "nmae", "allowed keys"),
    "unknown signal key": (_replace("delay = 1", "dealy = 1"), "signal.dealy", "position, delay"),
    "unknown range key": (_replace("step = 50", "stride = 50"), "parameters.slow.stride",
                          "start, stop, step"),
    "unknown roll key": (_replace("adjust = ", "adjusted = "), "roll.adjusted", "allowed keys"),
    "name wrong type": (_replace('"Two-average cross"', "3"), "name", "expected a string"),
    "name empty": (_replace('"Two-average cross"', '"  "'), "name", "empty"),
    "markets wrong type": (_replace('["CRUDE", "GASOIL"]', '"CRUDE"'), "markets", "array"),
    "markets empty": (_replace('["CRUDE", "GASOIL"]', "[]"), "markets", "at least one"),
    "duplicate market": (_replace('["CRUDE", "GASOIL"]', '["CRUDE", "GASOIL", "CRUDE"]'),
                         "markets", "twice"),
    "bad market name": (_replace('"GASOIL"', '"GAS OIL"'), "markets", "letters"),
    "delay float": (_replace("delay = 1", "delay = 1.5"), "signal.delay", "integer"),
    "delay bool": (_replace("delay = 1", "delay = true"), "signal.delay", "found boolean"),
    "delay negative": (_replace("delay = 1", "delay = -1"), "signal.delay", "from 0"),
    "missing signal": ("name = 'x'\nmarkets = ['A']\n", "signal", "required"),
    "missing position": (_replace('position = "sign', 'posit = "sign'), "signal.posit",
                         "allowed keys"),
    "missing position table key": (MINIMAL.replace('position = "sign(close - lag(close, 1))"',
                                                    "delay = 2"), "signal.position", "required"),
    "missing markets": (MINIMAL.replace('markets = ["GOLD"]\n', ""), "markets", "required"),
    "range step zero": (_replace("step = 50", "step = 0"), "parameters.slow.step", "> 0"),
    "range stop below start": (_replace("stop = 250", "stop = 50"), "parameters.slow.stop",
                               ">= start"),
    "range missing step": (_replace(", step = 50", ""), "parameters.slow.step", "required"),
    "range too many values": (_replace("step = 50", "step = 0.01"), "parameters.slow",
                              "10,000"),
    "range not a number": (_replace("stop = 250", 'stop = "250"'), "parameters.slow.stop",
                           "expected a number"),
    "list empty": (_replace("[10, 20, 50]", "[]"), "parameters.fast", "at least one"),
    "list duplicate": (_replace("[10, 20, 50]", "[10, 20, 20.0]"), "parameters.fast", "twice"),
    "list bool": (_replace("[10, 20, 50]", "[10, true]"), "parameters.fast", "item 2"),
    "list nan": (_replace("[10, 20, 50]", "[10, nan]"), "parameters.fast", "finite"),
    "parameter wrong type": (_replace("[10, 20, 50]", "10"), "parameters.fast", "array"),
    "parameter series name": (_replace("fast = ", "close = "), "parameters.close", "series"),
    "parameter function name": (_replace("fast = ", "mean = "), "parameters.mean", "function"),
    "parameter keyword": (_replace("fast = ", "and = "), "parameters.and", "expression"),
    "parameter not identifier": (_replace("fast = ", '"2fast" = '), "parameters.2fast",
                                 "letters"),
    "constraint wrong type": (_replace('constraint = "fast < slow"', "constraint = [1]"),
                              "parameters.constraint", "string"),
    "grid too large": (_replace("fast = [10, 20, 50]",
                                "a = { start = 1, stop = 1000, step = 1 }\n"
                                "b = { start = 1, stop = 1000, step = 1 }\nfast = [1]"),
                       "parameters", "4,000,000 sets"),
    "both sizing modes": (_replace("contracts = 1.5", "contracts = 1.5\ntarget_vol = 0.2"),
                          "sizing", "not both"),
    "vol target without capital": (_replace("contracts = 1.5", "target_vol = 0.2"),
                                   "sizing.capital", "both"),
    "sizing empty": (_replace("contracts = 1.5", ""), "sizing", "contracts"),
    "contracts zero": (_replace("contracts = 1.5", "contracts = 0"), "sizing.contracts", "> 0"),
    "vol window one": (_replace("contracts = 1.5", "target_vol = 0.2\ncapital = 1e6\n"
                                "vol_window = 1"), "sizing.vol_window", "from 2"),
    "roll days and switch": (_replace("adjust = ", 'switch = "volume"\nadjust = '), "roll",
                             "not both"),
    "roll bad switch": (_replace("days_before_expiry = 7", 'switch = "price"'), "roll.switch",
                        "'volume', 'open_interest'"),
    "roll bad adjust": (_replace('"ratio"', '"log"'), "roll.adjust", "'difference'"),
    "unknown cost key": (_replace("slippage_ticks = 2", "slippage = 2"), "costs.slippage",
                         "commission, exchange_fee, regulatory_fee, slippage_ticks"),
    "unknown market cost key": (_replace("commission = 1.10", "fee = 1"), "costs.CRUDE.fee",
                                "allowed keys"),
    "cost market not listed": (_replace("[costs.CRUDE]", "[costs.COPPER]"), "costs.COPPER",
                               "not listed"),
    "negative cost": (_replace("commission = 1.10", "commission = -1"), "costs.CRUDE.commission",
                      ">= 0"),
    "cost wrong type": (_replace("slippage_ticks = 2", 'slippage_ticks = "2"'),
                        "costs.slippage_ticks", "expected a number"),
    "date bad string": (_replace('"2020-12-31"', '"2020-13-31"'), "end", "calendar date"),
    "date wrong format": (_replace('"2020-12-31"', '"31/12/2020"'), "end", "expected a date"),
    "date-time": (_replace("2012-01-01", "2012-01-01T10:00:00"), "start", "date-time"),
    "end before start": (_replace('"2020-12-31"', "2011-12-31"), "end", "before start"),
}


@pytest.mark.parametrize("case", sorted(BAD_FILES))
def test_bad_file_names_file_and_key(case: str) -> None:
    text, key, words = BAD_FILES[case]
    err = _error(text)
    assert err.file == "rules.toml" and err.key == key
    assert str(err).startswith(f"rules.toml, key '{key}'")
    assert words in str(err)


def test_toml_syntax_error_names_line_and_column() -> None:
    # The value is missing on line 3 where the line ends: "end = " is 6 characters, so the
    # offending newline is at column 7 (counted by hand, 1-based like editors).
    err = _error('name = "x"\nmarkets = ["A"]\nend = \n[signal]\nposition = "close"\n')
    assert err.file == "rules.toml"
    assert "line 3, column 7" in str(err)


def test_duplicate_key_is_a_syntax_error_with_line() -> None:
    # TOML 1.0.0: "Defining a key multiple times is invalid."
    # (tomlkit reports the position where it noticed, just after the repeated key's line.)
    err = _error(MINIMAL.replace("[signal]", 'name = "again"\n[signal]'))
    assert str(err).startswith("rules.toml, line ")
    assert 'TOML syntax error: Key "name" already exists' in str(err)


def test_bad_position_expression_names_key_and_column() -> None:
    text = _replace("mean(close, slow)", "mean(close, slowest)")
    err = _error(text)
    position = "sign(mean(close, fast) - mean(close, slowest))"
    assert err.key == "signal.position" and err.file == "rules.toml"
    # The column is the 1-based offset of the unknown name in the expression (errors.py contract).
    assert err.column == position.index("slowest") + 1
    # The message names the line and column of the name in the file (counted with str.index).
    at = text.index("slowest")
    line, column = text.count("\n", 0, at) + 1, at - text.rindex("\n", 0, at)
    assert str(err).startswith(f"rules.toml, key 'signal.position', line {line}, column {column}: "
                               "unknown name 'slowest'")


def test_bad_constraint_expression_names_key() -> None:
    # A constraint reads parameters only: a price series is unknown there (format spec).
    err = _error(_replace('"fast < slow"', '"fast < close"'))
    assert err.key == "parameters.constraint" and err.column == len("fast < ") + 1


def test_too_big_text_is_rejected() -> None:
    # Format spec: rule files are limited to 1 MB (1,048,576 bytes).
    text = MINIMAL + "#" + "x" * (1024 * 1024) + "\n"
    assert "1 MB" in str(_error(text))


def test_read_rules_reads_a_file(tmp_path) -> None:
    path = tmp_path / "cross.toml"
    path.write_text(EXAMPLE, encoding="utf-8")
    assert read_rules(path) == parse_rules(EXAMPLE)


def test_read_rules_errors_name_the_file(tmp_path) -> None:
    missing = tmp_path / "missing.toml"
    with pytest.raises(RuleError, match="missing.toml: rule file not found"):
        read_rules(missing)
    with pytest.raises(RuleError, match="found a folder"):
        read_rules(tmp_path)
    latin1 = tmp_path / "latin1.toml"
    latin1.write_bytes(MINIMAL.encode() + b'description = "caf\xe9"\n')
    with pytest.raises(RuleError, match=r"latin1.toml: .*not UTF-8.*line 5"):
        read_rules(latin1)
    big = tmp_path / "big.toml"
    big.write_bytes(b"#" * (1024 * 1024 + 1))
    with pytest.raises(RuleError, match="big.toml: .*1 MB"):
        read_rules(big)
    bad = tmp_path / "bad.toml"
    bad.write_text(_replace("delay = 1", "delay = -3"), encoding="utf-8")
    with pytest.raises(RuleError) as info:
        read_rules(bad)
    assert info.value.file == str(bad) and info.value.key == "signal.delay"


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=200))
def test_any_text_gives_a_spec_or_a_rule_error(text: str) -> None:
    # Robustness (common practice, no source): arbitrary input never escapes as a raw exception.
    try:
        spec = parse_rules(text)
    except RuleError as err:
        assert str(err)
    else:
        assert isinstance(spec, RuleSpec)


@settings(max_examples=300, deadline=None)
@given(st.integers(0, len(EXAMPLE) - 1), st.integers(0, 5), st.text(max_size=4))
def test_damaged_example_gives_a_spec_or_a_rule_error(at: int, cut: int, insert: str) -> None:
    # Robustness (common practice, no source); a text the stdlib TOML reader (tomllib) accepts
    # must not be reported as a TOML syntax error by us.
    text = EXAMPLE[:at] + insert + EXAMPLE[at + cut:]
    try:
        parse_rules(text)
    except RuleError as err:
        if "TOML syntax error" in str(err):
            with pytest.raises(tomllib.TOMLDecodeError):
                tomllib.loads(text)
