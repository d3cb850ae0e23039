"""How a data folder was imported: the settings of each import, saved as ``import.toml`` in
the folder so that a re-import is one command."""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import tomlkit
from tomlkit.exceptions import TOMLKitError

from hunchbook.core.data_import.contracts import DEFAULT_PATTERN
from hunchbook.core.errors import DataError

#: Name of the import settings file inside a data folder.
SETTINGS_FILE = "import.toml"


@dataclass(frozen=True)
class ImportSettings:
    """One import: its sources and how to read them.

    ``mapping`` is field -> source column name (confirmed or overridden by the user; the rest
    is guessed), ``expiry`` market -> expiry rule (``"*"`` for every market), ``markets`` the
    markets it wrote (filled in once it ran).
    """

    sources: tuple[str, ...]
    pattern: str = DEFAULT_PATTERN
    mapping: Mapping[str, str] = field(default_factory=dict)
    date_format: str | None = None
    delimiter: str | None = None
    expiry: Mapping[str, str] = field(default_factory=dict)
    library: str | None = None
    markets: tuple[str, ...] = ()

    def to_table(self) -> dict[str, object]:
        """The settings as a plain TOML table (keys left out where unset)."""
        table: dict[str, object] = {"sources": list(self.sources), "pattern": self.pattern}
        for key in ("date_format", "delimiter", "library"):
            if getattr(self, key) is not None:
                table[key] = getattr(self, key)
        if self.mapping:
            table["map"] = dict(self.mapping)
        if self.expiry:
            table["expiry"] = dict(self.expiry)
        table["markets"] = list(self.markets)
        return table


def settings_from_table(table: Mapping[str, object], file: str) -> ImportSettings:
    """Read one ``[[imports]]`` table of ``import.toml``.

    Raises
    ------
    DataError
        Naming the file and key when a value has the wrong type.
    """
    def text(key: str, default: str | None) -> str | None:
        value = table.get(key, default)
        if value is not None and not isinstance(value, str):
            raise DataError(f"key '{key}' must be a string", file=file)
        return value

    def texts(key: str) -> tuple[str, ...]:
        value = table.get(key, [])
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise DataError(f"key '{key}' must be a list of strings", file=file)
        return tuple(value)

    def pairs(key: str) -> dict[str, str]:
        value = table.get(key, {})
        if not isinstance(value, Mapping) or not all(isinstance(v, str) for v in value.values()):
            raise DataError(f"key '{key}' must be a table of strings", file=file)
        return {str(k): str(v) for k, v in value.items()}

    sources = texts("sources")
    if not sources:
        raise DataError("key 'sources' is missing or empty", file=file)
    return ImportSettings(sources=sources, pattern=text("pattern", DEFAULT_PATTERN) or "",
                          mapping=pairs("map"), date_format=text("date_format", None),
                          delimiter=text("delimiter", None), expiry=pairs("expiry"),
                          library=text("library", None), markets=texts("markets"))


def read_settings(folder: str | os.PathLike[str]) -> list[ImportSettings]:
    """Every import recorded in a data folder's ``import.toml``.

    Raises
    ------
    DataError
        When the file is missing, not TOML, or a value has the wrong type.
    """
    path = Path(folder) / SETTINGS_FILE
    if not path.is_file():
        raise DataError(f"no {SETTINGS_FILE} here (the folder was not made by "
                        "'hunchbook data import')", file=str(folder))
    try:
        doc = tomlkit.parse(path.read_text(encoding="utf-8")).unwrap()
    except (TOMLKitError, UnicodeDecodeError) as exc:
        raise DataError(f"not a readable TOML file ({str(exc).splitlines()[0]})",
                        file=str(path)) from None
    imports = doc.get("imports")
    if not isinstance(imports, list) or not imports:
        raise DataError("expected one or more [[imports]] tables", file=str(path))
    return [settings_from_table(t, str(path)) for t in imports]


def settings_text(imports: list[ImportSettings]) -> str:
    """``import.toml`` holding these imports, oldest first."""
    doc = tomlkit.document()
    doc.add(tomlkit.comment("Written by 'hunchbook data import'; 'hunchbook data import "
                            "--again DIR' runs these imports again."))
    array = tomlkit.aot()
    for item in imports:
        array.append(tomlkit.item(item.to_table()))
    doc.add("imports", array)
    return tomlkit.dumps(doc)
