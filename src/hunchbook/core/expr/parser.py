"""Reading expression text into a syntax tree, accepting only a whitelist of Python syntax.

The text is parsed by :func:`ast.parse` (nothing is ever compiled or run), then every node is
checked against the whitelist and rebuilt as a :mod:`hunchbook.core.expr.nodes` tree.
Text in quotes is accepted in two places only: another market's name, ``close["GOLD"]``, and
an event's name, ``event("report")``; both become references to data given by the caller.
"""

from __future__ import annotations

import ast
import math
import warnings
from collections.abc import Collection

from hunchbook.core.errors import RuleError
from hunchbook.core.expr.evaluate import bind
from hunchbook.core.expr.functions import FUNCTION_SPECS, FunctionSpec
from hunchbook.core.expr.limits import MAX_DEPTH, MAX_EXPONENT, MAX_LENGTH, MAX_NODES
from hunchbook.core.expr.nodes import (
    DATA_NODES,
    EVENT_NAME,
    Binary,
    Call,
    Conditional,
    EventRef,
    Logical,
    Node,
    Num,
    ParamRef,
    SeriesRef,
    Unary,
)

_EXPECTED = ('expected numbers, series (another market\'s: close["GOLD"]), parameters, operators '
             "(+ - * / ** % < <= > >= == != and or not), 'a if condition else b' or function "
             "calls")

_ARITHMETIC = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.Pow: "**",
               ast.Mod: "%"}
_COMPARISON = {ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">=", ast.Eq: "==",
               ast.NotEq: "!="}
_UNARY = {ast.USub: "-", ast.UAdd: "+", ast.Not: "not"}
_LOGICAL = {ast.And: "and", ast.Or: "or"}
_REJECTED_OPERATORS = {ast.FloorDiv: "//", ast.MatMult: "@", ast.LShift: "<<", ast.RShift: ">>",
                       ast.BitOr: "|", ast.BitXor: "^", ast.BitAnd: "&", ast.Invert: "~",
                       ast.In: "in", ast.NotIn: "not in", ast.Is: "is", ast.IsNot: "is not"}
_REJECTED_SYNTAX = {
    ast.Attribute: "attribute access with '.'", ast.Slice: "slices", ast.Lambda: "lambda",
    ast.ListComp: "comprehensions", ast.SetComp: "comprehensions", ast.DictComp: "comprehensions",
    ast.GeneratorExp: "comprehensions", ast.JoinedStr: "f-strings",
    ast.FormattedValue: "f-strings", ast.NamedExpr: "assignment with ':='",
    ast.Starred: "unpacking with '*'", ast.List: "lists", ast.Set: "sets", ast.Dict: "dicts",
    ast.Tuple: "several values separated by commas", ast.Await: "await", ast.Yield: "yield",
    ast.YieldFrom: "yield",
}
_SPACE = " \t\f\r\n"


def parse_tree(text: str, series_names: Collection[str], param_names: Collection[str],
               market_names: Collection[str] = ()) -> Node:
    """Parse ``text`` into a checked syntax tree.

    Parameters
    ----------
    text
        The expression.
    series_names, param_names
        The names an expression may use for series and for parameters.
    market_names
        The markets whose series it may read by name (``close["GOLD"]``).

    Raises
    ------
    RuleError
        For anything outside the language or over a size limit, with the 1-based column of the
        offending token where there is one.
    """
    if not isinstance(text, str):
        raise RuleError(f"an expression must be text, got {type(text).__name__}")
    if len(text) > MAX_LENGTH:
        raise RuleError(f"expression is {len(text)} characters long; at most {MAX_LENGTH} are "
                        "allowed", column=MAX_LENGTH + 1)
    body = text.lstrip(_SPACE)
    if not body.strip(_SPACE):
        raise RuleError("expression is empty; " + _EXPECTED)
    positions = _Positions(body, lead=len(text) - len(body))
    try:
        with warnings.catch_warnings():  # e.g. "1if": Python's warning becomes a located error
            warnings.simplefilter("error", SyntaxWarning)
            tree = ast.parse(body, mode="eval")
    except SyntaxError as error:
        column = positions.character_column(error.lineno, error.offset)
        raise RuleError(f"cannot read the expression: {error.msg}", column=column) from None
    except (ValueError, RecursionError, MemoryError, OverflowError):
        raise RuleError("cannot read the expression: it holds characters that are not allowed "
                        "or is nested too deeply") from None
    _check_size(tree.body, positions)
    converter = _Converter(positions, frozenset(series_names), frozenset(param_names),
                           frozenset(market_names))
    return converter.convert(tree.body)


