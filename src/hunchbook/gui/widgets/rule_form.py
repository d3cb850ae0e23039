"""The form half of the spec editor: one field per part of a rule file."""

from __future__ import annotations

import datetime as dt
import math
import re
from collections.abc import Iterable

from PySide6.QtCore import QDate, QStringListModel, Qt, Signal
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QCompleter,
    QDateEdit,
    QFormLayout,
    QFrame,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QListView,
    QListWidget,
    QListWidgetItem,
    QPlainTextEdit,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QSpinBox,
    QStackedWidget,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import FUNCTIONS
from hunchbook.core.rules import (
    COST_KEYS,
    SERIES_HELP,
    SERIES_NAMES,
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
    roll,
)

#: Largest value of the whole-number settings (delay, days before expiry, volatility window).
_MAX_SETTING = 100_000
_COST_LABELS = {"commission": "Commission", "exchange_fee": "Exchange fee",
                "regulatory_fee": "Regulatory fee", "slippage_ticks": "Slippage (ticks)"}
_COLUMNS = ("Name", "Kind", "Values / start", "Stop", "Step")
_NAME, _KIND, _FIRST, _STOP, _STEP = range(5)
_LIST, _RANGE = "values", "range"
_MAX_LISTED = 50
#: Height of the list of functions and series (pixels).
FUNCTIONS_HEIGHT = 150
_SEPARATORS = re.compile(r"[,;\s]+")
_WORD_BEFORE = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
_EXPRESSION_WORDS = ("and", "or", "not", "if", "else")


def number_text(value: float) -> str:
    """A number as the form shows it: whole numbers without a decimal point (20, not 20.0),
    large ones grouped as TOML allows (1_000_000)."""
    if float(value).is_integer() and abs(value) < 2**53:
        return f"{int(value):_}" if abs(value) >= 10_000 else str(int(value))
    return repr(float(value))


def parse_number(text: str, key: str) -> float:
    """Read a number typed into the form (``1_000_000`` and ``1e6`` allowed).

    Raises
    ------
    RuleError
        Naming ``key`` when the text is not a finite number.
    """
    cleaned = text.strip().replace("_", "")
    try:
        value = float(cleaned)
    except ValueError:
        raise RuleError(f"expected a number, found '{text.strip()}'", key=key) from None
    if not math.isfinite(value):
        raise RuleError(f"expected a finite number, found '{text.strip()}'", key=key)
    return float(int(value)) if value.is_integer() and abs(value) < 2**53 else value


