"""The printed plan as one self-contained HTML page (images embedded, print CSS).

Same sections and the same rows as the PDF (:mod:`notchkit.report.text`):
cover, threats, one section per filter with its drawing and curve as
base64-embedded SVG, cut labels and cautions. The page needs no network and
no other file; printing it gives one filter per page.
"""

from __future__ import annotations

import base64
import html as _h
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from notchkit.report.files import write_text_atomic
from notchkit.report.text import (
    CAUTIONS_HEADING,
    CAUTIONS_WARNING,
    CUT_LABELS,
    LABELS_INTRO,
    MET,
    NOT_MET,
    POWER_CHECK,
    READ_CAUTIONS,
    TAG_BOLD_LINES,
    THREATS,
    TOLERANCE,
    TRIM_STEPS,
    FilterText,
    PlanText,
    Table,
    unmet_banner,
)

if TYPE_CHECKING:
    from notchkit.report.curves import FilterPart

CSS = """
body { font-family: "DejaVu Sans", Arial, Helvetica, sans-serif; color: #000; background: #fff;
       max-width: 60em; margin: 1em auto; padding: 0 1em; font-size: 10pt; line-height: 1.35; }
h1 { font-size: 18pt; } h2 { font-size: 14pt; border-bottom: 2px solid #000; margin-top: 1.5em; }
h3 { font-size: 11pt; margin: 0.8em 0 0.3em; }
table { border-collapse: collapse; margin: 0.4em 0 0.8em; font-size: 8.5pt; }
th, td { border-bottom: 1px solid #888; padding: 2px 6px; vertical-align: top; text-align: left; }
th { border-bottom: 2px solid #000; } td.r, th.r { text-align: right; }
caption { text-align: left; font-weight: bold; padding-bottom: 2px; }
.notmet { border: 4px double #000; padding: 0.4em 0.8em; font-weight: bold; margin: 0.6em 0; }
.met { font-weight: bold; }
td.bad { font-weight: bold; text-decoration: underline; }
.note { font-size: 8pt; }
img.fig { width: 100%; max-width: 52em; display: block; }
pre { font-size: 8.5pt; white-space: pre-wrap; }
.tags { display: flex; flex-wrap: wrap; gap: 0.4em; }
.tag { border: 1.5px dashed #000; width: 22em; padding: 0.5em 0.8em; font-size: 9pt; }
.tag b { font-size: 11pt; }
section.page { page-break-after: always; break-after: page; }
section.page:last-child { page-break-after: auto; break-after: auto; }
footer { font-size: 8pt; border-top: 1px solid #000; margin-top: 2em; }
@media print {
  body { max-width: none; margin: 0; font-size: 9pt; }
  .tag { break-inside: avoid; } table, img.fig { break-inside: avoid; }
  @page { margin: 15mm; }
}
"""


def _e(s: object) -> str:
    from notchkit.textsafe import clean

    return _h.escape(clean(s), quote=True)  # control and bidi characters shown as escapes


def table_html(t: Table) -> str:
    out = ["<table>"]
    if t.title:
        out.append(f"<caption>{_e(t.title)}</caption>")
    heads = zip(t.header, t.align, strict=True)
    out.append("<tr>" + "".join(f'<th class="{"r" if a == "right" else ""}">{_e(h)}</th>' for h, a in heads)
               + "</tr>")
    for row in t.rows:
        cells = []
        for c, a in zip(row, t.align, strict=True):
            cls = ["r"] if a == "right" else []
            if c == NOT_MET:
                cls.append("bad")
            cells.append(f'<td class="{" ".join(cls)}">{_e(c)}</td>')
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    if t.note:
        out.append(f'<p class="note">{_e(t.note)}</p>')
    return "\n".join(out)


def _img(data: bytes, alt: str, mime: str = "image/png") -> str:
    b64 = base64.b64encode(data).decode("ascii")
    return f'<img class="fig" alt="{_e(alt)}" src="data:{mime};base64,{b64}">'


@dataclass(frozen=True, slots=True, kw_only=True)
class FilterImages:
    """A filter's two pictures as PNG bytes: the arrangement drawing and the curve."""

    drawing_png: bytes
    curve_png: bytes


