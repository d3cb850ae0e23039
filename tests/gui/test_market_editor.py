"""The market library editor dialog: computed costs, live edits, validation, save and cancel."""

from __future__ import annotations

import tomllib

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QTextDocumentFragment
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QLineEdit, QMessageBox

from hunchbook.core.markets import parse_market_library, read_market_library
from hunchbook.demo import market_library_text
from hunchbook.gui.widgets.market_editor import (
    COL_COST,
    COL_TICK_VALUE,
    KEYS,
    VALUE_ROLE,
    MarketLibraryDialog,
)

COL = {key: KEYS.index(key) for key in KEYS}


@pytest.fixture(autouse=True)
def discard_answers(monkeypatch):
    """Every "discard changes?" question is answered Discard (a modal box would block the
    test); the questions asked are recorded."""
    asked = []

    def answer(parent, title, *args, **kwargs):
        asked.append(title)
        return QMessageBox.StandardButton.Discard

    monkeypatch.setattr(QMessageBox, "question", staticmethod(answer))
    return asked


@pytest.fixture
def library(tmp_path):
    path = tmp_path / "markets.toml"
    path.write_text(market_library_text(), encoding="utf-8")
    return path


@pytest.fixture
def dialog(qtbot, library):
    widget = MarketLibraryDialog(library)
    qtbot.addWidget(widget)
    widget.show()
    return widget


def _row(dialog, symbol):
    model = dialog.model
    return next(r for r in range(model.rowCount())
                if model.index(r, COL["symbol"]).data() == symbol)


def _shown(label):
    """The text a label shows (its rich text as plain text)."""
    return QTextDocumentFragment.fromHtml(label.text()).toPlainText()


def _type_into_cell(qtbot, dialog, row, key, text):
    """Edit a cell the way a user does: open its editor, type, press Return."""
    index = dialog.model.index(row, COL[key])
    dialog.table.setCurrentIndex(index)
    dialog.table.edit(index)
    editor = next(e for e in dialog.table.findChildren(QLineEdit) if e.isVisible())
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    qtbot.keyClick(editor, Qt.Key.Key_Return)


def _expected_cost(table):
    """Cost per contract per side: fees plus slippage ticks x tick size x multiplier
    (common practice, no source)."""
    fees = table["commission"] + table["exchange_fee"] + table["regulatory_fee"]
    return fees + table["slippage_ticks"] * table["tick_size"] * table["multiplier"]


def test_model_passes_the_model_tester(dialog, qtmodeltester):
    """Qt's own model checks pass on the library model."""
    qtmodeltester.check(dialog.model)


def test_cost_per_contract_shown_for_every_market(dialog, library):
    """Each row's cost equals fees + slippage x tick x multiplier, from the file as read by the
    stdlib TOML reader (the reference); the text shows it with the currency."""
    plain = tomllib.loads(library.read_text(encoding="utf-8"))
    model = dialog.model
    assert model.rowCount() == len(plain)
    for row, (symbol, table) in enumerate(plain.items()):
        assert model.index(row, COL["symbol"]).data() == symbol
        cost = model.index(row, COL_COST)
        assert cost.data(VALUE_ROLE) == pytest.approx(_expected_cost(table))
        amount, currency = cost.data().split()
        assert float(amount) == pytest.approx(_expected_cost(table), abs=0.005)
        assert currency == table["currency"]
        assert model.index(row, COL_TICK_VALUE).data(VALUE_ROLE) == pytest.approx(
            table["tick_size"] * table["multiplier"])


def test_crude_tick_is_ten_dollars(dialog):
    """Crude: 1,000 bbl x $0.01 = $10 per tick (common practice, no source); with 1 tick of
    slippage and fees 0.85 + 1.45 + 0.02 the cost per side is $12.32."""
    row = _row(dialog, "CRUDE")
    assert dialog.model.index(row, COL_TICK_VALUE).data() == "10.00 USD"
    assert dialog.model.index(row, COL_COST).data() == "12.32 USD"


def test_typing_into_a_cell_updates_the_cost_live(qtbot, dialog):
    """Typing 3 ticks of slippage for CRUDE: 2.32 + 3 x 10 = 32.32 (hand computed)."""
    row = _row(dialog, "CRUDE")
    with qtbot.waitSignal(dialog.model.dataChanged, timeout=2000):
        _type_into_cell(qtbot, dialog, row, "slippage_ticks", "3")
    assert dialog.model.index(row, COL["slippage_ticks"]).data() == "3"
    assert dialog.model.index(row, COL_COST).data(VALUE_ROLE) == pytest.approx(32.32)
    assert dialog.model.index(row, COL_COST).data() == "32.32 USD"
    assert dialog.model.is_modified()


