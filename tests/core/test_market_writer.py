"""Writing the market library: dump/parse round trip, comments kept, atomic file writes."""

from __future__ import annotations

import math
import os
import stat
import tomllib
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import MarketSpecError
from hunchbook.core.markets import (
    MarketSpec,
    dump_market_library,
    parse_market_library,
    read_market_library,
    write_market_library,
)
from hunchbook.demo import market_library_text

NUMBER_FIELDS = ("multiplier", "tick_size", "commission", "exchange_fee", "regulatory_fee",
                 "slippage_ticks")

_positive = st.floats(min_value=1e-9, max_value=1e12, allow_nan=False, allow_infinity=False)
_non_negative = st.one_of(st.just(0.0), _positive)
_text = st.text(min_size=1, max_size=20).map(str.strip).filter(bool)
_symbol = st.from_regex(r"[A-Za-z0-9_][A-Za-z0-9_.-]{0,9}", fullmatch=True)


@st.composite
def market_specs(draw) -> dict[str, MarketSpec]:
    symbols = draw(st.lists(_symbol, min_size=1, max_size=5, unique=True))
    return {s: MarketSpec(symbol=s, multiplier=draw(_positive), tick_size=draw(_positive),
                          currency=draw(_text), commission=draw(_non_negative),
                          exchange_fee=draw(_non_negative), regulatory_fee=draw(_non_negative),
                          slippage_ticks=draw(_non_negative),
                          name=draw(st.none() | _text), sector=draw(st.none() | _text))
            for s in symbols}


@settings(max_examples=150, deadline=None)
@given(market_specs())
def test_dump_then_parse_gives_back_the_specs(specs):
    """Property: parse(dump(specs)) == specs, and the stdlib TOML reader (an independent
    parser, outside the project) reads the same values."""
    text = dump_market_library(specs)
    assert parse_market_library(text) == specs
    plain = tomllib.loads(text)  # reference: Python's own TOML 1.0 reader
    assert list(plain) == list(specs)
    for symbol, spec in specs.items():
        for field in NUMBER_FIELDS:
            assert plain[symbol][field] == getattr(spec, field)
        assert plain[symbol]["currency"] == spec.currency
        assert plain[symbol].get("name") == spec.name
        assert plain[symbol].get("sector") == spec.sector


@settings(max_examples=60, deadline=None)
@given(market_specs())
def test_dump_over_an_original_gives_back_the_specs(specs):
    """Property: updating the demo library's text in place still means exactly ``specs``."""
    text = dump_market_library(specs, original=market_library_text())
    assert parse_market_library(text) == specs


def test_edit_keeps_comments_and_untouched_markets():
    """Changing one value rewrites that value only: every comment of the original survives and
    the other markets' lines stay byte for byte (checked against the original text)."""
    original = market_library_text()
    specs = parse_market_library(original)
    specs["CRUDE"] = replace(specs["CRUDE"], multiplier=500.0)
    text = dump_market_library(specs, original=original)
    comments = [line.split("#", 1)[1] for line in original.splitlines() if "#" in line]
    for comment in comments:
        assert comment in text
    changed = [(a, b) for a, b in zip(original.splitlines(), text.splitlines(), strict=True)
               if a != b]
    assert len(changed) == 1
    assert changed[0][1].startswith("multiplier = 500")
    assert tomllib.loads(text)["CRUDE"]["multiplier"] == 500


def test_added_and_removed_keys_and_markets_land_in_their_tables():
    """A sector added to one market belongs to that market and not to the next (stdlib reader
    as reference); a removed market and a removed name are gone; a new market is appended."""
    original = market_library_text()
    specs = parse_market_library(original)
    specs["NATGAS"] = replace(specs["NATGAS"], name=None, sector=None)
    specs["NATGAS"] = replace(specs["NATGAS"], sector="gas")
    del specs["COPPER"]
    specs["ZINC"] = MarketSpec("ZINC", 25.0, 0.5, "EUR", 1.0, 0.5, 0.0, 1.0, name="Zinc")
    text = dump_market_library(specs, original=original)
    plain = tomllib.loads(text)
    assert plain["NATGAS"]["sector"] == "gas"
    assert "name" not in plain["NATGAS"]
    assert "COPPER" not in plain
    assert list(plain)[-1] == "ZINC"
    assert plain["ZINC"] == {"name": "Zinc", "multiplier": 25, "tick_size": 0.5,
                             "currency": "EUR", "commission": 1, "exchange_fee": 0.5,
                             "regulatory_fee": 0, "slippage_ticks": 1}
    assert "# 10,000 MMBtu" in text


