"""The printed plan as PDF, written with ReportLab: real, extractable text.

Pages, in order: the cover; the threat pages (transmitter x receiver matrix,
then the threat table, continued over as many pages as it needs); one page
per filter (drawing, curve, requirements, cut list, tolerance, power check,
trimming steps); the cut labels (:func:`tags_per_page` tags a page); the
cautions. Text is laid out here with a simple cursor (inches from the top) and
written as PDF text, so every number is real text a PDF reader can search and
extract: in the PDF standard Helvetica when all text is Windows-1252
(:data:`CORE_FONT`, nothing embedded), else in an embedded subset of DejaVu Sans
(:data:`EMBEDDED_FONT`). The arrangement drawing and the curve are drawn from
the same data matplotlib draws for the PNG images
(:mod:`notchkit.report.sketch`, :func:`notchkit.report.curves.plot_layout`) by
:mod:`notchkit.report.pdfdraw`.

Each section's pages are drawn as PDF forms, then put in order with their
footers (:class:`PlanPdf`), once every filter is designed.
"""

from __future__ import annotations

import functools
import io
import math
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from notchkit.report.files import write_bytes_atomic
from notchkit.report.pdfdraw import Face, draw_plot, draw_sketch, text_lines
from notchkit.report.text import FilterText, PlanText, Table, Tag

PAGE_SIZES_IN = {"a4": (210.0 / 25.4, 297.0 / 25.4), "letter": (8.5, 11.0)}
"""Page sizes in inches: ISO 216 A4 (210 x 297 mm) and ANSI US Letter (8.5 x 11 in)."""
MARGIN_IN = 0.6
LINE_EM = 1.25
"""Line pitch of all text, as a multiple of the font size."""
_TAG_W_IN, _TAG_H_IN = 3.35, 1.3


@dataclass(frozen=True, slots=True, kw_only=True)
class PdfFont:
    """A font setup for the plan and the metrics the layout needs from it."""

    name: str
    face: Face
    files: tuple[str, str] | None = None
    """TrueType files (regular, bold) under matplotlib's bundled fonts, to embed; None:
    a PDF standard font."""

    @property
    def height_em(self) -> float:
        """Ascender + descender per unit of font size."""
        return self.face.ascent_em + self.face.descent_em


CORE_FONT = PdfFont(
    name="Helvetica (PDF standard font)",
    face=Face(regular="Helvetica", bold="Helvetica-Bold", ascent_em=0.718, descent_em=0.207),
)
"""The PDF's standard Helvetica (ISO 32000-1 sec. 9.6.2.2; ascender 718 and descender
207 per 1000 em from its AFM): nothing embedded; only for text that Windows-1252 (the
standard fonts' encoding here) can spell."""
EMBEDDED_FONT = PdfFont(
    name="DejaVu Sans (embedded subset)",
    face=Face(regular="notchkit-DejaVuSans", bold="notchkit-DejaVuSans-Bold", ascent_em=0.76,
              descent_em=0.24),  # OS/2 typographic ascender and descender
    files=("DejaVuSans.ttf", "DejaVuSans-Bold.ttf"),
)
"""An embedded TrueType font for text with characters outside Windows-1252 (the copy
of DejaVu Sans that ships with matplotlib)."""


def choose_font(strings: Sequence[str]) -> PdfFont:
    """:data:`CORE_FONT` when every string can be spelled in Windows-1252, else :data:`EMBEDDED_FONT`."""
    try:
        for s in strings:
            s.encode("cp1252")
    except UnicodeEncodeError:
        return EMBEDDED_FONT
    return CORE_FONT


@functools.cache
def _register(font: PdfFont) -> None:
    """Make ``font`` known to ReportLab (once): embedded fonts are read from matplotlib's
    bundled copies, found without importing matplotlib."""
    if font.files is None:
        return
    import importlib.util

    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    spec = importlib.util.find_spec("matplotlib")
    places = spec.submodule_search_locations if spec is not None else None
    folder = Path(next(iter(places or ())), "mpl-data", "fonts", "ttf")
    if not (folder / font.files[0]).is_file():  # a system matplotlib may keep its data elsewhere
        import matplotlib

        folder = Path(matplotlib.get_data_path(), "fonts", "ttf")
    for name, file in zip((font.face.regular, font.face.bold), font.files, strict=True):
        pdfmetrics.registerFont(TTFont(name, str(folder / file)))


