"""The README's rule-file examples (one per capability) run on the invented demo data through
the command line, each giving a verdict (the README promises that the suite runs them)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from hunchbook.cli import main
from hunchbook.demo import write_demo_data

README = Path(__file__).resolve().parents[2] / "README.md"
SECTION = "### What a rule can say: one example per capability"


def _examples() -> list[str]:
    text = README.read_text(encoding="utf-8")
    section = text[text.index(SECTION):]
    section = section[:section.index("\n- ", 1)]
    return re.findall(r"```toml\n(.*?)```", section, flags=re.S)


def test_the_readme_has_one_example_per_capability() -> None:
    names = [re.search(r'^name = "(.*)"$', block, re.M).group(1) for block in _examples()]
    assert names == ["Carry tilt", "Metals ratio fade", "Turn of the month",
                     "Cross-market momentum", "Breakout, held, with a stop"]


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    """The invented demo data over a shorter window (test input only)."""
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2014-01-02",
                           end="2019-12-31")


@pytest.mark.parametrize("index", range(5))
def test_each_readme_example_runs(index, demo_dir, tmp_path, capsys) -> None:
    rules = tmp_path / "rule.toml"
    rules.write_text(_examples()[index], encoding="utf-8")
    code = main(["run", str(rules), "--data", str(demo_dir), "--workers", "1"])
    out = capsys.readouterr()
    assert code == 0, out.err
    assert "Verdict:" in out.out
