"""Drawing on a PDF page (a ReportLab canvas): text lines, sketches and the curve plot.

Everything here works in PDF points (1/72 in) from the page's bottom-left
corner, the PDF's own coordinates (ISO 32000-1 sec. 8.3.2.3). The curve plot
is the same :class:`notchkit.report.curves.PlotLayout` matplotlib draws for the
PNG images (limits, ticks, bands, legend), so the two never disagree.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.report.curves import (
    IL_STYLE,
    LEGEND,
    NOTCH_STYLE,
    PASS_STYLE,
    REQ_STYLE,
    S11_STYLE,
    S21_STYLE,
    BandStyle,
    CurveData,
    LineStyle,
    PlotLayout,
    Span,
    plot_layout,
)
from notchkit.report.sketch import Box, Dot, Label, Lines, Sketch, fit_lines

if TYPE_CHECKING:
    from reportlab.pdfgen.canvas import Canvas


@dataclass(frozen=True, slots=True, kw_only=True)
class Face:
    """The two ReportLab font names a page uses and the metrics its layout needs."""

    regular: str
    bold: str
    ascent_em: float
    descent_em: float

    def name(self, bold: bool) -> str:
        return self.bold if bold else self.regular


def text_lines(c: Canvas, face: Face, x: float, top: float, lines: Sequence[str], size: float, pitch: float,
               *, ha: str = "left", bold: bool = False, lead: float | None = None) -> None:
    """Lines ``pitch`` points apart, the first line's box top at ``top``; blank lines skipped.

    ``lead`` is the distance from a line box's top to its baseline (default the
    font's ascender).
    """
    name = face.name(bold)
    if getattr(c, "_fontname", None) != name or getattr(c, "_fontsize", None) != size:
        c.setFont(name, size)  # the canvas's current font (ReportLab keeps it in these two)
    base = top - (face.ascent_em * size if lead is None else lead)
    draw = {"left": c.drawString, "right": c.drawRightString, "center": c.drawCentredString}[ha]
    for k, line in enumerate(lines):
        if line:
            draw(x, base - k * pitch, line)


def _width(text: str, font_name: str, size: float) -> float:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    return float(stringWidth(text, font_name, size))


def draw_sketch(c: Canvas, face: Face, sketch: Sketch, rect: Sequence[float]) -> None:
    """Draw ``sketch`` with its limits mapped onto ``rect`` = (x, y, width, height) in points."""
    x, y, w, h = rect
    (x0, x1), (y0, y1) = sketch.xlim, sketch.ylim
    sx, sy = w / (x1 - x0), h / (y1 - y0)

    def px(u: float) -> float:
        return x + (u - x0) * sx

    def py(v: float) -> float:
        return y + (v - y0) * sy

    c.saveState()
    c.setLineCap(0)  # butt ends
    c.setStrokeGray(0.0)
    # Shapes in order, then the labels over them (as matplotlib stacks text above lines).
    items: list[Lines | Box | Dot | Label] = [it for it in sketch.items if not isinstance(it, Label)]
    items += [it for it in sketch.items if isinstance(it, Label)]
    for it in items:
        if isinstance(it, Lines):
            c.setLineWidth(it.width)
            c.setStrokeGray(it.grey)
            p = c.beginPath()
            for path in it.paths:
                p.moveTo(px(path[0][0]), py(path[0][1]))
                for u, v in path[1:]:
                    p.lineTo(px(u), py(v))
            c.drawPath(p, stroke=1, fill=0)
            c.setStrokeGray(0.0)
        elif isinstance(it, Box):
            c.setLineWidth(it.width)
            if it.fill is not None:
                c.setFillGray(it.fill)
            c.rect(px(it.x), py(it.y), it.w * sx, it.h * sy, stroke=1, fill=int(it.fill is not None))
        elif isinstance(it, Dot):
            c.setLineWidth(it.width)
            c.setFillGray(it.fill)
            c.circle(px(it.x), py(it.y), it.r * sx, stroke=1, fill=1)
        elif isinstance(it, Label):
            _label(c, face, px(it.x), py(it.y), it, None if it.fit_w is None else it.fit_w * sx)
    c.restoreState()


def _label(c: Canvas, face: Face, x: float, y: float, it: Label, fit_pt: float | None = None) -> None:
    lines, size = it.text.split("\n"), it.size
    if fit_pt is not None:  # a name inside a box: shrunk, then shortened, to its width
        name = face.name(it.bold)
        lines, size = fit_lines(lines, size, fit_pt, lambda s, z: _width(s, name, z))
    box = (face.ascent_em + face.descent_em) * size
    pitch = it.linespacing * box
    height = (len(lines) - 1) * pitch + box
    top = {"top": y, "center": y + height / 2, "bottom": y + height}[it.va]
    c.setFillGray(0.0)
    text_lines(c, face, x, top, lines, size, pitch, ha=it.ha, bold=it.bold)


# ----------------------------------------------------------------- the curve


def _hatch(c: Canvas, xa: float, xb: float, ya: float, yb: float, spacing: float,
           slopes: Sequence[int]) -> None:
    """Diagonal lines (slope +1 and/or -1) every ``spacing`` points across a rectangle,
    on a page-wide lattice so neighbouring bands line up."""
    p = c.beginPath()
    p.rect(xa, ya, xb - xa, yb - ya)
    c.saveState()
    c.clipPath(p, stroke=0, fill=0)
    segments = []
    for s in slopes:
        # The lines x - s*y = k*spacing that cross the rectangle.
        ends = [u - s * v for u in (xa, xb) for v in (ya, yb)]
        k = np.arange(math.floor(min(ends) / spacing), math.ceil(max(ends) / spacing) + 1) * spacing
        segments.append(np.column_stack([k + s * ya, np.full_like(k, ya), k + s * yb, np.full_like(k, yb)]))
    _segments(c, np.concatenate(segments))
    c.restoreState()


def _segments(c: Canvas, seg: np.ndarray) -> None:
    """Stroke straight segments, rows of (x0, y0, x1, y1) in points, written as PDF path
    operators in one string (see :func:`_polyline`)."""
    if seg.size:
        c.addLiteral(("%.2f %.2f m %.2f %.2f l\n" * seg.shape[0]) % tuple(seg.ravel().tolist()) + "S")  # noqa: UP031


def _polyline(c: Canvas, xs: np.ndarray, ys: np.ndarray) -> None:
    """Stroke the polyline through (xs, ys): the path written as PDF operators (``m``,
    ``l``, ``S``; ISO 32000-1 sec. 8.5.2) in one string, to 0.01 pt, instead of one
    ReportLab call and number formatting per point (a curve has about a thousand)."""
    pts = np.column_stack([xs, ys]).ravel().tolist()
    head = f"{pts[0]:.2f} {pts[1]:.2f} m\n"
    c.addLiteral(head + ("%.2f %.2f l\n" * (len(pts) // 2 - 1)) % tuple(pts[2:]) + "S")  # noqa: UP031


def _band(c: Canvas, st: BandStyle, xa: float, xb: float, ya: float, yb: float, spacing: float) -> None:
    """A band of style ``st`` over the rectangle: its fill, then its hatching."""
    if st.fill is not None:
        c.setFillGray(st.fill)
        c.rect(xa, ya, xb - xa, yb - ya, stroke=0, fill=1)
    c.setStrokeGray(st.edge)
    c.setLineWidth(0.6)
    _hatch(c, xa, xb, ya, yb, spacing, (1, -1) if "x" in st.hatch else (1,))


def _line_style(c: Canvas, st: LineStyle) -> None:
    c.setLineWidth(st.width)
    c.setDash(list(st.dash) if st.dash else [])


_LEGEND_LINES = {"s21": S21_STYLE, "s11": S11_STYLE, "il": IL_STYLE, "req": REQ_STYLE}


def _sample(c: Canvas, kind: str, x: float, y: float, w: float, size: float) -> None:
    """The legend's picture of ``kind`` (a :data:`LEGEND` key), ``w`` wide, centred on y."""
    c.saveState()
    c.setStrokeGray(0.0)
    if kind in ("pass", "notch"):
        hh = 0.7 * size
        _band(c, PASS_STYLE if kind == "pass" else NOTCH_STYLE, x, x + w, y - hh / 2, y + hh / 2, 3.0)
    else:
        _line_style(c, _LEGEND_LINES[kind])
        c.line(x, y, x + w, y)
        if kind == "req":
            _triangle(c, x + w / 2, y, 2.0)
    c.restoreState()