@pytest.mark.parametrize(("key", "text", "expected"), [
    ("multiplier", "0", "expected a positive number"),
    ("tick_size", "abc", "expected a positive number, got 'abc'"),
    ("commission", "-1", "expected a number >= 0"),
    ("currency", "", "missing required key"),
])
def test_invalid_value_is_named_and_blocks_save(qtbot, dialog, key, text, expected):
    """An invalid cell shows a message naming market and key, tints the cell, blanks the
    cost and disables Save; putting the value back clears it."""
    row = _row(dialog, "GOLD")
    before = dialog.model.index(row, COL[key]).data()
    dialog.model.setData(dialog.model.index(row, COL[key]), text)
    message = f"market 'GOLD', key '{key}': {expected}"
    assert message in _shown(dialog.problem_label)
    assert dialog.model.index(row, COL[key]).data(Qt.ItemDataRole.ToolTipRole).startswith(
        message)
    assert dialog.model.index(row, COL[key]).data(Qt.ItemDataRole.BackgroundRole) is not None
    assert not dialog.save_button.isEnabled()
    if key != "currency":
        assert dialog.model.index(row, COL_COST).data(VALUE_ROLE) is None
    assert dialog.save() is False
    dialog.model.setData(dialog.model.index(row, COL[key]), before)
    assert dialog.save_button.isEnabled()
    assert "all valid" in _shown(dialog.problem_label)


def test_two_problems_in_one_row_are_both_listed(dialog):
    """Every faulty key of a row is reported, not only the first."""
    row = _row(dialog, "CORN")
    dialog.model.setData(dialog.model.index(row, COL["multiplier"]), "0")
    dialog.model.setData(dialog.model.index(row, COL["slippage_ticks"]), "many")
    problems = dialog.model.problems()
    assert any("market 'CORN', key 'multiplier'" in p for p in problems)
    assert any("market 'CORN', key 'slippage_ticks'" in p for p in problems)
    assert "2 problems" in _shown(dialog.problem_label)


def test_duplicate_or_bad_symbol_blocks_save(dialog):
    """Symbols name price files: duplicates and unsafe characters are refused."""
    row = _row(dialog, "CORN")
    dialog.model.setData(dialog.model.index(row, COL["symbol"]), "GOLD")
    assert "market 'GOLD', key 'symbol': symbol already used on row" in \
        _shown(dialog.problem_label)
    assert not dialog.save_button.isEnabled()
    dialog.model.setData(dialog.model.index(row, COL["symbol"]), "CO/RN")
    assert "key 'symbol'" in _shown(dialog.problem_label)
    dialog.model.setData(dialog.model.index(row, COL["symbol"]), "CORN")
    assert dialog.save_button.isEnabled()


def test_save_keeps_comments_and_reads_back(qtbot, dialog, library):
    """Saving writes the edits (read back by the library reader) and keeps the file's
    comments; the dialog is accepted."""
    row = _row(dialog, "EQIDX")
    _type_into_cell(qtbot, dialog, row, "commission", "0.5")
    _type_into_cell(qtbot, dialog, row, "name", "Index, edited")
    with qtbot.waitSignal(dialog.accepted, timeout=2000):
        qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)
    text = library.read_text(encoding="utf-8")
    assert "# 50 USD x index" in text
    assert "# Invented demo market library" in text
    specs = read_market_library(library)
    assert specs["EQIDX"].commission == 0.5
    assert specs["EQIDX"].name == "Index, edited"
    assert specs["GOLD"] == parse_market_library(market_library_text())["GOLD"]
    assert dialog.result() == QDialog.DialogCode.Accepted


