"""Session-wide test settings: the user cache folder (where the demo desk is built once per
version) points into the session's temporary folder, so tests never write the real one and
the demo desk is built once per test session."""

from __future__ import annotations

import os

import pytest


@pytest.fixture(scope="session", autouse=True)
def _private_user_cache(tmp_path_factory: pytest.TempPathFactory) -> None:
    os.environ["XDG_CACHE_HOME"] = str(tmp_path_factory.getbasetemp() / "user-cache")