def _triangle(c: Canvas, x: float, y: float, r: float) -> None:
    """A filled downward triangle (the requirement marker) centred on (x, y)."""
    c.setDash([])
    c.setFillGray(0.0)
    p = c.beginPath()
    p.moveTo(x - r, y + r)
    p.lineTo(x + r, y + r)
    p.lineTo(x, y - r)
    p.close()
    c.drawPath(p, stroke=0, fill=1)


def draw_plot(c: Canvas, face: Face, rect: Sequence[float], curve: CurveData, pass_bands: Sequence[Span],
              notches: Sequence[Span], *, title: str | None = None, fontsize: float = 8.0,
              show_s11: bool = True) -> None:
    """The attenuation plot in ``rect`` = (x, y, width, height) in points (the axes' box;
    tick labels, axis labels and the legend go outside it, the title above)."""
    lay = plot_layout(curve, pass_bands, notches, show_s11=show_s11)
    ax = _Axes(lay, *(float(v) for v in rect))
    _plot_inside(c, ax, lay, curve, show_s11)
    _plot_frame(c, face, ax, lay, fontsize)
    x0, y0, w, h = ax.x0, ax.y0, ax.w, ax.h
    if title:
        c.setFont(face.regular, fontsize + 1)
        c.drawCentredString(x0 + w / 2, y0 + h + 6.0 + face.descent_em * (fontsize + 1), title)
    _legend(c, face, lay.legend, x0 + w / 2, y0 - 3.9 * fontsize, fontsize - 1.5)


