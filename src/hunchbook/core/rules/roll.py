"""The roll rules and back-adjustment methods: the one place that names them.

The rule-file parser and writer, the continuous-series builder and the rule form all read these
records. A roll rule that chooses contracts in a known way (a number of business days before
expiry, or a switch on a data column) is added here alone; a new way of choosing also needs its
computation in :mod:`hunchbook.core.continuous`.

In a rule file, ``[roll]`` chooses a rule by giving one of its settings
(``days_before_expiry = 7``) or, for a switch, by ``switch = "<rule name>"``; with neither, the
first rule below applies with its defaults. ``adjust`` names the back-adjustment method.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

#: The ``[roll]`` key naming a switch rule.
SWITCH_KEY = "switch"
#: The ``[roll]`` key naming the back-adjustment method.
ADJUST_KEY = "adjust"


@dataclass(frozen=True)
class RollSetting:
    """A whole-number setting of a roll rule, written in ``[roll]`` as ``key = N``.

    ``key`` is also the :class:`~hunchbook.core.rules.model.RollSpec` field holding the value;
    ``unit`` is shown after the number in the form, ``help`` in tooltips.
    """

    key: str
    label: str
    default: int
    minimum: int
    unit: str
    help: str


@dataclass(frozen=True)
class RollRule:
    """One way of choosing the contract held on each date.

    ``name`` is the value of ``RollSpec.rule`` (and, for a switch, of ``switch`` in the file);
    ``label`` names it in the form and ``help`` says in one sentence what it does. ``method`` is
    how contracts are chosen: ``"expiry"`` holds each contract until a number of business days
    before its expiry, ``"switch"`` moves to the next contract once its figure in data
    ``column`` is the larger. ``settings`` are the rule's own settings.
    """

    name: str
    label: str
    help: str
    method: Literal["expiry", "switch"]
    column: str | None = None
    settings: tuple[RollSetting, ...] = ()

    def __post_init__(self) -> None:
        if self.is_switch != (self.column is not None):
            raise ValueError(f"roll rule '{self.name}': a switch, and only a switch, names the "
                             "data column it compares")

    @property
    def is_switch(self) -> bool:
        """Whether the file chooses this rule with ``switch = "<name>"``."""
        return self.method == "switch"


@dataclass(frozen=True)
class AdjustMethod:
    """A back-adjustment of the series the rules read (P&L never uses it).

    ``label`` names it in the form, ``help`` says in one sentence what it does;
    ``needs_positive_prices``: the method divides by prices, so every price it reads must be > 0.
    """

    name: str
    label: str
    help: str
    needs_positive_prices: bool = False


DAYS_BEFORE_EXPIRY = RollSetting(
    key="days_before_expiry", label="Days before expiry", default=5, minimum=0,
    unit="business days", help="Roll this many business days before the held contract's expiry.")

#: Every roll rule; the first is the one a file gets when ``[roll]`` chooses none.
ROLL_RULE_TABLE: tuple[RollRule, ...] = (
    RollRule("days_before_expiry", "Days before expiry",
             "Roll a fixed number of business days before expiry.", "expiry",
             settings=(DAYS_BEFORE_EXPIRY,)),
    RollRule("volume", "Switch on volume",
             "Roll when the next contract's volume exceeds the held one's.", "switch",
             column="volume"),
    RollRule("open_interest", "Switch on open interest",
             "Roll when the next contract's open interest exceeds the held one's.", "switch",
             column="open_interest"),
)

#: Every back-adjustment method; the first is the default.
ADJUST_METHOD_TABLE: tuple[AdjustMethod, ...] = (
    AdjustMethod("difference", "Difference (add the gap)",
                 "Earlier prices are shifted by the gap at each roll."),
    AdjustMethod("ratio", "Ratio (scale by new/old)",
                 "Earlier prices are multiplied by new / old at each roll.",
                 needs_positive_prices=True),
    AdjustMethod("none", "None (keep the jumps)", "Prices are left as traded, jumps included."),
)

DEFAULT_ROLL_RULE = ROLL_RULE_TABLE[0]
DEFAULT_ADJUST = ADJUST_METHOD_TABLE[0]

# The look-ups below read the tables on every call, so everything that uses them follows the
# tables as they are (a test may extend them).


def roll_rule(name: str) -> RollRule | None:
    """The roll rule called ``name``, or ``None`` when there is none."""
    return next((rule for rule in ROLL_RULE_TABLE if rule.name == name), None)


def adjust_method(name: str) -> AdjustMethod | None:
    """The back-adjustment method called ``name``, or ``None`` when there is none."""
    return next((method for method in ADJUST_METHOD_TABLE if method.name == name), None)


def switch_rule_names() -> tuple[str, ...]:
    """Names of the rules a file chooses with ``switch = "<name>"``."""
    return tuple(rule.name for rule in ROLL_RULE_TABLE if rule.is_switch)


def adjust_method_names() -> tuple[str, ...]:
    """Names of the back-adjustment methods, in table order."""
    return tuple(method.name for method in ADJUST_METHOD_TABLE)


def roll_settings() -> tuple[RollSetting, ...]:
    """Every roll setting once, in table order."""
    return tuple({s.key: s for rule in ROLL_RULE_TABLE for s in rule.settings}.values())


def roll_keys() -> tuple[str, ...]:
    """Every key a ``[roll]`` table may hold."""
    return (*(s.key for s in roll_settings()), SWITCH_KEY, ADJUST_KEY)
