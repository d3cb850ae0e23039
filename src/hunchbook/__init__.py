"""Hunchbook: a catalogue, research journal and quick-run engine for futures trading ideas."""

__version__ = "0.1.0"

from hunchbook.api import load_data, load_rules, run  # noqa: E402

__all__ = ["__version__", "load_data", "load_rules", "run"]
