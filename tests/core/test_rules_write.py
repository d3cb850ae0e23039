"""Writing rule files: canonical text, round trips, and edits that keep the user's comments.

Sources: the rule-file format (docs/rule-files.md); Python's standard TOML reader ``tomllib`` as
an independent reference that the written text is standard TOML with the intended values.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import os
import tomllib

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import FUNCTIONS
from hunchbook.core.rules import (
    SERIES_NAMES,
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
    dump_rules,
    parse_rules,
    read_rules,
    write_rules,
)
from hunchbook.core.rules.parse import EXPRESSION_WORDS

COMMENTED = """\
# Two-average cross on invented energy markets (example)
name = "Two-average cross"   # shown in the catalogue
markets = [
    "CRUDE",   # invented crude contract
    "GASOIL",
]

[parameters]
# the fast window is searched on a short list
fast = [10, 20, 50]                              # explicit values
slow = { start = 100, stop = 250, step = 50 }    # range, stop inclusive
constraint = "fast < slow"

[signal]
# long when the fast average is above the slow one
position = "sign(mean(close, fast) - mean(close, slow))"   # the rule itself

[roll]
days_before_expiry = 5      # roll rule 1
"""


def test_canonical_text_is_standard_toml_with_integers_kept_whole() -> None:
    spec = RuleSpec(
        name="Cross", markets=("CRUDE",), position="sign(close - mean(close, n))",
        parameters=(Parameter("n", (20.0, 60.0)), Parameter("k", ParamRange(0.5, 2.0, 0.5))),
        sizing=SizingSpec(contracts=None, target_vol=0.2, capital=1e6, vol_window=30),
        costs={"*": {"commission": 2.0}, "CRUDE": {"slippage_ticks": 1.5}},
        start=dt.date(2015, 3, 2),
    )
    text = dump_rules(spec)
    # Whole numbers are written as integers (format spec: 20, not 20.0).
    assert "n = [20, 60]" in text and "capital = 1000000" in text
    # Read back with the stdlib reader (independent of tomlkit); values by hand from the spec.
    assert tomllib.loads(text) == {
        "name": "Cross", "markets": ["CRUDE"], "start": dt.date(2015, 3, 2),
        "parameters": {"n": [20, 60], "k": {"start": 0.5, "stop": 2, "step": 0.5}},
        "signal": {"position": "sign(close - mean(close, n))"},
        "roll": {"days_before_expiry": 5, "adjust": "difference"},
        "sizing": {"target_vol": 0.2, "capital": 1000000, "vol_window": 30},
        "costs": {"commission": 2, "CRUDE": {"slippage_ticks": 1.5}},
    }
    assert "#" not in text


def test_edit_keeps_comments_and_layout() -> None:
    spec = parse_rules(COMMENTED)
    edited = dataclasses.replace(
        spec,
        parameters=(spec.parameters[0], Parameter("slow", ParamRange(120.0, 300.0, 60.0))),
        position="sign(mean(close, fast) - mean(close, slow)) if volume > 0 else 0",
    )
    text = dump_rules(edited, original=COMMENTED)
    assert parse_rules(text) == edited
    for comment in ("# Two-average cross on invented energy markets (example)",
                    "# shown in the catalogue", "# invented crude contract",
                    "# the fast window is searched on a short list", "# explicit values",
                    "# range, stop inclusive", "# long when the fast average is above",
                    "# the rule itself", "# roll rule 1"):
        assert comment in text
    # Untouched lines stay byte for byte, including the multi-line markets array.
    for line in COMMENTED.splitlines():
        if "slow = " not in line and "position = " not in line:
            assert line in text.splitlines()
    # Keys left at their defaults are not added to the hand-written file.
    assert "delay" not in text and "adjust" not in text and "[sizing]" not in text

DOTTED = """\
name = "Dotted"  # dotted keys and inline tables
markets = ["A"]
signal.position = "close"
roll = { adjust = "ratio" }
parameters.fast = [1, 2]
sizing = { contracts = 2 }
"""


def test_edit_of_dotted_and_inline_layout() -> None:
    spec = parse_rules(DOTTED)
    edited = dataclasses.replace(
        spec, parameters=(Parameter("fast", (3.0,)), Parameter("slow", ParamRange(1, 5, 1))),
        constraint="fast > slow", roll=RollSpec(rule="volume", adjust="none"), delay=3,
        costs={"*": {"commission": 1.0}, "A": {"exchange_fee": 0.5}},
        sizing=SizingSpec(contracts=None, target_vol=0.1, capital=100.0, vol_window=40))
    text = dump_rules(edited, original=DOTTED)
    assert parse_rules(text) == edited
    assert "# dotted keys and inline tables" in text
    # Undoing the edit meets a layout tomlkit cannot edit in place (deleting a dotted key after
    # tables were appended); the writer must still give exactly the spec asked for.
    assert parse_rules(dump_rules(spec, original=text)) == spec


def test_edit_without_changes_returns_the_original() -> None:
    assert dump_rules(parse_rules(COMMENTED), original=COMMENTED) == COMMENTED


def test_edit_switches_modes_and_removes_keys() -> None:
    spec = parse_rules(COMMENTED)
    edited = dataclasses.replace(
        spec, parameters=(spec.parameters[1],), constraint=None, position="sign(close)",
        roll=RollSpec(rule="volume", adjust="none"), delay=2,
        sizing=SizingSpec(contracts=None, target_vol=0.1, capital=5e5),
        costs={"GASOIL": {"commission": 3.0}}, description="now described",
    )
    text = dump_rules(edited, original=COMMENTED)
    assert parse_rules(text) == edited
    assert "fast =" not in text and "constraint" not in text and "days_before_expiry" not in text
    assert "# roll rule 1" not in text  # the comment went with its line
    assert "# the rule itself" in text


def test_edit_reorders_parameters() -> None:
    # Parameter order is part of the spec (it sets the grid order), so it must survive a save.
    spec = parse_rules(COMMENTED)
    edited = dataclasses.replace(spec, parameters=spec.parameters[::-1])
    assert parse_rules(dump_rules(edited, original=COMMENTED)) == edited


def test_dump_refuses_an_invalid_spec() -> None:
    spec = parse_rules(COMMENTED)
    with pytest.raises(RuleError) as info:
        dump_rules(dataclasses.replace(spec, markets=("CRUDE", "CRUDE")))
    assert info.value.key == "markets"
    with pytest.raises(RuleError) as info:
        dump_rules(dataclasses.replace(spec, position="mean(close, fast"))
    assert info.value.key == "signal.position"


def test_write_rules_is_atomic_and_keeps_permissions(tmp_path) -> None:
    path = tmp_path / "cross.toml"
    path.write_text(COMMENTED, encoding="utf-8")
    os.chmod(path, 0o640)
    edited = dataclasses.replace(parse_rules(COMMENTED), name="Renamed")
    write_rules(edited, path, original=COMMENTED)
    assert read_rules(path) == edited
    assert "# shown in the catalogue" in path.read_text(encoding="utf-8")
    if os.name == "posix":
        assert path.stat().st_mode & 0o777 == 0o640
    assert [p.name for p in tmp_path.iterdir()] == ["cross.toml"]  # no temporary file left


def test_write_rules_errors_name_the_file(tmp_path) -> None:
    spec = parse_rules(COMMENTED)
    target = tmp_path / "no-such-folder" / "cross.toml"
    with pytest.raises(RuleError, match="cross.toml: cannot write rule file"):
        write_rules(spec, target)
    with pytest.raises(RuleError) as info:
        write_rules(dataclasses.replace(spec, name=""), tmp_path / "x.toml")
    assert info.value.file == str(tmp_path / "x.toml") and info.value.key == "name"
    assert not (tmp_path / "x.toml").exists()


# --- property: every valid spec survives dump -> parse ---------------------------------------

_RESERVED = {*SERIES_NAMES, *EXPRESSION_WORDS, *FUNCTIONS, "constraint"}
_names = st.from_regex(r"[a-z_][a-z0-9_]{0,6}", fullmatch=True).filter(
    lambda n: n not in _RESERVED)
_finite = st.floats(allow_nan=False, allow_infinity=False)
_positive = st.floats(min_value=1e-6, max_value=1e12, allow_nan=False)
_cost = st.one_of(st.integers(0, 100).map(float), st.floats(0, 1e6, allow_nan=False))
_text = st.text(st.characters(exclude_categories=("Cs",)), max_size=30)


@st.composite
def _ranges(draw: st.DrawFn) -> ParamRange:
    start = draw(st.one_of(st.integers(-1000, 1000).map(float),
                           st.floats(-1e6, 1e6, allow_nan=False)))
    step = draw(st.sampled_from([0.1, 0.25, 0.5, 1.0, 2.0, 5.0, 50.0]))
    count = draw(st.integers(0, 30))
    return ParamRange(start, start + count * step, step)


@st.composite
def rule_specs(draw: st.DrawFn) -> RuleSpec:
    markets = tuple(draw(st.lists(st.from_regex(r"[A-Za-z0-9_.\-]{1,8}", fullmatch=True),
                                  min_size=1, max_size=4, unique=True)))
    names = draw(st.lists(_names, max_size=3, unique=True))
    parameters = tuple(
        Parameter(n, draw(st.one_of(
            st.lists(_finite, min_size=1, max_size=6, unique=True).map(tuple), _ranges())))
        for n in names)
    constraint = draw(st.one_of(st.none(), st.just(f"{names[0]} > 0"))) if names else None
    position = draw(st.sampled_from(
        ["close", "sign(close - lag(close, 1))", "mean(close, 10) - mean(close, 20)"]
        + [f"sign(close - mean(close, {n}))" for n in names]))
    rule = draw(st.sampled_from(["days_before_expiry", "volume", "open_interest"]))
    days = draw(st.integers(0, 60)) if rule == "days_before_expiry" else 5
    roll = RollSpec(rule=rule, days_before_expiry=days,
                    adjust=draw(st.sampled_from(["difference", "ratio", "none"])))
    sizing = draw(st.one_of(
        st.builds(SizingSpec, contracts=_positive),
        st.builds(SizingSpec, contracts=st.none(), target_vol=_positive, capital=_positive,
                  vol_window=st.integers(2, 500))))
    costs: dict[str, dict[str, float]] = {}
    for market in ("*", *draw(st.lists(st.sampled_from(markets), unique=True))):
        values = draw(st.dictionaries(st.sampled_from(["commission", "exchange_fee",
                                                       "regulatory_fee", "slippage_ticks"]),
                                      _cost, min_size=1))
        if market != "*" or draw(st.booleans()):
            costs[market] = values
    dates = sorted(draw(st.lists(st.dates(), min_size=2, max_size=2)))
    return RuleSpec(
        name=draw(_text.filter(str.strip)),
        description=draw(st.one_of(st.none(), _text)),
        markets=markets, position=position, parameters=parameters, constraint=constraint,
        delay=draw(st.integers(0, 10)), roll=roll, sizing=sizing, costs=costs,
        start=draw(st.sampled_from([None, dates[0]])), end=draw(st.sampled_from([None, dates[1]])),
    )


@settings(max_examples=300, deadline=None)
@given(rule_specs())
def test_round_trip(spec: RuleSpec) -> None:
    text = dump_rules(spec)
    assert parse_rules(text) == spec
    # The stdlib reader agrees with the spec on the written values (independent reference).
    plain = tomllib.loads(text)
    assert plain["name"] == spec.name and plain["markets"] == list(spec.markets)
    for parameter in spec.parameters:
        written = plain["parameters"][parameter.name]
        if isinstance(parameter.choices, ParamRange):
            assert (written["start"], written["stop"], written["step"]) == (
                parameter.choices.start, parameter.choices.stop, parameter.choices.step)
        else:
            assert tuple(written) == parameter.choices


@settings(max_examples=200, deadline=None)
@given(rule_specs(), rule_specs())
def test_edit_round_trip(before: RuleSpec, after: RuleSpec) -> None:
    # Updating any file in place must give exactly the edited spec back.
    original = dump_rules(before)
    assert parse_rules(dump_rules(after, original=original)) == after
    assert parse_rules(dump_rules(after, original=COMMENTED)) == after
    assert parse_rules(dump_rules(after, original=DOTTED)) == after
