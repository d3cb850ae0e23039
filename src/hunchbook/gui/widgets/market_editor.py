"""The market library editor: one table row per market, every key editable, the tick value and
the cost per contract computed live, saved atomically with the file's comments kept."""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import tomlkit
from PySide6.QtCore import (
    QAbstractTableModel,
    QModelIndex,
    QPersistentModelIndex,
    Qt,
)
from PySide6.QtGui import QColor, QFont, QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QMessageBox,
    QPushButton,
    QTableView,
    QVBoxLayout,
    QWidget,
)
from tomlkit.exceptions import TOMLKitError

from hunchbook.core.errors import MarketSpecError
from hunchbook.core.markets import (
    LIBRARY_KEY_ORDER,
    MAX_FILE_BYTES,
    MarketSpec,
    parse_market_library,
    write_market_library,
)

#: Editable keys, in column order.
KEYS = ("symbol", *LIBRARY_KEY_ORDER)
#: Keys holding numbers.
NUMBER_KEYS = frozenset({"multiplier", "tick_size", "commission", "exchange_fee",
                         "regulatory_fee", "slippage_ticks"})
#: Column of the computed tick value (tick size x multiplier).
COL_TICK_VALUE = len(KEYS)
#: Column of the computed cost per contract per side.
COL_COST = len(KEYS) + 1
#: Role giving a cell's value as a number (computed columns; None when it cannot be computed).
VALUE_ROLE = Qt.ItemDataRole.UserRole
#: Column headers.
HEADERS = {"symbol": "Symbol", "name": "Name", "sector": "Sector", "multiplier": "Multiplier",
           "tick_size": "Tick size", "currency": "Currency", "commission": "Commission",
           "exchange_fee": "Exchange fee", "regulatory_fee": "Regulatory fee",
           "slippage_ticks": "Slippage (ticks)"}
#: Header tooltips.
HEADER_HELP = {
    "symbol": "Market symbol; its price file is <symbol>.csv",
    "multiplier": "Contract size: currency value of a price move of 1",
    "tick_size": "Smallest price step",
    "currency": "Currency of prices and fees",
    "commission": "Broker commission per contract per side",
    "exchange_fee": "Exchange fee per contract per side",
    "regulatory_fee": "Regulatory fee per contract per side",
    "slippage_ticks": "Assumed slippage per contract per side, in ticks",
}
COST_FORMULA = ("commission + exchange fee + regulatory fee "
                "+ slippage ticks \u00d7 tick size \u00d7 multiplier")
#: A symbol names a price file, so it is limited to file-name-safe characters.
SYMBOL_PATTERN = re.compile(r"[A-Za-z0-9_][A-Za-z0-9_.-]*")
#: Values a row's faulty cells are replaced by while looking for its next problem.
_STAND_IN: dict[str, Any] = {"multiplier": 1.0, "tick_size": 1.0, "currency": "USD",
                             "commission": 0.0, "exchange_fee": 0.0, "regulatory_fee": 0.0,
                             "slippage_ticks": 0.0}
#: Cells of a new market, ready to fill (the contract size and tick are left to the user).
_NEW_MARKET = {"currency": "USD", "commission": "0", "exchange_fee": "0",
               "regulatory_fee": "0", "slippage_ticks": "1"}
#: Tint of cells with a problem (translucent, so it reads on light and dark palettes).
_PROBLEM_TINT = QColor(220, 40, 40, 70)

Index = QModelIndex | QPersistentModelIndex


@dataclass
class MarketRow:
    """One market as the user typed it: text per key, plus keys the editor does not know
    (kept so their problem is reported)."""

    cells: dict[str, str]
    unknown: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class RowCheck:
    """Validation of one row: problems by key and the specification where it is valid."""

    problems: dict[str, str]
    spec: MarketSpec | None
    tick_value: float | None
    cost: float | None


def number_text(value: float) -> str:
    """A number as an editor shows it: 1000 rather than 1000.0, else the shortest exact form."""
    if value.is_integer() and abs(value) < 2**53:
        return str(int(value))
    return repr(value)


def money_text(value: float, currency: str) -> str:
    """An amount with two decimals (more when needed, up to six) and the currency."""
    text = f"{value:,.2f}"
    if round(value, 2) != value:
        text = f"{value:,.6f}".rstrip("0")
    return f"{text} {currency}".strip()


