"""``hunchbook run --cluster``: a local Dask cluster started for the command gives the same run
record as the worker processes of this machine, and what cannot work is one clear line."""

from __future__ import annotations

import importlib.util
import json
import subprocess
import sys
from pathlib import Path

import pytest

import hunchbook.cluster as cluster_module
from hunchbook.cli import main
from tests.core.test_sweep import RULES
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cluster-cli")
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    for market, seed, holidays in (("M1", 31, 8), ("M2", 32, 15)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 400,
                               holidays=holidays)
    (folder / "rules.toml").write_text(RULES)
    return folder


def _run(folder, out, *options):
    return main(["run", str(folder / "rules.toml"), "--data", str(folder), "--json", str(out),
                 *options])


def test_cluster_local_gives_the_record_of_local_processes(folder, tmp_path, capsys):
    """The installed command in its own process (a Dask client leaves a thread behind, after
    which local worker processes could no longer be forked in this one)."""
    assert _run(folder, tmp_path / "here.json", "--workers", "1") == 0
    here = capsys.readouterr().out
    command = Path(sys.executable).with_name("hunchbook")
    done = subprocess.run([str(command), "run", str(folder / "rules.toml"), "--data",
                           str(folder), "--json", str(tmp_path / "cluster.json"), "--cluster",
                           "local"], capture_output=True, text=True, check=False)
    assert done.returncode == 0, done.stderr
    assert done.stdout == here  # the same tables, statistics and verdict
    assert "Traceback" not in done.stderr
    record = json.loads((tmp_path / "cluster.json").read_text())
    assert len(record["sets"]) == 10 and record["statistics"]["n_trials"] == 10
    assert record == json.loads((tmp_path / "here.json").read_text())


def test_workers_with_a_scheduler_address_is_refused(folder, tmp_path, capsys):
    assert _run(folder, tmp_path / "x.json", "--cluster", "tcp://127.0.0.1:8786",
                "--workers", "3") == 1
    err = capsys.readouterr().err
    assert err.startswith("hunchbook: error: --workers sets the worker processes")
    assert "`dask worker`" in err and err.count("\n") == 1
    assert not (tmp_path / "x.json").exists()


def test_without_dask_the_command_says_what_to_install(folder, tmp_path, capsys,
                                                       monkeypatch):
    find_spec = importlib.util.find_spec
    monkeypatch.setattr(cluster_module.importlib.util, "find_spec",
                        lambda name, *a: None if name == "distributed" else find_spec(name, *a))
    assert _run(folder, tmp_path / "x.json", "--cluster", "local") == 1
    assert capsys.readouterr().err == (
        "hunchbook: error: sweeps on a Dask cluster need Dask, which is not installed: "
        "pip install 'hunchbook[cluster]'\n")
