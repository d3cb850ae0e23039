"""Write a :class:`RuleSpec` as a rule file, keeping the user's comments and layout when editing."""

from __future__ import annotations

import datetime as dt
import os
from typing import Any

import tomlkit
from tomlkit.container import Container
from tomlkit.exceptions import TOMLKitError
from tomlkit.items import Item, Table

from hunchbook.core.atomic import write_atomically
from hunchbook.core.errors import RuleError
from hunchbook.core.rules.model import ParamRange, RollSpec, RuleSpec, SizingSpec
from hunchbook.core.rules.parse import CONSTRAINT_KEY, parse_rules
from hunchbook.core.rules.roll import (
    ADJUST_KEY,
    DEFAULT_ADJUST,
    DEFAULT_ROLL_RULE,
    SWITCH_KEY,
    roll_rule,
)

_SIZING = SizingSpec()
#: Keys that may stay out of a hand-written file while they hold their default value (a
#: setting only of the default roll rule: another rule's settings are what choose it).
_OMITTABLE: dict[str, Any] = {
    "signal": {"delay": 0},
    "roll": {**{s.key: s.default for s in DEFAULT_ROLL_RULE.settings},
             ADJUST_KEY: DEFAULT_ADJUST.name},
    "sizing": {"contracts": _SIZING.contracts, "vol_window": _SIZING.vol_window},
}
#: Keys the canonical file leaves out while they hold their default value.
_CANONICAL_OMITTABLE: dict[str, Any] = {"signal": {"delay": 0}}
#: Whole floats below this size are written as integers (20, not 20.0).
_EXACT_INTEGER_LIMIT = 2**53


class _Inline(dict):  # type: ignore[type-arg]
    """A table written inline, ``{ start = 1, stop = 5, step = 1 }``."""


def dump_rules(spec: RuleSpec, *, original: str | None = None) -> str:
    """Render a specification as rule-file text.

    Parameters
    ----------
    spec
        The specification to write.
    original
        The hand-written text ``spec`` was loaded from. When given, that document is updated in
        place: only values that differ are rewritten and keys or tables are added or removed as
        needed, so the user's comments and layout survive.

    Returns
    -------
    str
        TOML text; ``parse_rules`` of it gives back ``spec``. Should the original's layout defeat
        an in-place update (tomlkit cannot edit some dotted-key layouts), or the update not mean
        exactly ``spec``, the canonical text is returned instead.

    Raises
    ------
    RuleError
        If ``original`` is not valid TOML, or if ``spec`` does not make a valid rule file.
    """
    canonical = tomlkit.document()
    _merge(canonical, _wanted(spec), _CANONICAL_OMITTABLE)
    text = canonical.as_string()
    try:
        meaning = parse_rules(text)
    except RuleError as err:  # the text is ours, not the user's: no place in it to point at
        raise err.at(None) from None
    if original is None:
        return text
    try:
        document = tomlkit.parse(original.removeprefix("\ufeff"))
    except (TOMLKitError, ValueError, RecursionError) as err:
        raise RuleError(f"the original rule text is not valid TOML: {err}",
                        kind="toml-syntax") from None
    try:
        _merge(document, _wanted(spec), _OMITTABLE)
        _order_parameters(document, spec)
        edited = document.as_string()
        if parse_rules(edited) == meaning:
            return edited
    except Exception:  # tomlkit cannot edit some dotted-key layouts in place: use canonical
        pass
    return text


def write_rules(spec: RuleSpec, path: str | os.PathLike[str], *,
                original: str | None = None) -> None:
    """Write a specification to a rule file atomically (temporary file, then rename).

    Parameters
    ----------
    spec
        The specification to write.
    path
        Destination file; an existing file keeps its permissions.
    original
        The hand-written text to update in place, as for :func:`dump_rules`.

    Raises
    ------
    RuleError
        If the specification is invalid or the file cannot be written; the error names the file.
    """
    name = os.fspath(path)
    try:
        data = dump_rules(spec, original=original).encode("utf-8")
    except RuleError as err:
        raise err.located(file=name) from None
    try:
        write_atomically(name, data)
    except OSError as err:
        raise RuleError(f"cannot write rule file: {err.strerror or err}", file=name,
                        kind="file") from None


def _wanted(spec: RuleSpec) -> dict[str, Any]:
    """The rule file's content as nested plain values, in canonical key order."""
    top: dict[str, Any] = {"name": spec.name, "description": spec.description,
                           "markets": list(spec.markets), "reads": list(spec.reads) or None,
                           "start": spec.start, "end": spec.end}
    parameters: dict[str, Any] = {}
    for parameter in spec.parameters:
        choices = parameter.choices
        parameters[parameter.name] = (
            _Inline(start=choices.start, stop=choices.stop, step=choices.step)
            if isinstance(choices, ParamRange) else list(choices))
    parameters[CONSTRAINT_KEY] = spec.constraint
    top["parameters"] = parameters
    top["signal"] = {"position": spec.position, "delay": spec.delay}
    top["roll"] = {**_roll_choice(spec.roll), ADJUST_KEY: spec.roll.adjust}
    sizing = spec.sizing
    top["sizing"] = ({"contracts": sizing.contracts,
                      **({} if sizing.capital is None else {"capital": sizing.capital})}
                     if sizing.contracts is not None else
                     {"target_vol": sizing.target_vol, "capital": sizing.capital,
                      "vol_window": sizing.vol_window})
    costs: dict[str, Any] = dict(spec.costs.get("*", {}))
    costs.update({market: dict(values) for market, values in spec.costs.items() if market != "*"})
    top["costs"] = costs
    return _without_empty(top)


