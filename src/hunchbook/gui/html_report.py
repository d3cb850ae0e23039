"""Self-contained HTML report of a run, for sharing with a reviewer.

The page carries everything inline: styles, the charts as PNG data URIs, the rule file and
the run's provenance. Every text that comes from the catalogue (titles, rules, reasons) is
escaped.
"""

from __future__ import annotations

import base64
import os
from pathlib import Path

from PySide6.QtCore import QBuffer, QByteArray, QIODevice, Qt
from PySide6.QtWidgets import QWidget

from hunchbook.core import formats
from hunchbook.core.atomic import write_atomically
from hunchbook.core.errors import HunchbookError
from hunchbook.core.presenter import (
    HOLDOUT_HEADERS,
    holdout_rows,
    market_table,
    set_table,
)
from hunchbook.core.verdict import CAUTION, Check
from hunchbook.gui.charts.result_charts import ResultCharts
from hunchbook.gui.charts.run_figures import (
    FigureRow,
    format_params,
    format_value,
    performance_rows,
    statistic_rows,
    verdict_text,
)
from hunchbook.gui.charts.theme import light_theme
from hunchbook.gui.html_book import BOOK_CAPTION, book_section
from hunchbook.gui.html_capital import capital_section, sets_note
from hunchbook.gui.html_parts import escaped as _e
from hunchbook.gui.html_parts import table_html as _table
from hunchbook.store.records import HoldoutView, Idea, RunRecord

#: Pixel size of each chart image in the report (the sweep and book charts differ).
CHART_SIZE = (960, 360)
SWEEP_SIZE = (720, 400)
SIZES = {"sweep": SWEEP_SIZE, "book": (720, 220)}

#: Caption of each chart, by the names of :meth:`ResultCharts.named`.
CAPTIONS = {
    "equity": "Cumulative P&L of the chosen set, gross and net of costs (the dashed vertical "
              "line marks the holdout boundary; held-out curves after it are dashed).",
    "drawdown": "Net drawdown: how far cumulative net P&L stood below its running peak.",
    "sweep": "Net Sharpe ratio of every parameter set run (the chosen set outlined).",
    "contribution": "Total P&L of the chosen set per market, gross and net.",
    "costs": "Net Sharpe ratio of the chosen set with costs scaled by each multiple.",
    "book": BOOK_CAPTION,
}

_STYLE = """
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; color: #222;
       max-width: 1000px; margin: 2em auto; padding: 0 1em; line-height: 1.45; }
h1 { font-size: 1.6em; margin-bottom: 0.1em; }
h2 { font-size: 1.15em; margin-top: 1.8em; border-bottom: 1px solid #ddd; }
.meta, .caution, figcaption { color: #666; font-size: 0.9em; }
.verdict { border-left: 6px solid #888; background: #f4f4f4; padding: 0.6em 1em;
           border-radius: 4px; }
.verdict .label { font-size: 1.5em; font-weight: bold; }
.verdict.passes { border-color: #268c4a; background: #e9f4ec; }
.verdict.selection_luck { border-color: #c48e00; background: #faf3e0; }
.verdict.lost_to_costs { border-color: #d6661c; background: #fbeee4; }
.verdict.too_little_data { border-color: #2c70c4; background: #e8f0fa; }
.verdict.no_edge { border-color: #c03434; background: #f9e8e8; }
table { border-collapse: collapse; margin: 0.5em 0; }
th, td { padding: 0.2em 0.8em; border-bottom: 1px solid #eee; text-align: left; }
table.checks tr.fail td:first-child { color: #b02a2a; font-weight: bold; }
table.checks tr.pass td:first-child { color: #26804a; }
table.checks tr.warn td:first-child { color: #9a6f00; font-weight: bold; }
td.note { font-size: 0.85em; color: #555; }
table.checks caption { text-align: left; font-size: 0.9em; color: #555; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
dl { display: grid; grid-template-columns: max-content 1fr; gap: 0.2em 1em; }
dt { font-weight: bold; } dd { margin: 0; white-space: pre-wrap; }
pre { background: #f6f6f6; padding: 0.8em; overflow-x: auto; font-size: 0.9em; }
figure { margin: 1em 0; } img { max-width: 100%; border: 1px solid #eee; }
.caution { border-top: 1px solid #ddd; margin-top: 2em; padding-top: 0.6em; }
.flag { border-left: 6px solid #c48e00; background: #faf3e0; padding: 0.4em 0.8em; }
"""


def png_bytes(widget: QWidget, size: tuple[int, int] = CHART_SIZE) -> bytes:
    """Render a widget offscreen at a size and return it as PNG bytes."""
    widget.setAttribute(Qt.WidgetAttribute.WA_DontShowOnScreen, True)
    widget.resize(*size)
    widget.show()
    try:
        image = widget.grab()
    finally:
        widget.hide()
    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    image.save(buffer, "PNG")
    buffer.close()
    return bytes(data.data())