class _Positions:
    """Turns positions reported by :mod:`ast` (line, UTF-8 byte offset) into 1-based columns
    counted in characters from the start of the whole expression text."""

    def __init__(self, body: str, lead: int) -> None:
        self.body = body
        self.lead = lead
        self.line_starts = [0]
        for index, char in enumerate(body):
            if char == "\n" or (char == "\r" and body[index + 1: index + 2] != "\n"):
                self.line_starts.append(index + 1)

    def _line(self, lineno: int) -> tuple[int, str]:
        row = min(max(lineno, 1), len(self.line_starts)) - 1
        start = self.line_starts[row]
        stop = self.line_starts[row + 1] if row + 1 < len(self.line_starts) else len(self.body)
        return start, self.body[start:stop]

    def _clamp(self, index: int) -> int:
        return self.lead + min(max(index, 0), len(self.body)) + 1

    def index(self, lineno: int | None, byte_offset: int | None) -> int:
        """0-based index into the body of a position given as line and UTF-8 byte offset."""
        start, line = self._line(lineno or 1)
        prefix = line.encode("utf-8", "surrogatepass")[: max(byte_offset or 0, 0)]
        return start + len(prefix.decode("utf-8", "ignore"))

    def column(self, node: ast.AST) -> int:
        """1-based column where ``node`` starts."""
        return self._clamp(self.index(getattr(node, "lineno", 1), getattr(node, "col_offset", 0)))

    def character_column(self, lineno: int | None, offset: int | None) -> int:
        """1-based column of a syntax error's position (line, 1-based character offset)."""
        start, _ = self._line(lineno or 1)
        return self._clamp(start + (offset or 1) - 1)

    def quoted(self, node: ast.AST) -> int:
        """Column of the first character inside the quotes of a string literal (its start
        when no quote follows)."""
        start = self.index(getattr(node, "lineno", 1), getattr(node, "col_offset", 0))
        quote = min((i for i in (self.body.find(q, start) for q in "\"'") if i >= 0),
                    default=-1)
        return self._clamp(quote + 1) if quote >= 0 else self._clamp(start)

    def after(self, before: ast.AST, symbol: str, fallback: ast.AST) -> int:
        """Column of the first ``symbol`` (an operator) after the end of ``before``; the start
        of ``fallback`` when there is none."""
        low = self.index(getattr(before, "end_lineno", None), getattr(before, "end_col_offset", 0))
        found = self.body.find(symbol, low)
        return self._clamp(found) if found >= 0 else self.column(fallback)


def _check_size(root: ast.expr, positions: _Positions) -> None:
    """Reject trees over MAX_NODES nodes or MAX_DEPTH levels, without recursion."""
    stack: list[tuple[ast.AST, int]] = [(root, 1)]
    count = 0
    while stack:
        node, depth = stack.pop()
        if isinstance(node, ast.expr):
            count += 1
            if count > MAX_NODES:
                raise RuleError(f"expression has more than {MAX_NODES} parts (numbers, names, "
                                "operators, calls); simplify it", column=positions.column(node))
            if depth > MAX_DEPTH:
                raise RuleError(f"expression is nested more than {MAX_DEPTH} levels deep; "
                                "simplify it", column=positions.column(node))
            depth += 1
        stack.extend((child, depth) for child in ast.iter_child_nodes(node))


def _uses(node: Node, kind: type[Node] | tuple[type[Node], ...]) -> Node | None:
    """The first node of class ``kind`` (or of one of the classes) under ``node``, if any."""
    return next((sub for sub in node.walk() if isinstance(sub, kind)), None)


