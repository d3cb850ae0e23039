"""The spec editor: form and rule text kept in sync, errors shown and underlined where they are.

Reference points outside the project: the Python standard library's ``tomllib`` reads the rule
files independently of our parser (expected form values and edited values); ``str.index`` on
the text and Qt's own ``QTextDocument.find`` give the expected positions of underlined
characters, and Qt's blocks give the line and column a message must name.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence, QShortcut, QTextCursor, QTextFormat
from PySide6.QtWidgets import QComboBox, QMainWindow

from hunchbook.core.expr import FUNCTIONS
from hunchbook.core.rules import parse_rules, roll
from hunchbook.core.rules.roll import RollRule
from hunchbook.gui.widgets import rule_editor as rule_editor_module
from hunchbook.gui.widgets.rule_editor import RuleEditor

EXAMPLES = sorted((Path(__file__).parents[2] / "examples").glob("*.toml"))
DEMO_MARKETS = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]

SMALL = """\
# a small rule file
name = "Cross"            # the idea's name
markets = ["CRUDE"]

[parameters]
fast = [10, 20]
slow = { start = 100, stop = 200, step = 50 }  # slow average lengths
constraint = "fast < slow"

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
"""


@pytest.fixture
def editor(qtbot):
    widget = RuleEditor()
    qtbot.addWidget(widget)
    widget.resize(1000, 700)
    widget.set_market_choices(DEMO_MARKETS)
    return widget


def load(editor: RuleEditor, text: str) -> None:
    editor.set_text(text)


def select(editor: RuleEditor, start: int, end: int) -> None:
    """Select text[start:end] of the document (ASCII texts: indices equal Qt positions)."""
    cursor = editor.text_edit.textCursor()
    cursor.setPosition(start)
    cursor.setPosition(end, QTextCursor.MoveMode.KeepAnchor)
    editor.text_edit.setTextCursor(cursor)


def type_over(qtbot, editor: RuleEditor, old: str, new: str) -> None:
    """Select ``old`` in the document and type ``new`` over it, key by key."""
    start = editor.text_edit.toPlainText().index(old)
    select(editor, start, start + len(old))
    qtbot.keyClicks(editor.text_edit, new)


def wait_settled(qtbot, editor: RuleEditor) -> None:
    with qtbot.waitSignal(editor.text_changed, timeout=3000):
        pass


def parameter_row(editor: RuleEditor, name: str) -> int:
    table = editor.form.parameters_table
    return next(r for r in range(table.rowCount()) if table.item(r, 0).text() == name)


# --- loading ------------------------------------------------------------------------------------


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_load_into_form_and_text_unchanged(qtbot, editor, path):
    """Every example shows its values in the form and text() gives back the file byte for byte;
    expected values come from the standard library's TOML reader."""
    text = path.read_text(encoding="utf-8")
    with qtbot.assertNotEmitted(editor.text_changed, wait=400):
        load(editor, text)
    assert editor.text() == text
    assert editor.text().encode("utf-8") == path.read_bytes()
    assert editor.error_message() is None
    reference = tomllib.loads(text)
    form = editor.form
    assert form.name_edit.text() == reference["name"]
    assert form.description_edit.toPlainText() == reference.get("description", "")
    ticked = [form.markets_list.item(i).text() for i in range(form.markets_list.count())
              if form.markets_list.item(i).checkState() == Qt.CheckState.Checked]
    assert sorted(ticked) == sorted(reference["markets"])
    assert form.position_edit.text() == reference["signal"]["position"]
    parameters = {k: v for k, v in reference.get("parameters", {}).items() if k != "constraint"}
    table = form.parameters_table
    assert [table.item(r, 0).text() for r in range(table.rowCount())] == list(parameters)
    for row, value in enumerate(parameters.values()):
        kind = table.cellWidget(row, 1)
        if isinstance(value, dict):
            assert kind.currentData() == "range"
            assert [float(table.item(row, c).text()) for c in (2, 3, 4)] == [
                value["start"], value["stop"], value["step"]]
        else:
            assert kind.currentData() == "values"
            shown = [float(v) for v in table.item(row, 2).text().split(",")]
            assert shown == [float(v) for v in value]
    assert form.constraint_edit.text() == reference.get("parameters", {}).get("constraint", "")
    roll = reference.get("roll", {})
    assert form.roll_combo.currentData() == roll.get("switch", "days_before_expiry")
    assert form.adjust_combo.currentData() == roll.get("adjust", "difference")
    sizing = reference.get("sizing", {})
    if "target_vol" in sizing:
        assert form.sizing_combo.currentData() == "target"
        assert float(form.target_vol_edit.text()) == sizing["target_vol"]
        assert float(form.capital_edit.text()) == sizing["capital"]
        assert form.vol_window_spin.value() == sizing.get("vol_window", 25)  # documented default
    else:
        assert form.sizing_combo.currentData() == "fixed"
        assert float(form.contracts_edit.text()) == sizing.get("contracts", 1)
    for key, edit in form.cost_edits.items():
        expected = reference.get("costs", {}).get(key)
        assert (float(edit.text()) if edit.text() else None) == expected
    assert not form.is_out_of_date()


