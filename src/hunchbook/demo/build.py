"""The demo desk ready to open: its data and catalogue, built once per version into the user
cache folder and copied from there to where the window works on them.

Building takes tens of seconds (eight real quick runs on eighteen years of invented data), so
the result is kept under ``<user cache>/demo/<version>-<inputs hash>``: the package version
and a SHA-256 of the code and resources the demo is built from, so any change builds afresh.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import uuid
from collections.abc import Callable
from pathlib import Path

from hunchbook import __version__
from hunchbook.resources import resource_root

#: Called with (steps done, steps in all) while the demo is built.
Progress = Callable[[int, int], None]
#: Names inside a built demo folder.
DATA_DIR, CATALOGUE_FILE, DONE_FILE = "data", "demo-catalogue.sqlite", "COMPLETE"


def demo_cache_dir() -> Path:
    """The user cache folder of the built demo desks (platformdirs ``user_cache_dir``)."""
    import platformdirs

    return Path(platformdirs.user_cache_dir("hunchbook", appauthor=False)) / "demo"


def inputs_key() -> str:
    """The package version and a hash of everything the demo is built from (the package's
    Python code and the demo's resources)."""
    digest = hashlib.sha256()
    package = Path(__file__).resolve().parents[1]
    files = sorted(package.rglob("*.py")) + sorted((resource_root() / "demo").rglob("*"))
    for path in files:
        if path.is_file():
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return f"{__version__}-{digest.hexdigest()[:16]}"


def build_demo(folder: str | os.PathLike[str], progress: Progress | None = None) -> Path:
    """Write the demo data (``data/``) and catalogue (``demo-catalogue.sqlite``) into the new
    folder ``folder``, reporting progress as (steps done, steps in all)."""
    from hunchbook.demo.catalogue import DEMO_RUNS, build_demo_catalogue
    from hunchbook.demo.generate import write_demo_data

    root = Path(folder)
    total = DEMO_RUNS + 1
    if progress is not None:
        progress(0, total)
    data = write_demo_data(root / DATA_DIR)
    if progress is not None:
        progress(1, total)
    build_demo_catalogue(root / CATALOGUE_FILE, data,
                         None if progress is None else lambda done, _n: progress(done + 1, total))
    (root / DONE_FILE).write_text(inputs_key() + "\n", encoding="utf-8")
    return root


#: Other builds in the cache older than this are removed once a new one is in place (seconds):
#: one build per version of the inputs would otherwise pile up with every upgrade.
OLD_BUILD_SECONDS = 24 * 3600


def forget_old_builds(built: Path, now: float) -> list[Path]:
    """Remove the folders beside ``built`` last changed more than :data:`OLD_BUILD_SECONDS`
    before ``now`` (a day's grace for a window still copying from one); returns them."""
    old = [other for other in built.parent.iterdir()
           if other != built and other.is_dir()
           and now - other.stat().st_mtime > OLD_BUILD_SECONDS]
    for other in old:
        shutil.rmtree(other, ignore_errors=True)
    return old


def built_demo(cache: str | os.PathLike[str] | None = None,
               progress: Progress | None = None) -> Path:
    """The folder of the demo desk built for this version (data and catalogue), built first
    when the cache has none.

    The desk is built once per :func:`inputs_key` into ``cache`` (default
    :func:`demo_cache_dir`); when the cache cannot be written it is built into a new
    temporary folder instead.
    """
    built = (Path(cache) if cache is not None else demo_cache_dir()) / inputs_key()
    if (built / DONE_FILE).is_file():
        return built
    try:
        built.parent.mkdir(parents=True, exist_ok=True)
        scratch = built.parent / f".building-{uuid.uuid4().hex}"
        build_demo(scratch, progress)
    except OSError:
        import tempfile

        return build_demo(Path(tempfile.mkdtemp(prefix="hunchbook-demo-build-")), progress)
    try:
        scratch.rename(built)
    except OSError:  # another start built it first (or left a half-built folder)
        if not (built / DONE_FILE).is_file():
            shutil.rmtree(built, ignore_errors=True)
            scratch.rename(built)
        else:
            shutil.rmtree(scratch, ignore_errors=True)
    forget_old_builds(built, (built / DONE_FILE).stat().st_mtime)
    return built


def prepare_demo(dest: str | os.PathLike[str], *, cache: str | os.PathLike[str] | None = None,
                 progress: Progress | None = None) -> tuple[Path, Path]:
    """A working copy of the demo desk in ``dest`` (see :func:`built_demo`).

    Returns
    -------
    tuple of pathlib.Path
        The catalogue file and the data folder under ``dest``.
    """
    dest = Path(dest)
    built = built_demo(cache, progress)
    dest.mkdir(parents=True, exist_ok=True)
    shutil.copytree(built / DATA_DIR, dest / DATA_DIR, dirs_exist_ok=True)
    shutil.copyfile(built / CATALOGUE_FILE, dest / CATALOGUE_FILE)
    return dest / CATALOGUE_FILE, dest / DATA_DIR


def demo_catalogue_copy(path: str | os.PathLike[str]) -> Path:
    """Copy the demo catalogue (built first if needed) to the new file ``path``.

    Raises
    ------
    CatalogueError
        When ``path`` exists.
    """
    from hunchbook.store.errors import CatalogueError

    path = Path(path)
    if path.exists():
        raise CatalogueError("file exists; the demo catalogue is written to a new file",
                             where=str(path))
    built = built_demo()
    path.parent.mkdir(parents=True, exist_ok=True)
    shutil.copyfile(built / CATALOGUE_FILE, path)
    return path