def strings_of(obj: Any) -> list[str]:
    """Every string inside a (nested) dataclass / tuple, for :func:`choose_font`."""
    out: list[str] = []
    stack = [obj]
    while stack:
        o = stack.pop()
        if isinstance(o, str):
            out.append(o)
        elif isinstance(o, tuple | list):
            stack.extend(o)
        elif hasattr(o, "__dataclass_fields__"):
            stack.extend(getattr(o, f) for f in o.__dataclass_fields__)
    return out


def page_size_in(page_size: str) -> tuple[float, float]:
    from notchkit.errors import UsageError

    try:
        return PAGE_SIZES_IN[page_size]
    except KeyError:
        raise UsageError(f"page size {page_size!r} must be one of {', '.join(PAGE_SIZES_IN)}") from None


def tags_per_page(page_size: str) -> int:
    """How many cut labels fit on one page (two columns)."""
    w, h = page_size_in(page_size)
    rows = int((h - 2 * MARGIN_IN - 0.9) // (_TAG_H_IN + 0.12))
    cols = int((w - 2 * MARGIN_IN + 0.2) // (_TAG_W_IN + 0.2))
    return max(1, rows * cols)


def _pt_in(size: float) -> float:
    return size / 72.0


def _wrap(text: str, width_in: float, size: float, font_name: str) -> list[str]:
    """``text`` broken into lines no wider than ``width_in`` in font ``font_name`` at
    ``size`` points, measured with the font's own glyph widths."""
    return list(_wrap_cached(str(text), round(width_in * 72.0, 3), font_name, float(size)))


@functools.lru_cache(maxsize=65536)
def _width_pt(word: str, font_name: str, size: float) -> float:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    return stringWidth(word, font_name, size)


@functools.lru_cache(maxsize=8192)
def _wrap_cached(text: str, width: float, font_name: str, size: float) -> tuple[str, ...]:
    """Greedy word wrap (the widths add up: ReportLab writes no kerning). A paragraph's
    leading spaces are kept and its continuation lines indented two spaces more; a word
    wider than a whole line is broken between characters."""
    space = _width_pt(" ", font_name, size)
    out: list[str] = []
    for para in text.split("\n"):
        words = para.split()
        if not words:
            out.append("")
            continue
        indent = len(para) - len(para.lstrip(" "))
        prefix, prefix_w = " " * indent, indent * space
        line: list[str] = []
        used = prefix_w
        for word in words:
            w = _width_pt(word, font_name, size)
            if line and used + space + w <= width:
                line.append(word)
                used += space + w
                continue
            if line:
                out.append(prefix + " ".join(line))
                prefix, prefix_w = " " * (indent + 2), (indent + 2) * space
            while prefix_w + w > width and len(word) > 1:  # break a word too long for any line
                k = len(word) - 1
                while k > 1 and prefix_w + _width_pt(word[:k], font_name, size) > width:
                    k -= 1
                out.append(prefix + word[:k])
                prefix, prefix_w = " " * (indent + 2), (indent + 2) * space
                word = word[k:]
                w = _width_pt(word, font_name, size)
            line, used = [word], prefix_w + w
        out.append(prefix + " ".join(line))
    return tuple(out)


_Cells = tuple[tuple[tuple[str, ...], ...], ...]
"""Rows of cells, each cell its wrapped lines."""


@functools.lru_cache(maxsize=512)
def _table_layout(t: Table, size: float, width: float, face: Face) -> tuple[tuple[float, ...], _Cells]:
    """See :meth:`_Page.table_layout`: widths of ``t``'s columns across ``width`` inches and
    its cells wrapped to them (the header in bold)."""
    pad = 0.1
    need = []
    for c in range(len(t.header)):
        words = [(w, face.bold) for w in str(t.header[c]).split()]
        words += [(w, face.regular) for r in t.rows for w in str(r[c]).split()]
        need.append(max((_width_pt(w, f, size) for w, f in words), default=0.0) / 72.0 + pad)
    total_w = sum(t.widths)
    share = [width * w / total_w for w in t.widths]
    if sum(need) >= width:  # cannot keep every word whole: fall back to the shares
        cols = share
    else:
        # Grow the columns below their share proportionally, never under their need.
        cols = [max(n, s_) for n, s_ in zip(need, share, strict=True)]
        excess = sum(cols) - width
        if excess > 0:
            slack = [c - n for c, n in zip(cols, need, strict=True)]
            total_slack = sum(slack)
            cols = [c - excess * s_ / total_slack for c, s_ in zip(cols, slack, strict=True)]
    rows = [(t.header, face.bold), *((r, face.regular) for r in t.rows)]
    cells = tuple(tuple(tuple(_wrap(cell, cw - 0.08, size, name)) for cell, cw in zip(row, cols, strict=True))
                  for row, name in rows)
    return tuple(cols), cells


class _Page:
    """One page: a cursor in inches from the top edge, drawing on ``canvas`` (None: a dry
    layout that only measures)."""

    def __init__(self, size_in: tuple[float, float], dry: bool = False, font: PdfFont = EMBEDDED_FONT,
                 canvas: Any = None):
        _register(font)  # its metrics measure the text even on a dry page
        self.font = font
        self.w, self.h = size_in
        self.c = None if dry else canvas
        self.y = MARGIN_IN
        self.x0 = MARGIN_IN
        self.width = self.w - 2 * MARGIN_IN

    def wrap(self, text: str, width_in: float, size: float, bold: bool = False) -> list[str]:
        return _wrap(text, width_in, size, self.font.face.name(bold))

    @property
    def bottom(self) -> float:
        return self.h - MARGIN_IN - 0.25  # room for the footer

    @property
    def room(self) -> float:
        return self.bottom - self.y

    def _px(self, x_in: float) -> float:
        return x_in * 72.0

    def _py(self, y_in: float) -> float:
        return (self.h - y_in) * 72.0

    def put(self, x_in: float, y_in: float, s: str, size: float, *, ha: str = "left",
            bold: bool = False) -> None:
        """One line of text whose line box (:data:`LINE_EM` x size) has its top at ``y_in``."""
        self.block(x_in, y_in, [s], size, ha=ha, bold=bold)

    def block(self, x_in: float, y_in: float, lines: Sequence[str], size: float, ha: str = "left",
              bold: bool = False) -> float:
        """Lines :data:`LINE_EM` x size apart, the first line box's top at ``y_in``; returns
        the height in inches. Blank lines take their room and draw nothing."""
        pitch = self.pitch(size)
        if self.c is not None and any(lines):
            f = self.font.face
            lead = (f.ascent_em + 0.5 * (LINE_EM - self.font.height_em)) * size  # baseline below box top
            self.c.setFillGray(0.0)
            text_lines(self.c, f, self._px(x_in), self._py(y_in), lines, size, pitch * 72.0, ha=ha,
                       bold=bold, lead=lead)
        return len(lines) * pitch

    def pitch(self, size: float) -> float:
        return _pt_in(size) * LINE_EM

    def hline(self, y_in: float, lw: float = 0.6, x0: float | None = None, x1: float | None = None) -> None:
        if self.c is not None:
            a = self.x0 if x0 is None else x0
            b = self.x0 + self.width if x1 is None else x1
            self.c.setStrokeGray(0.0)
            self.c.setLineWidth(lw)
            self.c.line(self._px(a), self._py(y_in), self._px(b), self._py(y_in))

    def rect(self, x: float, y: float, w: float, h: float, lw: float = 1.0, *,
             dash: Sequence[float] | None = None, fill: float | None = None) -> None:
        """A rectangle (top-left corner x, y; inches), black edge ``lw`` points wide (0: none),
        optionally dashed (points) and filled with grey ``fill``."""
        if self.c is not None:
            c = self.c
            c.saveState()
            c.setStrokeGray(0.0)
            c.setLineWidth(lw)
            if dash:
                c.setDash(list(dash))
            if fill is not None:
                c.setFillGray(fill)
            c.rect(self._px(x), self._py(y + h), w * 72.0, h * 72.0, stroke=int(lw > 0),
                   fill=int(fill is not None))
            c.restoreState()

    # -- flowing content -------------------------------------------------

    def heading(self, s: str, size: float = 13.0) -> None:
        self.put(self.x0, self.y, s, size, bold=True)
        self.y += _pt_in(size) * 1.5

    def para(self, s: str, size: float = 8.0, indent: float = 0.0, bold: bool = False,
             gap: float = 0.04) -> None:
        wrapped = self.wrap(s, self.width - indent, size, bold)
        self.y += self.block(self.x0 + indent, self.y, wrapped, size, bold=bold)
        self.y += gap

    def para_height(self, s: str, size: float = 8.0, indent: float = 0.0, gap: float = 0.04,
                    bold: bool = False) -> float:
        return len(self.wrap(s, self.width - indent, size, bold)) * self.pitch(size) + gap

    def boxed(self, lines: Sequence[str], size: float = 10.0) -> None:
        """Lines in a heavy double box: stands out in black-and-white print without colour."""
        pad = 0.08
        wrapped = [w for s in lines for w in self.wrap(s, self.width - 2 * pad - 0.1, size, bold=True)]
        h = len(wrapped) * self.pitch(size) + 2 * pad
        self.rect(self.x0, self.y, self.width, h, lw=2.2)
        self.rect(self.x0 + 0.04, self.y + 0.04, self.width - 0.08, h - 0.08, lw=0.7)
        self.block(self.x0 + pad + 0.05, self.y + pad, wrapped, size, bold=True)
        self.y += h + 0.1

    def table_layout(self, t: Table, size: float) -> tuple[tuple[float, ...], _Cells]:
        """Column widths and every cell's wrapped lines (header row first); computed once
        per table, size and font (a page is laid out dry before it is drawn)."""
        return _table_layout(t, size, self.width, self.font.face)

    def row_heights(self, t: Table, size: float) -> tuple[float, list[float]]:
        _, cells = self.table_layout(t, size)
        hs = [max(len(c) for c in row) * self.pitch(size) for row in cells]
        return hs[0] + 0.06, hs[1:]

    def table(self, t: Table, size: float = 7.5, title: bool = True) -> None:
        """A table: bold header between rules, then rows on alternating light-grey bands.

        Cells are drawn row by row; a cell of several lines keeps its row's height.
        """
        if title and t.title:
            self.para(t.title, size + 0.5, bold=True, gap=0.02)
        cols, cells = self.table_layout(t, size)
        pitch = self.pitch(size)
        lift = 0.0
        header, rows = cells[0], cells[1:]
        self.hline(self.y, lw=1.0)
        y = self.y + 0.03
        n_h = max(len(c) for c in header)
        x = self.x0
        for c, (lines, cw) in enumerate(zip(header, cols, strict=True)):
            right = t.align[c] == "right"
            self.block(x + cw - 0.04 if right else x + 0.04, y, lines, size, ha="right" if right else "left",
                       bold=True)
            x += cw
        y += n_h * pitch + 0.03
        self.hline(y - 0.01, lw=0.8)
        counts = [max(len(c) for c in row) for row in rows]
        top = y + lift
        yy = top
        for r, n in enumerate(counts):
            if r % 2 == 1:
                self.rect(self.x0, yy - lift, self.width, n * pitch, lw=0.0, fill=0.9)
            yy += n * pitch
        # Row by row, so a PDF reader extracts each row as one line of text.
        yy = top
        for row, n in zip(rows, counts, strict=True):
            x = self.x0
            for c, cw in enumerate(cols):
                right = t.align[c] == "right"
                self.block(x + cw - 0.04 if right else x + 0.04, yy, row[c], size,
                           ha="right" if right else "left")
                x += cw
            yy += n * pitch
        self.y = top - lift + sum(counts) * pitch + 0.02
        self.hline(self.y, lw=0.8)
        if t.note:
            self.y += 0.03
            self.para(t.note, size - 0.5)
        self.y += 0.06

    def table_height(self, t: Table, size: float = 7.5, title: bool = True) -> float:
        h0, hs = self.row_heights(t, size)
        h = h0 + sum(hs) + 0.08
        if title and t.title:
            h += self.para_height(t.title, size + 0.5, gap=0.02, bold=True)
        if t.note:
            h += 0.03 + self.para_height(t.note, size - 0.5)
        return h

    def area(self, height_in: float, left_in: float = 0.0, bottom_pad_in: float = 0.0,
             right_in: float = 0.0) -> tuple[float, float, float, float] | None:
        """Take ``height_in`` of the page; return the box inside it (x, y, width, height in
        points, bottom-left origin) less the given margins, or None on a dry page."""
        box = None
        if self.c is not None:
            x = self.x0 + left_in
            w = self.width - left_in - right_in
            box = (self._px(x), self._py(self.y + height_in - bottom_pad_in), w * 72.0,
                   (height_in - bottom_pad_in) * 72.0)
        self.y += height_in
        return box


# ---------------------------------------------------------------- sections


def _cover(page: _Page, pt: PlanText, body: float = 9.0) -> None:
    page.heading(pt.title, 16.0)
    page.para("Coaxial stub filters for a shared radio site: what to cut, where it goes, and how to "
              "trim it.", 9.0)
    page.y += 0.1
    for label, value in pt.cover_facts:
        page.put(page.x0, page.y, f"{label}:", body, bold=True)
        lines = page.wrap(value, page.width - 1.6, body)
        for k, line in enumerate(lines):
            page.put(page.x0 + 1.5, page.y + k * page.pitch(body), line, body)
        page.y += len(lines) * page.pitch(body) + 0.02
    page.y += 0.15
    if pt.unmet:
        page.boxed([f"{len(pt.unmet)} FILTER(S) DO NOT MEET THEIR REQUIREMENTS - read before building:",
                    *pt.unmet], 10.5)
    else:
        page.boxed([pt.verdict], 10.0)
    page.table(pt.filters_table, 8.5)
    page.y += 0.05
    page.para("Contents: threats (matrix and table); one page per filter (arrangement, attenuation "
              "curve, requirements, cut list, tolerance, power check, trimming steps); cut labels; "
              "cautions.", 8.0)
    page.para("Read the cautions page before anyone cuts, climbs or transmits.", 8.0, bold=True)


def _threat_pages(new_page: Callable[[], _Page], matrix: Table, t: Table, size: float = 7.0) -> list[_Page]:
    pages = [new_page()]
    p = pages[0]
    p.heading("Threats", 13.0)
    msize = 8.0
    while msize > 5.0 and p.table_height(matrix, msize) > 0.45 * (p.bottom - p.y):
        msize -= 0.5
    p.table(matrix, msize)
    p.y += 0.05
    h0, hs = p.row_heights(t, size)
    i = 0
    first = True
    while True:
        title = t.title if first else f"{t.title} (continued)"
        avail = p.bottom - p.y - p.para_height(title, size + 0.5, gap=0.02, bold=True) - h0 - 0.1
        if t.note:
            avail -= 0.03 + p.para_height(t.note, size - 0.5)
        j, used = i, 0.0
        while j < len(hs) and used + hs[j] <= avail:
            used += hs[j]
            j += 1
        if j == i and len(hs) > i and p.y > MARGIN_IN + 0.5:
            p = new_page()  # not even one row fits under the matrix: start a fresh page
            pages.append(p)
            continue
        j = max(j, i + 1) if i < len(hs) else j
        p.table(t.chunk(i, j, title), size)
        first = False
        i = j
        if i >= len(hs):
            break
        p = new_page()
        pages.append(p)
        p.heading("Threats (continued)", 11.0)
    return pages


def _filter_page(page: _Page, ft: FilterText, curve: Any, spans: tuple[Any, Any], filt: Any,
                 body: float, draw_h: float, curve_h: float, part: str = "all") -> None:
    """One filter's page; ``part`` "first" stops after the cut list, "rest" starts after it."""
    from notchkit.report.drawing import arrangement_sketch

    if part == "rest":
        page.heading(f"{ft.title} (continued)", 13.0)
        _filter_rest(page, ft, body)
        return
    page.heading(ft.title, 13.0)
    if ft.meets:
        page.para(ft.verdict, body + 1, bold=True)
    else:
        page.boxed([ft.verdict], body + 1.5)
    for f in ft.facts:
        page.para(f, body, gap=0.0)
    page.y += 0.05
    box = page.area(draw_h)
    if box is not None:
        sketch = arrangement_sketch(filt, stub_labels=ft.stub_labels, line_labels=ft.line_labels,
                                    radio_label=ft.radio_label, antenna_label=ft.antenna_label,
                                    cable_label=ft.cable_label, fontsize=max(5.0, body - 0.5))
        draw_sketch(page.c, page.font.face, sketch, box)
    page.y += 0.08 + 2.0 * body / 72.0  # room for the curve's title
    box = page.area(curve_h, left_in=0.55, bottom_pad_in=0.85, right_in=0.1)
    if box is not None:
        draw_plot(page.c, page.font.face, box, curve, spans[0], spans[1], fontsize=body,
                  title=f"{ft.filter_id}: attenuation (S21) and reflection (S11)")
    page.table(ft.requirements, body - 0.5)
    page.table(ft.cuts, body - 0.5)
    if part == "all":
        _filter_rest(page, ft, body)
    else:
        page.para("Tolerance, power check and trimming steps: next page.", body, bold=True)


def _filter_rest(page: _Page, ft: FilterText, body: float) -> None:
    page.para("Tolerance", body + 0.5, bold=True, gap=0.0)
    for s in ft.tolerance:
        page.para(s, body - 0.5, gap=0.0)
    page.y += 0.06
    if ft.power is not None:
        page.table(ft.power, body - 0.5)
    else:
        page.para("Power check", body + 0.5, bold=True, gap=0.0)
    for s in ft.power_lines:
        page.para(s, body - 0.5, gap=0.0, bold=s.startswith(("WARNING", "CAUTION")))
    page.y += 0.06
    page.para("Trimming steps", body + 0.5, bold=True, gap=0.0)
    for s in ft.trim_steps:
        page.para(s, body - 0.5, gap=0.0)


def _constant(page: _Page) -> Callable[[], _Page]:
    """A ``new_page`` that hands back the one page already made."""
    return lambda: page


def _tag_pages(new_page: Callable[[], _Page], tags: Sequence[Tag], per_page: int) -> list[_Page]:
    pages = []
    for start in range(0, max(len(tags), 1), per_page):
        p = new_page()
        pages.append(p)
        p.heading("Cut labels" + (" (continued)" if start else ""), 13.0)
        p.para("Print at 100 % scale, cut along the dashed lines and tape each label to its stub's cable "
               "next to the connector.", 8.0)
        p.y += 0.05
        chunk = tags[start:start + per_page]
        if not chunk:
            p.para("No stubs to cut.", 9.0)
        for k, tag in enumerate(chunk):
            col, row = k % 2, k // 2
            x = p.x0 + col * (_TAG_W_IN + 0.2)
            y = p.y + row * (_TAG_H_IN + 0.12)
            p.rect(x, y, _TAG_W_IN, _TAG_H_IN, lw=0.8, dash=(4.0, 2.4))
            yy = y + 0.1
            for i, line in enumerate(tag.lines):
                size = 11.0 if i in (0, 2) else 8.5
                p.put(x + 0.12, yy, line, size, bold=i in (0, 2))
                yy += _pt_in(size) * 1.35
    return pages


def _cautions(page: _Page, cautions: Sequence[tuple[str, str]]) -> None:
    page.heading("Cautions", 14.0)
    page.boxed(["Work on RF equipment can hurt or kill. Read this page before anyone cuts, climbs "
                "or transmits."], 10.0)
    for head, text in cautions:
        page.para(head, 10.0, bold=True, gap=0.0)
        page.para(text, 9.0, gap=0.12)


def _footer(page: _Page, left: str, k: int, n: int) -> None:
    y = page.h - MARGIN_IN + 0.05
    page.hline(y - 0.05, lw=0.4)
    page.put(page.x0, y, left, 6.5)
    page.put(page.x0 + page.width, y, f"page {k} of {n}", 6.5, ha="right")


@dataclass(frozen=True, slots=True, kw_only=True)
class PdfLayout:
    """How many pages each section took."""

    cover: int
    threats: int
    filters: int
    labels: int
    cautions: int

    @property
    def total(self) -> int:
        return self.cover + self.threats + self.filters + self.labels + self.cautions


_FIT_STEPS = ((8.0, 1.85, 2.9), (7.5, 1.75, 2.7), (7.0, 1.65, 2.5), (6.5, 1.55, 2.3), (6.0, 1.45, 2.15),
              (5.5, 1.35, 2.0), (5.0, 1.25, 1.85))


def _fit_filter(size_in: tuple[float, float], ft: FilterText, curve: Any, spans: Any,
                filt: Any, font: PdfFont) -> tuple[tuple[float, float, float], bool]:
    """The largest body size at which the filter's page fits on one page, and whether any does.

    When none does (a filter with very many bands), the page is split in two at
    the smallest size that fits both halves, the rest on a continuation page.
    """
    for step in _FIT_STEPS:
        dry = _Page(size_in, dry=True, font=font)
        _filter_page(dry, ft, curve, spans, filt, *step)
        if dry.y <= dry.bottom:
            return step, True
    for step in _FIT_STEPS:
        first, rest = _Page(size_in, dry=True, font=font), _Page(size_in, dry=True, font=font)
        _filter_page(first, ft, curve, spans, filt, *step, part="first")
        _filter_page(rest, ft, curve, spans, filt, *step, part="rest")
        if first.y <= first.bottom and rest.y <= rest.bottom:
            return step, False
    return _FIT_STEPS[-1], False


class PlanPdf:
    """The plan's PDF: each section's pages drawn as a PDF form XObject (ISO 32000-1
    sec. 8.10), then every page put in order with its footer (``page k of N``
    needs the count). A PDF reader shows and extracts a form's text as its
    page's own. The threat pages are drawn first, then the cautions, then the
    filters in their own order, so the same plan always gives the same pages
    (an embedded font subset numbers its glyphs in drawing order).
    """

    def __init__(self, *, title: str, font: PdfFont, page_size: str = "a4", footer: str = "") -> None:
        from reportlab.pdfgen.canvas import Canvas

        self.size_in = page_size_in(page_size)
        self.page_size = page_size
        self.font = font
        self.title = title
        self.footer = footer
        _register(font)
        self._buf = io.BytesIO()
        c = Canvas(self._buf, pagesize=(self.size_in[0] * 72.0, self.size_in[1] * 72.0), pageCompression=1)
        c.setTitle(title)
        c.setAuthor("notchkit")
        c.setSubject("Coaxial stub filter plan for a shared radio site")
        c.setCreator(footer or "notchkit")
        c.setProducer("notchkit (ReportLab)")
        self.c = c
        self._threats: tuple[Table, Table, tuple[str, ...]] | None = None
        self._cautions: tuple[tuple[tuple[str, str], ...], tuple[str, ...]] | None = None
        self._filters: dict[int, tuple[FilterText, Any, tuple[str, ...]]] = {}
        self._finished = False

    def _forms(self, prefix: str, draw: Callable[[Callable[[], _Page]], Any]) -> tuple[str, ...]:
        """Pages drawn as forms ``prefix-1``, ``prefix-2``, ...: ``draw`` gets the new-page factory."""
        c = self.c
        names: list[str] = []

        def new_page() -> _Page:
            if names:
                c.endForm()
            names.append(f"{prefix}-{len(names) + 1}")
            c.beginForm(names[-1])
            return _Page(self.size_in, font=self.font, canvas=c)

        draw(new_page)
        if names:
            c.endForm()
        return tuple(names)

    def threats(self, matrix: Table, threats: Table) -> None:
        """The threat pages: the transmitter x receiver matrix, then the threat table."""
        if self._threats is None:
            names = self._forms("nk-threats", lambda new_page: _threat_pages(new_page, matrix, threats))
            self._threats = (matrix, threats, names)

    def cautions(self, cautions: tuple[tuple[str, str], ...]) -> None:
        """The cautions page: (heading, text) pairs."""
        if self._cautions is None:
            self._cautions = (cautions, self._forms("nk-cautions", lambda new_page: _cautions(new_page(),
                                                                                              cautions)))

    def _draw_filter(self, index: int, ft: FilterText, part: tuple[Any, Any, Any]) -> None:
        filt, curve, spans = part
        step, one_page = _fit_filter(self.size_in, ft, curve, spans, filt, self.font)

        def draw(new_page: Callable[[], _Page]) -> None:
            for which in ("all",) if one_page else ("first", "rest"):
                _filter_page(new_page(), ft, curve, spans, filt, *step, part=which)

        self._filters[index] = (ft, part, self._forms(f"nk-filter{index + 1}", draw))

    def finish(self, pt: PlanText, filter_parts: Sequence[tuple[Any, Any, Any]]) -> tuple[bytes, PdfLayout]:
        """Draw what is missing, put every page in order with its footer and return the file.

        A :class:`PlanPdf` is finished once.
        """
        from reportlab import rl_config

        if self._finished:
            raise RuntimeError("this PlanPdf is finished already")
        self._finished = True
        self.threats(pt.matrix, pt.threats)
        self.cautions(pt.cautions)
        for k, (ft, part) in enumerate(zip(pt.filters, filter_parts, strict=True)):
            if k not in self._filters:
                self._draw_filter(k, ft, part)
        assert self._threats is not None and self._cautions is not None
        per = tags_per_page(self.page_size)
        label_starts = list(range(0, max(len(pt.tags), 1), per))
        filter_forms = [n for k in range(len(pt.filters)) for n in self._filters[k][2]]
        pages: list[str | int | None] = [None, *self._threats[2], *filter_forms, *label_starts,
                                         *self._cautions[1]]
        c = self.c
        for k, what in enumerate(pages, start=1):
            page = _Page(self.size_in, font=self.font, canvas=c)
            if what is None:
                _cover(page, pt)
            elif isinstance(what, int):  # the cut labels from tag ``what`` on
                _tag_pages(_constant(page), pt.tags[what:what + per], per)
            else:
                c.saveState()
                c.doForm(what)
                c.restoreState()
            _footer(page, self.footer or pt.title, k, len(pages))
            c.showPage()
        a85 = rl_config.useA85
        rl_config.useA85 = 0  # compressed streams stay binary: ASCII85 in Python was a tenth of the time
        try:
            c.save()
        finally:
            rl_config.useA85 = a85
        layout = PdfLayout(cover=1, threats=len(self._threats[2]), filters=len(filter_forms),
                           labels=len(label_starts), cautions=len(self._cautions[1]))
        return self._buf.getvalue(), layout


def render_pdf(pt: PlanText, filter_parts: Sequence[tuple[Any, Any, Any]], *, page_size: str = "a4",
               footer: str = "") -> tuple[bytes, PdfLayout]:
    """Render the plan to PDF bytes.

    Parameters
    ----------
    pt : PlanText
        Every row to print (:func:`notchkit.report.text.plan_text`).
    filter_parts : sequence of (filter, CurveData, (pass spans, notch spans))
        One per filter, in the order of ``pt.filters``.
    page_size : {"a4", "letter"}
    footer : str
        Left footer text of every page.

    Returns
    -------
    bytes, PdfLayout
    """
    page_size_in(page_size)
    pdf = PlanPdf(title=pt.title, font=choose_font(strings_of(pt) + [footer]), page_size=page_size,
                  footer=footer)
    return pdf.finish(pt, filter_parts)


def write_pdf(path: str | os.PathLike, pt: PlanText, filter_parts: Sequence[tuple[Any, Any, Any]], *,
              page_size: str = "a4", footer: str = "") -> tuple[Path, PdfLayout]:
    """Render with :func:`render_pdf` and write the file atomically."""
    data, layout = render_pdf(pt, filter_parts, page_size=page_size, footer=footer)
    return write_bytes_atomic(path, data), layout


def expected_label_pages(n_stubs: int, page_size: str) -> int:
    """Pages the cut labels take for ``n_stubs`` stubs (one page even with none)."""
    return max(1, math.ceil(n_stubs / tags_per_page(page_size)))