def test_markets_from_file_and_choices_are_listed(editor):
    """The market list offers the library's markets and keeps any the file names besides."""
    editor.set_market_choices(["CRUDE", "GOLD"])
    load(editor, SMALL.replace('["CRUDE"]', '["CRUDE", "ZINC.X"]'))
    names = editor.form.market_names()
    assert names[:2] == ["CRUDE", "GOLD"]
    assert "ZINC.X" in names


def test_set_text_keeps_windows_line_ends(editor):
    """A file with CRLF line ends is given back unchanged, also after typing."""
    text = SMALL.replace("\n", "\r\n")
    load(editor, text)
    assert editor.text() == text
    editor.text_edit.moveCursor(QTextCursor.MoveOperation.End)
    editor.text_edit.insertPlainText("# end\n")
    assert editor.text() == text + "# end\r\n"


# --- form to text -------------------------------------------------------------------------------


def test_editing_parameter_range_rewrites_text_keeping_comments(qtbot, editor):
    """Changing a range's stop in the table rewrites just that value; comments stay, and the
    standard library reads the edited range from the new text."""
    load(editor, SMALL)
    row = parameter_row(editor, "slow")
    with qtbot.waitSignal(editor.text_changed, timeout=3000) as blocker:
        editor.form.parameters_table.item(row, 3).setText("300")
    new = editor.text()
    assert blocker.args == [new]
    assert new != SMALL
    for line in SMALL.splitlines():
        if "#" in line:
            assert line[line.index("#"):] in new
    reference = tomllib.loads(new)
    assert reference["parameters"]["slow"] == {"start": 100, "stop": 300, "step": 50}
    assert reference["parameters"]["fast"] == [10, 20]
    spec = parse_rules(new)
    assert spec.parameters[1].values() == (100, 150, 200, 250, 300)
    assert editor.text_edit.toPlainText() == new
    assert editor.error_message() is None


def test_form_edit_does_not_refill_form_or_reparse_later(qtbot, editor, monkeypatch):
    """A change made in the form is written to the text without the text being read back into
    the form afterwards (no loop between the two)."""
    load(editor, SMALL)
    refills = []
    monkeypatch.setattr(editor.form, "set_spec", lambda spec: refills.append(spec))
    editor.form.name_edit.setText("Cross, renamed")
    editor.form.name_edit.textEdited.emit("Cross, renamed")
    wait_settled(qtbot, editor)
    assert tomllib.loads(editor.text())["name"] == "Cross, renamed"
    assert "# the idea's name" in editor.text()
    assert refills == []


