"""Read TOML with tomlkit while noting where each key, value and table header is written.

The positions are string indices into the text read (after any byte-order mark is removed), so
an error found later, when the values are checked, can point at the text it is about.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from tomlkit.exceptions import TOMLKitError
from tomlkit.parser import Parser
from tomlkit.source import Source

#: A stretch of the text as (start, end) string indices, end exclusive.
Stretch = tuple[int, int]


@dataclass(frozen=True)
class Places:
    """Where the parts of a TOML text are written, by dotted key path (``"signal.position"``).

    ``keys`` holds each key of a ``key = value`` pair (dotted keys in full), ``values`` its
    value, ``tables`` each ``[table]`` header and each table made implicitly by a dotted key
    (``signal.position = ...`` makes ``signal``) or an inline table (its key). The first place
    of a path is kept.
    """

    keys: dict[str, Stretch] = field(default_factory=dict)
    values: dict[str, Stretch] = field(default_factory=dict)
    tables: dict[str, Stretch] = field(default_factory=dict)

    def enclosing(self, path: str) -> Stretch | None:
        """The place of ``path`` or, when it is not written, of its nearest enclosing table:
        a header, an inline table's key, or the dotted key that makes it."""
        parts = path.split(".")
        while parts:
            here = ".".join(parts)
            found = self.tables.get(here) or self.keys.get(here)
            if found is not None:
                return found
            parts.pop()
        return None


class TomlPositionError(Exception):
    """A TOML syntax error with the string index where reading stopped."""

    def __init__(self, error: Exception, index: int | None) -> None:
        super().__init__(str(error))
        self.error = error
        self.index = index


def parse_with_places(text: str) -> tuple[dict[str, Any], Places]:
    """Parse TOML text into plain Python values and note where its keys, values and tables are
    written.

    Parameters
    ----------
    text
        TOML text without a byte-order mark.

    Returns
    -------
    tuple
        The document as nested plain values, and the :class:`Places` of its parts.

    Raises
    ------
    TomlPositionError
        For a syntax error, carrying tomlkit's error and the index where it was found (``None``
        when tomlkit gave no position, for example for some repeated tables).
    """
    parser = _RecordingParser(text)
    try:
        data = parser.parse().unwrap()
    except (TOMLKitError, ValueError, RecursionError) as error:
        raise TomlPositionError(error, parser.index_of(error)) from None
    return data, parser.places


class _IndexSource(Source):
    """tomlkit's source text, remembering the syntax errors it created and where."""

    def __init__(self, text: str) -> None:
        super().__init__(text)
        self.created: list[tuple[Exception, int]] = []  # each error made, with its index

    def parse_error(self, *args: Any, **kwargs: Any) -> Any:
        error = super().parse_error(*args, **kwargs)
        self.created.append((error, self._idx))
        return error


class _RecordingParser(Parser):
    """tomlkit's parser, noting the place of each key, value and header as it reads them.

    Headers are full paths; a pair belongs to the last header read, or to the inline tables
    it sits in. Keys read while peeking ahead (tomlkit looks at the next header before it
    reads it) are not noted.
    """

    def __init__(self, text: str) -> None:
        super().__init__(text)
        self._src = _IndexSource(text)
        self.text = text
        self.places = Places()
        self._table: tuple[str, ...] = ()
        self._open: list[tuple[str, ...]] = []  # full paths of the inline tables being read
        self._header_at: int | None = None
        self._peeking = 0
        self._pending: tuple[tuple[str, ...], Stretch] | None = None  # a key awaiting its value

    def index_of(self, error: Exception) -> int | None:
        """The index where tomlkit created ``error``, if it did so through its source."""
        source = self._src
        made = source.created if isinstance(source, _IndexSource) else []
        return next((index for made_error, index in reversed(made) if made_error is error), None)

    def _peek_table(self) -> Any:
        self._peeking += 1
        try:
            return super()._peek_table()
        finally:
            self._peeking -= 1

    def _parse_table(self, *args: Any, **kwargs: Any) -> Any:
        self._header_at = self._idx
        return super()._parse_table(*args, **kwargs)

    def _parse_key(self) -> Any:
        start = self._idx
        key = super()._parse_key()
        if self._peeking:
            return key
        parts = tuple(part.key for part in key)
        stretch = self._trimmed(start, self._idx)
        if self._header_at is not None:
            header, self._header_at = self._header_at, None
            close = 2 if self.text.startswith("[[", header) else 1
            self._table = parts
            self.places.tables.setdefault(".".join(parts), (header, self._idx + close))
        else:
            self._pending = (parts, stretch)
        return key

    def _parse_value(self) -> Any:
        pending, self._pending = self._pending, None
        if pending is None:  # an array element
            return super()._parse_value()
        parts, key = pending
        prefix = self._open[-1] if self._open else self._table
        path = (*prefix, *parts)
        for size in range(len(prefix) + 1, len(path)):
            self.places.tables.setdefault(".".join(path[:size]), key)
        start = self._idx
        self._open.append(path)
        try:
            value = super()._parse_value()
        finally:
            self._open.pop()
        name = ".".join(path)
        self.places.keys.setdefault(name, key)
        self.places.values.setdefault(name, self._trimmed(start, self._idx))
        return value

    def _trimmed(self, start: int, end: int) -> Stretch:
        """``(start, end)`` without the blanks at either end."""
        piece = self.text[start:end]
        lead = len(piece) - len(piece.lstrip(" \t"))
        return start + lead, start + len(piece.rstrip(" \t"))