def test_add_and_remove_markets(qtbot, dialog, library):
    """A new market needs its contract size and tick before Save; removing a market drops
    it from the file."""
    qtbot.mouseClick(dialog.add_button, Qt.MouseButton.LeftButton)
    row = dialog.model.rowCount() - 1
    assert dialog.model.index(row, COL["symbol"]).data() == "NEW"
    assert "market 'NEW', key 'multiplier': missing required key" in \
        _shown(dialog.problem_label)
    assert not dialog.save_button.isEnabled()
    for key, value in (("symbol", "ZINC"), ("multiplier", "25"), ("tick_size", "0.5")):
        dialog.model.setData(dialog.model.index(row, COL[key]), value)
    # 0 fees + 1 tick x 0.5 x 25 = 12.5 (hand computed)
    assert dialog.model.index(row, COL_COST).data(VALUE_ROLE) == pytest.approx(12.5)
    dialog.table.selectRow(_row(dialog, "COPPER"))
    assert dialog.remove_button.isEnabled()
    qtbot.mouseClick(dialog.remove_button, Qt.MouseButton.LeftButton)
    assert dialog.save()
    specs = read_market_library(library)
    assert "COPPER" not in specs
    assert specs["ZINC"].cost_per_contract == pytest.approx(12.5)


def test_cancel_asks_before_discarding_edits(qtbot, dialog, library, monkeypatch):
    """With edits, Cancel asks; answering Cancel keeps the dialog open, Discard closes it
    and leaves the file untouched."""
    answers = []
    replies = [QMessageBox.StandardButton.Cancel, QMessageBox.StandardButton.Discard]

    def answer(parent, title, *args, **kwargs):
        answers.append(title)
        return replies[len(answers) - 1]

    monkeypatch.setattr(QMessageBox, "question", staticmethod(answer))
    dialog.model.setData(dialog.model.index(0, COL["multiplier"]), "2000")
    qtbot.mouseClick(dialog.buttons.button(QDialogButtonBox.StandardButton.Cancel),
                     Qt.MouseButton.LeftButton)
    assert dialog.isVisible()
    with qtbot.waitSignal(dialog.rejected, timeout=2000):
        qtbot.keyClick(dialog, Qt.Key.Key_Escape)
    assert answers == ["Discard changes?", "Discard changes?"]
    assert library.read_text(encoding="utf-8") == market_library_text()


def test_cancel_without_edits_does_not_ask(qtbot, dialog, discard_answers):
    """Nothing to lose: no question."""
    with qtbot.waitSignal(dialog.rejected, timeout=2000):
        dialog.reject()
    assert discard_answers == []


def test_file_that_is_not_toml_cannot_be_edited(qtbot, tmp_path):
    """A syntax error is shown and Save stays disabled (the file is never overwritten)."""
    path = tmp_path / "markets.toml"
    path.write_text("[CRUDE\nmultiplier = 1\n", encoding="utf-8")
    widget = MarketLibraryDialog(path)
    qtbot.addWidget(widget)
    assert "Cannot edit this file" in _shown(widget.problem_label)
    assert str(path) in _shown(widget.problem_label)
    assert not widget.save_button.isEnabled()
    assert widget.save() is False
    assert path.read_text(encoding="utf-8") == "[CRUDE\nmultiplier = 1\n"


def test_values_already_invalid_in_the_file_are_shown_to_fix(qtbot, tmp_path):
    """A file with a bad value opens with that value shown as a problem."""
    path = tmp_path / "markets.toml"
    path.write_text('# mine\n[A]\nmultiplier = -5\ntick_size = 1\ncurrency = "USD"\n'
                    "commission = 0\nexchange_fee = 0\nregulatory_fee = 0\n"
                    "slippage_ticks = 1\n", encoding="utf-8")
    widget = MarketLibraryDialog(path)
    qtbot.addWidget(widget)
    assert "market 'A', key 'multiplier': expected a positive number" in \
        _shown(widget.problem_label)
    widget.model.setData(widget.model.index(0, COL["multiplier"]), "5")
    assert widget.save()
    assert path.read_text(encoding="utf-8").startswith("# mine\n")
    assert read_market_library(path)["A"].multiplier == 5.0


def test_new_file_is_created(qtbot, tmp_path):
    """A path that does not exist yet starts empty and Save creates it."""
    path = tmp_path / "markets.toml"
    widget = MarketLibraryDialog(path)
    qtbot.addWidget(widget)
    assert widget.model.rowCount() == 0
    assert not widget.save_button.isEnabled()
    widget.model.add_market()
    for key, value in (("symbol", "AB"), ("multiplier", "10"), ("tick_size", "0.1")):
        widget.model.setData(widget.model.index(0, COL[key]), value)
    assert widget.save()
    assert tomllib.loads(path.read_text(encoding="utf-8"))["AB"]["multiplier"] == 10

