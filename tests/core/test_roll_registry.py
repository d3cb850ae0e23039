"""The roll registry (core/rules/roll.py) drives the parser, the writer and the continuous
series: every rule and adjustment it lists is read, written and computed, and a rule added to
it alone is taken up by all three.

Sources: the rule-file format (docs/rule-files.md, section [roll]) for what a file says;
Python's standard TOML reader ``tomllib`` as an independent reader of the written text; the
contract rows below, worked by hand, for the held contracts.
"""

from __future__ import annotations

import dataclasses
import tomllib

import pytest

from hunchbook.core.continuous import build_continuous
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.prices import read_market_csv
from hunchbook.core.rules import RollSpec, RuleSpec, dump_rules, parse_rules, roll
from hunchbook.core.rules.roll import RollRule

HEAD = 'name = "x"\nmarkets = ["A"]\n[signal]\nposition = "close"\n'

# Four trading days, Mon 2024-01-01 to Thu 2024-01-04, two contracts. The next contract's
# volume first exceeds the held one's on day 2 (500 > 400); its open interest on day 3
# (700 > 600). Contract A expires Fri 2024-01-05: one business day before is day 4.
DAYS = ["2024-01-01", "2024-01-02", "2024-01-03", "2024-01-04"]
ROWS = {"A": ("2024-01-05", [50, 51, 52, 53], [900, 400, 300, 100], [900, 800, 600, 100]),
        "B": ("2024-02-20", [60, 61, 62, 63], [100, 500, 700, 900], [100, 200, 700, 900])}
# held at each close, by hand from the figures above (a switch is taken at the close of the
# first day the next contract's figure is larger; days_before_expiry = 1 rolls at day 4's close)
HELD = {"days_before_expiry": ["A", "A", "A", "B"],
        "volume": ["A", "B", "B", "B"],
        "open_interest": ["A", "A", "B", "B"]}


@pytest.fixture
def bars(tmp_path):
    lines = ["date,contract,expiry,close,volume,open_interest"]
    for contract, (expiry, closes, volumes, interests) in ROWS.items():
        for i, day in enumerate(DAYS):
            lines.append(f"{day},{contract},{expiry},{closes[i]},{volumes[i]},{interests[i]}")
    path = tmp_path / "A.csv"
    path.write_text("\n".join(lines) + "\n")
    return read_market_csv(path, "A")


def _roll_table(text: str) -> dict:
    return tomllib.loads(text).get("roll", {})


def test_registry_is_consistent():
    """Names are unique; the default rule is chosen by no key, so it is not a switch; any other
    rule is chosen by its switch or by a setting of its own; each setting is a RollSpec field
    whose default is the registry's."""
    names = [rule.name for rule in roll.ROLL_RULE_TABLE]
    assert len(set(names)) == len(names)
    assert len(set(roll.adjust_method_names())) == len(roll.ADJUST_METHOD_TABLE)
    assert not roll.DEFAULT_ROLL_RULE.is_switch
    owners: dict[str, str] = {}
    for rule in roll.ROLL_RULE_TABLE[1:]:
        assert rule.is_switch or rule.settings, rule.name
    for rule in roll.ROLL_RULE_TABLE:
        for setting in rule.settings:
            assert owners.setdefault(setting.key, rule.name) == rule.name, setting.key
    defaults = RollSpec()
    fields = {f.name for f in dataclasses.fields(RollSpec)}
    for setting in roll.roll_settings():
        assert setting.key in fields
        assert getattr(defaults, setting.key) == setting.default
    assert (defaults.rule, defaults.adjust) == (roll.DEFAULT_ROLL_RULE.name,
                                                roll.DEFAULT_ADJUST.name)
    with pytest.raises(ValueError, match="names the data column"):
        RollRule("broken", "Broken", "A switch without a column.", "switch")


