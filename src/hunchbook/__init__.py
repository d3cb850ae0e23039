"""Hunchbook: a catalogue, research journal and quick-run engine for futures trading ideas.

``hunchbook.load_rules``, ``hunchbook.load_data`` and ``hunchbook.run`` are the notebook API
(see :mod:`hunchbook.api`); they are imported on first use so that ``import hunchbook.core``
stays light.
"""

from typing import Any

__version__ = "0.1.0"

__all__ = ["__version__", "load_data", "load_rules", "run"]


def __getattr__(name: str) -> Any:
    if name in ("load_data", "load_rules", "run"):
        from hunchbook import api

        return getattr(api, name)
    raise AttributeError(f"module 'hunchbook' has no attribute {name!r}")
