"""Vector drawings as data: the few primitives a schematic needs, in drawing units.

A :class:`Sketch` is built once (:func:`notchkit.report.drawing.arrangement_sketch`)
and drawn by either renderer: :func:`to_matplotlib` for the PNG images of the HTML
page and ``--outdir``, :func:`notchkit.report.pdfdraw.draw_sketch` straight into the
PDF's page. Both map the sketch's limits onto a rectangle; line widths and text
sizes are in points, lengths and positions in drawing units. Grey levels are 0
(black) to 1 (white).

matplotlib is imported inside :func:`to_matplotlib` only.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Literal

if TYPE_CHECKING:
    from matplotlib.figure import Figure

Point = tuple[float, float]
HAlign = Literal["left", "center", "right"]
VAlign = Literal["top", "center", "bottom"]


@dataclass(frozen=True, slots=True)
class Lines:
    """Polylines of one width and grey level, with butt ends."""

    paths: tuple[tuple[Point, ...], ...]
    width: float
    grey: float = 0.0


@dataclass(frozen=True, slots=True)
class Box:
    """A rectangle with a black edge, filled with ``fill`` (a grey level) or hollow (None)."""

    x: float
    y: float
    w: float
    h: float
    width: float
    fill: float | None = 1.0


@dataclass(frozen=True, slots=True)
class Dot:
    """A circle of radius ``r`` (x drawing units) with a black edge, filled with grey ``fill``."""

    x: float
    y: float
    r: float
    fill: float
    width: float = 1.0


@dataclass(frozen=True, slots=True)
class Label:
    """Text at (x, y): ``ha`` left/center/right, ``va`` top/center/bottom of the whole block;
    lines ``linespacing`` x size apart."""

    x: float
    y: float
    text: str
    size: float
    ha: HAlign = "center"
    va: VAlign = "center"
    bold: bool = False
    linespacing: float = 1.2
    fit_w: float | None = None
    """The widest any of its lines may be, drawing units (a name inside a box): the renderer
    shrinks the text to fit (:func:`fit_lines`), down to :data:`MIN_FIT_SCALE` of ``size``,
    then shortens a line that is still too wide with :data:`ELLIPSIS`."""


MIN_FIT_SCALE = 0.7
"""The smallest a fitted label is drawn, as a share of its size (smaller is hard to read)."""
ELLIPSIS = "..."
"""The mark at the end of a shortened line."""


def fit_lines(lines: Sequence[str], size: float, max_w: float,
              measure: Callable[[str, float], float]) -> tuple[list[str], float]:
    """``lines`` and a font size at which each is at most ``max_w`` wide (points), as ``measure``
    (text, size) -> width in points says: the size first (not below ``MIN_FIT_SCALE * size``),
    then each line still too wide cut short and ended with :data:`ELLIPSIS`."""
    lines = list(lines)
    widest = max((measure(x, size) for x in lines), default=0.0)
    if widest <= max_w:
        return lines, size
    new = max(size * MIN_FIT_SCALE, size * max_w / widest * 0.999)
    out = []
    for line in lines:
        if measure(line, new) <= max_w:
            out.append(line)
            continue
        lo, hi = 0, len(line)  # the longest start of the line that fits with the mark after it
        while lo < hi:
            mid = (lo + hi + 1) // 2
            if measure(line[:mid].rstrip() + ELLIPSIS, new) <= max_w:
                lo = mid
            else:
                hi = mid - 1
        out.append(line[:lo].rstrip() + ELLIPSIS)
    return out, new


@dataclass(slots=True)
class Sketch:
    """A drawing: limits in drawing units and its primitives, drawn in order."""

    xlim: tuple[float, float]
    ylim: tuple[float, float]
    items: list[Lines | Box | Dot | Label] = field(default_factory=list)

    def labels(self) -> list[str]:
        return [it.text for it in self.items if isinstance(it, Label)]


def to_matplotlib(sketch: Sketch, fig: Figure, rect: Sequence[float]) -> None:
    """Draw ``sketch`` onto matplotlib Figure ``fig`` in ``rect`` (left, bottom, width,
    height; figure fractions) as plain artists: no Axes, one affine transform."""
    from matplotlib.collections import LineCollection
    from matplotlib.patches import Circle, Rectangle
    from matplotlib.text import Text
    from matplotlib.transforms import Affine2D, Bbox, BboxTransformTo, TransformedBbox

    (x0, x1), (y0, y1) = sketch.xlim, sketch.ylim
    box = TransformedBbox(Bbox.from_bounds(*rect), fig.transFigure)
    tr = Affine2D().translate(-x0, -y0).scale(1.0 / (x1 - x0), 1.0 / (y1 - y0)) + BboxTransformTo(box)
    # A circle stays round: its radius is in x units, so scale y like x.
    x_per_y = (x1 - x0) / (y1 - y0) * (rect[3] * fig.get_figheight()) / (rect[2] * fig.get_figwidth())
    for it in sketch.items:
        if isinstance(it, Lines):
            fig.add_artist(LineCollection([list(p) for p in it.paths], colors=str(it.grey),
                                          linewidths=it.width, capstyle="butt", transform=tr))
        elif isinstance(it, Box):
            fig.add_artist(Rectangle((it.x, it.y), it.w, it.h, transform=tr, linewidth=it.width,
                                     edgecolor="black", fill=it.fill is not None,
                                     facecolor=str(it.fill if it.fill is not None else 1.0)))
        elif isinstance(it, Dot):
            dot = Circle((it.x, it.y), it.r, transform=tr, facecolor=str(it.fill), edgecolor="black",
                         linewidth=it.width, zorder=3)
            dot.set_height(2 * it.r / x_per_y)
            fig.add_artist(dot)
        else:
            text, size = it.text, it.size
            if it.fit_w is not None:  # points per drawing unit across: the rectangle's width
                per_unit = rect[2] * fig.get_figwidth() * 72.0 / (x1 - x0)
                lines, size = fit_lines(text.split("\n"), size, it.fit_w * per_unit,
                                        _mpl_measure(it.bold))
                text = "\n".join(lines)
            fig.add_artist(Text(it.x, it.y, text, transform=tr, fontsize=size, ha=it.ha, va=it.va,
                                multialignment=it.ha, color="black", linespacing=it.linespacing,
                                fontweight="bold" if it.bold else "normal",
                                usetex=False, parse_math=False))  # names as written, '$' too


def _mpl_measure(bold: bool) -> Callable[[str, float], float]:
    """Text width in points as matplotlib lays it out (the current font; no renderer needed)."""
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import TextToPath

    t2p = TextToPath()

    def measure(text: str, size: float) -> float:
        if not text:
            return 0.0
        prop = FontProperties(weight="bold" if bold else "normal", size=size)
        return float(t2p.get_text_width_height_descent(text, prop, ismath=False)[0])

    return measure
