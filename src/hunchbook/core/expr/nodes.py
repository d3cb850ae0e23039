"""The syntax tree of an expression: small frozen, hashable node classes.

Equality and hashing ignore ``column`` (where the node starts in the text), so two nodes that
compute the same thing compare equal. After parameter substitution a node is therefore a key for
its computed value that is shared between expressions and parameter sets.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass, field

#: What an event name may be (in ``event("name")`` and in a data folder's events file):
#: letters, digits, spaces, ``_``, ``.`` and ``-``, not starting or ending with a space.
EVENT_NAME = re.compile(r"[A-Za-z0-9_.\-](?:[A-Za-z0-9_.\- ]*[A-Za-z0-9_.\-])?\Z")


@dataclass(frozen=True, slots=True)
class Node:
    """Base class of all nodes; ``column`` is the 1-based column where the node starts."""

    def children(self) -> tuple[Node, ...]:
        """The direct sub-expressions of this node."""
        return ()

    def walk(self) -> Iterator[Node]:
        """This node and all nodes below it, parents before children."""
        yield self
        for child in self.children():
            yield from child.walk()


@dataclass(frozen=True, slots=True)
class Num(Node):
    """A number."""

    value: float
    column: int = field(default=0, compare=False)


@dataclass(frozen=True, slots=True)
class SeriesRef(Node):
    """A series given by the caller, such as ``close``, or another market's, ``close["GOLD"]``
    (``market`` set): its value on each trading market's dates is the last one known there."""

    name: str
    column: int = field(default=0, compare=False)
    market: str | None = None

    @property
    def key(self) -> str:
        """The name of the values in the series mapping: ``close`` or ``close["GOLD"]``."""
        return self.name if self.market is None else f'{self.name}["{self.market}"]'


@dataclass(frozen=True, slots=True)
class EventRef(Node):
    """``event("name")``: 1 on the dates the data folder lists that event for a market, else 0.

    Its values, like a series', are given by the caller under :attr:`key`. ``column`` is that
    of the name inside the quotes, where errors about the event point.
    """

    event: str
    column: int = field(default=0, compare=False)

    @property
    def key(self) -> str:
        """The name of the values in the series mapping: ``event("name")``."""
        return f'event("{self.event}")'


#: Nodes whose values are data given by the caller (looked up by their ``key``).
DATA_NODES = (SeriesRef, EventRef)


@dataclass(frozen=True, slots=True)
class ParamRef(Node):
    """A parameter whose value is given when the expression is evaluated."""

    name: str
    column: int = field(default=0, compare=False)


@dataclass(frozen=True, slots=True)
class Unary(Node):
    """``-x``, ``+x`` or ``not x``; ``op`` is ``"-"``, ``"+"`` or ``"not"``."""

    op: str
    operand: Node
    column: int = field(default=0, compare=False)

    def children(self) -> tuple[Node, ...]:
        return (self.operand,)


@dataclass(frozen=True, slots=True)
class Binary(Node):
    """Arithmetic (``+ - * / ** %``) or a comparison (``< <= > >= == !=``) of two values."""

    op: str
    left: Node
    right: Node
    column: int = field(default=0, compare=False)

    def children(self) -> tuple[Node, ...]:
        return (self.left, self.right)


@dataclass(frozen=True, slots=True)
class Logical(Node):
    """``a and b and ...`` or ``a or b or ...``; ``op`` is ``"and"`` or ``"or"``."""

    op: str
    operands: tuple[Node, ...]
    column: int = field(default=0, compare=False)

    def children(self) -> tuple[Node, ...]:
        return self.operands


@dataclass(frozen=True, slots=True)
class Conditional(Node):
    """``then if condition else otherwise``."""

    condition: Node
    then: Node
    otherwise: Node
    column: int = field(default=0, compare=False)

    def children(self) -> tuple[Node, ...]:
        return (self.condition, self.then, self.otherwise)


@dataclass(frozen=True, slots=True)
class Call(Node):
    """A call of a built-in function by name with positional arguments."""

    function: str
    args: tuple[Node, ...]
    column: int = field(default=0, compare=False)

    def children(self) -> tuple[Node, ...]:
        return self.args