def check_row(row: MarketRow) -> RowCheck:
    """Validate one row's market keys with the library reader, finding every faulty key.

    The row is written as a one-market library and parsed with
    :func:`~hunchbook.core.markets.parse_market_library`; each key it rejects is noted and
    replaced by a stand-in value, until the rest parses.
    """
    table: dict[str, Any] = {**{k: _toml_value(k, t) for k, t in row.cells.items()
                                if k != "symbol"}, **row.unknown}
    table = {k: v for k, v in table.items() if v is not None}
    problems: dict[str, str] = {}
    spec = None
    for _ in range(len(table) + len(_STAND_IN) + 1):
        document = tomlkit.document()
        document["market"] = table
        try:
            spec = parse_market_library(document.as_string())["market"]
            break
        except MarketSpecError as err:
            if err.key is None or err.key in problems:  # not a key's fault: report on the row
                problems["symbol"] = err.problem
                break
            problems[err.key] = err.problem
            if err.key in _STAND_IN:
                table[err.key] = _STAND_IN[err.key]
            else:
                table.pop(err.key, None)
    valid = spec if spec is not None and not problems else None
    tick_value = cost = None
    if spec is not None and not problems.keys() & {"multiplier", "tick_size"}:
        tick_value = spec.tick_value
        if not problems.keys() & NUMBER_KEYS:
            cost = spec.cost_per_contract
    return RowCheck(problems=problems, spec=valid, tick_value=tick_value, cost=cost)


def _toml_value(key: str, text: str) -> Any:
    """A cell's text as the TOML value it stands for (None: leave the key out)."""
    text = text.strip()
    if not text:
        return None
    if key in NUMBER_KEYS:
        try:
            return float(text.replace(",", "")) if _looks_numeric(text) else text
        except ValueError:
            return text
    return text


def _looks_numeric(text: str) -> bool:
    return bool(re.fullmatch(r"[+-]?(\d[\d,_]*\.?\d*|\.\d+)([eE][+-]?\d+)?|[+-]?(inf|nan)",
                             text, flags=re.IGNORECASE))