def test_tick_market_and_change_sizing(qtbot, editor):
    """Ticking a market appends it to markets; fixed-contract sizing writes [sizing] contracts."""
    load(editor, SMALL)
    form = editor.form
    gold = next(form.markets_list.item(i) for i in range(form.markets_list.count())
                if form.markets_list.item(i).text() == "GOLD")
    gold.setCheckState(Qt.CheckState.Checked)
    assert tomllib.loads(editor.text())["markets"] == ["CRUDE", "GOLD"]
    form.contracts_edit.setText("2.5")
    form.contracts_edit.textEdited.emit("2.5")
    assert tomllib.loads(editor.text())["sizing"] == {"contracts": 2.5}
    form.sizing_combo.setCurrentIndex(form.sizing_combo.findData("target"))
    assert "volatility-target sizing needs both" in form.problem_message()
    form.target_vol_edit.setText("0.1")
    form.capital_edit.setText("1_000_000")
    form.capital_edit.textEdited.emit("1_000_000")
    assert form.problem_message() is None
    assert tomllib.loads(editor.text())["sizing"] == {"target_vol": 0.1, "capital": 1_000_000}


def test_roll_costs_delay_and_dates_from_form(editor):
    """Roll switch, an all-market cost, a delay and a start date each land under their key."""
    load(editor, SMALL)
    form = editor.form
    form.roll_combo.setCurrentIndex(form.roll_combo.findData("volume"))
    form.adjust_combo.setCurrentIndex(form.adjust_combo.findData("ratio"))
    form.cost_edits["slippage_ticks"].setText("2")
    form.cost_edits["slippage_ticks"].textEdited.emit("2")
    form.delay_spin.setValue(1)
    form.start_check.setChecked(True)
    reference = tomllib.loads(editor.text())
    assert reference["roll"] == {"switch": "volume", "adjust": "ratio"}
    assert reference["costs"] == {"slippage_ticks": 2}
    assert reference["signal"]["delay"] == 1
    assert "start" in reference


def test_roll_choices_come_from_the_registry(qtbot, monkeypatch):
    """The form lists each roll rule and adjustment of core/rules/roll.py with its label, has a
    field per rule setting (enabled only for the rule that has it), and a rule added to the
    registry alone is offered and written (read back with tomllib)."""
    added = RollRule("interest_switch", "Switch on interest", "Roll on open interest.",
                     "switch", column="open_interest")
    monkeypatch.setattr(roll, "ROLL_RULE_TABLE", (*roll.ROLL_RULE_TABLE, added))
    editor = RuleEditor()
    qtbot.addWidget(editor)
    load(editor, SMALL)
    form = editor.form
    combo = form.roll_combo
    assert [(combo.itemText(i), combo.itemData(i)) for i in range(combo.count())] == [
        (rule.label, rule.name) for rule in roll.ROLL_RULE_TABLE]
    adjust = form.adjust_combo
    assert [(adjust.itemText(i), adjust.itemData(i)) for i in range(adjust.count())] == [
        (method.label, method.name) for method in roll.ADJUST_METHOD_TABLE]
    assert list(form.roll_setting_spins) == [s.key for s in roll.roll_settings()]
    for rule in roll.ROLL_RULE_TABLE:
        combo.setCurrentIndex(combo.findData(rule.name))
        own = {s.key for s in rule.settings}
        assert {k for k, spin in form.roll_setting_spins.items() if spin.isEnabled()} == own
    assert tomllib.loads(editor.text())["roll"] == {"switch": "interest_switch"}


def test_kind_switch_turns_values_into_range(editor):
    """Switching a list parameter to a range covers its values (10, 20 -> 10 to 20 by 10)."""
    load(editor, SMALL)
    row = parameter_row(editor, "fast")
    box = editor.form.parameters_table.cellWidget(row, 1)
    assert isinstance(box, QComboBox)
    box.setCurrentIndex(box.findData("range"))
    assert tomllib.loads(editor.text())["parameters"]["fast"] == {
        "start": 10, "stop": 20, "step": 10}


def test_add_and_remove_parameter(editor):
    """Added parameters appear in the text and in the expression completer; removing drops them."""
    load(editor, SMALL)
    form = editor.form
    form.add_parameter_button.click()
    assert tomllib.loads(editor.text())["parameters"]["p1"] == [1]
    assert "p1" in form.position_edit.words()
    form.parameters_table.selectRow(parameter_row(editor, "p1"))
    form.remove_parameter_button.click()
    assert "p1" not in tomllib.loads(editor.text())["parameters"]
    assert "p1" not in form.position_edit.words()


