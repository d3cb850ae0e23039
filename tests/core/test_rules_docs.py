"""The rule-file documentation stays true: its examples load, it lists every function and
every roll rule, and its error messages are the parser's.

Source: docs/rule-files.md itself (the examples and the hand-worked grid count in it).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from hunchbook.api import Study
from hunchbook.core.errors import RuleError
from hunchbook.core.expr import FUNCTIONS, parse_expression
from hunchbook.core.rules import SERIES_NAMES, ParamRange, parse_rules, roll
from tests.reference_impl import write_random_contracts

DOC = (Path(__file__).parents[2] / "docs" / "rule-files.md").read_text(encoding="utf-8")
EXAMPLES = [block for block in re.findall(r"```toml\n(.*?)```", DOC, flags=re.S)
            if block.startswith("# ")]


def test_doc_has_the_intro_and_worked_examples() -> None:
    assert len(EXAMPLES) == 2


def test_intro_example_loads() -> None:
    spec = parse_rules(EXAMPLES[0], file="docs/rule-files.md")
    assert spec.markets == ("CRUDE", "GASOIL") and spec.grid_size() == 12  # 3 x 4, by hand


def test_worked_example_loads_as_explained() -> None:
    spec = parse_rules(EXAMPLES[1], file="docs/rule-files.md")
    # Line-by-line explanation in the doc: entry takes 20 and 55, vol_n 20, 40, 60 (stop
    # included), 6 sets of which 4 satisfy vol_n >= entry; open-interest roll, ratio adjustment,
    # 15 % target on 2,000,000 with a 30-bar window, delay 1.
    assert spec.markets == ("ALU", "ZINC.X")
    assert spec.parameters[0].values() == (20.0, 55.0)
    assert spec.parameters[1].choices == ParamRange(20.0, 60.0, 20.0)
    constraint = parse_expression(spec.constraint, series_names=(),
                                  param_names=spec.parameter_names)
    kept = [p for p in spec.iter_grid() if constraint.evaluate({}, p) != 0]
    assert spec.grid_size() == 6 and len(kept) == 4
    assert (spec.roll.rule, spec.roll.adjust, spec.delay) == ("open_interest", "ratio", 1)
    assert (spec.sizing.target_vol, spec.sizing.capital, spec.sizing.vol_window) == (
        0.15, 2_000_000, 30)
    assert spec.costs == {"*": {"slippage_ticks": 1.0}, "ZINC.X": {"commission": 2.5}}
    # The sizing arithmetic shown in the doc: 2,000,000 x 0.15 / (25 x 120) = 100 contracts.
    assert 2_000_000 * 0.15 / (25 * 120) == 100


def test_every_function_is_documented() -> None:
    for name in FUNCTIONS:
        assert f"`{name}(" in DOC, name


def _section(title: str) -> str:
    start = DOC.index(f"\n{title}\n")
    return DOC[start: DOC.index("\n#", start + 1)]


def test_every_roll_rule_and_adjustment_is_documented() -> None:
    """The [roll] section lists what the roll registry (core/rules/roll.py) holds: each rule,
    how a file chooses it, its settings with their defaults, and each adjustment."""
    section = _section("### `[roll]`")
    for rule in roll.ROLL_RULE_TABLE:
        assert f"| `{rule.name}`" in section and rule.help in section, rule.name
        if rule.is_switch:
            assert f'`switch = "{rule.name}"`' in section, rule.name
        for setting in rule.settings:
            assert f"`{setting.key} = N` (default `{setting.default}`" in section, setting.key
    assert f'`adjust` (default `"{roll.DEFAULT_ADJUST.name}"`)' in section
    for method in roll.ADJUST_METHOD_TABLE:
        assert f'| `"{method.name}"` | {method.help.rstrip(".")}' in section, method.name


def test_error_examples_are_what_the_parser_says() -> None:
    """The messages in the Errors section, for the changes it lists to the intro example (an
    example ending in "..." is shortened there)."""
    block = re.search(r"```text\n(.*?)```", _section("## Errors"), flags=re.S)
    assert block is not None
    changes = [("step = 50", "step = 0"),
               ('position = "sign', 'delay = true\nposition = "sign'),
               ('GASOIL"]\n', 'GASOIL"]\nslippage = 2\n'),
               ("mean(close, slow)", "mean(close, slowest)"),
               ("fast = [10, 20, 50]", "fast = [10,, 20, 50]")]
    lines = block.group(1).splitlines()
    assert len(lines) == len(changes)
    for line, (old, new) in zip(lines, changes, strict=True):
        assert old in EXAMPLES[0]
        with pytest.raises(RuleError) as caught:
            parse_rules(EXAMPLES[0].replace(old, new, 1), file="rules/cross.toml")
        shown = line.removesuffix("...")
        assert str(caught.value).startswith(shown) if shown != line else str(caught.value) == line



_SERIES = DOC[DOC.index("\n## Series\n"): DOC.index("\n## How a rule is run\n")]
SERIES_EXAMPLES = re.findall(r"```toml\n(.*?)```", _SERIES, flags=re.S)


def test_every_series_is_documented() -> None:
    """The Series table names exactly the series of core/rules/model.py."""
    first_cells = [line.split("|")[1] for line in _SERIES.splitlines()
                   if line.startswith("| `")]
    assert {n for cell in first_cells for n in re.findall(r"`(\w+)`", cell)} == set(
        SERIES_NAMES)


def test_series_examples_run_on_contract_data(tmp_path) -> None:
    """The carry, pair, turn-of-month and event examples parse and run on generated
    contract-level data for every market they name (with an events file), and each takes
    positions (source: the examples themselves; the data are test input only)."""
    assert len(SERIES_EXAMPLES) == 4
    names = sorted({m for block in SERIES_EXAMPLES
                    for m in re.findall(r'"([A-Z0-9]+)"', block) if m.isupper()})
    library = "".join(f'[{m}]\nmultiplier = 10\ntick_size = 0.01\ncurrency = "USD"\n'
                      "commission = 1\nexchange_fee = 0\nregulatory_fee = 0\n"
                      "slippage_ticks = 0\n" for m in names)
    (tmp_path / "markets.toml").write_text(library)
    for seed, market in enumerate(names):
        write_random_contracts(tmp_path / f"{market}.csv", seed, "2019-01-01", 300, holidays=5)
    (tmp_path / "events.csv").write_text(
        "date,event,market\n2019-02-12,crop report,CORN\n2019-03-08,crop report,\n"
        "2019-05-10,crop report,\n")
    for block in SERIES_EXAMPLES:
        study = Study.from_text(block, tmp_path)
        output = study.run_set(study.parameter_sets()[0]).output
        assert np.count_nonzero(output.position) > 0, block


def test_carry_example_arithmetic() -> None:
    # The worked numbers of the Carry section (Koijen et al. 2018 formula, ACT/365).
    assert "0.2520548" in _SERIES and "0.0809672" in _SERIES
    assert round(92 / 365, 7) == 0.2520548
    assert round((100.00 - 98.00) / (98.00 * 92 / 365), 7) == 0.0809672