class _Axes:
    """The plot's box in points and its mapping of MHz and dB onto it (log or linear in x)."""

    def __init__(self, lay: PlotLayout, x0: float, y0: float, w: float, h: float) -> None:
        self.x0, self.y0, self.w, self.h = x0, y0, w, h
        (self.xlo, self.xhi), (self.ylo, self.yhi) = lay.xlim, lay.ylim
        self.log = lay.log_axis

    def X(self, f: ArrayLike) -> NDArray[np.float64]:  # noqa: N802 - the axis mapping, named as in the formula
        if self.log:
            return self.x0 + self.w * (np.log(f) - math.log(self.xlo)) / math.log(self.xhi / self.xlo)
        return self.x0 + self.w * (np.asarray(f, float) - self.xlo) / (self.xhi - self.xlo)

    def Y(self, v: ArrayLike) -> NDArray[np.float64]:  # noqa: N802
        return self.y0 + self.h * (np.asarray(v, float) - self.ylo) / (self.yhi - self.ylo)

    def x(self, f: float) -> float:
        return float(self.X(f))

    def y(self, v: float) -> float:
        return float(self.Y(v))


def _plot_inside(c: Canvas, ax: _Axes, lay: PlotLayout, curve: CurveData, show_s11: bool) -> None:
    """Bands, grid, requirement lines and the curves, clipped to the box."""
    x0, y0, w, h = ax.x0, ax.y0, ax.w, ax.h
    c.saveState()
    clip = c.beginPath()
    clip.rect(x0, y0, w, h)
    c.clipPath(clip, stroke=0, fill=0)
    c.setLineCap(0)
    for a, b, _lim in lay.passes:
        _band(c, PASS_STYLE, ax.x(a), ax.x(b), y0, y0 + h, 6.0)
    for a, b, _lim in lay.notches:
        _band(c, NOTCH_STYLE, ax.x(a), ax.x(b), y0, y0 + h, 6.0)
    c.setStrokeGray(0.8)
    c.setLineWidth(0.5)
    for v, _ in lay.xticks:
        c.line(ax.x(v), y0, ax.x(v), y0 + h)
    for v, _ in lay.yticks:
        c.line(x0, ax.y(v), x0 + w, ax.y(v))
    c.setStrokeGray(0.0)
    for a, b, lim in lay.passes:
        if lim is not None:
            _line_style(c, IL_STYLE)
            c.line(ax.x(a), ax.y(-lim), ax.x(b), ax.y(-lim))
    for a, b, lim in lay.notches:
        if lim is not None:
            _line_style(c, REQ_STYLE)
            c.line(ax.x(a), ax.y(-lim), ax.x(b), ax.y(-lim))
            _triangle(c, ax.x(0.5 * (a + b)), ax.y(-lim), 2.0)
    c.setLineJoin(1)
    xs = ax.X(curve.freq_mhz)
    _line_style(c, S21_STYLE)
    _polyline(c, xs, ax.Y(curve.s21_db))
    if show_s11:
        _line_style(c, S11_STYLE)
        _polyline(c, xs, ax.Y(curve.s11_db))
    c.restoreState()