def render_chart_images(run: RunRecord, held_out: HoldoutView | None = None
                        ) -> dict[str, bytes]:
    """PNG images of a run's charts in the light report theme, by chart name (with the
    held-out curves when ``held_out`` continues this run)."""
    charts = ResultCharts(light_theme())
    charts.show_run(run)
    if held_out is not None and held_out.run_id == run.id:
        charts.show_held_out(held_out.daily_pnl)
    images = {name: png_bytes(chart, SIZES.get(name, CHART_SIZE))
              for name, chart in charts.named().items()}
    for chart in (charts.equity, charts.drawdown, charts.contribution, charts.heatmap,
                  charts.profile, charts.costs, charts.book):
        chart.deleteLater()
    return images


def _figures_table(rows: list[FigureRow], headers: tuple[str, str] = ("Gross", "Net"), *,
                   explained: bool = False) -> str:
    """A gross/net figures table; ``explained`` adds a column saying what each figure means."""
    body = []
    for row in rows:
        gross = "" if row.gross is None and row.net is not None \
            else format_value(row.gross, row.kind)
        meaning = f'<td class="note">{_e(row.note)}</td>' if explained else ""
        body.append(f'<tr title="{_e(row.note)}"><td>{_e(row.label)}</td>'
                    f'<td class="num">{_e(gross)}</td>'
                    f'<td class="num">{_e(format_value(row.net, row.kind))}</td>{meaning}</tr>')
    head = "<th>What it means</th>" if explained else ""
    return (f'<table><thead><tr><th>Figure</th><th class="num">{_e(headers[0])}</th>'
            f'<th class="num">{_e(headers[1])}</th>{head}</tr></thead><tbody>' + "".join(body)
            + "</tbody></table>")


