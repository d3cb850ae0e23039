"""Start the desktop window: ``hunchbook`` (own catalogue), ``hunchbook --demo`` (a temporary
copy of the invented demo desk), ``--screenshot PATH`` (render and exit).

Options
-------
``--demo``
    Copy the demo desk (its catalogue and invented data; built on a worker into the user
    cache folder the first time a version starts, with progress in the status bar) into a
    temporary folder and open the window on it (removed when the window closes, and on
    SIGINT or SIGTERM, which close the window). You act as the invented desk's research lead
    unless ``$HUNCHBOOK_USER`` names someone.
``--catalogue PATH``
    The catalogue file (default: the last one opened, else
    :func:`hunchbook.catalogue.default_catalogue_path`).
``--data DIR``
    The data folder (default: the last one chosen).
``--screenshot PATH``
    Render the window once everything has loaded, save it as PNG and exit 0 (works without a
    display: the offscreen platform is used unless ``QT_QPA_PLATFORM`` says otherwise);
    ``--idea ID`` and ``--section idea|rules|runs|journal|review`` choose what it shows.
``--size WxH``
    Window size in pixels.

The options are listed once, in :mod:`hunchbook.window_options` (``hunchbook --help`` shows
them too). Without a display (Linux: no ``DISPLAY`` or ``WAYLAND_DISPLAY``, and no
``QT_QPA_PLATFORM``) one line on stderr says how to run headless and the exit status is 2.
"""

from __future__ import annotations

import argparse
import logging
import os
import shutil
import signal
import sys
import tempfile
import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from PySide6.QtCore import QCoreApplication, QEventLoop, Qt, QTimer
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import QApplication

from hunchbook.core.warm_pool import WarmPool
from hunchbook.gui.feedback import USER_ENV, install_excepthook
from hunchbook.gui.main_window import MainWindow
from hunchbook.gui.sections.registry import section_names
from hunchbook.gui.workers import DemoDeskWorker
from hunchbook.window_options import add_window_options, display_missing

#: Signals that close the window like its close button (the demo's folder is removed).
STOP_SIGNALS = (signal.SIGINT, signal.SIGTERM)

#: Longest wait for the demo data before a screenshot is taken (ms).
DEMO_DATA_TIMEOUT_MS = 120_000


@dataclass
class Session:
    """A started window and what it needs cleaned up afterwards."""

    app: QApplication
    window: MainWindow
    temp_dir: Path | None = None
    demo_workers: list[DemoDeskWorker] = field(default_factory=list)
    started_at: float = field(default_factory=time.perf_counter)
    #: The quick runs' worker processes (started once the window shows, closed at the end).
    pool: WarmPool | None = None
    #: Lets Python see SIGINT/SIGTERM while Qt's loop waits (see :func:`quit_on_signals`).
    signal_timer: QTimer | None = None

    def wait_for_demo_data(self, timeout_ms: int = DEMO_DATA_TIMEOUT_MS) -> bool:
        """Run the event loop until the demo catalogue and data are written (True) or the
        time is up."""
        deadline = time.monotonic() + timeout_ms / 1000
        for worker in self.demo_workers:
            while not worker.done.is_set() and time.monotonic() < deadline:
                QCoreApplication.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, 50)
                worker.done.wait(0.01)
        QCoreApplication.processEvents()  # deliver the workers' last (queued) signals
        return not self.demo_workers or (self.window.catalogue is not None
                                         and self.window.data_folder is not None)

    def cleanup(self) -> None:
        """Remove the demo's temporary folder (once its copy has stopped writing there) and
        stop the quick runs' worker processes."""
        if self.pool is not None:
            self.pool.close()
        for worker in self.demo_workers:
            worker.cancel()
            worker.done.wait()
        if self.temp_dir is not None:
            shutil.rmtree(self.temp_dir, ignore_errors=True)
            self.temp_dir = None


def parse_args(argv: Sequence[str] | None = None) -> argparse.Namespace:
    """Parse the window's command-line options (see the module docstring)."""
    parser = argparse.ArgumentParser(
        prog="hunchbook", description="Open Hunchbook's desktop window.")
    add_window_options(parser, section_names())
    return parser.parse_args(list(argv) if argv is not None else None)


def application(argv: Sequence[str] = ()) -> QApplication:
    """The running QApplication, or a new one (high-DPI scaling as the screen says)."""
    existing = QApplication.instance()
    if isinstance(existing, QApplication):
        return existing
    QGuiApplication.setHighDpiScaleFactorRoundingPolicy(
        Qt.HighDpiScaleFactorRoundingPolicy.PassThrough)
    app = QApplication([sys.argv[0] if sys.argv else "hunchbook", *argv])
    app.setApplicationName("Hunchbook")
    app.setOrganizationName("hunchbook")
    return app