def _plot_frame(c: Canvas, face: Face, ax: _Axes, lay: PlotLayout, fontsize: float) -> None:
    """The frame, the ticks with their labels and the two axis labels."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    x0, y0, w, h = ax.x0, ax.y0, ax.w, ax.h
    c.setStrokeGray(0.0)
    c.setFillGray(0.0)
    c.setLineWidth(0.8)
    c.rect(x0, y0, w, h, stroke=1, fill=0)
    tick, pad, tsize = 3.5, 3.5, fontsize - 1
    c.setFont(face.regular, tsize)
    for v, label in lay.xticks:
        xv = ax.x(v)
        c.line(xv, y0, xv, y0 - tick)
        c.drawCentredString(xv, y0 - tick - pad - face.ascent_em * tsize, label)
    widest = 0.0
    for v, label in lay.yticks:
        yv = ax.y(v)
        c.line(x0, yv, x0 - tick, yv)
        c.drawRightString(x0 - tick - pad, yv - 0.35 * tsize, label)
        widest = max(widest, stringWidth(label, face.regular, tsize))
    c.setFont(face.regular, fontsize)
    below_ticks = y0 - tick - pad - (face.ascent_em + face.descent_em) * tsize
    x_label_base = below_ticks - pad - face.ascent_em * fontsize
    c.drawCentredString(x0 + w / 2, x_label_base, "Frequency (MHz)")
    c.saveState()
    c.translate(x0 - tick - pad - widest - pad - face.descent_em * fontsize, y0 + h / 2)
    c.rotate(90)
    c.drawCentredString(0, 0, "S21, S11 (dB)")
    c.restoreState()


def _legend(c: Canvas, face: Face, kinds: Sequence[str], cx: float, top: float, size: float,
            ncol: int = 3) -> None:
    """A framed legend, ``ncol`` entries a row, centred on ``cx`` with its top at ``top``."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    sample_w, gap, pad = 2.0 * size, 0.8 * size, 0.5 * size
    row_h = 1.4 * size
    per_col = -(-len(kinds) // ncol)  # filled column by column, as matplotlib's legend is
    cols = [list(kinds[i:i + per_col]) for i in range(0, len(kinds), per_col)]
    col_w = [sample_w + gap + max(stringWidth(LEGEND[k], face.regular, size) for k in col) for col in cols]
    width = sum(col_w) + gap * (len(cols) - 1) + 2 * pad
    rows = max(len(col) for col in cols)
    height = rows * row_h + 2 * pad - 0.4 * size
    left = cx - width / 2
    c.setLineWidth(0.8)
    c.setStrokeGray(0.0)
    c.setFillGray(1.0)
    c.rect(left, top - height, width, height, stroke=1, fill=1)
    c.setFillGray(0.0)
    x = left + pad
    for col, cw in zip(cols, col_w, strict=True):
        for r, kind in enumerate(col):
            yc = top - pad - (r + 0.5) * row_h + 0.2 * size
            _sample(c, kind, x, yc, sample_w, size)
            c.setFont(face.regular, size)
            c.drawString(x + sample_w + gap, yc - 0.35 * size, LEGEND[kind])
        x += cw + gap
