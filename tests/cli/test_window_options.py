"""The window's options in ``hunchbook --help``, and one line instead of Qt's platform error
when there is no display."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from hunchbook.cli import _build_parser
from hunchbook.window_options import WINDOW_FLAGS, display_missing

HUNCHBOOK = Path(sys.executable).parent / "hunchbook"


def test_help_lists_every_window_option():
    text = _build_parser().format_help()
    assert all(flag in text for flag in WINDOW_FLAGS)
    assert "--demo" in WINDOW_FLAGS and "--screenshot" in WINDOW_FLAGS


def test_a_display_is_judged_from_the_environment():
    # X11 clients find their server through DISPLAY, Wayland clients through WAYLAND_DISPLAY,
    # and QT_QPA_PLATFORM chooses Qt's platform plugin (Qt documentation; common practice)
    line = display_missing({}, "linux")
    assert line is not None and "\n" not in line
    assert "DISPLAY" in line and "QT_QPA_PLATFORM=offscreen" in line and "--help" in line
    assert display_missing({"DISPLAY": ":0"}, "linux") is None
    assert display_missing({"WAYLAND_DISPLAY": "wayland-0"}, "linux") is None
    assert display_missing({"QT_QPA_PLATFORM": "offscreen"}, "linux") is None
    assert display_missing({}, "darwin") is None and display_missing({}, "win32") is None


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="X11/Wayland systems only")
def test_without_a_display_the_window_says_so_in_one_line():
    env = {k: v for k, v in os.environ.items()
           if k not in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM")}
    done = subprocess.run([str(HUNCHBOOK), "--demo"], env=env, capture_output=True, text=True,
                          timeout=120, check=False)
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("hunchbook: no display"), done.stderr
    assert "QT_QPA_PLATFORM=offscreen" in lines[0] and "Traceback" not in done.stderr
