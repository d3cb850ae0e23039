"""Importing futures prices in the shapes desks have into a data folder (see
``docs/data-import.md``): one file per contract named with the month codes, one file per
market, one long file with a market column; CSV with any delimiter, date format and column
names, or Parquet."""

from hunchbook.core.data_import.contracts import (
    DEFAULT_PATTERN,
    EXPIRY_RULES,
    MONTH_CODES,
    expiry_from_rule,
    parse_contract_name,
    pattern_regex,
)
from hunchbook.core.data_import.importer import ImportReport, import_again, import_data
from hunchbook.core.data_import.settings import SETTINGS_FILE, ImportSettings, read_settings

__all__ = ["DEFAULT_PATTERN", "EXPIRY_RULES", "MONTH_CODES", "SETTINGS_FILE", "ImportReport",
           "ImportSettings", "expiry_from_rule", "import_again", "import_data",
           "parse_contract_name", "pattern_regex", "read_settings"]