def test_unreadable_form_value_is_reported_and_not_written(editor):
    """A step that is not a number is reported in the form; the text stays as it was."""
    load(editor, SMALL)
    editor.form.parameters_table.item(parameter_row(editor, "slow"), 4).setText("fifty")
    assert editor.text() == SMALL
    assert "parameters.slow.step" in editor.form.problem_message()
    assert "fifty" in editor.form.problem_message()


def test_form_edit_is_one_undo_step_in_text(qtbot, editor):
    """Undo in the text takes back a change made through the form, and the form follows."""
    load(editor, SMALL)
    editor.form.parameters_table.item(parameter_row(editor, "slow"), 3).setText("300")
    assert editor.text() != SMALL
    editor.text_edit.undo()
    assert editor.text() == SMALL
    wait_settled(qtbot, editor)
    row = parameter_row(editor, "slow")
    assert editor.form.parameters_table.item(row, 3).text() == "200"


def test_expression_completer_offers_functions(editor):
    """The position field offers every function of the language and the price series."""
    load(editor, SMALL)
    words = editor.form.position_edit.words()
    assert set(FUNCTIONS) <= set(words)
    assert {"close", "fast", "slow"} <= set(words)
    editor.form.position_edit.setText("sign(me")
    editor.form.position_edit.setCursorPosition(7)
    editor.form.position_edit.insert_word("mean")
    assert editor.form.position_edit.text() == "sign(mean"


# --- text to form -------------------------------------------------------------------------------


def test_typing_a_bad_expression_underlines_the_name(qtbot, editor):
    """Typing sign(mean(clsoe, fast)) reports 'clsoe' and underlines exactly its characters."""
    load(editor, EXAMPLES[[p.name for p in EXAMPLES].index("demo.toml")].read_text())
    old = "sign(ewm(close, fast) - ewm(close, slow))"
    with qtbot.waitSignal(editor.validity_changed, timeout=3000) as blocker:
        type_over(qtbot, editor, old, "sign(mean(clsoe, fast))")
    valid, message = blocker.args
    assert valid is False
    assert "clsoe" in message
    assert editor.error_message() == message
    document = editor.text_edit.toPlainText()
    start = document.index('position = "sign(mean(clsoe') + len('position = "sign(mean(')
    assert editor.error_range() == (start, start + len("clsoe"))
    assert editor.form.is_out_of_date()
    assert not editor.form.fields.isEnabled()
    assert editor.form.position_edit.text() == old  # the form keeps its last valid state
    assert "clsoe" in editor.message.text()


def test_fixing_the_error_clears_underline_and_updates_form(qtbot, editor):
    """After a fix the text is valid again, the underline is gone and the form follows."""
    load(editor, SMALL.replace("mean(close, fast)", "mean(clsoe, fast)"))
    assert editor.error_range() is not None
    with qtbot.waitSignal(editor.validity_changed, timeout=3000) as blocker:
        type_over(qtbot, editor, "clsoe", "close")
    assert blocker.args == [True, ""]
    assert editor.error_range() is None
    assert editor.error_message() is None
    assert not editor.form.is_out_of_date()
    assert editor.form.fields.isEnabled()
    assert editor.form.position_edit.text() == "sign(mean(close, fast) - mean(close, slow))"


def test_text_edit_updates_form(qtbot, editor):
    """A valid change typed in the text shows in the form after the pause."""
    load(editor, SMALL)
    type_over(qtbot, editor, "[10, 20]", "[5, 10, 15]")
    wait_settled(qtbot, editor)
    row = parameter_row(editor, "fast")
    assert editor.form.parameters_table.item(row, 2).text() == "5, 10, 15"


def test_fast_typing_is_read_once_after_the_pause(qtbot, editor, monkeypatch):
    """Many keystrokes in quick succession lead to one read of the text and one text_changed."""
    load(editor, SMALL)
    reads = []
    real = rule_editor_module.parse_rules

    def counting(text, **kwargs):
        reads.append(text)
        return real(text, **kwargs)

    monkeypatch.setattr(rule_editor_module, "parse_rules", counting)
    changes = []
    editor.text_changed.connect(changes.append)
    editor.text_edit.moveCursor(QTextCursor.MoveOperation.End)
    qtbot.keyClicks(editor.text_edit, "# twenty more characters")
    assert reads == []
    wait_settled(qtbot, editor)
    qtbot.wait(rule_editor_module.SETTLE_MS + 100)
    assert len(reads) == 1
    assert changes == [editor.text()]
    assert editor.text() == SMALL + "# twenty more characters"


