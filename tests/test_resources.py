"""The resource helper: the top-level resources/ folder read from the source tree, the copy a
wheel carries inside the package preferred when present, and names that cannot leave the
folder."""

from __future__ import annotations

import importlib.util
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from hunchbook import resources
from hunchbook.demo import market_library_text
from hunchbook.resources import read_resource, resource_path, resource_root

REPO = Path(__file__).resolve().parents[1]


def test_the_source_tree_resources_are_read():
    """In this checkout (editable install) the helper reads the top-level resources/ folder;
    the demo's market library is read through it."""
    assert resource_root() == REPO / "resources"
    assert resource_path("demo/markets.toml") == REPO / "resources" / "demo" / "markets.toml"
    assert market_library_text() == (REPO / "resources/demo/markets.toml").read_text("utf-8")
    assert read_resource("starter-rules.template").startswith("# A starting point")


def test_without_any_install_the_source_tree_is_used(tmp_path):
    """A fresh interpreter that sees only src/ (no site-packages, so no install at all) finds
    the same file."""
    code = ("from hunchbook.resources import resource_path; "
            "print(resource_path('demo/markets.toml'))")
    out = subprocess.run([sys.executable, "-S", "-c", code], capture_output=True, text=True,
                         check=True, cwd=tmp_path,
                         env={**os.environ, "PYTHONPATH": str(REPO / "src")}).stdout
    assert Path(out.strip()) == REPO / "resources" / "demo" / "markets.toml"


def test_an_installed_wheel_layout_reads_the_packaged_copy(tmp_path):
    """Laid out as a wheel installs it (hunchbook/resources.py next to hunchbook/_resources/,
    no resources/ folder two levels up), the helper reads the packaged copy."""
    package = tmp_path / "site-packages" / "hunchbook"
    (package / "_resources" / "demo").mkdir(parents=True)
    shutil.copyfile(resources.__file__, package / "resources.py")
    (package / "_resources" / "demo" / "markets.toml").write_text("# packaged\n", "utf-8")
    spec = importlib.util.spec_from_file_location("installed_resources",
                                                  package / "resources.py")
    assert spec is not None and spec.loader is not None
    installed = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(installed)
    assert installed.resource_root() == package / "_resources"
    assert installed.read_resource("demo/markets.toml") == "# packaged\n"
    with pytest.raises(FileNotFoundError, match="starter-rules.template"):
        installed.resource_path("starter-rules.template")


@pytest.mark.parametrize("name", ["", "/etc/passwd", "../pyproject.toml", "demo/../../setup.py",
                                  "demo\\markets.toml"])
def test_names_must_stay_inside_the_folder(name):
    """Empty, absolute, climbing and backslash names are refused with the rule they break."""
    with pytest.raises(ValueError, match="relative path inside resources/"):
        resource_path(name)


def test_a_missing_resource_names_itself_and_the_folder():
    """A resource that is not there is a FileNotFoundError naming it and the folder."""
    with pytest.raises(FileNotFoundError) as caught:
        read_resource("icons/none.svg")
    assert "'icons/none.svg'" in str(caught.value)
    assert str(resource_root()) in str(caught.value)
