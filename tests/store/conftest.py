"""Fixtures of the store tests: a fresh catalogue file in a temporary folder."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue


@pytest.fixture
def cat_path(tmp_path: Path) -> Path:
    return tmp_path / "catalogue.sqlite"


@pytest.fixture
def cat(cat_path: Path) -> Iterator[Catalogue]:
    catalogue = Catalogue(cat_path)
    yield catalogue
    catalogue.close()
