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

import io
import math
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path

from notchkit.report.curves import FilterPart
from notchkit.report.files import write_bytes_atomic
from notchkit.report.pdfdraw import draw_plot, draw_sketch
from notchkit.report.pdfpage import (  # noqa: F401 - the page's names, re-exported
    CORE_FONT,
    EMBEDDED_FONT,
    LINE_EM,
    MARGIN_IN,
    PAGE_SIZES_IN,
    Page,
    PdfFont,
    choose_font,
    page_size_in,
    pt_in,
    register_font,
    strings_of,
)
from notchkit.report.text import (
    CAUTIONS_HEADING,
    CAUTIONS_WARNING,
    CONTINUED,
    CUT_LABELS,
    LABELS_INTRO,
    POWER_CHECK,
    READ_CAUTIONS,
    TAG_BOLD_LINES,
    THREATS,
    TOLERANCE,
    TRIM_STEPS,
    FilterText,
    PlanText,
    Table,
    Tag,
    unmet_banner,
)

_TAG_W_IN, _TAG_H_IN = 3.35, 1.3



def tags_per_page(page_size: str) -> int:
    """How many cut labels fit on one page (two columns)."""
    w, h = page_size_in(page_size)
    rows = int((h - 2 * MARGIN_IN - 0.9) // (_TAG_H_IN + 0.12))
    cols = int((w - 2 * MARGIN_IN + 0.2) // (_TAG_W_IN + 0.2))
    return max(1, rows * cols)


# ---------------------------------------------------------------- sections


def _cover(page: Page, pt: PlanText, body: float = 9.0) -> None:
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
        page.boxed([unmet_banner(len(pt.unmet)),
                    *pt.unmet], 10.5)
    else:
        page.boxed([pt.verdict], 10.0)
    page.table(pt.filters_table, 8.5)
    page.y += 0.05
    page.para("Contents: threats (matrix and table); one page per filter (arrangement, attenuation "
              "curve, requirements, cut list, tolerance, power check, trimming steps); cut labels; "
              "cautions.", 8.0)
    page.para(READ_CAUTIONS, 8.0, bold=True)


def _threat_pages(new_page: Callable[[], Page], matrix: Table, t: Table, size: float = 7.0) -> list[Page]:
    pages = [new_page()]
    p = pages[0]
    p.heading(THREATS, 13.0)
    msize = 8.0
    while msize > 5.0 and p.table_height(matrix, msize) > 0.45 * (p.bottom - p.y):
        msize -= 0.5
    p.table(matrix, msize)
    p.y += 0.05
    h0, hs = p.row_heights(t, size)
    i = 0
    first = True
    while True:
        title = t.title if first else t.title + CONTINUED
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
        p.heading(THREATS + CONTINUED, 11.0)
    return pages


def _filter_page(page: Page, ft: FilterText, part: FilterPart, body: float, draw_h: float, curve_h: float,
                 which: str = "all") -> None:
    """One filter's page; ``which`` "first" stops after the cut list, "rest" starts after it."""
    from notchkit.report.drawing import arrangement_sketch

    if which == "rest":
        page.heading(ft.title + CONTINUED, 13.0)
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
        sketch = arrangement_sketch(part.filt, stub_labels=ft.stub_labels, line_labels=ft.line_labels,
                                    radio_label=ft.radio_label, antenna_label=ft.antenna_label,
                                    cable_label=ft.cable_label, fontsize=max(5.0, body - 0.5))
        draw_sketch(page.c, page.font.face, sketch, box)
    page.y += 0.08 + 2.0 * body / 72.0  # room for the curve's title
    box = page.area(curve_h, left_in=0.55, bottom_pad_in=0.85, right_in=0.1)
    if box is not None:
        draw_plot(page.c, page.font.face, box, part.curve, part.passes, part.notches, fontsize=body,
                  title=f"{ft.filter_id}: attenuation (S21) and reflection (S11)")
    page.table(ft.requirements, body - 0.5)
    page.table(ft.cuts, body - 0.5)
    if which == "all":
        _filter_rest(page, ft, body)
    else:
        page.para("Tolerance, power check and trimming steps: next page.", body, bold=True)


def _filter_rest(page: Page, ft: FilterText, body: float) -> None:
    page.para(TOLERANCE, body + 0.5, bold=True, gap=0.0)
    for s in ft.tolerance:
        page.para(s, body - 0.5, gap=0.0)
    page.y += 0.06
    if ft.power is not None:
        page.table(ft.power, body - 0.5)
    else:
        page.para(POWER_CHECK, body + 0.5, bold=True, gap=0.0)
    for s in ft.power_lines:
        page.para(s, body - 0.5, gap=0.0, bold=s.startswith(("WARNING", "CAUTION")))
    page.y += 0.06
    page.para(TRIM_STEPS, body + 0.5, bold=True, gap=0.0)
    for s in ft.trim_steps:
        page.para(s, body - 0.5, gap=0.0)


def _constant(page: Page) -> Callable[[], Page]:
    """A ``new_page`` that hands back the one page already made."""
    return lambda: page


def _tag_pages(new_page: Callable[[], Page], tags: Sequence[Tag], per_page: int) -> list[Page]:
    pages = []
    for start in range(0, max(len(tags), 1), per_page):
        p = new_page()
        pages.append(p)
        p.heading(CUT_LABELS + (CONTINUED if start else ""), 13.0)
        p.para(LABELS_INTRO, 8.0)
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
                big = i in TAG_BOLD_LINES
                size = 11.0 if big else 8.5
                p.put(x + 0.12, yy, line, size, bold=big)
                yy += pt_in(size) * 1.35
    return pages


def _cautions(page: Page, cautions: Sequence[tuple[str, str]]) -> None:
    page.heading(CAUTIONS_HEADING, 14.0)
    page.boxed([CAUTIONS_WARNING], 10.0)
    for head, text in cautions:
        page.para(head, 10.0, bold=True, gap=0.0)
        page.para(text, 9.0, gap=0.12)


def _footer(page: Page, left: str, k: int, n: int) -> None:
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


def _fit_filter(size_in: tuple[float, float], ft: FilterText, part: FilterPart,
                font: PdfFont) -> tuple[tuple[float, float, float], bool]:
    """The largest body size at which the filter's page fits on one page, and whether any does.

    When none does (a filter with very many bands), the page is split in two at
    the smallest size that fits both halves, the rest on a continuation page.
    """
    for step in _FIT_STEPS:
        dry = Page(size_in, dry=True, font=font)
        _filter_page(dry, ft, part, *step)
        if dry.y <= dry.bottom:
            return step, True
    for step in _FIT_STEPS:
        first, rest = Page(size_in, dry=True, font=font), Page(size_in, dry=True, font=font)
        _filter_page(first, ft, part, *step, which="first")
        _filter_page(rest, ft, part, *step, which="rest")
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
        register_font(font)
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
        self._filters: dict[int, tuple[str, ...]] = {}
        self._finished = False

    def _forms(self, prefix: str, draw: Callable[[Callable[[], Page]], object]) -> tuple[str, ...]:
        """Pages drawn as forms ``prefix-1``, ``prefix-2``, ...: ``draw`` gets the new-page factory."""
        c = self.c
        names: list[str] = []

        def new_page() -> Page:
            if names:
                c.endForm()
            names.append(f"{prefix}-{len(names) + 1}")
            c.beginForm(names[-1])
            return Page(self.size_in, font=self.font, canvas=c)

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

    def _draw_filter(self, index: int, ft: FilterText, part: FilterPart) -> None:
        step, one_page = _fit_filter(self.size_in, ft, part, self.font)

        def draw(new_page: Callable[[], Page]) -> None:
            for which in ("all",) if one_page else ("first", "rest"):
                _filter_page(new_page(), ft, part, *step, which=which)

        self._filters[index] = self._forms(f"nk-filter{index + 1}", draw)

    def finish(self, pt: PlanText, filter_parts: Sequence[FilterPart]) -> tuple[bytes, PdfLayout]:
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
        filter_forms = [n for k in range(len(pt.filters)) for n in self._filters[k]]
        pages: list[str | int | None] = [None, *self._threats[2], *filter_forms, *label_starts,
                                         *self._cautions[1]]
        c = self.c
        for k, what in enumerate(pages, start=1):
            page = Page(self.size_in, font=self.font, canvas=c)
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


def render_pdf(pt: PlanText, filter_parts: Sequence[FilterPart], *, page_size: str = "a4",
               footer: str = "") -> tuple[bytes, PdfLayout]:
    """Render the plan to PDF bytes.

    Parameters
    ----------
    pt : PlanText
        Every row to print (:func:`notchkit.report.text.plan_text`).
    filter_parts : sequence of FilterPart
        One per filter, in the order of ``pt.filters``.
    page_size : {"a4", "letter"}
    footer : str
        Left footer text of every page.

    Returns
    -------
    bytes, PdfLayout
    """
    from notchkit.interrupts import interrupted

    page_size_in(page_size)
    pdf = PlanPdf(title=pt.title, font=choose_font(strings_of(pt) + [footer]), page_size=page_size,
                  footer=footer)
    try:
        return pdf.finish(pt, filter_parts)
    except RuntimeError:
        # Ctrl-C inside ReportLab's C accelerator comes out as its RuntimeError ("... failed
        # (KeyboardInterrupt: )"): it is the interrupt, not a fault of the plan.
        if interrupted():
            raise KeyboardInterrupt from None
        raise


def write_pdf(path: str | os.PathLike, pt: PlanText, filter_parts: Sequence[FilterPart], *,
              page_size: str = "a4", footer: str = "") -> tuple[Path, PdfLayout]:
    """Render with :func:`render_pdf` and write the file atomically."""
    data, layout = render_pdf(pt, filter_parts, page_size=page_size, footer=footer)
    return write_bytes_atomic(path, data), layout


def expected_label_pages(n_stubs: int, page_size: str) -> int:
    """Pages the cut labels take for ``n_stubs`` stubs (one page even with none)."""
    return max(1, math.ceil(n_stubs / tags_per_page(page_size)))