def test_toml_syntax_error_underlined_on_its_line(qtbot, editor):
    """A TOML syntax error is underlined at the line and column its message gives."""
    load(editor, SMALL)
    with qtbot.waitSignal(editor.validity_changed, timeout=3000) as blocker:
        type_over(qtbot, editor, "fast = [10, 20]", "fast = = [10, 20]")
    valid, message = blocker.args
    assert not valid and message.startswith("line 6, column 8: TOML syntax error")
    document = editor.text_edit.toPlainText()
    line_start = document.index("fast = = [")
    assert editor.error_range() == (line_start + 7, line_start + 8)  # the second '='
    block = editor.text_edit.document().findBlock(editor.error_range()[0])
    assert block.blockNumber() + 1 == 6


def test_set_text_with_error_shows_it_and_form_waits(editor):
    """Loading an invalid revision reports it at once; the form shows it has no valid state."""
    with_error = SMALL.replace('name = "Cross"', 'name = "Cross')
    load(editor, with_error)
    # the string runs to the end of line 2, 42 characters long: the line break is column 43
    assert editor.error_message().startswith("line 2, column 43: TOML syntax error")
    assert editor.form.is_out_of_date()
    assert editor.text() == with_error


def test_blank_text_empties_the_form(editor):
    """Loading an empty revision clears the fields and says no valid rule text is there yet."""
    load(editor, SMALL)
    load(editor, "")
    assert editor.form.name_edit.text() == ""
    assert editor.form.parameters_table.rowCount() == 0
    assert editor.form.is_out_of_date()
    assert "No valid rule text" in editor.form.note.text()
    assert "required" in editor.error_message()


# --- where errors point -------------------------------------------------------------------------

DEMO = EXAMPLES[[p.name for p in EXAMPLES].index("demo.toml")].read_text(encoding="utf-8")


def _changed(old: str, new: str) -> str:
    assert DEMO.count(old) == 1
    return DEMO.replace(old, new)


# (the demo file with one error, the text the underline must cover, a unique stretch of the
# text that starts with it, and how far into that stretch it starts)
UNDERLINED = {
    "toml-syntax": (_changed("fast = [16]", "fast = = [16]"), "=", "= [16]", 0),
    "unknown-key": (_changed("days_before_expiry = 5", "days_before_expiri = 5"),
                    "days_before_expiri", "days_before_expiri", 0),
    "bad-value": (_changed("vol_window = 25", "vol_window = 1"), "1", "vol_window = 1", 13),
    "bad-name": (_changed("fast = [16]", "close = [16]"), "close", "close = [16]", 0),
    "missing-key": (_changed("capital = 1_000_000\n", ""), "[sizing]", "[sizing]", 0),
    "expression": (_changed("ewm(close, fast)", "ewm(clsoe, fast)"), "clsoe", "clsoe", 0),
    "expression over lines": (
        _changed('"sign(ewm(close, fast) - ewm(close, slow))"',
                 '"""\nsign(ewm(close, fast)\n     - ewm(clsoe, slow))"""'),
        "clsoe", "clsoe", 0),
    "constraint": (_changed('"fast < slow"', '"fast < slwo"'), "slwo", "slwo", 0),
}


@pytest.mark.parametrize("case", list(UNDERLINED))
def test_editor_underlines_exactly_the_error_span(editor, case):
    """Each kind of error in a real rule file is underlined over exactly the characters it is
    about (found with str.index), and the message names that line and column (Qt's block
    number and position in the block, counted from 1)."""
    text, underlined, anchor, offset = UNDERLINED[case]
    load(editor, text)
    document = editor.text_edit.toPlainText()
    start = document.index(anchor) + offset
    assert editor.error_range() == (start, start + len(underlined))
    assert document[start: start + len(underlined)] == underlined
    block = editor.text_edit.document().findBlock(start)
    where = f"line {block.blockNumber() + 1}, column {start - block.position() + 1}: "
    assert where in editor.error_message()
    assert editor.message.text() == editor.error_message()