class ExpressionEdit(QLineEdit):
    """A one-line expression field that offers function, series and parameter names for the
    word being typed (completing that word only, not the whole line)."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._words = QStringListModel(self)
        self._completer = QCompleter(self._words, self)
        self._completer.setWidget(self)
        self._completer.setCaseSensitivity(Qt.CaseSensitivity.CaseSensitive)
        self._completer.setCompletionMode(QCompleter.CompletionMode.PopupCompletion)
        self._completer.activated.connect(self._complete_word)
        self.textEdited.connect(self._offer_words)

    def set_words(self, words: Iterable[str]) -> None:
        """The names offered while typing."""
        self._words.setStringList(sorted(set(words)))

    def words(self) -> list[str]:
        """The names currently offered."""
        return self._words.stringList()

    def insert_word(self, word: str) -> None:
        """Insert ``word`` at the cursor, replacing the part of it already typed."""
        self._complete_word(word)

    def _current_prefix(self) -> str:
        match = _WORD_BEFORE.search(self.text()[: self.cursorPosition()])
        return match.group() if match else ""

    def _offer_words(self) -> None:
        prefix = self._current_prefix()
        if not prefix:
            self._completer.popup().hide()
            return
        self._completer.setCompletionPrefix(prefix)
        if self._completer.completionCount() == 0 or (
                self._completer.completionCount() == 1
                and self._completer.currentCompletion() == prefix):
            self._completer.popup().hide()
            return
        rect = self.cursorRect()
        rect.setWidth(220)
        self._completer.complete(rect)

    def _complete_word(self, word: str) -> None:
        cursor = self.cursorPosition()
        prefix = self._current_prefix()
        text = self.text()
        start = cursor - len(prefix)
        self.setText(text[:start] + word + text[cursor:])
        self.setCursorPosition(start + len(word))
        self.textEdited.emit(self.text())


class RuleForm(QWidget):
    """Fields for every part of a rule file, filled from a :class:`RuleSpec` and read back as one.

    ``edited`` is emitted when the user changes a field (never when :meth:`set_spec` fills
    them). Values are shown exactly (numbers as typed in the file), so reading the form back
    without changes gives the same specification.
    """

    edited = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._spec: RuleSpec | None = None
        self._loading = False
        self._read_only = False
        self._out_of_date = False
        self._market_choices: list[str] = []
        self._market_order: list[str] = []
        self._shown: dict[str, str] = {}

        self.note = QLabel()
        self.note.setWordWrap(True)
        self.note.setFrameShape(QFrame.Shape.StyledPanel)
        self.note.setContentsMargins(6, 4, 6, 4)
        self.note.setAutoFillBackground(True)
        self.note.setBackgroundRole(QPalette.ColorRole.ToolTipBase)
        self.note.setForegroundRole(QPalette.ColorRole.ToolTipText)
        self.note.hide()
        self.problem = QLabel()
        self.problem.setWordWrap(True)
        self.problem.setStyleSheet("color: #c62828;")
        self.problem.hide()

        self.fields = QWidget()
        fields_layout = QVBoxLayout(self.fields)
        fields_layout.setContentsMargins(0, 0, 6, 0)
        for group in (self._idea_group(), self._parameters_group(), self._signal_group(),
                      self._roll_group(), self._sizing_group(), self._costs_group()):
            fields_layout.addWidget(group)
        fields_layout.addStretch(1)

        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setWidget(self.fields)
        # never narrower than the fields: they are cut on the right, not squeezed, below that
        scroll.setMinimumWidth(self.fields.minimumSizeHint().width()
                               + scroll.verticalScrollBar().sizeHint().width())
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.note)
        layout.addWidget(self.problem)
        layout.addWidget(scroll, 1)
        self._update_enabled()
        self._update_words()

    # --- building -----------------------------------------------------------------------------

    def _idea_group(self) -> QGroupBox:
        group = QGroupBox("Idea")
        form = _form_layout(group)
        self.name_edit = QLineEdit()
        self.name_edit.setToolTip("The idea's name, shown in the catalogue and in reports.")
        self.name_edit.textEdited.connect(self._changed)
        form.addRow("Name", self.name_edit)
        self.description_edit = QPlainTextEdit()
        self.description_edit.setTabChangesFocus(True)
        self.description_edit.setFixedHeight(64)
        self.description_edit.setToolTip("Free text describing the rule (optional).")
        self.description_edit.textChanged.connect(self._changed)
        form.addRow("Description", self.description_edit)
        self.markets_list = QListWidget()
        self.markets_list.setFlow(QListView.Flow.LeftToRight)
        self.markets_list.setWrapping(True)
        self.markets_list.setResizeMode(QListView.ResizeMode.Adjust)
        self.markets_list.setSpacing(2)
        self.markets_list.setFixedHeight(62)
        self.markets_list.setToolTip("Markets traded, as named in the data folder's market "
                                     "library. Tick at least one.")
        self.markets_list.itemChanged.connect(self._market_ticked)
        form.addRow("Markets", self.markets_list)
        self.start_check, self.start_date = _optional_date(
            "First date of P&L rows (signals still warm up on earlier data). Not ticked: the "
            "first date in the data.")
        self.end_check, self.end_date = _optional_date(
            "Last date of P&L rows. Not ticked: the last date in the data.")
        for label, check, date in (("Start", self.start_check, self.start_date),
                                   ("End", self.end_check, self.end_date)):
            check.toggled.connect(date.setEnabled)
            check.toggled.connect(self._changed)
            date.dateChanged.connect(self._changed)
            row = QHBoxLayout()
            row.addWidget(check)
            row.addWidget(date)
            row.addStretch(1)
            form.addRow(label, row)
        return group

    def _parameters_group(self) -> QGroupBox:
        group = QGroupBox("Parameters")
        layout = QVBoxLayout(group)
        self.parameters_table = QTableWidget(0, len(_COLUMNS))
        self.parameters_table.setHorizontalHeaderLabels(_COLUMNS)
        self.parameters_table.verticalHeader().hide()
        self.parameters_table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.parameters_table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        header = self.parameters_table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)  # never elided
        header.setSectionResizeMode(_NAME, QHeaderView.ResizeMode.Stretch)
        header.setMinimumSectionSize(header.fontMetrics().horizontalAdvance("0") * 6)
        self.parameters_table.setMinimumHeight(96)
        self.parameters_table.setMaximumHeight(150)
        self.parameters_table.setToolTip(
            "Each parameter takes either a list of values (\"10, 20, 50\") or a range from "
            "start to stop (included) by step. Every combination is one parameter set.")
        self.parameters_table.itemChanged.connect(self._parameter_item_changed)
        layout.addWidget(self.parameters_table)
        buttons = QHBoxLayout()
        self.add_parameter_button = QPushButton("Add parameter")
        self.add_parameter_button.setToolTip("Add a parameter with one value.")
        self.add_parameter_button.clicked.connect(self._add_parameter)
        self.remove_parameter_button = QPushButton("Remove")
        self.remove_parameter_button.setToolTip("Remove the selected parameter.")
        self.remove_parameter_button.clicked.connect(self._remove_parameter)
        buttons.addWidget(self.add_parameter_button)
        buttons.addWidget(self.remove_parameter_button)
        buttons.addStretch(1)
        layout.addLayout(buttons)
        form = QFormLayout()
        self.constraint_edit = ExpressionEdit()
        self.constraint_edit.setPlaceholderText("optional, e.g. fast < slow")
        self.constraint_edit.setToolTip("A parameter set is run only where this expression over "
                                        "the parameters is true (non-zero).")
        self.constraint_edit.textEdited.connect(self._changed)
        form.addRow("Constraint", self.constraint_edit)
        layout.addLayout(form)
        return group

    def _signal_group(self) -> QGroupBox:
        group = QGroupBox("Signal")
        form = _form_layout(group)
        self.position_edit = ExpressionEdit()
        self.position_edit.setPlaceholderText("e.g. sign(mean(close, fast) - mean(close, slow))")
        self.position_edit.setToolTip("The position per unit of size at each close, computed "
                                      "from price series, parameters and functions.")
        self.position_edit.textEdited.connect(self._changed)
        form.addRow("Position", self.position_edit)
        self.functions_list = QListWidget()
        self.functions_list.setFixedHeight(FUNCTIONS_HEIGHT)
        self.functions_list.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.functions_list.setWordWrap(True)  # each description whole, over lines as needed
        self.functions_list.setTextElideMode(Qt.TextElideMode.ElideNone)
        self.functions_list.setResizeMode(QListView.ResizeMode.Adjust)
        self.functions_list.setUniformItemSizes(False)
        self.functions_list.setToolTip("Functions and series of the expression language; "
                                       "double-click one to insert it into the position. "
                                       'Another market\'s series: close["GOLD"].')
        for name, help_text in FUNCTIONS.items():
            signature, _, summary = help_text.partition(": ")
            item = QListWidgetItem(f"{signature}  -  {summary}")
            item.setData(Qt.ItemDataRole.UserRole, name + "(")
            item.setToolTip(help_text)
            self.functions_list.addItem(item)
        for name, summary in SERIES_HELP.items():
            item = QListWidgetItem(f"{name}  -  series: {summary}")
            item.setData(Qt.ItemDataRole.UserRole, name)
            item.setToolTip(f'{name}: {summary}; another market\'s: {name}["MARKET"]')
            self.functions_list.addItem(item)
        self.functions_list.itemDoubleClicked.connect(self._insert_function)
        form.addRow("Functions", self.functions_list)
        self.delay_spin = QSpinBox()
        self.delay_spin.setRange(0, _MAX_SETTING)
        self.delay_spin.setSuffix(" closes")
        self.delay_spin.setToolTip("Trade this many closes after the position is computed.")
        self.delay_spin.valueChanged.connect(self._changed)
        form.addRow("Delay", self.delay_spin)
        return group

    def _roll_group(self) -> QGroupBox:
        group = QGroupBox("Roll")
        form = _form_layout(group)
        self.roll_combo = QComboBox()
        for rule in roll.ROLL_RULE_TABLE:
            self.roll_combo.addItem(rule.label, rule.name)
            self.roll_combo.setItemData(self.roll_combo.count() - 1, rule.help,
                                        Qt.ItemDataRole.ToolTipRole)
        self.roll_combo.setToolTip("When each market moves from one contract to the next.")
        self.roll_combo.currentIndexChanged.connect(self._roll_rule_changed)
        form.addRow("Rule", self.roll_combo)
        #: One spin box per roll-rule setting, enabled while the chosen rule has that setting.
        self.roll_setting_spins: dict[str, QSpinBox] = {}
        for setting in roll.roll_settings():
            spin = QSpinBox()
            spin.setRange(setting.minimum, _MAX_SETTING)
            spin.setValue(setting.default)
            spin.setSuffix(f" {setting.unit}")
            spin.setSizePolicy(QSizePolicy.Policy.Fixed, QSizePolicy.Policy.Fixed)
            spin.setToolTip(setting.help)
            spin.valueChanged.connect(self._changed)
            self.roll_setting_spins[setting.key] = spin
            form.addRow(setting.label, spin)
        self.adjust_combo = QComboBox()
        for method in roll.ADJUST_METHOD_TABLE:
            self.adjust_combo.addItem(method.label, method.name)
            self.adjust_combo.setItemData(self.adjust_combo.count() - 1,
                                          method.help,
                                          Qt.ItemDataRole.ToolTipRole)
        self.adjust_combo.setToolTip("How earlier prices are shifted at each roll in the series "
                                     "the expressions read.")
        self.adjust_combo.currentIndexChanged.connect(self._changed)
        form.addRow("Adjustment", self.adjust_combo)
        return group

    def _sizing_group(self) -> QGroupBox:
        group = QGroupBox("Sizing")
        form = _form_layout(group)
        self.sizing_combo = QComboBox()
        self.sizing_combo.addItem("Fixed contracts", "fixed")
        self.sizing_combo.addItem("Volatility target", "target")
        self.sizing_combo.setToolTip("How many contracts a position of 1 means.")
        self.sizing_combo.currentIndexChanged.connect(self._sizing_mode_changed)
        form.addRow("Mode", self.sizing_combo)
        self.sizing_stack = QStackedWidget()
        fixed = QWidget()
        fixed_form = _form_layout(fixed, margins=False)
        self.contracts_edit = _number_edit("Contracts per unit of position (> 0; fractions "
                                           "allowed).", "1")
        fixed_form.addRow("Contracts", self.contracts_edit)
        target = QWidget()
        target_form = _form_layout(target, margins=False)
        self.target_vol_edit = _number_edit("Annualised volatility as a fraction of capital "
                                            "(0.15 = 15 %).", "e.g. 0.15")
        self.capital_edit = _number_edit("Capital in the markets' currency.", "e.g. 1_000_000")
        self.vol_window_spin = QSpinBox()
        self.vol_window_spin.setRange(2, _MAX_SETTING)
        self.vol_window_spin.setValue(SizingSpec().vol_window)
        self.vol_window_spin.setSuffix(" bars")
        self.vol_window_spin.setToolTip("Bars of daily price changes used for the volatility "
                                        "estimate.")
        target_form.addRow("Target volatility", self.target_vol_edit)
        target_form.addRow("Capital", self.capital_edit)
        target_form.addRow("Volatility window", self.vol_window_spin)
        for edit in (self.contracts_edit, self.target_vol_edit, self.capital_edit):
            edit.textEdited.connect(self._changed)
        self.vol_window_spin.valueChanged.connect(self._changed)
        self.sizing_stack.addWidget(fixed)
        self.sizing_stack.addWidget(target)
        form.addRow(self.sizing_stack)
        return group

    def _costs_group(self) -> QGroupBox:
        group = QGroupBox("Costs (all markets, per contract per side)")
        form = _form_layout(group)
        self.cost_edits: dict[str, QLineEdit] = {}
        for key in COST_KEYS:
            edit = _number_edit(f"Overrides the market library's {_COST_LABELS[key].lower()} "
                                "for every market; empty keeps the library's figure.",
                                "library figure")
            edit.textEdited.connect(self._changed)
            self.cost_edits[key] = edit
            form.addRow(_COST_LABELS[key], edit)
        self.market_costs_note = QLabel()
        self.market_costs_note.setWordWrap(True)
        self.market_costs_note.hide()
        form.addRow(self.market_costs_note)
        return group

    # --- public -------------------------------------------------------------------------------

    def set_spec(self, spec: RuleSpec | None) -> None:
        """Show ``spec`` in the fields (``None`` empties them); emits no ``edited``."""
        self._loading = True
        try:
            self._spec = spec
            self._fill(spec or RuleSpec(name="", markets=(), position=""))
        finally:
            self._loading = False
        self._update_words()

    def spec(self) -> RuleSpec:
        """The specification the fields describe (not yet validated as a whole).

        Raises
        ------
        RuleError
            When a field cannot be read (a number that is not a number, a blank parameter
            name); the error names the rule-file key of that field.
        """
        kept = self._spec
        name = self._kept_text("name", self.name_edit.text(), kept.name if kept else None)
        description = self._kept_text("description", self.description_edit.toPlainText(),
                                      kept.description if kept else None)
        position = self._kept_text("position", self.position_edit.text(),
                                   kept.position if kept else None)
        constraint = self._kept_text("constraint", self.constraint_edit.text(),
                                     kept.constraint if kept else None)
        sizing = self._read_sizing()
        costs: dict[str, dict[str, float]] = {
            market: dict(values) for market, values in (kept.costs if kept else {}).items()
            if market != "*"}
        common = {key: parse_number(edit.text(), f"costs.{key}")
                  for key, edit in self.cost_edits.items() if edit.text().strip()}
        if common:
            costs = {"*": common, **costs}
        return RuleSpec(
            name=name,
            markets=tuple(self._market_order),
            reads=kept.reads if kept else (),
            position=position,
            parameters=self._read_parameters(),
            constraint=constraint or None,
            delay=self.delay_spin.value(),
            roll=RollSpec(rule=self.roll_combo.currentData(),
                          adjust=self.adjust_combo.currentData(),
                          **{key: spin.value() for key, spin in self.roll_setting_spins.items()}),
            sizing=sizing,
            costs=costs,
            start=_read_date(self.start_check, self.start_date),
            end=_read_date(self.end_check, self.end_date),
            description=description if description or (kept and kept.description == "")
            else None,
        )

    def set_market_choices(self, symbols: Iterable[str]) -> None:
        """Offer these markets in the market list (markets of the shown rule are kept too)."""
        self._market_choices = list(dict.fromkeys(symbols))
        self._loading = True
        try:
            self._fill_markets()
        finally:
            self._loading = False

    def set_out_of_date(self, message: str | None) -> None:
        """Mark the fields as not following the text (``message`` says why) or, with ``None``,
        as up to date."""
        self._out_of_date = message is not None
        self.note.setText(message or "")
        self.note.setVisible(message is not None)
        self._update_enabled()

    def set_problem(self, message: str | None) -> None:
        """Show why the last change in the fields could not be written (``None`` hides it)."""
        self.problem.setText(f"Not written to the text: {message}" if message else "")
        self.problem.setVisible(bool(message))

    def problem_message(self) -> str | None:
        """The shown problem of the fields, or ``None``."""
        return self.problem.text() or None

    def set_read_only(self, read_only: bool) -> None:
        """Let the fields be looked at but not changed."""
        self._read_only = read_only
        self._update_enabled()

    def is_out_of_date(self) -> bool:
        """Whether the fields show an older version than the text."""
        return self._out_of_date

    def market_names(self) -> list[str]:
        """All markets listed (ticked or not), in display order."""
        return [self.markets_list.item(i).text() for i in range(self.markets_list.count())]

    # --- filling ------------------------------------------------------------------------------

    def _fill(self, spec: RuleSpec) -> None:
        self._shown = {"name": spec.name, "description": spec.description or "",
                       "position": spec.position, "constraint": spec.constraint or ""}
        self.name_edit.setText(spec.name)
        if self.description_edit.toPlainText() != (spec.description or ""):
            self.description_edit.setPlainText(spec.description or "")
        self._market_order = list(spec.markets)
        self._fill_markets()
        _set_date(self.start_check, self.start_date, spec.start)
        _set_date(self.end_check, self.end_date, spec.end)
        self.parameters_table.setRowCount(0)
        for parameter in spec.parameters:
            self._append_parameter_row(parameter)
        self.constraint_edit.setText(spec.constraint or "")
        self.position_edit.setText(spec.position)
        for edit in (self.name_edit, self.constraint_edit, self.position_edit):
            if not edit.hasFocus():  # show where the text starts, not where it ends
                edit.setCursorPosition(0)
        self.delay_spin.setValue(spec.delay)
        self.roll_combo.setCurrentIndex(self.roll_combo.findData(spec.roll.rule))
        for key, spin in self.roll_setting_spins.items():
            spin.setValue(getattr(spec.roll, key))
        self._enable_roll_settings()
        self.adjust_combo.setCurrentIndex(self.adjust_combo.findData(spec.roll.adjust))
        sizing = spec.sizing
        fixed = sizing.contracts is not None
        self.sizing_combo.setCurrentIndex(0 if fixed else 1)
        self.sizing_stack.setCurrentIndex(0 if fixed else 1)
        self.contracts_edit.setText(number_text(sizing.contracts) if fixed else "")
        self.target_vol_edit.setText("" if sizing.target_vol is None
                                     else number_text(sizing.target_vol))
        self.capital_edit.setText("" if sizing.capital is None else number_text(sizing.capital))
        self.vol_window_spin.setValue(sizing.vol_window)
        common = spec.costs.get("*", {})
        for key, edit in self.cost_edits.items():
            edit.setText(number_text(common[key]) if key in common else "")
        per_market = sorted(m for m in spec.costs if m != "*")
        self.market_costs_note.setText(
            "Per-market overrides for " + ", ".join(per_market) + " are kept; edit them in the "
            "text." if per_market else "")
        self.market_costs_note.setVisible(bool(per_market))

    def _fill_markets(self) -> None:
        names = list(dict.fromkeys([*self._market_choices, *self._market_order]))
        self.markets_list.clear()
        for name in names:
            item = QListWidgetItem(name)
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            item.setCheckState(Qt.CheckState.Checked if name in self._market_order
                               else Qt.CheckState.Unchecked)
            if name not in self._market_choices and self._market_choices:
                item.setToolTip(f"{name} is not in the market library")
            self.markets_list.addItem(item)

    def _append_parameter_row(self, parameter: Parameter) -> None:
        table = self.parameters_table
        row = table.rowCount()
        table.insertRow(row)
        table.setItem(row, _NAME, QTableWidgetItem(parameter.name))
        choices = parameter.choices
        is_range = isinstance(choices, ParamRange)
        kind = QComboBox()
        kind.addItem("values", _LIST)
        kind.addItem("range", _RANGE)
        kind.setToolTip("values: a list tried in order; range: start to stop (included) by step")
        kind.setCurrentIndex(1 if is_range else 0)
        kind.currentIndexChanged.connect(lambda _=0, box=kind: self._kind_changed(box))
        table.setCellWidget(row, _KIND, kind)
        if isinstance(choices, ParamRange):
            texts = [number_text(choices.start), number_text(choices.stop),
                     number_text(choices.step)]
        else:
            texts = [", ".join(number_text(v) for v in choices), "", ""]
        for column, text in zip((_FIRST, _STOP, _STEP), texts, strict=True):
            table.setItem(row, column, QTableWidgetItem(text))
        self._span_row(row, is_range)

    def _span_row(self, row: int, is_range: bool) -> None:
        table = self.parameters_table
        current = table.columnSpan(row, _FIRST)
        wanted = 1 if is_range else 3
        if current != wanted:
            table.setSpan(row, _FIRST, 1, wanted)

    # --- reading ------------------------------------------------------------------------------

    def _kept_text(self, field: str, text: str, kept: str | None) -> str:
        """The field's text, or the specification's own value when the field still shows it
        (a one-line field cannot show every character a file may hold)."""
        if kept is not None and text == self._shown.get(field):
            return kept
        return text

    def _read_parameters(self) -> tuple[Parameter, ...]:
        table = self.parameters_table
        parameters = []
        for row in range(table.rowCount()):
            name = _cell(table, row, _NAME).strip()
            if not name:
                raise RuleError(f"row {row + 1}: give the parameter a name", key="parameters")
            key = f"parameters.{name}"
            if self._row_kind(row) == _RANGE:
                numbers = []
                for column, part in ((_FIRST, "start"), (_STOP, "stop"), (_STEP, "step")):
                    text = _cell(table, row, column)
                    if not text.strip():
                        raise RuleError(f"give the range's {part}", key=f"{key}.{part}")
                    numbers.append(parse_number(text, f"{key}.{part}"))
                parameters.append(Parameter(name, ParamRange(*numbers)))
            else:
                parts = [p for p in _SEPARATORS.split(_cell(table, row, _FIRST)) if p]
                parameters.append(Parameter(name, tuple(parse_number(p, key) for p in parts)))
        return tuple(parameters)

    def _read_sizing(self) -> SizingSpec:
        if self.sizing_combo.currentData() == "fixed":
            text = self.contracts_edit.text()
            contracts = parse_number(text, "sizing.contracts") if text.strip() else 1.0
            capital = self.capital_edit.text()  # kept: the capital the figures are measured on
            return SizingSpec(contracts=contracts, capital=parse_number(
                capital, "sizing.capital") if capital.strip() else None)
        values = {}
        for key, edit in (("target_vol", self.target_vol_edit), ("capital", self.capital_edit)):
            if not edit.text().strip():
                raise RuleError("volatility-target sizing needs both 'target_vol' and "
                                "'capital'", key=f"sizing.{key}")
            values[key] = parse_number(edit.text(), f"sizing.{key}")
        return SizingSpec(contracts=None, vol_window=self.vol_window_spin.value(), **values)

    def _row_kind(self, row: int) -> str:
        box = self.parameters_table.cellWidget(row, _KIND)
        return box.currentData() if isinstance(box, QComboBox) else _LIST

    # --- reactions ----------------------------------------------------------------------------

    def _changed(self) -> None:
        if not self._loading:
            self.edited.emit()

    def _market_ticked(self, item: QListWidgetItem) -> None:
        if self._loading:
            return
        name = item.text()
        ticked = item.checkState() == Qt.CheckState.Checked
        if ticked and name not in self._market_order:
            self._market_order.append(name)
        elif not ticked and name in self._market_order:
            self._market_order.remove(name)
        self.edited.emit()

    def _parameter_item_changed(self, item: QTableWidgetItem) -> None:
        if self._loading:
            return
        if item.column() == _NAME:
            self._update_words()
        self.edited.emit()

    def _kind_changed(self, box: QComboBox) -> None:
        table = self.parameters_table
        row = next((r for r in range(table.rowCount()) if table.cellWidget(r, _KIND) is box), -1)
        if row < 0 or self._loading:
            return
        is_range = box.currentData() == _RANGE
        self._loading = True
        try:
            self._convert_row(row, is_range)
        finally:
            self._loading = False
        self.edited.emit()

    def _convert_row(self, row: int, is_range: bool) -> None:
        """Turn a row's values into a range covering them, or a range into its values."""
        table = self.parameters_table
        if is_range:
            try:
                values = sorted(parse_number(p, "") for p in
                                _SEPARATORS.split(_cell(table, row, _FIRST)) if p)
            except RuleError:
                values = []
            start, stop = (values[0], values[-1]) if values else (1.0, 1.0)
            step = values[1] - values[0] if len(values) > 1 and values[1] > values[0] else 1.0
            texts = [number_text(start), number_text(stop), number_text(step)]
        else:
            try:
                numbers = [parse_number(_cell(table, row, c), "") for c in (_FIRST, _STOP, _STEP)]
                values = ParamRange(*numbers).values() if numbers[2] > 0 else ()
            except RuleError:
                values = ()
            if len(values) > _MAX_LISTED:
                values = (values[0], values[-1])
            texts = [", ".join(number_text(v) for v in values) or "1", "", ""]
        for column, text in zip((_FIRST, _STOP, _STEP), texts, strict=True):
            table.item(row, column).setText(text)
        self._span_row(row, is_range)

    def _add_parameter(self) -> None:
        taken = {_cell(self.parameters_table, r, _NAME)
                 for r in range(self.parameters_table.rowCount())}
        name = next(f"p{i}" for i in range(1, len(taken) + 2) if f"p{i}" not in taken)
        self._loading = True
        try:
            self._append_parameter_row(Parameter(name, (1.0,)))
        finally:
            self._loading = False
        self.parameters_table.selectRow(self.parameters_table.rowCount() - 1)
        self._update_words()
        self.edited.emit()

    def _remove_parameter(self) -> None:
        rows = self.parameters_table.selectionModel().selectedRows()
        if not rows:
            return
        self.parameters_table.removeRow(rows[0].row())
        self._update_words()
        self.edited.emit()

    def _roll_rule_changed(self) -> None:
        self._enable_roll_settings()
        self._changed()

    def _enable_roll_settings(self) -> None:
        rule = roll.roll_rule(self.roll_combo.currentData())
        used = {s.key for s in rule.settings} if rule is not None else set()
        for key, spin in self.roll_setting_spins.items():
            spin.setEnabled(key in used)

    def _sizing_mode_changed(self) -> None:
        self.sizing_stack.setCurrentIndex(self.sizing_combo.currentIndex())
        self._changed()

    def _insert_function(self, item: QListWidgetItem) -> None:
        if not self.position_edit.isEnabled():
            return
        self.position_edit.setFocus()
        self.position_edit.insert_word(item.data(Qt.ItemDataRole.UserRole))

    def _update_words(self) -> None:
        names = [_cell(self.parameters_table, r, _NAME).strip()
                 for r in range(self.parameters_table.rowCount())]
        names = [n for n in names if n]
        self.position_edit.set_words([*FUNCTIONS, *SERIES_NAMES, *names, *_EXPRESSION_WORDS])
        self.constraint_edit.set_words([*names, *_EXPRESSION_WORDS])

    def _update_enabled(self) -> None:
        self.fields.setEnabled(not (self._read_only or self._out_of_date))