class MarketLibraryModel(QAbstractTableModel):
    """Markets as editable text per key, validated live; two computed columns.

    A cell edit reports one ``dataChanged``: its row, or every row when a symbol changed
    (duplicates are checked across rows).
    """

    def __init__(self, rows: list[MarketRow], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._rows = rows
        self._saved = [replace(r, cells=dict(r.cells), unknown=dict(r.unknown)) for r in rows]
        self._checks = [check_row(r) for r in rows]
        self._symbol_problems = self._check_symbols()

    # -- Qt overrides -------------------------------------------------------------------------
    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(KEYS) + 2

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if orientation == Qt.Orientation.Vertical:
            return str(section + 1) if role == Qt.ItemDataRole.DisplayRole else None
        if role == Qt.ItemDataRole.DisplayRole:
            if section < len(KEYS):
                return HEADERS[KEYS[section]]
            return "Tick value" if section == COL_TICK_VALUE else "Cost per contract, side"
        if role == Qt.ItemDataRole.ToolTipRole:
            if section < len(KEYS):
                return HEADER_HELP.get(KEYS[section])
            if section == COL_TICK_VALUE:
                return "Computed: tick size \u00d7 multiplier"
            return f"Computed, per contract per side: {COST_FORMULA}"
        return None

    def flags(self, index: Index) -> Qt.ItemFlag:
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        return base | Qt.ItemFlag.ItemIsEditable if index.column() < len(KEYS) else base

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        row, column = index.row(), index.column()
        if column >= len(KEYS):
            return self._computed(row, column, role)
        key = KEYS[column]
        problem = self.problem_at(row, key)
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return self._rows[row].cells.get(key, "")
        if role == Qt.ItemDataRole.ToolTipRole:
            return problem
        if role == Qt.ItemDataRole.BackgroundRole and problem:
            return _PROBLEM_TINT
        if role == Qt.ItemDataRole.TextAlignmentRole and key in NUMBER_KEYS:
            return Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        return None

    def setData(self, index: Index, value: Any,  # noqa: N802
                role: int = Qt.ItemDataRole.EditRole) -> bool:
        if role != Qt.ItemDataRole.EditRole or not index.isValid() or index.column() >= len(KEYS):
            return False
        row, key = index.row(), KEYS[index.column()]
        text = "" if value is None else str(value).strip()
        if self._rows[row].cells.get(key, "") == text:
            return False
        self._rows[row].cells[key] = text
        first = last = row
        if key == "symbol":
            self._symbol_problems = self._check_symbols()
            first, last = 0, len(self._rows) - 1
        else:
            self._checks[row] = check_row(self._rows[row])
        self.dataChanged.emit(self.index(first, 0), self.index(last, COL_COST))
        return True

    # -- editing ------------------------------------------------------------------------------
    def add_market(self) -> int:
        """Append a new market with a free symbol; returns its row."""
        taken = {r.cells.get("symbol", "") for r in self._rows}
        symbol = next(s for s in (f"NEW{n or ''}" for n in range(len(taken) + 1))
                      if s not in taken)
        row = len(self._rows)
        self.beginInsertRows(QModelIndex(), row, row)
        self._rows.append(MarketRow(cells={"symbol": symbol, **_NEW_MARKET}))
        self._checks.append(check_row(self._rows[-1]))
        self._symbol_problems = self._check_symbols()
        self.endInsertRows()
        return row

    def remove_markets(self, rows: list[int]) -> None:
        """Remove the given rows."""
        for row in sorted({r for r in rows if 0 <= r < len(self._rows)}, reverse=True):
            self.beginRemoveRows(QModelIndex(), row, row)
            del self._rows[row]
            del self._checks[row]
            self._symbol_problems = self._check_symbols()
            self.endRemoveRows()

    # -- state --------------------------------------------------------------------------------
    def is_modified(self) -> bool:
        """Whether the markets differ from what was loaded."""
        return self._rows != self._saved

    def problem_at(self, row: int, key: str) -> str | None:
        """The full problem message of one cell (naming market and key), or None."""
        problem = (self._symbol_problems.get(row) if key == "symbol"
                   else self._checks[row].problems.get(key))
        return None if problem is None else f"{self._market_label(row)}, key '{key}': {problem}"

    def problems(self) -> list[str]:
        """Every problem, one line each, in table order."""
        found = [] if self._rows else ["no markets defined (add at least one market)"]
        for row in range(len(self._rows)):
            for key in (*KEYS, *self._rows[row].unknown):
                message = self.problem_at(row, key)
                if message:
                    found.append(message)
        return found

    def specs(self) -> dict[str, MarketSpec]:
        """The markets keyed by symbol, in table order.

        Raises
        ------
        MarketSpecError
            For the first problem, when there is one.
        """
        problems = self.problems()
        if problems:
            raise MarketSpecError(problems[0])
        out = {}
        for row, check in zip(self._rows, self._checks, strict=True):
            symbol = row.cells["symbol"]
            assert check.spec is not None  # no problems means every row parsed
            out[symbol] = replace(check.spec, symbol=symbol)
        return out

    def mark_saved(self) -> None:
        """Take the current markets as the saved state."""
        self._saved = [replace(r, cells=dict(r.cells), unknown=dict(r.unknown))
                       for r in self._rows]

    # -- helpers ------------------------------------------------------------------------------
    def _computed(self, row: int, column: int, role: int) -> Any:
        check = self._checks[row]
        value = check.tick_value if column == COL_TICK_VALUE else check.cost
        currency = self._rows[row].cells.get("currency", "")
        if role == VALUE_ROLE:
            return value
        if role == Qt.ItemDataRole.DisplayRole:
            return "\u2013" if value is None or not math.isfinite(value) else money_text(
                value, currency)
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        if role == Qt.ItemDataRole.FontRole and column == COL_COST:
            font = QFont()
            font.setBold(True)
            return font
        if role == Qt.ItemDataRole.ToolTipRole:
            if value is None:
                return "Fix the problems in this row to compute it"
            return ("tick size \u00d7 multiplier" if column == COL_TICK_VALUE
                    else self._cost_breakdown(row))
        return None

    def _cost_breakdown(self, row: int) -> str:
        cells = self._rows[row].cells
        return (f"{cells['commission']} + {cells['exchange_fee']} + {cells['regulatory_fee']} "
                f"+ {cells['slippage_ticks']} \u00d7 {cells['tick_size']} \u00d7 "
                f"{cells['multiplier']}  ({COST_FORMULA}, per side; a round turn, one buy and "
                "one sell, costs twice this)")

    def _market_label(self, row: int) -> str:
        symbol = self._rows[row].cells.get("symbol", "")
        return f"market '{symbol}'" if symbol else f"row {row + 1}"

    def _check_symbols(self) -> dict[int, str]:
        problems: dict[int, str] = {}
        first_row: dict[str, int] = {}
        for row, market in enumerate(self._rows):
            symbol = market.cells.get("symbol", "")
            if not symbol:
                problems[row] = "expected a market symbol (letters, digits, '_', '.' or '-')"
            elif not SYMBOL_PATTERN.fullmatch(symbol):
                problems[row] = (f"expected letters, digits, '_', '.' or '-' (it names the "
                                 f"price file {symbol}.csv), got {symbol!r}")
            elif symbol in first_row:
                problems[row] = f"symbol already used on row {first_row[symbol] + 1}"
            else:
                first_row[symbol] = row
        for row, check in enumerate(self._checks):
            if "symbol" in check.problems and row not in problems:
                problems[row] = check.problems["symbol"]
        return problems


def load_market_rows(path: Path) -> tuple[list[MarketRow], str | None]:
    """Read a library file into editable rows; (rows, original text) — no text for a new file.

    Values are read as written, valid or not, so the editor can show and fix them.

    Raises
    ------
    MarketSpecError
        When the file cannot be read or is not TOML with one table per market.
    """
    file = str(path)
    if not path.exists():
        return [], None
    try:
        if path.stat().st_size > MAX_FILE_BYTES:
            raise MarketSpecError(f"file is larger than {MAX_FILE_BYTES} bytes", file=file)
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise MarketSpecError("file is not UTF-8 text", file=file) from None
    except OSError as err:
        raise MarketSpecError(f"cannot read the file ({err.strerror or err})", file=file) from None
    try:
        document = tomlkit.parse(text.removeprefix("\ufeff")).unwrap()
    except (TOMLKitError, ValueError) as err:
        raise MarketSpecError(f"not valid TOML ({err})", file=file) from None
    rows = []
    for symbol, table in document.items():
        if not isinstance(table, dict):
            raise MarketSpecError("expected a table of contract specifications", file=file,
                                  market=symbol)
        cells = {"symbol": symbol}
        cells.update({k: _cell_text(v) for k, v in table.items() if k in LIBRARY_KEY_ORDER})
        unknown = {k: v for k, v in table.items() if k not in LIBRARY_KEY_ORDER}
        rows.append(MarketRow(cells=cells, unknown=unknown))
    return rows, text


def _cell_text(value: Any) -> str:
    if isinstance(value, int | float) and not isinstance(value, bool):
        return number_text(float(value))
    if isinstance(value, str):
        return value
    return tomlkit.item(value).as_string()


class MarketLibraryDialog(QDialog):
    """Edit a market library file: markets as rows, computed costs, Save keeps comments."""

    def __init__(self, path: Path, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("marketLibraryDialog")
        self.setWindowTitle(f"Market library \u2014 {path.name}")
        self._path = Path(path)
        try:
            rows, self._original = load_market_rows(self._path)
            load_problem = ""
        except MarketSpecError as err:
            rows, self._original, load_problem = [], None, str(err)
        self.model = MarketLibraryModel(rows, self)

        heading = QLabel(f"<b>{self._path}</b>" + ("" if self._path.exists() else " (new file)"))
        heading.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        help_text = QLabel("Fees and slippage are per contract per side. Cost per contract = "
                           f"{COST_FORMULA}.")
        help_text.setWordWrap(True)
        help_text.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        self.table = QTableView(self)
        self.table.setObjectName("marketTable")
        self.table.setModel(self.model)
        self.table.setAlternatingRowColors(True)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.DoubleClicked
                                   | QAbstractItemView.EditTrigger.EditKeyPressed
                                   | QAbstractItemView.EditTrigger.AnyKeyPressed)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(KEYS.index("name"), QHeaderView.ResizeMode.Stretch)
        header.setMinimumSectionSize(60)
        self.table.setWordWrap(False)
        rows = self.table.verticalHeader()
        rows.setSectionResizeMode(QHeaderView.ResizeMode.Fixed)
        rows.setDefaultSectionSize(self.table.fontMetrics().height() + 10)

        self.add_button = QPushButton("Add market", self)
        self.remove_button = QPushButton("Remove market", self)
        self.add_button.clicked.connect(self._add_market)
        self.remove_button.clicked.connect(self._remove_markets)
        row_buttons = QHBoxLayout()
        row_buttons.addWidget(self.add_button)
        row_buttons.addWidget(self.remove_button)
        row_buttons.addStretch(1)

        self.problem_label = QLabel(self)
        self.problem_label.setObjectName("problemLabel")
        self.problem_label.setWordWrap(True)
        self.problem_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Save
                                        | QDialogButtonBox.StandardButton.Cancel, self)
        self.save_button = self.buttons.button(QDialogButtonBox.StandardButton.Save)
        self.buttons.accepted.connect(self.save)
        self.buttons.rejected.connect(self.reject)

        layout = QVBoxLayout(self)
        layout.addWidget(heading)
        layout.addWidget(help_text)
        layout.addWidget(self.table, 1)
        layout.addLayout(row_buttons)
        layout.addWidget(self.problem_label)
        layout.addWidget(self.buttons)

        self._load_problem = load_problem
        self.model.dataChanged.connect(lambda *_: self._refresh_state())
        self.model.rowsInserted.connect(lambda *_: self._refresh_state())
        self.model.rowsRemoved.connect(lambda *_: self._refresh_state())
        self.table.selectionModel().selectionChanged.connect(self._refresh_state)
        if load_problem:
            self.table.setEnabled(False)
            self.add_button.setEnabled(False)
        self._refresh_state()
        self.resize(1280, 460)

    def save(self) -> bool:
        """Write the library (atomically, keeping comments) and close; False if not possible."""
        if self._load_problem or self.model.problems():
            return False  # the problems are listed above the buttons
        try:
            write_market_library(self.model.specs(), self._path, original=self._original)
        except MarketSpecError as err:
            QMessageBox.warning(self, "Market library not saved", str(err))
            return False
        self.model.mark_saved()
        self.accept()
        return True

    def reject(self) -> None:
        """Close without saving, after confirming when there are edits."""
        if self.model.is_modified() and not self._confirm_discard():
            return
        super().reject()

    def _confirm_discard(self) -> bool:
        answer = QMessageBox.question(
            self, "Discard changes?", "Discard your changes to the market library?",
            QMessageBox.StandardButton.Discard | QMessageBox.StandardButton.Cancel,
            QMessageBox.StandardButton.Cancel)
        return answer == QMessageBox.StandardButton.Discard

    def _add_market(self) -> None:
        row = self.model.add_market()
        index = self.model.index(row, 0)
        self.table.setCurrentIndex(index)
        self.table.scrollTo(index)
        self.table.edit(index)

    def _remove_markets(self) -> None:
        rows = sorted({i.row() for i in self.table.selectionModel().selectedRows()})
        if not rows and self.table.currentIndex().isValid():
            rows = [self.table.currentIndex().row()]
        self.model.remove_markets(rows)

    def _refresh_state(self) -> None:
        self.remove_button.setEnabled(self.table.isEnabled()
                                      and self.table.selectionModel().hasSelection())
        if self._load_problem:
            self._show_problems([f"Cannot edit this file: {self._load_problem}"])
            self.save_button.setEnabled(False)
            return
        problems = self.model.problems()
        self.save_button.setEnabled(not problems)
        self._show_problems(problems)

    def _show_problems(self, problems: list[str]) -> None:
        if not problems:
            count = self.model.rowCount()
            self.problem_label.setText(f"{count} market{'s' if count != 1 else ''}, "
                                       "all valid.")
            return
        shown = problems[:4]
        more = len(problems) - len(shown)
        lines = "".join(f"<br>\u2022 {_escape(p)}" for p in shown)
        tail = f"<br>\u2026 and {more} more" if more else ""
        title = "Fix this to save:" if len(problems) == 1 else \
            f"Fix these {len(problems)} problems to save:"
        self.problem_label.setText(f"<b>{title}</b>{lines}{tail}")


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
