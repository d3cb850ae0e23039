"""Evaluating a syntax tree over arrays of bars.

Evaluation has two steps. :func:`bind` substitutes parameter values, folds every sub-expression
without series into a number and checks each window. :func:`evaluate_bound` then computes the
remaining tree with vectorised numpy over arrays of shape (bars, markets).

Rules for values: comparisons and ``and``/``or``/``not`` give 1.0 or 0.0; ``a if c else b`` gives
``a`` where ``c`` is non-zero and ``b`` where it is zero; any NaN operand gives NaN. Results that
would be infinite (division by zero, overflow, ``log(0)``) become NaN, so every value is either
finite or NaN.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping

import numpy as np

from hunchbook.core.errors import RuleError
from hunchbook.core.expr.cross_section import DateGrid
from hunchbook.core.expr.functions import FUNCTION_SPECS, Value
from hunchbook.core.expr.nodes import (
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

_ARITHMETIC = {"+": np.add, "-": np.subtract, "*": np.multiply, "/": np.true_divide,
               "**": np.power, "%": np.mod}
_COMPARISON = {"<": np.less, "<=": np.less_equal, ">": np.greater, ">=": np.greater_equal,
               "==": np.equal, "!=": np.not_equal}


#: Functions whose result is finite (or NaN) whenever their inputs are: every value here is,
#: since series are read with infinities as NaN and other results pass through ``_finite``.
_NEVER_INFINITE = frozenset({"sign", "abs", "clip", "maximum", "minimum"})


def _finite(value: Value) -> Value:
    """A fresh result with infinities replaced by NaN (a float when it is a scalar)."""
    if np.ndim(value) == 0:
        number = float(value)
        return number if math.isfinite(number) else math.nan
    assert isinstance(value, np.ndarray)
    value[np.isinf(value)] = np.nan
    return value


def _nan_where_any_nan(result: Value, operands: tuple[Value, ...]) -> Value:
    """``result`` as floats, NaN wherever one of ``operands`` is NaN."""
    missing = functools.reduce(np.logical_or, (np.isnan(operand) for operand in operands))
    result = np.where(missing, np.nan, result)
    return float(result) if result.ndim == 0 else result


def _unary(op: str, operand: Value) -> Value:
    if op == "-":
        return np.negative(operand)  # finite in, finite out
    if op == "+":
        return operand
    return _nan_where_any_nan(np.equal(operand, 0), (operand,))


def _binary(op: str, left: Value, right: Value) -> Value:
    if op in _COMPARISON:
        return _nan_where_any_nan(_COMPARISON[op](left, right), (left, right))
    return _finite(_ARITHMETIC[op](left, right))


def _logical(op: str, operands: tuple[Value, ...]) -> Value:
    truths = (np.not_equal(operand, 0) for operand in operands)
    combined = functools.reduce(np.logical_and if op == "and" else np.logical_or, truths)
    return _nan_where_any_nan(combined, operands)


def _conditional(condition: Value, then: Value, otherwise: Value) -> Value:
    chosen = np.where(np.not_equal(condition, 0), then, otherwise)
    return _nan_where_any_nan(chosen, (condition,))


def _param_value(node: ParamRef, params: Mapping[str, float]) -> float:
    if node.name not in params:
        raise RuleError(f"no value given for parameter '{node.name}'", column=node.column)
    value = params[node.name]
    try:
        return float(value)
    except (TypeError, ValueError, OverflowError):
        raise RuleError(f"parameter '{node.name}' must be a number, got {value!r}",
                        column=node.column) from None


def bind(node: Node, params: Mapping[str, float]) -> Node:
    """Substitute parameter values, fold sub-expressions without series, check windows.

    The result is the key for shared sub-results: equal bound nodes compute equal values over
    the same series. Window arguments become whole numbers.

    Raises
    ------
    RuleError
        For a missing or non-numeric parameter, or a window that is not a whole number of bars
        in range, with the column of the offending argument.
    """
    with np.errstate(all="ignore"):
        return _bind(node, params)


def _bind(node: Node, params: Mapping[str, float]) -> Node:
    if isinstance(node, Num | SeriesRef | EventRef):
        return node
    if isinstance(node, ParamRef):
        return Num(_param_value(node, params), node.column)
    if isinstance(node, Unary):
        operand = _bind(node.operand, params)
        if isinstance(operand, Num):
            return Num(_unary(node.op, operand.value), node.column)
        return Unary(node.op, operand, node.column)
    if isinstance(node, Binary):
        left, right = _bind(node.left, params), _bind(node.right, params)
        if isinstance(left, Num) and isinstance(right, Num):
            return Num(_binary(node.op, left.value, right.value), node.column)
        return Binary(node.op, left, right, node.column)
    if isinstance(node, Logical):
        operands = tuple(_bind(operand, params) for operand in node.operands)
        if all(isinstance(operand, Num) for operand in operands):
            return Num(_logical(node.op, tuple(o.value for o in operands)), node.column)
        return Logical(node.op, operands, node.column)
    if isinstance(node, Conditional):
        condition = _bind(node.condition, params)
        if isinstance(condition, Num):
            if math.isnan(condition.value):
                return Num(math.nan, node.column)
            return _bind(node.then if condition.value != 0 else node.otherwise, params)
        then, otherwise = _bind(node.then, params), _bind(node.otherwise, params)
        return Conditional(condition, then, otherwise, node.column)
    assert isinstance(node, Call)
    spec = FUNCTION_SPECS[node.function]
    window = None
    if spec.is_window:  # checked first: implied arguments may hold the window too
        bound = _bind(node.args[spec.window_index], params)
        assert isinstance(bound, Num)
        problem = spec.window_problem(bound.value)
        if problem:
            raise RuleError(problem, column=node.args[spec.window_index].column)
        window = Num(float(round(bound.value)))
    args = tuple(window if window is not None and i == spec.window_index else _bind(arg, params)
                 for i, arg in enumerate(node.args))
    if spec.is_series_function or not all(isinstance(arg, Num) for arg in args):
        return Call(node.function, args, node.column)
    return Num(_finite(spec.compute(*(arg.value for arg in args))), node.column)


def lookback(node: Node) -> int:
    """Bars before the first bar on which a bound tree can have a value (NaN-free data)."""
    below = tuple(lookback(child) for child in node.children())
    if isinstance(node, Call) and FUNCTION_SPECS[node.function].is_window:
        spec = FUNCTION_SPECS[node.function]
        window = node.args[spec.window_index]
        assert isinstance(window, Num)
        return spec.lookback(below, int(window.value))
    return max(below, default=0)


def evaluate_bound(node: Node, series: Mapping[str, np.ndarray], shape: tuple[int, ...],
                   cache: dict | None, date_index: np.ndarray | DateGrid | None = None) -> Value:
    """Compute a bound tree over ``series`` (finite-or-NaN, read-only arrays of ``shape``).

    Results of series functions (``mean``, ``lag``, ``hold``, ``cs_rank``, ...) are looked up
    in and stored into ``cache`` (read-only) when one is given. ``date_index`` places each cell
    on a shared axis of dates for the cross-sectional functions (or is a
    :class:`~hunchbook.core.expr.cross_section.DateGrid` built from one).
    """
    grid = date_index if isinstance(date_index, DateGrid) else DateGrid(shape, date_index)
    with np.errstate(all="ignore"):
        return _evaluate(node, series, shape, cache, grid)


def _evaluate(node: Node, series: Mapping[str, np.ndarray], shape: tuple[int, ...],
              cache: dict | None, grid: DateGrid) -> Value:
    if isinstance(node, Num):
        return node.value
    if isinstance(node, SeriesRef | EventRef):
        return series[node.key]
    cached = (cache is not None and isinstance(node, Call)
              and FUNCTION_SPECS[node.function].is_series_function)
    if cached and node in cache:
        return cache[node]
    values = tuple(_evaluate(child, series, shape, cache, grid) for child in node.children())
    if isinstance(node, Unary):
        return _unary(node.op, values[0])
    if isinstance(node, Binary):
        return _binary(node.op, values[0], values[1])
    if isinstance(node, Logical):
        return _logical(node.op, values)
    if isinstance(node, Conditional):
        return _conditional(*values)
    assert isinstance(node, Call)
    spec = FUNCTION_SPECS[node.function]
    if node.function in _NEVER_INFINITE:
        return spec.compute(*values)
    if not spec.is_series_function:
        return _finite(spec.compute(*values))
    args: list = [np.broadcast_to(value, shape) for value in values]
    if spec.is_window:
        args[spec.window_index] = int(values[spec.window_index])
    if spec.cross_sectional:
        args.insert(0, grid)
    result = _finite(spec.compute(*args))
    assert isinstance(result, np.ndarray)
    if cached:
        result.flags.writeable = False
        cache[node] = result
    return result