@pytest.mark.parametrize("rule", roll.ROLL_RULE_TABLE, ids=lambda r: r.name)
@pytest.mark.parametrize("method", roll.ADJUST_METHOD_TABLE, ids=lambda m: m.name)
def test_every_rule_and_method_is_read_written_and_computed(rule, method, bars):
    """Format: a switch rule is chosen by ``switch = NAME``, another rule by its settings;
    ``adjust`` names the method. The writer writes exactly that, the parser reads it back,
    and the continuous series holds the contracts worked out by hand."""
    settings = {s.key: s.default + 1 for s in rule.settings}
    spec = RollSpec(rule=rule.name, adjust=method.name, **settings)
    chosen = {roll.SWITCH_KEY: rule.name} if rule.is_switch else settings
    text = HEAD + "[roll]\n" + "".join(f"{k} = {v!r}\n".replace("'", '"')
                                       for k, v in chosen.items()) + f'adjust = "{method.name}"\n'
    assert parse_rules(text).roll == spec
    written = dump_rules(RuleSpec(name="x", markets=("A",), position="close", roll=spec))
    assert _roll_table(written) == {**chosen, roll.ADJUST_KEY: method.name}
    assert parse_rules(written).roll == spec
    held = build_continuous(bars, RollSpec(rule=rule.name, adjust=method.name,
                                           **{s.key: 1 for s in rule.settings}))
    assert list(held.contract) == HELD[rule.name]


@pytest.mark.parametrize("method", roll.ADJUST_METHOD_TABLE, ids=lambda m: m.name)
def test_methods_needing_positive_prices_refuse_a_negative_one(method, tmp_path):
    lines = ["date,contract,expiry,close", "2024-01-01,A,2024-01-03,-1",
             "2024-01-02,A,2024-01-03,2", "2024-01-01,B,2024-02-01,5", "2024-01-02,B,2024-02-01,6"]
    path = tmp_path / "N.csv"
    path.write_text("\n".join(lines) + "\n")
    spec = RollSpec(days_before_expiry=1, adjust=method.name)
    if method.needs_positive_prices:
        with pytest.raises(DataError, match=f"the {method.name} adjustment needs"):
            build_continuous(read_market_csv(path, "N"), spec)
    else:
        assert len(build_continuous(read_market_csv(path, "N"), spec)) == 2


def test_roll_errors_name_the_registry_choices():
    """An unknown [roll] key lists every key the registry allows; a bad switch lists the switch
    rules; two rules at once are refused."""
    error = _roll_error("days_before = 3\n")
    assert f"allowed keys: {', '.join(roll.roll_keys())}" in str(error)
    error = _roll_error('switch = "price"\n')
    assert all(f"'{name}'" in str(error) for name in roll.switch_rule_names())
    error = _roll_error('days_before_expiry = 3\nswitch = "volume"\n')
    assert "give either 'days_before_expiry' or 'switch', not both" in str(error)


def _roll_error(body: str) -> RuleError:
    with pytest.raises(RuleError) as caught:
        parse_rules(HEAD + "[roll]\n" + body)
    return caught.value


def test_a_rule_added_to_the_registry_alone_is_read_written_and_computed(monkeypatch, bars):
    """A new switch rule listed only in the registry (here: a switch on open interest under
    another name) is accepted by the parser, written by the writer and computed by the
    continuous series on its column."""
    added = RollRule("interest_switch", "Switch on interest", "Roll on open interest.",
                     "switch", column="open_interest")
    monkeypatch.setattr(roll, "ROLL_RULE_TABLE", (*roll.ROLL_RULE_TABLE, added))
    spec = parse_rules(HEAD + '[roll]\nswitch = "interest_switch"\n')
    assert spec.roll.rule == "interest_switch"
    assert _roll_table(dump_rules(spec)) == {"switch": "interest_switch", "adjust": "difference"}
    assert list(build_continuous(bars, spec.roll).contract) == HELD["open_interest"]
