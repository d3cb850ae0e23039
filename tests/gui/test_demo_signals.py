"""Stopping the demo with SIGTERM or SIGINT closes the window like its close button: the
demo's temporary folder is removed."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from hunchbook.demo.build import built_demo

HUNCHBOOK = Path(sys.executable).parent / "hunchbook"


@pytest.mark.skipif(sys.platform.startswith("win"), reason="POSIX signals")
@pytest.mark.parametrize("number", [signal.SIGTERM, signal.SIGINT])
def test_a_signal_removes_the_demo_folder(tmp_path, number):
    built_demo()  # the session's demo desk, built once, so the window only copies it
    temp = tmp_path / "tmp"
    temp.mkdir()
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", "TMPDIR": str(temp),
           "XDG_CONFIG_HOME": str(tmp_path / "config")}
    proc = subprocess.Popen([str(HUNCHBOOK), "--demo"], env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    try:
        line = proc.stdout.readline()  # said once the window runs and listens for signals
        assert line.startswith("Demo desk in "), line + proc.stderr.read()
        folder = Path(line.removeprefix("Demo desk in ").split(" (removed")[0])
        assert folder.parent == temp and folder.is_dir()
        proc.send_signal(number)
        _, err = proc.communicate(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == 0, err
    assert not folder.exists()
    assert list(temp.glob("hunchbook-demo-*")) == []
