"""Where rule errors point: the kind the parser gives each error and the span of the rule text
it is about (line and column from 1, end just after the last character).

Sources: lines and columns of the demo rule file (examples/demo.toml) counted by hand; other
positions found with ``str.index`` / ``str.rindex`` in the text and turned into line and column
by the span's definition in core/errors.py (lines split at "\\n", columns count characters);
the TOML 1.0.0 specification (https://toml.io/en/v1.0.0) for string escapes and line-ending
backslashes.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RULE_ERROR_KINDS, RuleError, TextSpan
from hunchbook.core.rules import RuleSpec, dump_rules, parse_rules, read_rules
from hunchbook.core.rules.places import parse_with_places
from hunchbook.core.rules.spans import expression_stretch

DEMO_PATH = Path(__file__).parents[2] / "examples" / "demo.toml"
DEMO = DEMO_PATH.read_text(encoding="utf-8")


def _error(text: str) -> RuleError:
    with pytest.raises(RuleError) as caught:
        parse_rules(text, file="demo.toml")
    return caught.value


def _demo_with(old: str, new: str) -> str:
    assert DEMO.count(old) == 1
    return DEMO.replace(old, new)


def _span(text: str, start: int, end: int) -> TextSpan:
    """The span of text[start:end] by definition: lines split at "\\n", columns from 1."""
    def where(i: int) -> tuple[int, int]:
        return text.count("\n", 0, i) + 1, i - (text.rfind("\n", 0, i) + 1) + 1
    return TextSpan(*where(start), *where(end))


# (change to examples/demo.toml, kind, key, span counted by hand in the changed file)
DEMO_ERRORS = {
    # line 16 "fast = = [16]": the second '=' is column 8
    "TOML syntax error": (("fast = [16]", "fast = = [16]"), "toml-syntax", None,
                          TextSpan(16, 8, 16, 9)),
    # line 24: the 18 characters of the misspelt key
    "unknown key": (("days_before_expiry = 5", "days_before_expiri = 5"), "unknown-key",
                    "roll.days_before_expiri", TextSpan(24, 1, 24, 19)),
    # line 30 "vol_window = 1": the value is column 14
    "bad value": (("vol_window = 25", "vol_window = 1"), "bad-value", "sizing.vol_window",
                  TextSpan(30, 14, 30, 15)),
    # line 16 "close = [16]": a series name as a parameter name, the key is columns 1-5
    "bad parameter name": (("fast = [16]", "close = [16]"), "bad-name", "parameters.close",
                           TextSpan(16, 1, 16, 6)),
    # capital removed: the [sizing] header on line 27, columns 1-8
    "missing key": (("capital = 1_000_000\n", ""), "missing-key", "sizing.capital",
                    TextSpan(27, 1, 27, 9)),
    # line 21 'position = "sign(ewm(clsoe, ...': the name is columns 22-26
    "expression, one-line string": (("ewm(close, fast)", "ewm(clsoe, fast)"), "expression",
                                    "signal.position", TextSpan(21, 22, 21, 27)),
    # the string now spans lines 21-23; line 23 is "     - ewm(clsoe, slow))" + quotes:
    # the name is columns 12-16
    "expression, multi-line string": (
        ('"sign(ewm(close, fast) - ewm(close, slow))"',
         '"""\nsign(ewm(close, fast)\n     - ewm(clsoe, slow))"""'),
        "expression", "signal.position", TextSpan(23, 12, 23, 17)),
    # line 18 'constraint = "fast < slwo"': the name is columns 22-25
    "constraint": (('"fast < slow"', '"fast < slwo"'), "expression", "parameters.constraint",
                   TextSpan(18, 22, 18, 26)),
    # line 23 "[roll]" chooses two rules at once: the table header, columns 1-6
    "two roll rules": (('adjust = "difference"', 'switch = "volume"\nadjust = "difference"'),
                       "bad-value", "roll", TextSpan(23, 1, 23, 7)),
}


@pytest.mark.parametrize("case", list(DEMO_ERRORS))
def test_each_kind_of_error_points_at_its_span_in_the_demo_file(case):
    (old, new), kind, key, span = DEMO_ERRORS[case]
    error = _error(_demo_with(old, new))
    assert (error.kind, error.key, error.span) == (kind, key, span)
    where = f"line {span.line}, column {span.column}: "
    assert str(error).startswith(f"demo.toml, key '{key}', {where}" if key
                                 else f"demo.toml, {where}TOML syntax error")


def test_every_kind_is_given_by_the_parser():
    """Each documented kind comes out of the parser or the file reader for some input."""
    seen = {kind for _, kind, *_ in DEMO_ERRORS.values()}
    with pytest.raises(RuleError) as missing:
        read_rules(DEMO_PATH.with_name("no such file.toml"))
    seen.add(missing.value.kind)
    assert missing.value.span is None
    assert seen == set(RULE_ERROR_KINDS)


HEAD = 'name = "x"\nmarkets = ["A"]\n'


@pytest.mark.parametrize(("text", "word"), [
    # plain basic string
    (HEAD + '[signal]\nposition = "sign(clsoe)"\n', "clsoe"),
    # literal string
    (HEAD + "[signal]\nposition = 'sign(clsoe)'\n", "clsoe"),
    # a \u escape before the error: 6 characters in the text, 1 in the expression (TOML 1.0)
    (HEAD + '[signal]\nposition = "sign(\\u0063lose) + clsoe"\n', "clsoe"),
    # multi-line basic string: first newline trimmed, line-ending backslash (TOML 1.0)
    (HEAD + '[signal]\nposition = """\nsign(close) + \\\n      clsoe"""\n', "clsoe"),
    # multi-line literal string
    (HEAD + "[signal]\nposition = '''\nsign(close\n + clsoe)'''\n", "clsoe"),
    # dotted key at top level instead of a [signal] header
    (HEAD + 'signal.position = "abs(clsoe)"\n', "clsoe"),
    # inline table
    (HEAD + 'signal = { position = "abs(clsoe)" }\n', "clsoe"),
    # constraint expression, after a comment holding the same word
    (HEAD + '# slwo is a typo\n[parameters]\nfast = [1]\nslow = [2]\n'
            'constraint = "fast < slwo"\n[signal]\nposition = "close"\n', "slwo"),
    # a character the language does not have: that one character
    (HEAD + '[signal]\nposition = "close $ 2"\n', "$"),
])
def test_expression_error_points_at_the_word_where_it_is_written(text, word):
    start = text.rindex(word)
    error = _error(text)
    assert error.kind == "expression"
    assert error.span == _span(text, start, start + len(word))


def test_expression_column_past_its_end_points_at_the_closing_quote():
    text = 'position = "close +"'
    value = (text.index('"'), len(text))
    assert expression_stretch(text, value, len("close +") + 1) == (len(text) - 1, len(text))
    assert expression_stretch(text, value, None) == value


def test_plain_keys_point_at_value_key_or_table():
    """A bad value: the value; an unknown key: the key; a missing key: its table's header; a
    range checked as a whole: the [parameters.NAME] header or the inline table."""
    base = HEAD + '[signal]\nposition = "close"\n'
    text = base + "[parameters.slow]\nstart = 1\nstop = 5\nstep = 0\n"
    at = text.rindex("0")
    assert _error(text).span == _span(text, at, at + 1)
    text = base + "[costs]\nslippage = 1\n"
    at = text.index("slippage")
    assert _error(text).span == _span(text, at, at + len("slippage"))
    text = HEAD + "[signal]\ndelay = 1\n"
    at = text.index("[signal]")
    assert _error(text).span == _span(text, at, at + len("[signal]"))
    too_many = "{ start = 0, stop = 1, step = 0.00001 }"
    text = base + f"[parameters]\nslow = {too_many}\n"
    at = text.index(too_many)
    assert _error(text).span == _span(text, at, at + len(too_many))
    text = base + "[parameters.slow]\nstart = 0\nstop = 1\nstep = 0.00001\n"
    at = text.index("[parameters.slow]")
    assert _error(text).span == _span(text, at, at + len("[parameters.slow]"))


def test_missing_top_level_key_has_no_span():
    error = _error('name = "x"\n[signal]\nposition = "close"\n')
    assert (error.kind, error.key, error.span) == ("missing-key", "markets", None)
    assert str(error) == "demo.toml, key 'markets': this key is required but missing"


def test_syntax_error_at_a_line_end_is_an_empty_span_there():
    """A string left open runs to the line break (column 10 of 'name = "x'): nothing to
    underline, so the span is the point before the line break."""
    error = _error('name = "x\nmarkets = ["A"]\n')
    assert error.kind == "toml-syntax"
    assert error.span == TextSpan(1, 10, 1, 10)


def test_syntax_error_at_the_end_of_the_text():
    text = HEAD + "[signal]\nposition = "
    assert _error(text).span == _span(text, len(text), len(text))


def test_byte_order_mark_is_not_counted_and_crlf_keeps_columns():
    """Editors do not show a byte-order mark, and a CR belongs to the line break."""
    old, new = DEMO_ERRORS["expression, one-line string"][0]
    text = _demo_with(old, new)
    expected = DEMO_ERRORS["expression, one-line string"][3]
    assert _error("\ufeff" + text).span == expected
    assert _error(text.replace("\n", "\r\n")).span == expected


def test_read_rules_error_names_file_line_and_column(tmp_path):
    path = tmp_path / "demo.toml"
    path.write_text(_demo_with("vol_window = 25", "vol_window = 1"), encoding="utf-8")
    with pytest.raises(RuleError) as caught:
        read_rules(path)
    assert str(caught.value).startswith(f"{path}, key 'sizing.vol_window', line 30, column 14: ")


def test_writer_errors_do_not_point_into_text_the_user_never_saw():
    """dump_rules checks its own canonical text; an error there keeps the expression column
    but no span (the text is not the user's)."""
    spec = RuleSpec(name="x", markets=("A",), position="sign(clsoe)")
    with pytest.raises(RuleError) as caught:
        dump_rules(spec)
    assert caught.value.span is None and caught.value.column == len("sign(") + 1
    assert str(caught.value).startswith("key 'signal.position', column 6: unknown name 'clsoe'")


def test_places_of_keys_values_and_tables():
    """Every way TOML writes a key is noted under its full dotted path."""
    text = ('name = "x"  # comment\n'
            'signal.position = "close"\n'
            '[ parameters ]\n'
            'slow = { start = 1, stop = 5, step = 1 }\n'
            '[costs."ES.M"]\n'
            'commission = 2.5\n')
    _, places = parse_with_places(text)

    def at(piece: str) -> tuple[int, int]:
        start = text.index(piece)
        return start, start + len(piece)

    assert places.keys["name"] == at("name") and places.values["name"] == at('"x"')
    assert places.keys["signal.position"] == at("signal.position")
    assert places.tables["signal"] == at("signal.position")
    assert places.tables["parameters"] == at("[ parameters ]")
    assert places.values["parameters.slow"] == at("{ start = 1, stop = 5, step = 1 }")
    assert places.keys["parameters.slow.stop"] == at("stop")
    assert places.values["parameters.slow.stop"] == at("5")
    assert places.tables["costs.ES.M"] == at('[costs."ES.M"]')
    assert places.values["costs.ES.M.commission"] == at("2.5")
    assert places.enclosing("costs.ES.M.fee") == at('[costs."ES.M"]')
    assert places.enclosing("sizing.contracts") is None


@settings(max_examples=200, deadline=None)
@given(st.integers(0, len(DEMO) - 1), st.integers(0, 5), st.text(max_size=4))
def test_any_damage_gives_a_span_inside_the_text(at: int, cut: int, insert: str) -> None:
    """Robustness (common practice, no source): wherever the demo file is damaged, an error's
    span starts no later than it ends and both lie inside the text."""
    text = DEMO[:at] + insert + DEMO[at + cut:]
    try:
        parse_rules(text)
    except RuleError as error:
        span = error.span
        if span is not None:
            lines = text.removeprefix("\ufeff").split("\n")
            assert (span.line, span.column) <= (span.end_line, span.end_column)
            for line, column in ((span.line, span.column), (span.end_line, span.end_column)):
                assert 1 <= line <= len(lines) and 1 <= column <= len(lines[line - 1]) + 1