def test_error_at_a_line_end_marks_the_whole_line(editor):
    """A string left open at the end of its line has no character to underline: the editor
    marks that whole line (an empty range at the line's end, drawn full width)."""
    text = 'name = "x\nmarkets = ["A"]\n'
    load(editor, text)
    end_of_line = text.index("\n")
    assert editor.error_range() == (end_of_line, end_of_line)
    selection = editor.text_edit.extraSelections()[0]
    assert selection.format.property(QTextFormat.Property.FullWidthSelection) is True
    assert editor.error_message().startswith(f"line 1, column {end_of_line + 1}: ")


def test_file_level_error_is_not_underlined(editor):
    """An error about the text as a whole (a required top-level key missing) has no place in
    the text: nothing is underlined, the message still says what is wrong."""
    load(editor, 'name = "x"\n[signal]\nposition = "close"\n')
    assert editor.error_range() is None
    assert editor.error_message() == "key 'markets': this key is required but missing"


def test_underline_position_counts_like_qt_after_wide_characters(editor):
    """Characters outside the Basic Multilingual Plane count twice in Qt documents (once in
    the error's columns); the underline still sits on the character or word the error is
    about, on a later line and on the same line (expected positions from QTextDocument.find)."""
    head = 'name = "rocket \U0001F680 idea"\nmarkets = ["A"]\n'
    load(editor, head + '[signal]\nposition = "sign(clsoe)"  # \U0001F680\n')
    found = editor.text_edit.document().find("clsoe")
    assert editor.error_range() == (found.selectionStart(), found.selectionEnd())
    load(editor, head.replace("idea\"", "idea\" = 1") + '[signal]\nposition = "close"\n')
    found = editor.text_edit.document().find("= 1")
    assert editor.error_range() == (found.selectionStart(), found.selectionStart() + 1)


@pytest.mark.parametrize("variant", ["byte-order mark", "CRLF line ends"])
def test_underline_in_files_with_a_bom_or_crlf(editor, variant):
    """Qt drops a byte-order mark and splits lines at CRLF; the error's line and column count
    the same way, so the underline sits on the word (expected from QTextDocument.find)."""
    text = UNDERLINED["expression over lines"][0]
    load(editor, "\ufeff" + text if variant == "byte-order mark" else text.replace("\n", "\r\n"))
    found = editor.text_edit.document().find("clsoe")
    assert editor.error_range() == (found.selectionStart(), found.selectionEnd())


# --- keys and modes -----------------------------------------------------------------------------


