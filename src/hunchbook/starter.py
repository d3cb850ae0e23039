"""The starter rule file an idea without rules begins from, and how to tell it is still unedited.

The text comes from ``resources/starter-rules.template`` (a :class:`string.Template` with the
placeholders ``$title``, ``$markets`` and ``$markets_note``). A quick run of the unedited
starter, or accepting an idea whose only rule file is the starter, would record a placeholder
as the idea: both are refused with :data:`STARTER_HINT`.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from functools import cache
from string import Template

from hunchbook.resources import read_resource

#: The starter rule file among the resources (a :class:`string.Template`).
STARTER_TEMPLATE = "starter-rules.template"
#: What to fill in before the starter rules may be run or accepted.
STARTER_HINT = ("the rules are still the unedited starter template: write the idea's own "
                "signal under [signal] position, its parameter grid under [parameters] and "
                "its markets, then save them")


def starter_rules(title: str, markets: Sequence[str]) -> str:
    """The starter rule file for an idea with this title and these markets (a comment asks
    for the markets when there are none)."""
    title = title.replace("\\", "\\\\").replace('"', '\\"')
    quoted = ", ".join(f'"{m}"' for m in markets)
    note = "" if quoted else "# Name the markets this idea trades, e.g. [\"CRUDE\"].\n"
    return Template(read_resource(STARTER_TEMPLATE)).substitute(
        title=title, markets=quoted, markets_note=note)


def is_starter(text: str) -> bool:
    """Whether ``text`` is the starter rule file as written, for any title and markets (line
    endings and trailing blanks aside): nobody has edited its signal, grid or anything else."""
    return _starter_pattern().fullmatch(_normal(text)) is not None


def _normal(text: str) -> str:
    lines = text.replace("\r\n", "\n").replace("\r", "\n").split("\n")
    return "\n".join(line.rstrip() for line in lines).strip("\n")


@cache
def _starter_pattern() -> re.Pattern[str]:
    template = _normal(read_resource(STARTER_TEMPLATE))
    pieces = re.split(r"(\$\{?[a-z_]+\}?)", template)
    out = []
    for piece in pieces:
        name = piece.strip("${}") if piece.startswith("$") else None
        if name == "markets_note":
            out.append(r"(?:# Name the markets[^\n]*\n)?")
        elif name is not None:
            out.append(r"[^\n]*")
        else:
            out.append(re.escape(piece))
    return re.compile("".join(out))
