"""The kinds of the desk's settings (see :data:`hunchbook.store.vocab.DESK_SETTINGS`): each
kind reads a value given by a person or a program, writes it as the text the append-only
``desk_settings`` table keeps, reads that text back and shows the value in words.

Two kinds: ``on/off`` (stored ``"on"`` / ``"off"``, as every row before typed settings) and
``amount``, a positive amount in the run currency or none (not set), stored as its decimal
text (``"1000000"``, ``"2500.5"``) or ``"none"``.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from hunchbook.core.formats import count
from hunchbook.store.errors import CatalogueError

#: A desk setting's value: on/off, or an amount (None: not set).
SettingValue = bool | float | None


@dataclass(frozen=True)
class SettingKind:
    """How the values of one kind of desk setting are read, stored and shown.

    ``expected`` says in words what a value must be (in the one line refusing a bad one);
    ``verb`` joins the setting and its stored value in the journal (``turned on``,
    ``set to 1000000``).
    """

    name: str
    expected: str
    verb: str
    _parse: Callable[[Any], SettingValue]
    _store: Callable[[SettingValue], str]
    _read: Callable[[str], SettingValue]
    _show: Callable[[SettingValue], str]

    def parse(self, value: Any, key: str) -> SettingValue:
        """A value given for the setting ``key`` (typed, or as text from the command line or
        a field); a bad one raises a one-line :class:`CatalogueError` naming ``key``."""
        try:
            return self._parse(value)
        except (TypeError, ValueError):
            shown = repr(value) if isinstance(value, str) else str(value)
            raise CatalogueError(f"expected {self.expected}, found {shown}", field=key) from None

    def stored(self, value: SettingValue) -> str:
        """The text kept in the ``value`` column."""
        return self._store(value)

    def read(self, text: str) -> SettingValue:
        """The value of a stored text."""
        return self._read(text)

    def show(self, value: SettingValue) -> str:
        """The value in words (``on``, ``1,000,000``, ``not set``)."""
        return self._show(value)


def _switch(value: Any) -> bool:
    if isinstance(value, bool):
        return value
    if isinstance(value, str) and value.strip().lower() in ("on", "off"):
        return value.strip().lower() == "on"
    raise ValueError(value)


def _amount(value: Any) -> float | None:
    if value is None:
        return None
    if isinstance(value, str):
        text = value.strip().replace(",", "").replace("_", "")
        if text.lower() in ("", "none"):
            return None
        value = float(text)
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise TypeError(value)
    amount = float(value)
    if not math.isfinite(amount) or amount <= 0:
        raise ValueError(value)
    return amount


def _amount_text(value: SettingValue) -> str:
    """Plain decimal digits (``1000000``, ``2500.5``, never ``1e+16``)."""
    if value is None:
        return "none"
    text = format(Decimal(repr(float(value))), "f")
    return text.rstrip("0").rstrip(".") if "." in text else text


ON_OFF = SettingKind(
    "on/off", "on or off (true or false)", "turned", _switch,
    lambda v: "on" if v else "off", lambda t: t == "on", lambda v: "on" if v else "off")

AMOUNT = SettingKind(
    "amount", "a positive amount in the run currency (such as 1000000), or none to unset it",
    "set to", _amount, _amount_text, lambda t: None if t == "none" else float(t),
    lambda v: "not set" if v is None else count(float(v)))


@dataclass(frozen=True)
class DeskSettingSpec:
    """One desk setting: its kind, its value until first set, and what it means."""

    kind: SettingKind
    default: SettingValue
    meaning: str