def test_ctrl_s_emits_save_requested_even_with_a_window_shortcut(qtbot):
    """Ctrl+S inside the editor carries the text, ahead of a window-wide Save shortcut."""
    window = QMainWindow()
    qtbot.addWidget(window)
    editor = RuleEditor()
    window_saves = []
    shortcut = QShortcut(QKeySequence(QKeySequence.StandardKey.Save), window)
    shortcut.activated.connect(lambda: window_saves.append(True))
    window.setCentralWidget(editor)
    window.show()
    load(editor, SMALL)
    editor.text_edit.setFocus()
    with qtbot.waitSignal(editor.save_requested, timeout=2000) as blocker:
        qtbot.keyClick(editor.text_edit, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert blocker.args == [SMALL]
    assert window_saves == []


def test_read_only_blocks_typing_form_and_save(qtbot, editor):
    """Read-only: typing changes nothing, the form is disabled and Ctrl+S sends nothing."""
    load(editor, SMALL)
    editor.set_read_only(True)
    assert editor.is_read_only()
    assert editor.text_edit.isReadOnly()
    assert not editor.form.fields.isEnabled()
    editor.text_edit.moveCursor(QTextCursor.MoveOperation.End)
    with qtbot.assertNotEmitted(editor.save_requested), \
            qtbot.assertNotEmitted(editor.text_changed, wait=400):
        qtbot.keyClicks(editor.text_edit, "typed")
        qtbot.keyClick(editor.text_edit, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert editor.text() == SMALL
    editor.set_read_only(False)
    assert editor.form.fields.isEnabled()


def test_highlighter_marks_functions_and_parameters(editor):
    """Inside the position string, function names and parameter names get their own colours,
    distinct from each other and from plain string text."""
    load(editor, SMALL)
    document = editor.text_edit.document()
    block = document.findBlock(editor.text_edit.toPlainText().index("position"))
    formats = {}
    for rng in block.layout().formats():
        word = block.text()[rng.start: rng.start + rng.length]
        formats[word] = rng.format.foreground().color().name()
    assert formats["sign"] == formats["mean"]
    assert formats["fast"] == formats["slow"]
    assert formats["sign"] != formats["fast"]
    assert formats["close"] not in (formats["sign"], formats["fast"])
    assert editor.highlighter.parameter_names() == {"fast", "slow"}


# --- curve, calendar, other markets and events (issue 9) ----------------------------------------

PAIR = """\
name = "Pair"
markets = ["CRUDE"]
reads = ["GOLD"]  # read, not traded

[signal]
position = 'sign(close - close["GOLD"]) * (carry > 0) * (1 - event("report"))'
"""


def test_function_list_shows_every_function_and_series_with_its_line(editor):
    """The list holds each function of the registry (core/expr/functions.py) and each series
    of core/rules/model.py with its one-line description; double-click inserts the name."""
    from hunchbook.core.rules import SERIES_HELP

    items = [editor.form.functions_list.item(i)
             for i in range(editor.form.functions_list.count())]
    shown = {item.data(Qt.ItemDataRole.UserRole): item.text() for item in items}
    for name, help_text in FUNCTIONS.items():
        assert help_text.partition(": ")[2] in shown[name + "("]
    for name, summary in SERIES_HELP.items():
        assert summary in shown[name]
    assert {"event(", "carry", "next_price", "days_to_month_end", "curve_open_interest"} <= set(
        shown)
    load(editor, SMALL)
    editor.form.position_edit.setText("")
    carry = next(item for item in items if item.data(Qt.ItemDataRole.UserRole) == "carry")
    editor.form.functions_list.itemDoubleClicked.emit(carry)
    assert editor.form.position_edit.text() == "carry"


def test_highlighter_marks_new_series_events_and_market_names(editor):
    """carry is coloured as a series like close, event as a function like sign, and the names
    in quotes ("GOLD", "report") as string text."""
    load(editor, PAIR)
    document = editor.text_edit.document()
    block = document.findBlock(editor.text_edit.toPlainText().index("position"))
    formats = {}
    for rng in block.layout().formats():
        word = block.text()[rng.start: rng.start + rng.length]
        formats[word] = rng.format.foreground().color().name()
    assert formats["carry"] == formats["close"]
    assert formats["event"] == formats["sign"] != formats["close"]
    assert formats['"GOLD"'] == formats['"report"'] == formats["'"]  # the string's own colour


def test_a_market_not_listed_is_underlined(qtbot, editor):
    """close["SILVER"] with SILVER in neither markets nor reads underlines SILVER (str.index)."""
    load(editor, PAIR)
    assert editor.error_message() is None
    with qtbot.waitSignal(editor.validity_changed, timeout=3000) as blocker:
        type_over(qtbot, editor, '"GOLD"])', '"SILVER"])')
    assert blocker.args[0] is False
    start = editor.text_edit.toPlainText().index("SILVER")
    assert editor.error_range() == (start, start + len("SILVER"))
    assert "market 'SILVER' is not listed in markets or reads" in editor.error_message()


def test_form_edits_keep_the_markets_read(editor):
    """A change in the form leaves reads (and its comment) in the text (tomllib reads it)."""
    load(editor, PAIR)
    editor.form.delay_spin.setValue(2)
    reference = tomllib.loads(editor.text())
    assert reference["reads"] == ["GOLD"] and reference["signal"]["delay"] == 2
    assert "# read, not traded" in editor.text()