def _idea_section(idea: Idea) -> str:
    source = idea.source_kind + (f" — {idea.citation}" if idea.citation else "")
    items = [("Hypothesis", idea.hypothesis),
             (f"Rationale ({idea.rationale_kind})" if idea.rationale_kind else "Rationale",
              idea.rationale),
             ("Source", source), ("Submitted by", idea.submitted_by),
             ("Reviewer", idea.reviewer or ""), ("Markets", ", ".join(idea.markets)),
             ("Tags", ", ".join(idea.tags)), ("Stage", idea.stage)]
    body = "".join(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>" for k, v in items if v)
    if idea.link:
        link = _e(idea.link)
        shown = (f'<a href="{link}">{link}</a>'
                 if idea.link.lower().startswith(("https://", "http://")) else link)
        body += f"<dt>Link</dt><dd>{shown}</dd>"
    return f"<dl>{body}</dl>"


def _holdout_section(run: RunRecord, held_out: HoldoutView | None) -> str:
    boundary = run.result.holdout_boundary if run.result else None
    if held_out is None:
        if boundary is None:
            return "<p>This run saw the whole history: nothing was held out of it.</p>"
        return (f"<p>Locked: this run saw only the dates before {_e(boundary)} (the holdout "
                "boundary, the dashed line on the charts). The held-out years have not been "
                "unlocked for this idea.</p>")
    f = held_out.figures
    also = ("" if held_out.run_id == run.id else
            f" These figures continue run {held_out.run_id}, not this run.")
    seen = formats.moment(held_out.seen_at)
    return (f"<p>Unlocked by {_e(held_out.seen_by)} on {_e(seen)}: rule revision "
            f"{_e(held_out.revision_number)}, set {_e(format_params(held_out.chosen_params))} "
            f"(run {_e(held_out.run_id)}), run once on the held-out dates {_e(f.first_date)} "
            f"to {_e(f.last_date)}.{_e(also)}</p>"
            + _figures_table(holdout_rows(f, run.result.currency if run.result else ""),
                             HOLDOUT_HEADERS) + f"<p>{_e(f.finding())}</p>")


#: How each check status reads in the report.
CHECK_STATUS = {"pass": "pass", "fail": "FAIL", "warn": "warning", "skip": "not run"}


def _checks_table(checks: tuple[Check, ...]) -> str:
    """Every check of the verdict in order, with its status, figure and finding."""
    if not checks:
        return ""
    rows = "".join(f'<tr class="{_e(c.status)}"><td>{_e(CHECK_STATUS.get(c.status, c.status))}'
                   f"</td><td>{_e(c.name)}</td><td>{_e(c.figure)}</td><td>{_e(c.finding)}</td>"
                   "</tr>" for c in checks)
    return ('<table class="checks"><caption>Every check, in order: the first that fails '
            "decides</caption><thead><tr><th>Status</th><th>Check</th><th>Figure</th>"
            f"<th>Finding</th></tr></thead><tbody>{rows}</tbody></table>")


def prereg_text(run: RunRecord) -> str:
    """A run against its idea's pre-registration, in words."""
    prereg = run.preregistration
    if prereg is None:
        return "not checked (recorded without a pre-registration to check it against)"
    if prereg.within:
        return (f"within the pre-registration frozen at the first run (version "
                f"{prereg.version} in force)")
    return prereg.finding


def _prereg_flag(run: RunRecord) -> str:
    """A flag above the verdict of a run outside its pre-registration ('' otherwise)."""
    prereg = run.preregistration
    if prereg is None or prereg.within:
        return ""
    return f'<p class="flag"><strong>Flagged.</strong> {_e(prereg.finding)}</p>'


def data_since_text(run: RunRecord) -> str:
    """Which markets' prices changed since the idea's run before this one, in words."""
    result = run.result
    if result is None or result.market_fingerprints is None:
        return "not recorded"
    changes = result.data_changes
    return "no market changed (or a first run)" if changes is None else changes.sentence()


def record_html(run: RunRecord, *, recorded_at: str) -> str:
    """The run's provenance as a definition list (``recorded_at``: the time as shown)."""
    result = run.result
    items = [("Run", f"{run.id} ({run.uuid})"),
             ("Recorded", f"{recorded_at} by {run.recorded_by}"),
             ("Rules revision", run.revision_number),
             ("Chosen set", format_params(dict(run.chosen_params))),
             ("Parameter sets run", run.set_count),
             ("Trials counted for the idea", run.trial_count),
             ("Pre-registration", prereg_text(run)),
             ("Data fingerprint", run.data_fingerprint),
             ("Data since the idea's last run", data_since_text(run)),
             ("Holdout boundary", (result.holdout_boundary if result else None)
              or "none (the whole history)"),
             ("Engine version", run.engine_version)]
    return "".join(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>" for k, v in items)


def report_html(*, idea: Idea, run: RunRecord, rule_text: str, images: dict[str, bytes],
                held_out: HoldoutView | None = None) -> str:
    """The report page as one HTML string (``images``: PNG bytes by chart name;
    ``held_out``: the idea's unlocking of its held-out years, if any)."""
    verdict = verdict_text(run)
    title = f"{idea.title} — run {run.id}"
    reasons = "".join(f"<li>{_e(r)}</li>" for r in verdict.reasons)
    figures = "".join(
        f'<figure><img alt="{_e(name)} chart" src="data:image/png;base64,'
        f'{base64.b64encode(png).decode("ascii")}"><figcaption>{_e(CAPTIONS.get(name, ""))}'
        "</figcaption></figure>" for name, png in images.items())
    result = run.result
    notes_html = "".join(f"<p>{_e(n)}</p>" for n in result.statistics.notes) if result else ""
    markets_html = _table(market_table(result), "No per-market figures were recorded for this "
                          "run.") if result else ""
    sets_html = _table(set_table(result), "No parameter sets were recorded for this "
                       "run.") if result else ""
    provenance_html = record_html(run, recorded_at=formats.moment(run.recorded_at))
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_e(title)}</title>
<style>{_STYLE}</style>
</head>
<body>
<h1>{_e(idea.title)}</h1>
<p class="meta">Run {_e(run.id)} of {_e(formats.moment(run.recorded_at))} by
{_e(run.recorded_by)}; rules
revision {_e(run.revision_number)}; {_e(run.set_count)} parameter sets; {_e(run.trial_count)}
trials counted for the idea.</p>
{_prereg_flag(run)}
<section class="verdict {_e(verdict.outcome)}">
<div class="label">{_e(verdict.label)}</div>
<p><strong>{_e(verdict.action)}</strong></p>
<ul>{reasons}</ul>
{_checks_table(verdict.checks)}
</section>
<h2>Idea</h2>
{_idea_section(idea)}
<h2>Chosen set over its whole history</h2>
<p>Chosen set: {_e(format_params(dict(run.chosen_params)))}.</p>
{_figures_table(performance_rows(run))}
{capital_section(run)}
<h2>How far to trust it (days all sets share)</h2>
{_figures_table(statistic_rows(run), explained=True)}
{notes_html}
<h2>Against the book (promoted ideas)</h2>
{book_section(run)}
<h2>Held-out years</h2>
{_holdout_section(run, held_out)}
<h2>Charts</h2>
{figures}
<h2>Markets</h2>
{markets_html}
<h2>Parameter sets</h2>
{sets_html}
{sets_note()}
<h2>Rule file</h2>
<pre>{_e(rule_text)}</pre>
<h2>Run record</h2>
<dl>{provenance_html}</dl>
<p class="caution">{_e(CAUTION)}</p>
</body>
</html>
"""


def write_html_report(path: str | os.PathLike[str], *, idea: Idea, run: RunRecord,
                      rule_text: str, images: dict[str, bytes],
                      held_out: HoldoutView | None = None) -> None:
    """Write the report atomically (a temporary file beside the target, then a rename).

    Raises
    ------
    HunchbookError
        The folder is missing or the file cannot be written.
    """
    target = Path(path)
    text = report_html(idea=idea, run=run, rule_text=rule_text, images=images,
                       held_out=held_out)
    try:
        write_atomically(target, text.encode("utf-8"))
    except OSError as exc:
        raise HunchbookError(f"report '{target}': could not write it ({exc.strerror or exc})"
                             ) from None
