"""The committee commands: ``ideas amend`` (a person's reason), a run outside the
pre-registration refused then flagged (``run --idea``, ``runs list``), ``runs compare`` and
``ideas pack`` (HTML and PDF, offscreen)."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli import main
from hunchbook.core.compare import compare_runs, run_label
from hunchbook.demo import write_demo_data
from hunchbook.demo.build import demo_catalogue_copy

RULES = """name = "Gold and crude trend"
markets = ["CRUDE", "GOLD"]

[parameters]
n = [20, 60]

[signal]
position = "sign(close - mean(close, n))"
"""
#: The same rule on one more market than the idea pre-registered.
WITH_CORN = RULES.replace('["CRUDE", "GOLD"]', '["CRUDE", "GOLD", "CORN"]')


@pytest.fixture(scope="module")
def demo_dir(tmp_path_factory):
    return write_demo_data(tmp_path_factory.mktemp("data"), start="2016-01-04",
                           end="2018-12-31")


@pytest.fixture(scope="module")
def demo_catalogue(tmp_path_factory) -> Path:
    return demo_catalogue_copy(tmp_path_factory.mktemp("desk") / "demo.sqlite")


@pytest.fixture
def catalogue_path(tmp_path) -> Path:
    path = tmp_path / "cat.sqlite"
    with Catalogue(path) as cat:
        idea = cat.add_idea(title="Gold and crude trend", hypothesis="Trends persist.",
                            rationale="Slow diffusion of information.", submitted_by="Nia",
                            markets=("CRUDE", "GOLD"), stage="submitted")
        cat.save_rules(idea, RULES, by="Nia")
        cat.review(idea, reviewer="Ines", decision="accept", comments="Go.",
                   checklist=dict.fromkeys(CHECKLIST, True))
    return path


def _cli(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_a_run_on_more_markets_is_refused_until_amended_with_a_reason(
        capsys, tmp_path, demo_dir, catalogue_path) -> None:
    first, wider = tmp_path / "first.toml", tmp_path / "corn.toml"
    first.write_text(RULES)
    wider.write_text(WITH_CORN)
    common = ("--data", str(demo_dir), "--idea", "1", "--catalogue", str(catalogue_path),
              "--by", "Nia", "--workers", "1")
    code, _, err = _cli(capsys, "run", str(first), *common)
    assert code == 0, err
    code, _, err = _cli(capsys, "run", str(wider), *common)
    assert code == 1 and err.count("\n") == 1 and "Traceback" not in err
    assert "market CORN was not pre-registered" in err and "hunchbook ideas amend 1" in err
    amend = ("ideas", "amend", "1", "--markets", "CRUDE,GOLD,CORN", "--rules", str(wider),
             "--catalogue", str(catalogue_path), "--by", "Ines")
    code, _, err = _cli(capsys, *amend, "--reason", "rule revision 2 saved")
    assert code == 1 and "what the program writes, not a reason" in err
    code, out, err = _cli(capsys, *amend, "--reason", "Corn shares the hedging flows we "
                                                      "rely on")
    assert code == 0 and "version 2" in out, err
    result = tmp_path / "run.json"
    code, _, err = _cli(capsys, "run", str(wider), *common, "--json", str(result))
    assert code == 0, err
    checks = json.loads(result.read_text())["verdict"]["checks"]
    warning = next(c for c in checks if c["key"] == "preregistration")
    assert warning["status"] == "warn" and "Corn shares the hedging flows" in warning["finding"]
    code, out, _ = _cli(capsys, "runs", "list", "--catalogue", str(catalogue_path))
    rows = {line.split()[0]: line for line in out.splitlines() if re.match(r"\d+ +\d+ ", line)}
    assert "within" in rows["1"] and "OUTSIDE" in rows["2"]
    assert "run 2: Outside the pre-registration: market CORN was not pre-registered" in out
    code, out, _ = _cli(capsys, "ideas", "show", "1", "--json", "--catalogue",
                        str(catalogue_path))
    runs = json.loads(out)["runs"]
    assert [r["preregistration"]["within"] for r in runs] == [True, False]


def test_runs_compare_prints_the_comparison(capsys, demo_catalogue) -> None:
    with Catalogue(demo_catalogue, read_only=True) as cat:
        a, b = cat.run(2), cat.run(3)
        texts = [cat.revision(r.revision_id).text for r in (a, b)]
    expected = compare_runs(a.result, b.result, *texts, names=(
        run_label(a.id, a.idea_id, a.revision_number),
        run_label(b.id, b.idea_id, b.revision_number))).to_dict()
    code, out, _ = _cli(capsys, "runs", "compare", "2", "3", "--json", "--catalogue",
                        str(demo_catalogue))
    data = json.loads(out)
    assert code == 0 and [r["id"] for r in data.pop("runs")] == [2, 3]
    assert data == json.loads(json.dumps(expected))
    code, out, _ = _cli(capsys, "runs", "compare", "2", "3", "--catalogue",
                        str(demo_catalogue))
    assert code == 0
    assert "--- run 2 (idea 2, rev 1)" in out
    assert "+n = { start = 10, stop = 200, step = 10 }" in out
    assert f"A {a.result.verdict.label}; B {b.result.verdict.label}" in out
    total = next(line for line in out.splitlines() if line.startswith("Total P&L"))
    assert f"{a.result.chosen.performance.net.total:,.0f}" in total


def test_ideas_pack_writes_html_and_pdf_without_a_display(capsys, demo_catalogue,
                                                          tmp_path) -> None:
    html, pdf = tmp_path / "pack.html", tmp_path / "pack.pdf"
    code, out, err = _cli(capsys, "ideas", "pack", "2", "--html", str(html), "--pdf", str(pdf),
                          "--catalogue", str(demo_catalogue))
    assert code == 0, err
    page = html.read_text(encoding="utf-8")
    assert "<h2>Reviews</h2>" in page or 'class="major">Reviews' in page
    assert "@media print" in page and "Fine. Keep the grid small." in page
    data = pdf.read_bytes()
    pages = int(re.search(r"\((\d+) pages\)", out).group(1))
    assert data.startswith(b"%PDF") and pages > 3
    # one page object (/Type /Page) per page (ISO 32000-1 = PDF 1.7, section 7.7.3.3) [memory]
    assert len(re.findall(rb"/Type\s*/Page\b", data)) == pages
    code, _, err = _cli(capsys, "ideas", "pack", "2", "--catalogue", str(demo_catalogue))
    assert code == 1 and "--html PATH" in err


def test_runs_show_prints_the_figures_against_capital_the_years_and_months(
        capsys, demo_catalogue) -> None:
    with Catalogue(demo_catalogue) as cat:
        run = cat.run(2)
    code, out, _ = _cli(capsys, "runs", "show", "2", "--monthly", "--catalogue",
                        str(demo_catalogue))
    assert code == 0
    assert "Year by year (net of costs):" in out and "Monthly net returns" in out
    net = run.daily_pnl["net_pnl"]
    # reference library: pandas: calendar-year sums of the stored daily net P&L
    for year, total in net.groupby(net.index.year).sum().items():
        line = next(x for x in out.splitlines() if x.startswith(f"{year} "))
        assert f"{total:,.0f}" in line
    assert "Trades:" in out and "Verdict:" in out
