"""A PDF page laid out with a cursor: fonts, word wrap, paragraphs, boxes and tables.

:class:`Page` keeps a cursor in inches from the top edge and writes real PDF
text (ReportLab), so every number is text a PDF reader can search and
extract: in the PDF standard Helvetica when all text is Windows-1252
(:data:`CORE_FONT`, nothing embedded), else in an embedded subset of DejaVu
Sans (:data:`EMBEDDED_FONT`). A page made ``dry`` only measures: the plan's
sections are laid out dry to choose their sizes before they are drawn
(:mod:`notchkit.report.pdf`).
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from notchkit.report.pdfdraw import Face, text_lines
from notchkit.report.rows import Table

if TYPE_CHECKING:
    from reportlab.pdfgen.canvas import Canvas

PAGE_SIZES_IN = {"a4": (210.0 / 25.4, 297.0 / 25.4), "letter": (8.5, 11.0)}
"""Page sizes in inches: ISO 216 A4 (210 x 297 mm) and ANSI US Letter (8.5 x 11 in)."""
MARGIN_IN = 0.6
LINE_EM = 1.25
"""Line pitch of all text, as a multiple of the font size."""


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
def register_font(font: PdfFont) -> None:
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


def strings_of(obj: object) -> list[str]:
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


def pt_in(size: float) -> float:
    return size / 72.0


def wrap_text(text: str, width_in: float, size: float, font_name: str) -> list[str]:
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
    """See :meth:`Page.table_layout`: widths of ``t``'s columns across ``width`` inches and
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
    cells = tuple(tuple(tuple(wrap_text(cell, cw - 0.08, size, name))
                        for cell, cw in zip(row, cols, strict=True)) for row, name in rows)
    return tuple(cols), cells


class Page:
    """One page: a cursor in inches from the top edge, drawing on ``canvas`` (None: a dry
    layout that only measures)."""

    def __init__(self, size_in: tuple[float, float], dry: bool = False, font: PdfFont = EMBEDDED_FONT,
                 canvas: Canvas | None = None):
        register_font(font)  # its metrics measure the text even on a dry page
        self.font = font
        self.w, self.h = size_in
        self.c = None if dry else canvas
        self.y = MARGIN_IN
        self.x0 = MARGIN_IN
        self.width = self.w - 2 * MARGIN_IN

    def wrap(self, text: str, width_in: float, size: float, bold: bool = False) -> list[str]:
        return wrap_text(text, width_in, size, self.font.face.name(bold))

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
        return pt_in(size) * LINE_EM

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
        self.y += pt_in(size) * 1.5

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