def _form_layout(parent: QWidget, *, margins: bool = True) -> QFormLayout:
    form = QFormLayout(parent)
    form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
    form.setLabelAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
    if not margins:
        form.setContentsMargins(0, 0, 0, 0)
    return form


def _number_edit(tooltip: str, placeholder: str) -> QLineEdit:
    edit = QLineEdit()
    edit.setToolTip(tooltip)
    edit.setPlaceholderText(placeholder)
    return edit


def _optional_date(tooltip: str) -> tuple[QCheckBox, QDateEdit]:
    check = QCheckBox("limit to")
    check.setToolTip(tooltip)
    date = QDateEdit()
    date.setCalendarPopup(True)
    date.setDisplayFormat("yyyy-MM-dd")
    date.setToolTip(tooltip)
    date.setEnabled(False)
    return check, date


def _set_date(check: QCheckBox, edit: QDateEdit, value: dt.date | None) -> None:
    check.setChecked(value is not None)
    edit.setEnabled(value is not None)
    if value is not None:
        edit.setDate(QDate(value.year, value.month, value.day))


def _read_date(check: QCheckBox, edit: QDateEdit) -> dt.date | None:
    if not check.isChecked():
        return None
    date = edit.date()
    return dt.date(date.year(), date.month(), date.day())


def _cell(table: QTableWidget, row: int, column: int) -> str:
    item = table.item(row, column)
    return item.text() if item is not None else ""