def filter_images(part: FilterPart, ft: FilterText, dpi: int = 110) -> FilterImages:
    """PNG bytes of a filter's arrangement drawing and of its curve, drawn with the page's labels."""
    import matplotlib

    from notchkit.report.curves import MPL_RC, curve_figure, figure_bytes
    from notchkit.report.drawing import arrangement_figure

    with matplotlib.rc_context(MPL_RC):  # type: ignore[arg-type]
        draw = arrangement_figure(part.filt, stub_labels=ft.stub_labels, line_labels=ft.line_labels,
                                  radio_label=ft.radio_label, antenna_label=ft.antenna_label,
                                  cable_label=ft.cable_label)
        crv = curve_figure(part.curve, part.passes, part.notches,
                           title=f"{ft.filter_id}: attenuation (S21) and reflection (S11)")
        return FilterImages(drawing_png=figure_bytes(draw, "png", dpi),
                            curve_png=figure_bytes(crv, "png", dpi))


def render_html(pt: PlanText, images: Sequence[FilterImages], *, footer: str = "") -> str:
    """The whole plan as one HTML document (a string).

    ``images`` holds, per filter in the order of ``pt.filters``, its drawing and
    its curve (:func:`filter_images`), embedded as base64.
    """
    o = ['<!DOCTYPE html>', '<html lang="en"><head><meta charset="utf-8">',
         f"<title>{_e(pt.title)}</title>", f"<style>{CSS}</style></head><body>"]
    o.append('<section class="page" id="cover">')
    o.append(f"<h1>{_e(pt.title)}</h1>")
    o.append("<table>" + "".join(f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in pt.cover_facts)
             + "</table>")
    if pt.unmet:
        o.append('<div class="notmet">'
                 + _e(unmet_banner(len(pt.unmet))) + "<br>"
                 + "<br>".join(_e(u) for u in pt.unmet) + "</div>")
    else:
        o.append(f'<p class="met">{_e(pt.verdict)}</p>')
    o.append(table_html(pt.filters_table))
    o.append(f"<p><b>{_e(READ_CAUTIONS)}</b></p></section>")

    o.append(f'<section class="page" id="threats"><h2>{_e(THREATS)}</h2>')
    o.append(table_html(pt.matrix))
    o.append(table_html(pt.threats))
    o.append("</section>")

    for ft, pics in zip(pt.filters, images, strict=True):
        o.append(f'<section class="page" id="{_e(ft.filter_id)}"><h2>{_e(ft.title)}</h2>')
        if ft.meets:
            o.append(f'<p class="met">{_e(ft.verdict)}</p>')
        else:
            o.append(f'<div class="notmet">{_e(ft.verdict)}</div>')
        o.append("".join(f"<p>{_e(f)}</p>" for f in ft.facts))
        o.append(_img(pics.drawing_png, f"{ft.filter_id} arrangement"))
        o.append(_img(pics.curve_png, f"{ft.filter_id} attenuation curve"))
        o.append(table_html(ft.requirements))
        o.append(table_html(ft.cuts))
        o.append(f"<h3>{_e(TOLERANCE)}</h3>" + "".join(f"<p>{_e(s)}</p>" for s in ft.tolerance))
        if ft.power is not None:
            o.append(table_html(ft.power))
        else:
            o.append(f"<h3>{_e(POWER_CHECK)}</h3>")
        o.append("".join(
            f"<p>{'<b>' if s.startswith(('WARNING', 'CAUTION')) else ''}{_e(s)}"
            f"{'</b>' if s.startswith(('WARNING', 'CAUTION')) else ''}</p>" for s in ft.power_lines))
        o.append(f"<h3>{_e(TRIM_STEPS)}</h3><pre>" + _e("\n".join(ft.trim_steps)) + "</pre></section>")

    o.append(f'<section class="page" id="labels"><h2>{_e(CUT_LABELS)}</h2><p>{_e(LABELS_INTRO)}</p>'
             '<div class="tags">')
    for tag in pt.tags:  # the stub and the first cut in bold, as on the printed labels
        o.append('<div class="tag">' + "<br>".join(
            f"<b>{_e(s)}</b>" if i in TAG_BOLD_LINES else _e(s) for i, s in enumerate(tag.lines)) + "</div>")
    o.append("</div></section>")

    o.append(f'<section class="page" id="cautions"><h2>{_e(CAUTIONS_HEADING)}</h2>'
             f'<div class="notmet">{_e(CAUTIONS_WARNING)}</div>')
    for head, text in pt.cautions:
        o.append(f"<h3>{_e(head)}</h3><p>{_e(text)}</p>")
    o.append("</section>")
    o.append(f"<footer>{_e(footer or pt.title)} - {MET if pt.meets else NOT_MET}</footer></body></html>")
    return "\n".join(o) + "\n"


def write_html(path: str | os.PathLike, pt: PlanText, images: Sequence[FilterImages], *,
               footer: str = "") -> Path:
    """Render with :func:`render_html` and write the file atomically."""
    return write_text_atomic(path, render_html(pt, images, footer=footer))
