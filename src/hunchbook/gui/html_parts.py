"""Pieces shared by the HTML pages (run report, review pack, book section): escaping catalogue
text and a table of named rows from the presenter."""

from __future__ import annotations

import html

from hunchbook.core.presenter import Table, format_value


def escaped(value: object) -> str:
    """Text from the catalogue or a record, safe inside HTML (quotes included)."""
    return html.escape("" if value is None else str(value), quote=True)


def table_html(table: Table, empty: str) -> str:
    """A presenter table (named rows, columns with notes) as an HTML table; ``empty`` is said
    instead when it has no rows."""
    if not table.rows:
        return f"<p>{escaped(empty)}</p>"
    head = "".join(f'<th class="num" title="{escaped(c.note)}">{escaped(c.label)}</th>'
                   for c in table.columns)
    rows = "".join(
        f"<tr><td>{escaped(name)}</td>" + "".join(
            f'<td class="num">{escaped(format_value(v, c.kind))}</td>'
            for v, c in zip(values, table.columns, strict=True)) + "</tr>"
        for name, values in table.rows)
    return (f"<table><thead><tr><th>{escaped(table.head)}</th>{head}</tr></thead><tbody>{rows}"
            "</tbody></table>")
