"""The shared rows (:class:`notchkit.report.rows.Table`) as plain text for a terminal.

The terminal prints the very tables the PDF and the HTML print (same headings,
same state words, ``-`` for no value); only the layout is its own: columns
padded to their widest cell, a rule under the heading, the note after.
"""

from __future__ import annotations

import textwrap

from notchkit.report.rows import Table

NOTE_WIDTH = 100
"""Characters a table's note is wrapped to."""


def table_lines(t: Table, indent: str = "", *, title: bool = True) -> list[str]:
    """``t`` as lines of text: its title, the heading, a rule, the rows, then its note."""
    widths = [max(len(r[i]) for r in (t.header, *t.rows)) for i in range(len(t.header))]

    def fmt(row: tuple[str, ...]) -> str:
        cells = (c.rjust(w) if a == "right" else c.ljust(w)
                 for c, w, a in zip(row, widths, t.align, strict=True))
        return (indent + "  ".join(cells)).rstrip()

    out = [indent + t.title + ":"] if title and t.title else []
    out += [fmt(t.header), indent + "  ".join("-" * w for w in widths), *(fmt(r) for r in t.rows)]
    if not t.rows:
        out.append(indent + "(none)")
    if t.note:
        out += textwrap.wrap(t.note, NOTE_WIDTH, initial_indent=indent, subsequent_indent=indent)
    return out
