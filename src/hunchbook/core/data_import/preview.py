"""A source file's first rows and how the import would read them (for the import dialog)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from hunchbook.core.data_import.columns import guess_mapping
from hunchbook.core.data_import.contracts import parse_contract_name, pattern_regex
from hunchbook.core.data_import.read import read_tables
from hunchbook.core.data_import.settings import ImportSettings


@dataclass(frozen=True)
class Preview:
    """One file's first ``rows`` (cells as read), its column -> field mapping (guessed and
    given), and the shape the import will take it for."""

    file: str
    rows: pd.DataFrame
    fields: dict[str, str]
    shape: str


def preview_file(path: str | Path, settings: ImportSettings, rows: int = 12) -> Preview:
    """How the import reads ``path`` under ``settings``: see :class:`Preview`.

    Raises
    ------
    DataError
        When the file cannot be read, or a given mapping names a column it does not have.
    """
    path = Path(path)
    (table,) = read_tables([path], settings)
    mapping = guess_mapping(table.cells.columns, settings.mapping, file=str(path))
    name = parse_contract_name(path.stem, pattern_regex(settings.pattern))
    if "market" in mapping:
        shape = "long file (markets in column " + repr(mapping["market"]) + ")"
    elif name is not None and "contract" not in mapping:
        shape = f"contract file: market {name.market}, contract {name.code}"
    else:
        shape = f"market file: market {path.stem}"
    if "contract" not in mapping and "market file" in shape:
        shape += " (already continuous)"
    return Preview(str(path), table.cells.head(rows), {c: f for f, c in mapping.items()}, shape)
