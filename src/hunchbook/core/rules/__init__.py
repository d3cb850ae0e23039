"""Rule files: the TOML format, its parser and its writer."""

from hunchbook.core.rules.model import (
    ADJUST_METHODS,
    COST_KEYS,
    ROLL_RULES,
    SERIES_NAMES,
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
)
from hunchbook.core.rules.parse import parse_rules, read_rules
from hunchbook.core.rules.write import dump_rules, write_rules

__all__ = [
    "ADJUST_METHODS",
    "COST_KEYS",
    "ROLL_RULES",
    "SERIES_NAMES",
    "Parameter",
    "ParamRange",
    "RollSpec",
    "RuleSpec",
    "SizingSpec",
    "dump_rules",
    "parse_rules",
    "read_rules",
    "write_rules",
]
