"""The window started as the ``hunchbook`` command starts it runs its quick runs on a warm
pool of worker processes (:class:`~hunchbook.core.warm_pool.WarmPool`), started off the UI
thread and stopped at the end; the recorded run equals the same run made in process."""

from __future__ import annotations

import os

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.core.runners import InProcess
from hunchbook.core.warm_pool import WarmPool
from hunchbook.gui.app import parse_args, start
from hunchbook.services import run_idea
from tests.gui.desk_fixtures import (
    ACCEPTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
)

MARKETS = ["TNOTE10", "EQIDX", "GOLD", "CRUDE"]
#: 56 sets: more than the pool's ``min_sets``, so the sweep goes to its workers.
RULES = f"""name = "Pooled sweep"
markets = {MARKETS!r}

[parameters]
n = {{ start = 5, stop = 61, step = 1 }}

[signal]
position = "sign(close - mean(close, n))"
""".replace("'", '"')


def test_quick_runs_go_through_the_warm_pool(qtbot, tmp_path_factory, tmp_path, short_data):
    catalogue = demo_catalogue_copy(tmp_path_factory, tmp_path)
    session = start(parse_args(["--catalogue", str(catalogue), "--data", str(short_data)]))
    window, pool = session.window, session.pool
    qtbot.addWidget(window)
    try:
        assert isinstance(pool, WarmPool) and window.sweep_runner is pool
        pool.start_in_background()  # as the command does once the window shows
        idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
        window.catalogue.update_idea(idea_id, by="Test Reviewer", markets=MARKETS)
        window.select_idea(idea_id)
        window.rules.editor.set_text(RULES)
        with qtbot.waitSignal(window.quick_run.finished, timeout=120000) as blocker:
            assert window.quick_run.start() is not None
        stored = window.catalogue.run(blocker.args[0])
        workers = pool.last_pids
        assert workers and os.getpid() not in workers
    finally:
        window.close()
        session.cleanup()
    for pid in workers:  # the pool's processes ended with the session
        with pytest.raises(ProcessLookupError):
            os.kill(pid, 0)
    (tmp_path / "ref").mkdir()
    with Catalogue(demo_catalogue_copy(tmp_path_factory, tmp_path / "ref")) as cat:
        # the same run in process, on another copy of the desk
        cat.update_idea(idea_id, by="Test Reviewer", markets=MARKETS)
        reference = run_idea(cat, idea_id, RULES, short_data, by="Test Reviewer",
                             runner=InProcess())
    assert stored.result == reference.summary  # the whole record: sets, statistics, verdict
