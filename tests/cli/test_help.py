"""Every command documents itself: help text and an example (house convention)."""

from __future__ import annotations

import argparse

from hunchbook.cli import _build_parser


def _commands(parser: argparse.ArgumentParser, path=()):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _commands(sub, (*path, name))
            return
    yield path, parser


def test_every_command_has_help_and_an_example():
    commands = list(_commands(_build_parser()))
    assert len(commands) >= 15
    for path, parser in commands:
        assert parser.description, " ".join(path)
        assert (parser.epilog or "").startswith("Example: hunchbook"), " ".join(path)