def start(options: argparse.Namespace) -> Session:
    """Create the window for parsed options, open its catalogue and data and show it."""
    if options.screenshot is not None:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    app = application()
    pool = WarmPool()  # no process yet: see main
    window = MainWindow(remember=not options.demo, keep_layout=options.screenshot is None,
                        runner=pool, user=_demo_user() if options.demo else None)
    session = Session(app=app, window=window, pool=pool)
    if options.size:
        window.resize(*options.size)
    elif not window.has_saved_layout() or options.screenshot is not None:
        window.resize(1440, 900)
    if options.demo:
        _start_demo(session, options)
    else:
        remembered_catalogue, remembered_data = window.remembered_paths()
        catalogue = options.catalogue or remembered_catalogue or _default_catalogue()
        catalogue.parent.mkdir(parents=True, exist_ok=True)
        window.open_catalogue(catalogue)
        data = options.data or remembered_data
        if data is not None and data.is_dir():
            window.set_data_folder(data)
        _show_asked(window, options)
    window.show()
    return session


def _show_asked(window: MainWindow, options: argparse.Namespace) -> None:
    """Select the idea and section the options name."""
    if options.idea is not None and not window.select_idea(options.idea):
        window.status_message(f"There is no idea {options.idea} in this catalogue.")
    if options.section:
        window.show_section(options.section)


def _demo_user() -> str:
    """In the demo you act as the invented desk's research lead (unless $HUNCHBOOK_USER)."""
    from hunchbook.demo import DESK

    return os.environ.get(USER_ENV) or DESK.lead.name


def _default_catalogue() -> Path:
    from hunchbook.catalogue import default_catalogue_path

    return default_catalogue_path()


def _start_demo(session: Session, options: argparse.Namespace) -> None:
    """Copy the demo desk into a temporary folder on a worker (building it first when this
    version has none in the user cache); the window shows at once and opens it when ready."""
    window = session.window
    session.temp_dir = Path(tempfile.mkdtemp(prefix="hunchbook-demo-"))
    window.status_message("Opening the invented demo desk\u2026")
    desk = DemoDeskWorker(session.temp_dir)
    desk.signals.progress.connect(lambda done, total: window.status_message(
        f"Building the invented demo desk for this version (once; it is kept in the user "
        f"cache folder): step {done} of {total}, real quick runs on the invented data\u2026"))
    desk.signals.finished.connect(lambda paths: _demo_ready(window, paths, options))
    desk.signals.failed.connect(lambda message: window.show_error(
        "Demo desk not written", message))
    session.demo_workers.append(desk)
    if options.data is not None:
        window.set_data_folder(options.data)
    desk.start()


def _demo_ready(window: MainWindow, paths: tuple[Path, Path], options: argparse.Namespace
                ) -> None:
    catalogue, data = paths
    window.open_catalogue(catalogue)
    if options.data is None:
        window.set_data_folder(data)
    if options.idea is None and window.catalogue is not None:
        ready = [i.id for i in window.catalogue.list_ideas(stage="accepted")]
        if ready:
            window.select_idea(ready[0])
    _show_asked(window, options)
    window.status_message("Demo desk ready (invented prices; every run is a real run on "
                          "them). Press Ctrl+R on an accepted idea for a quick run.")


def take_screenshot(session: Session, path: Path) -> bool:
    """Save the window as PNG once loading has finished; True when written."""
    session.wait_for_demo_data()
    window = session.window
    for _ in range(5):  # let layouts settle and charts draw
        QCoreApplication.processEvents()
        time.sleep(0.02)
    path.parent.mkdir(parents=True, exist_ok=True)
    return window.grab().save(str(path), "PNG")


def quit_on_signals(app: QApplication) -> QTimer:
    """Quit the event loop on SIGINT or SIGTERM, so that the clean-up after it runs (the
    returned timer lets Python see a signal while Qt's loop waits; keep it alive)."""
    def stop(_number: int, _frame: object) -> None:
        QTimer.singleShot(0, app.quit)  # queued: quits the loop even before it has started

    for number in STOP_SIGNALS:
        signal.signal(number, stop)
    timer = QTimer(app)
    timer.timeout.connect(lambda: None)
    timer.start(200)
    return timer


def main(argv: list[str] | None = None) -> int:
    """Open the window (see the module docstring for the options); returns the exit status
    (2 with one line on stderr when there is no display)."""
    options = parse_args(argv)
    if options.screenshot is not None:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    missing = display_missing()
    if missing is not None:
        print(f"hunchbook: {missing}", file=sys.stderr)
        return 2
    logging.basicConfig(level=logging.WARNING, format="%(levelname)s %(name)s: %(message)s")
    session = start(options)
    before = {number: signal.getsignal(number) for number in STOP_SIGNALS}
    try:
        session.signal_timer = quit_on_signals(session.app)
        if session.temp_dir is not None:
            print(f"Demo desk in {session.temp_dir} (removed when the window closes).",
                  flush=True)
        if options.screenshot is not None:
            written = take_screenshot(session, options.screenshot)
            session.window.close()
            if not written:
                print(f"hunchbook: could not write {options.screenshot}", file=sys.stderr)
                return 1
            print(f"Screenshot written to {options.screenshot}")
            return 0
        install_excepthook()
        if session.pool is not None:  # the quick runs' workers start off the UI thread
            session.pool.start_in_background()
        return int(session.app.exec())
    finally:
        session.cleanup()
        for number, handler in before.items():
            signal.signal(number, handler)
