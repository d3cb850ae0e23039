"""Files the application loads at run time (the starter rule template, the demo's market
library), kept in the top-level ``resources/`` folder of the source tree.

One helper finds them wherever Hunchbook runs from: a wheel carries the folder inside the package
as ``hunchbook/_resources`` (copied there by ``setup.py`` when the wheel is built); the source
tree and an editable install read ``resources/`` next to ``src/``.
"""

from __future__ import annotations

from pathlib import Path, PurePosixPath

#: Where a built wheel keeps the resources (inside the installed package).
PACKAGED_DIR = Path(__file__).resolve().parent / "_resources"
#: The top-level ``resources/`` folder of a source tree (also used by an editable install).
SOURCE_DIR = Path(__file__).resolve().parents[2] / "resources"


def resource_root() -> Path:
    """The folder the resources are read from: the packaged copy when there is one, else the
    source tree's ``resources/``."""
    return PACKAGED_DIR if PACKAGED_DIR.is_dir() else SOURCE_DIR


def resource_path(name: str) -> Path:
    """The file of a resource.

    Parameters
    ----------
    name
        Its path inside ``resources/``, with ``/`` between folders (``"demo/markets.toml"``).

    Raises
    ------
    ValueError
        For an empty or absolute name, or one that climbs out of the folder (``..``).
    FileNotFoundError
        When the file is not there (a broken install), naming the folder searched.
    """
    parts = PurePosixPath(name).parts
    if not parts or name.startswith(("/", "\\")) or ".." in parts or "\\" in name:
        raise ValueError(f"resource name must be a relative path inside resources/ with '/' "
                         f"between folders, got {name!r}")
    root = resource_root()
    path = root.joinpath(*parts)
    if not path.is_file():
        raise FileNotFoundError(f"{path}: resource {name!r} is missing from {root}")
    return path


def read_resource(name: str) -> str:
    """The text (UTF-8) of a resource; ``name`` and errors as in :func:`resource_path`."""
    return resource_path(name).read_text(encoding="utf-8")
