"""The desktop window's command-line options, and whether there is a display to open it on.

One list (:data:`WINDOW_ARGUMENTS`) read by the window's own parser and by ``hunchbook --help``
(which lists them without loading Qt); :func:`display_missing` is asked before Qt starts.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

#: How to run without a display, said when there is none.
HEADLESS_HINT = ("without a display, run the commands (hunchbook --help), or "
                 "QT_QPA_PLATFORM=offscreen hunchbook --screenshot PATH")


def _size(text: str) -> tuple[int, int]:
    try:
        width, height = (int(part) for part in text.lower().split("x"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected WIDTHxHEIGHT such as 1400x900, got "
                                         f"'{text}'") from None
    if not (200 <= width <= 10_000 and 200 <= height <= 10_000):
        raise argparse.ArgumentTypeError("width and height must be between 200 and 10000")
    return width, height


#: Every window option: flag and its argparse keywords.
WINDOW_ARGUMENTS: tuple[tuple[str, dict[str, Any]], ...] = (
    ("--demo", {"action": "store_true",
                "help": "open a temporary copy of the invented demo desk and data (removed "
                        "when the window closes)"}),
    ("--catalogue", {"type": Path, "metavar": "PATH", "help": "catalogue file to open"}),
    ("--data", {"type": Path, "metavar": "DIR", "help": "data folder of price files"}),
    ("--screenshot", {"type": Path, "metavar": "PATH",
                      "help": "save the window as PNG after loading, then exit (works without "
                              "a display)"}),
    ("--idea", {"type": int, "metavar": "ID", "help": "idea to show (with --screenshot or not)"}),
    ("--section", {"metavar": "NAME", "help": "section to show (idea, rules, runs, journal, "
                                              "review, ...)"}),
    ("--size", {"type": _size, "metavar": "WxH", "help": "window size, e.g. 1400x900"}),
)

#: The flags that open the window instead of running a command.
WINDOW_FLAGS = tuple(flag for flag, _ in WINDOW_ARGUMENTS)


def add_window_options(parser: argparse.ArgumentParser | Any,
                       sections: Sequence[str] | None = None) -> None:
    """Add the window's options to a parser or argument group (``--section`` limited to
    ``sections`` when given)."""
    for flag, keywords in WINDOW_ARGUMENTS:
        if flag == "--section" and sections is not None:
            keywords = {**keywords, "choices": list(sections)}
        parser.add_argument(flag, **keywords)


def display_missing(environ: Mapping[str, str] | None = None,
                    platform: str | None = None) -> str | None:
    """One line saying that there is no display to open the window on, or None when there is
    one (or Qt was told which platform to use: ``QT_QPA_PLATFORM``). Only Linux and the other
    X11/Wayland systems are judged; Windows and macOS always have one."""
    environ = os.environ if environ is None else environ
    platform = sys.platform if platform is None else platform
    if platform.startswith(("win", "darwin")) or environ.get("QT_QPA_PLATFORM"):
        return None
    if environ.get("DISPLAY") or environ.get("WAYLAND_DISPLAY"):
        return None
    return f"no display to open the window on (DISPLAY and WAYLAND_DISPLAY are unset); " \
           f"{HEADLESS_HINT}"
