"""Journal entries as HTML: Markdown rendered with raw HTML off, automatic entries as sentences.

People write notes in Markdown (CommonMark; markdown-it-py, with bare web addresses made links);
HTML typed into a note is shown as text, never rendered, and links with unsafe schemes
(``javascript:``, ``data:``...) are left as text by the renderer. Automatic entries read as the
sentences of :func:`hunchbook.store.entry_text.sentence`.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from typing import TYPE_CHECKING

from hunchbook.core import formats
from hunchbook.gui.html_parts import escaped
from hunchbook.store.entry_text import kind_label, sentence
from hunchbook.store.records import Entry

if TYPE_CHECKING:
    from markdown_it import MarkdownIt


@functools.cache
def _renderer() -> MarkdownIt:
    from markdown_it import MarkdownIt  # imported when the first note is shown

    return MarkdownIt("commonmark", {"html": False, "linkify": True, "breaks": True}
                      ).enable(["linkify", "strikethrough"])


def markdown_html(text: str) -> str:
    """Markdown as HTML: emphasis, lists, code, links; raw HTML escaped, never rendered."""
    return _renderer().render(text)


def entry_html(entry: Entry) -> str:
    """One entry's body as HTML (its sentence or note, rendered from Markdown)."""
    return markdown_html(sentence(entry))


def timeline_html(entries: Sequence[Entry]) -> str:
    """Entries oldest first, each headed by when, kind and who; an entry corrected later is in
    italics with its correction below it."""
    by_id = {e.id: e for e in entries}
    blocks = []
    for entry in entries:
        head = " \u00b7 ".join((formats.moment(entry.at), kind_label(entry.kind), entry.by))
        if entry.corrects is not None:
            head += f" \u00b7 corrects entry {entry.corrects}"
        body = entry_html(entry)
        if entry.corrected_by is not None:
            later = by_id.get(entry.corrected_by)
            body = (f"<i>{body}</i>" + (
                f"<p><b>Corrected later:</b></p>{entry_html(later)}" if later is not None
                else "<p><b>Corrected later.</b></p>"))
        blocks.append(f'<div class="entry"><p style="color:#666666; margin-bottom:0px">'
                      f"{escaped(head)}</p>{body}</div>")
    return "".join(blocks)