def _roll_choice(roll: RollSpec) -> dict[str, Any]:
    """The ``[roll]`` keys choosing the rule: its settings, or its switch (an unknown rule is
    written as a switch, which reading then refuses with a clear error)."""
    rule = roll_rule(roll.rule)
    if rule is None or rule.is_switch:
        return {SWITCH_KEY: roll.rule}
    return {s.key: getattr(roll, s.key) for s in rule.settings}


def _without_empty(values: dict[str, Any]) -> dict[str, Any]:
    """Drop ``None`` values and empty tables, recursively."""
    out: dict[str, Any] = {}
    for key, value in values.items():
        if isinstance(value, dict):
            value = type(value)(_without_empty(value))
        if value is not None and value != {}:
            out[key] = value
    return out


def _merge(container: Container | Table, wanted: dict[str, Any],
           omittable: dict[str, Any]) -> None:
    """Make ``container`` hold ``wanted``, touching only what differs."""
    for key in [k for k in container if k not in wanted]:
        del container[key]
    for key, want in wanted.items():
        default = omittable.get(key)
        if key not in container:
            if not _is_default(want, default):
                container[key] = _item(_without_defaults(want, default))
            continue
        have = container[key]
        if _is_table(want) and isinstance(have, dict):
            _merge(have, want, default if isinstance(default, dict) else {})
        elif not _same(_plain(have), want):
            if _is_table(want) or isinstance(have, Table):
                # A value becoming a table or the reverse: re-add so it lands in the right section.
                del container[key]
            container[key] = _item(want)
    if wanted and not list(container):
        for key, want in wanted.items():
            container[key] = _item(want)


def _order_parameters(document: Container, spec: RuleSpec) -> None:
    """Put the parameters in the specification's order (their order is part of the spec)."""
    table = document.get("parameters")
    if table is None:
        return
    present = [k for k in table if k != CONSTRAINT_KEY]
    if present == list(spec.parameter_names):
        return
    for name in (*spec.parameter_names, CONSTRAINT_KEY):
        if name not in table:
            continue
        item = table[name]
        del table[name]
        table[name] = item


def _without_defaults(want: Any, default: Any) -> Any:
    """A new table's content without the keys that hold their default value (if any remain)."""
    if not (_is_table(want) and isinstance(default, dict)):
        return want
    kept = {k: v for k, v in want.items() if not (k in default and _same(v, default[k]))}
    return kept or want


def _is_table(value: Any) -> bool:
    return isinstance(value, dict) and not isinstance(value, _Inline)


def _is_default(want: Any, default: Any) -> bool:
    if _is_table(want):
        return isinstance(default, dict) and all(
            k in default and _same(v, default[k]) for k, v in want.items())
    return default is not None and _same(want, default)


def _plain(value: Any) -> Any:
    return value.unwrap() if isinstance(value, Item | Container) else value


def _same(have: Any, want: Any) -> bool:
    """Whether a value in the file already means ``want`` (20 == 20.0, "2012-01-01" == date)."""
    if isinstance(want, dict):
        return (isinstance(have, dict) and have.keys() == want.keys()
                and all(_same(have[k], v) for k, v in want.items()))
    if isinstance(want, list):
        return (isinstance(have, list) and len(have) == len(want)
                and all(_same(h, w) for h, w in zip(have, want, strict=True)))
    if isinstance(want, dt.date):
        return (type(have) is dt.date and have == want) or have == want.isoformat()
    if isinstance(want, str):
        return isinstance(have, str) and have == want
    return isinstance(have, int | float) and not isinstance(have, bool) and have == want


def _item(value: Any) -> Item:
    """A tomlkit item for a plain value; whole floats become integers."""
    if isinstance(value, _Inline):
        inline = tomlkit.inline_table()
        for key, sub in value.items():
            inline[key] = _item(sub)
        return inline
    if isinstance(value, dict):
        table = tomlkit.table(is_super_table=all(_is_table(v) for v in value.values()))
        for key, sub in value.items():
            table[key] = _item(sub)
        return table
    if isinstance(value, list):
        array = tomlkit.array()
        array.extend(_item(v) for v in value)
        return array
    if isinstance(value, float) and value.is_integer() and abs(value) < _EXACT_INTEGER_LIMIT:
        return tomlkit.integer(int(value))
    return tomlkit.item(value)
