"""The signal expression language: safe parsing and vectorised evaluation.

An expression such as ``sign(mean(close, fast) - mean(close, slow))`` gives a position at the
close of each bar. It is read with :func:`parse_expression`, which accepts only a whitelist of
Python expression syntax (nothing is ever compiled or run), and computed by
:meth:`Expression.evaluate` over arrays of shape (bars, markets).
"""

from hunchbook.core.expr.expression import Expression, parse_expression
from hunchbook.core.expr.functions import FUNCTIONS
from hunchbook.core.expr.limits import MAX_DEPTH, MAX_LENGTH, MAX_NODES, MAX_WINDOW

__all__ = [
    "FUNCTIONS",
    "MAX_DEPTH",
    "MAX_LENGTH",
    "MAX_NODES",
    "MAX_WINDOW",
    "Expression",
    "parse_expression",
]