def test_invalid_spec_names_market_and_key():
    """A zero multiplier is refused with the market and key named."""
    specs = parse_market_library(market_library_text())
    specs["GOLD"] = replace(specs["GOLD"], multiplier=0.0)
    with pytest.raises(MarketSpecError) as caught:
        dump_market_library(specs)
    assert caught.value.market == "GOLD"
    assert caught.value.key == "multiplier"
    assert "market 'GOLD', key 'multiplier'" in str(caught.value)


@pytest.mark.parametrize("value", [math.nan, math.inf, -1.0])
def test_non_finite_or_negative_fee_is_refused(value):
    """Fees must be finite and not negative (the reader's rule)."""
    specs = {"A": MarketSpec("A", 1.0, 1.0, "USD", value, 0.0, 0.0, 0.0)}
    with pytest.raises(MarketSpecError, match="key 'commission'"):
        dump_market_library(specs)


def test_key_must_match_symbol():
    """A specification listed under another symbol is refused."""
    spec = MarketSpec("A", 1.0, 1.0, "USD", 0.0, 0.0, 0.0, 0.0)
    with pytest.raises(MarketSpecError, match="symbol is 'A'"):
        dump_market_library({"B": spec})


def test_empty_library_is_refused():
    """A library needs at least one market."""
    with pytest.raises(MarketSpecError, match="no markets"):
        dump_market_library({})


def test_original_that_is_not_toml_is_refused():
    """A broken original cannot be updated in place."""
    specs = parse_market_library(market_library_text())
    with pytest.raises(MarketSpecError, match="not valid TOML"):
        dump_market_library(specs, original="[CRUDE\nmultiplier = ")


def test_write_is_atomic_keeps_mode_and_reads_back(tmp_path):
    """The file is replaced whole (no temporary file left), keeps its permissions, and the
    library reader reads back the edit."""
    path = tmp_path / "markets.toml"
    path.write_text(market_library_text(), encoding="utf-8")
    os.chmod(path, 0o600)
    specs = read_market_library(path)
    specs["EQIDX"] = replace(specs["EQIDX"], slippage_ticks=2.0)
    write_market_library(specs, path, original=path.read_text(encoding="utf-8"))
    assert read_market_library(path)["EQIDX"].slippage_ticks == 2.0
    assert stat.S_IMODE(path.stat().st_mode) == 0o600
    assert sorted(p.name for p in tmp_path.iterdir()) == ["markets.toml"]
    assert "# 50 USD x index" in path.read_text(encoding="utf-8")


def test_write_failure_names_the_file(tmp_path):
    """A folder that does not exist gives a MarketSpecError naming the file."""
    path = tmp_path / "missing" / "markets.toml"
    specs = parse_market_library(market_library_text())
    with pytest.raises(MarketSpecError) as caught:
        write_market_library(specs, path)
    assert caught.value.file == str(path)


def test_write_of_invalid_spec_names_the_file(tmp_path):
    """An invalid specification leaves the file untouched and the error names file, market
    and key."""
    path = tmp_path / "markets.toml"
    path.write_text(market_library_text(), encoding="utf-8")
    specs = read_market_library(path)
    specs["CORN"] = replace(specs["CORN"], tick_size=-0.25)
    with pytest.raises(MarketSpecError) as caught:
        write_market_library(specs, path)
    assert str(caught.value).startswith(f"{path}, market 'CORN', key 'tick_size'")
    assert path.read_text(encoding="utf-8") == market_library_text()
