"""Rule files: the TOML format, its parser and its writer."""

from hunchbook.core.rules.model import (
    COST_KEYS,
    SERIES_HELP,
    SERIES_NAMES,
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
)
from hunchbook.core.rules.parse import locate_error, parse_rules, read_rule_text, read_rules
from hunchbook.core.rules.roll import (
    ADJUST_METHOD_TABLE,
    ROLL_RULE_TABLE,
    AdjustMethod,
    RollRule,
    RollSetting,
)
from hunchbook.core.rules.write import dump_rules, write_rules

__all__ = [
    "ADJUST_METHOD_TABLE",
    "COST_KEYS",
    "ROLL_RULE_TABLE",
    "SERIES_HELP",
    "SERIES_NAMES",
    "AdjustMethod",
    "Parameter",
    "ParamRange",
    "RollRule",
    "RollSetting",
    "RollSpec",
    "RuleSpec",
    "SizingSpec",
    "dump_rules",
    "locate_error",
    "parse_rules",
    "read_rule_text",
    "read_rules",
    "write_rules",
]