class _Converter:
    """Checks an :mod:`ast` tree against the whitelist and rebuilds it from our node classes."""

    def __init__(self, positions: _Positions, series: frozenset[str],
                 params: frozenset[str], markets: frozenset[str]) -> None:
        self.positions = positions
        self.series = series
        self.params = params
        self.markets = markets

    def fail(self, problem: str, node: ast.AST | int) -> RuleError:
        column = node if isinstance(node, int) else self.positions.column(node)
        return RuleError(problem, column=column)

    def convert(self, node: ast.expr) -> Node:
        column = self.positions.column(node)
        if isinstance(node, ast.Constant):
            return self.constant(node, column)
        if isinstance(node, ast.Name):
            return self.name(node, column)
        if isinstance(node, ast.UnaryOp):
            return self.unary(node, column)
        if isinstance(node, ast.BinOp):
            return self.binary(node, column)
        if isinstance(node, ast.Compare):
            return self.compare(node, column)
        if isinstance(node, ast.BoolOp):
            operands = tuple(self.convert(value) for value in node.values)
            return Logical(_LOGICAL[type(node.op)], operands, column)
        if isinstance(node, ast.IfExp):
            return Conditional(self.convert(node.test), self.convert(node.body),
                               self.convert(node.orelse), column)
        if isinstance(node, ast.Call):
            return self.call(node, column)
        if isinstance(node, ast.Subscript):
            return self.other_market(node, column)
        what = _REJECTED_SYNTAX.get(type(node), f"'{type(node).__name__}' syntax")
        if isinstance(node, ast.Attribute):
            column = self.positions.after(node.value, ".", node)
        raise self.fail(f"{what} cannot be used here; {_EXPECTED}", column)

    def constant(self, node: ast.Constant, column: int) -> Num:
        value = node.value
        if isinstance(value, bool):
            raise self.fail(f"{value} cannot be used here; write {int(value)} instead", column)
        if isinstance(value, str | bytes):
            raise self.fail("text in quotes cannot be used here, only as a market name, "
                            'close["GOLD"], or an event name, event("report")', column)
        if not isinstance(value, int | float):
            raise self.fail(f"the value {value!r} cannot be used here; {_EXPECTED}", column)
        try:
            number = float(value)
        except OverflowError:
            number = math.inf
        if not math.isfinite(number):
            raise self.fail("number is too large", column)
        return Num(number, column)

    def name(self, node: ast.Name, column: int) -> Node:
        name = node.id
        if name in self.series and name in self.params:
            raise self.fail(f"name '{name}' is both a series and a parameter", column)
        if name in self.series:
            return SeriesRef(name, column)
        if name in self.params:
            return ParamRef(name, column)
        if name in FUNCTION_SPECS:
            raise self.fail(f"'{name}' is a function; call it like "
                            f"{FUNCTION_SPECS[name].signature}", column)
        raise self.fail(f"unknown name '{name}'; {self.available()}", column)

    def available(self) -> str:
        series = ", ".join(sorted(self.series)) or "none"
        params = ", ".join(sorted(self.params)) or "none"
        return f"available series: {series}; parameters: {params}"

    def other_market(self, node: ast.Subscript, column: int) -> SeriesRef:
        """``close["GOLD"]``: a series of a market named in quotes, one of ``self.markets``."""
        series = self.name(node.value, column) if isinstance(node.value, ast.Name) else None
        if not isinstance(series, SeriesRef):
            raise self.fail('only a series can be read from another market, like close["GOLD"]',
                            column)
        market = self.quoted_text(node.slice, f'the market in {series.name}[...]',
                                  f'{series.name}["GOLD"]')
        if market not in self.markets:
            listed = ", ".join(sorted(self.markets)) or "none"
            raise self.fail(f"market {market!r} is not listed in markets or reads (listed: "
                            f"{listed}); add the markets a rule reads but does not trade to "
                            "reads = [...]", self.positions.quoted(node.slice))
        return SeriesRef(series.name, column, market)

    def quoted_text(self, node: ast.expr, what: str, example: str) -> str:
        """The text of a string literal naming a market or an event."""
        if not (isinstance(node, ast.Constant) and isinstance(node.value, str)):
            raise self.fail(f"{what} must be a name in quotes, like {example}", node)
        return node.value

    def event(self, node: ast.Call) -> EventRef:
        """``event("name")``: the event's dates, given as data by the caller; its column is
        the name's, where an error about the event (unknown to the data) points."""
        argument = node.args[0]
        name = self.quoted_text(argument, "the name in event(...)", 'event("report")')
        if not EVENT_NAME.match(name):
            raise self.fail("an event name is made of letters, digits, spaces, '_', '.' or '-' "
                            f"and does not start or end with a space, found {name!r}",
                            self.positions.quoted(argument))
        return EventRef(name, self.positions.quoted(argument))

    def unary(self, node: ast.UnaryOp, column: int) -> Unary:
        op = type(node.op)
        if op not in _UNARY:
            raise self.fail(f"operator '{_REJECTED_OPERATORS[op]}' is not allowed; {_EXPECTED}",
                            column)
        return Unary(_UNARY[op], self.convert(node.operand), column)

    def binary(self, node: ast.BinOp, column: int) -> Binary:
        op = type(node.op)
        if op not in _ARITHMETIC:
            symbol = _REJECTED_OPERATORS.get(op, op.__name__)
            where = self.positions.after(node.left, symbol, node)
            raise self.fail(f"operator '{symbol}' is not allowed; {_EXPECTED}", where)
        left, right = self.convert(node.left), self.convert(node.right)
        if op is ast.Pow and not _uses(right, DATA_NODES) and not _uses(right, ParamRef):
            exponent = _constant_value(right)
            if not abs(exponent) <= MAX_EXPONENT:
                raise self.fail(f"a constant exponent must be between -{MAX_EXPONENT} and "
                                f"{MAX_EXPONENT}, got {exponent:g}", right.column)
        return Binary(_ARITHMETIC[op], left, right, column)

    def compare(self, node: ast.Compare, column: int) -> Node:
        operands = [node.left, *node.comparators]
        pairs: list[Node] = []
        converted = [self.convert(operand) for operand in operands]
        for index, op in enumerate(node.ops):
            kind = type(op)
            if kind not in _COMPARISON:
                symbol = _REJECTED_OPERATORS.get(kind, kind.__name__)
                where = self.positions.after(operands[index], symbol.split()[0], node)
                raise self.fail(f"operator '{symbol}' is not allowed; {_EXPECTED}", where)
            pairs.append(Binary(_COMPARISON[kind], converted[index], converted[index + 1],
                                converted[index].column))
        return pairs[0] if len(pairs) == 1 else Logical("and", tuple(pairs), column)

    def call(self, node: ast.Call, column: int) -> Call | EventRef:
        if not isinstance(node.func, ast.Name):
            raise self.fail("only built-in functions called by name are allowed, like "
                            "mean(close, 20)", node.func)
        name = node.func.id
        spec = FUNCTION_SPECS.get(name)
        if spec is None:
            known = ", ".join(sorted(FUNCTION_SPECS))
            what = "is not a function" if name in self.series | self.params else (
                "is not a known function")
            raise self.fail(f"'{name}' {what}; functions are: {known}", node.func)
        if node.keywords:
            raise self.fail(f"{name}() takes positional arguments only: {spec.signature}",
                            node.keywords[0])
        for arg in node.args:
            if isinstance(arg, ast.Starred):
                raise self.fail(f"unpacking with '*' is not allowed in {spec.signature}", arg)
        if len(node.args) != len(spec.args):
            count = len(spec.args)
            raise self.fail(f"{name}() takes {count} argument{'s' if count > 1 else ''}, "
                            f"{spec.signature}, but {len(node.args)} "
                            f"{'was' if len(node.args) == 1 else 'were'} given", column)
        if spec.compute is None:
            return self.event(node)
        args = tuple(self.convert(arg) for arg in node.args)
        if spec.is_series_function:
            self.check_series_call(spec, args)
        return Call(name, args + self.implied(spec, args, column), column)

    def implied(self, spec: FunctionSpec, args: tuple[Node, ...],
                column: int) -> tuple[Node, ...]:
        """What a function reads besides its arguments (``close`` for ``stop``)."""
        if spec.implied is None:
            return ()
        nodes = spec.implied(args, column)
        for node in nodes:
            for sub in node.walk():
                if isinstance(sub, SeriesRef) and sub.name not in self.series:
                    raise self.fail(f"{spec.signature} reads the series '{sub.name}', which "
                                    "is not available here", column)
        return nodes

    def check_series_call(self, spec: FunctionSpec, args: tuple[Node, ...]) -> None:
        x = args[0]
        if not _uses(x, DATA_NODES):
            raise self.fail(f"the first argument of {spec.signature} must depend on a series "
                            f"({', '.join(sorted(self.series)) or 'none available'}), "
                            "not only on numbers and parameters", x.column)
        if not spec.is_window:
            return
        window = args[spec.window_index]
        series = _uses(window, DATA_NODES)
        if isinstance(series, SeriesRef | EventRef):
            hint = ""
            if spec.name in ("max", "min"):
                hint = f"; for the {spec.name}imum of two values use {spec.name}imum(a, b)"
            raise self.fail(f"the {spec.window_label} of {spec.signature} must be built from "
                            f"numbers and parameters only, not the series '{series.key}'"
                            f"{hint}", series.column)
        if not _uses(window, ParamRef):
            problem = spec.window_problem(_constant_value(window))
            if problem:
                raise self.fail(problem, window.column)


def _constant_value(node: Node) -> float:
    """The value of a sub-expression made of numbers only."""
    bound = bind(node, {})
    assert isinstance(bound, Num)
    return bound.value
