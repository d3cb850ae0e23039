"""The spec editor offers, colours and checks the functions across markets and the holding
rules as it does every function: they come from the function registry.

Reference points outside the project: the registry's own text (core/expr/functions.py) for the
function list; ``str.index`` on the rule text for where an error must be underlined, and Qt's
blocks for the line and column its message names.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt

from hunchbook.core.expr import FUNCTIONS
from hunchbook.gui.widgets.rule_editor import RuleEditor

NEW = ("cs_rank", "cs_demean", "cs_zscore", "cs_top", "cs_bottom", "hold", "latch",
       "bars_since", "stop")

RULE = """\
name = "Cross-market momentum, held"
markets = ["CRUDE", "GOLD", "CORN"]

[parameters]
top = [1, 2]

[signal]
position = "{position}"
"""
GOOD = "stop(hold(cs_top(diff(close, 60), top) - cs_bottom(diff(close, 60), top), 5), 2, 20)"


@pytest.fixture
def editor(qtbot):
    widget = RuleEditor()
    qtbot.addWidget(widget)
    widget.resize(1000, 700)
    widget.set_market_choices(["CRUDE", "GOLD", "CORN"])
    return widget


def test_function_list_shows_each_new_function_with_its_line(editor):
    items = editor.form.functions_list
    # a function's item inserts "name(" (series items insert the bare name)
    shown = {items.item(i).data(Qt.ItemDataRole.UserRole).removesuffix("("): items.item(i).text()
             for i in range(items.count())}
    for name in NEW:
        signature, _, summary = FUNCTIONS[name].partition(": ")
        assert shown[name] == f"{signature}  -  {summary}"
    assert set(NEW) <= set(editor.form.position_edit.words())


def test_new_functions_are_highlighted_as_functions(editor):
    editor.set_text(RULE.format(position=GOOD))
    assert editor.error_message() is None and editor.error_range() is None
    document = editor.text_edit.document()
    block = document.findBlock(editor.text_edit.toPlainText().index("position"))
    colours = {}
    for rng in block.layout().formats():
        word = block.text()[rng.start: rng.start + rng.length]
        colours[word] = rng.format.foreground().color().name()
    assert colours["cs_top"] == colours["cs_bottom"] == colours["hold"] == colours["stop"] \
        == colours["diff"]
    assert colours["top"] != colours["cs_top"]


@pytest.mark.parametrize(("position", "underlined", "anchor"), [
    ("cs_top(close, 0)", "0", "0)"),
    ("hold(2 * top, 3)", "2", "2 * top"),
    ("stop(sign(diff(close, 5)), 2, close)", "close", "close)"),
    ("latch(close > 1)", "latch", "latch"),
    ("cs_rank(clsoe)", "clsoe", "clsoe"),
])
def test_misuse_is_underlined_at_its_column(editor, position, underlined, anchor):
    editor.set_text(RULE.format(position=position))
    document = editor.text_edit.toPlainText()
    start = document.index(anchor, document.index("position = "))
    assert editor.error_range() == (start, start + len(underlined))
    block = editor.text_edit.document().findBlock(start)
    assert f"line {block.blockNumber() + 1}, column {start - block.position() + 1}: " in (
        editor.error_message())
