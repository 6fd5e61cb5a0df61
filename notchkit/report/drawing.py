"""The arrangement drawing: radio, through line, tees, hanging stubs, antenna.

A plain black-and-white schematic (not to scale) drawn with matplotlib lines
and patches: the radio box on the left, the through line to the antenna on the
right, a tee dot at each stub group, each stub hanging down from its tee with
its end drawn open (a small hollow circle) or shorted (a ground symbol), and
each line section between tees labelled with its length.

matplotlib is imported inside the functions; nothing changes global style.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from notchkit.cutlist import format_length as length_text
from notchkit.filters import Filter, Line, Stub

# Layout in drawing units (the x axis is scaled to the figure's width).
_BOX_W = 1.6  # radio / antenna block width
_STUB_PITCH = 2.9  # horizontal distance between stubs on one tee
_LINE_GAP = 2.8  # horizontal run drawn for a line section between tees
_LEAD = 1.2  # run from the radio box to the first tee, and from the last tee on
_STUB_DROP = 1.5  # drawn stub height below the through line
_Y_LINE = 0.0


def default_stub_labels(filt: Filter, units: str = "both", ids: Sequence[str] | None = None) -> list[str]:
    """``S1 open`` / ``cut 512 mm (20 3/16 in)`` labels for each stub, radio side first."""
    out = []
    for i, stub in enumerate(filt.stubs):
        sid = ids[i] if ids is not None else f"S{i + 1}"
        cut = filt.cut_length_m(stub)
        if units == "both":
            text = f"cut {length_text(cut, 'metric')}\n{length_text(cut, 'imperial')}"
        else:
            text = f"cut {length_text(cut, units)}"
        out.append(f"{sid} {stub.termination}\n{text}")
    return out


def default_line_labels(filt: Filter, units: str = "both") -> list[str]:
    """One length label per line section, radio side first."""
    return [length_text(e.length_m, units) for e in filt.elements if isinstance(e, Line)]


class FigureRegion:
    """A rectangle of a Figure that takes the few Axes calls the drawing makes.

    Drawing straight onto the figure with one affine transform skips building an
    Axes (ticks, spines, limits), which is most of the cost of a small schematic.
    ``rect`` is ``(left, bottom, width, height)`` in figure fractions; the drawing
    units are mapped onto it with the limits of :func:`drawing_limits`.
    """

    def __init__(self, fig: Any, rect: tuple[float, float, float, float], filt: Filter):
        from matplotlib.transforms import Affine2D, Bbox, BboxTransformTo, TransformedBbox

        self.fig = fig
        (x0, x1), (y0, y1) = drawing_limits(filt)
        box = TransformedBbox(Bbox.from_bounds(*rect), fig.transFigure)
        self.transform = (Affine2D().translate(-x0, -y0).scale(1.0 / (x1 - x0), 1.0 / (y1 - y0))
                          + BboxTransformTo(box))

    def text(self, x: float, y: float, s: str, **kw: Any) -> Any:
        # One artist list with the page's own text (notchkit.report.pdf), so a PDF
        # reader extracts the page in the order it was written.
        from matplotlib.text import Text

        return self.fig.add_artist(Text(x, y, s, transform=self.transform, **kw))

    def add_artist(self, a: Any) -> Any:
        a.set_transform(self.transform)
        return self.fig.add_artist(a)

    def add_collection(self, c: Any, autolim: bool = False) -> Any:
        return self.add_artist(c)

    def set_xlim(self, *a: Any) -> None:
        """Limits are fixed by :func:`drawing_limits`."""

    def set_ylim(self, *a: Any) -> None:
        """Limits are fixed by :func:`drawing_limits`."""

    def set_axis_off(self) -> None:
        """There is no axis to hide."""


def drawing_limits(filt: Filter) -> tuple[tuple[float, float], tuple[float, float]]:
    """The x and y limits of the drawing of ``filt``, in drawing units."""
    return (-0.2, arrangement_width(filt) + 0.2), (-_STUB_DROP - 1.45, 1.35)


def draw_arrangement(
    ax: Any,
    filt: Filter,
    *,
    stub_labels: Sequence[str] | None = None,
    line_labels: Sequence[str] | None = None,
    radio_label: str = "RADIO",
    antenna_label: str = "ANTENNA",
    cable_label: str | None = None,
    units: str = "both",
    fontsize: float = 8.0,
) -> None:
    """Draw ``filt``'s arrangement on a matplotlib Axes.

    Parameters
    ----------
    ax : matplotlib.axes.Axes or FigureRegion
        Target; an Axes gets its limits set and its frame hidden.
    filt : Filter
        Elements radio side first; consecutive stubs share one tee.
    stub_labels, line_labels : sequence of str, optional
        Text under each stub and above each line section (radio side first);
        default: :func:`default_stub_labels` / :func:`default_line_labels`.
    radio_label, antenna_label : str
        Text in the end blocks.
    cable_label : str, optional
        A note under the drawing (e.g. the cable type).
    units : {"metric", "imperial", "both"}
        Units of the default labels.
    fontsize : float
        Label size in points.
    """
    from matplotlib.collections import LineCollection
    from matplotlib.patches import Circle, Rectangle

    wires: list[list[tuple[float, float]]] = []  # every black line, drawn as one collection
    coax_outer: list[list[tuple[float, float]]] = []
    coax_inner: list[list[tuple[float, float]]] = []

    def wire(xs: Sequence[float], ys: Sequence[float]) -> None:
        wires.append(list(zip(xs, ys, strict=True)))

    def patch(p: Any) -> None:
        ax.add_artist(p)  # not add_patch: the limits are set below, no autoscale needed

    stubs = filt.stubs
    n_lines = sum(isinstance(e, Line) for e in filt.elements)
    stub_labels = list(stub_labels) if stub_labels is not None else default_stub_labels(filt, units)
    line_labels = list(line_labels) if line_labels is not None else default_line_labels(filt, units)
    if len(stub_labels) != len(stubs) or len(line_labels) != n_lines:
        raise ValueError("one label per stub and per line section is needed")

    kw_text = {"fontsize": fontsize, "color": "black"}

    # Radio block.
    x = 0.0
    patch(Rectangle((x, -0.45), _BOX_W, 0.9, facecolor="white", edgecolor="black", linewidth=1.4))
    ax.text(x + _BOX_W / 2, 0.0, radio_label, ha="center", va="center", fontweight="bold", **kw_text)
    x += _BOX_W
    wire([x, x + _LEAD], [_Y_LINE, _Y_LINE])
    x += _LEAD

    stub_i = line_i = 0
    elements = list(filt.elements)
    k = 0
    while k < len(elements):
        e = elements[k]
        if isinstance(e, Line):
            wire([x, x + _LINE_GAP], [_Y_LINE, _Y_LINE])
            ax.text(x + _LINE_GAP / 2, _Y_LINE + 0.12, f"line\n{line_labels[line_i]}",
                    ha="center", va="bottom", linespacing=1.1, **kw_text)
            line_i += 1
            x += _LINE_GAP
            k += 1
            continue
        group: list[Stub] = []
        while k < len(elements) and isinstance(elements[k], Stub):
            group.append(elements[k])
            k += 1
        # One tee: a dot on the through line, a bus when several stubs share it.
        width = _STUB_PITCH * (len(group) - 1)
        x0 = x + _STUB_PITCH / 2 if len(group) > 1 else x + 0.6
        tee_x = x0 + width / 2
        span_end = x0 + width + (_STUB_PITCH / 2 if len(group) > 1 else 0.6)
        wire([x, span_end], [_Y_LINE, _Y_LINE])
        patch(Circle((tee_x, _Y_LINE), 0.07, facecolor="black", edgecolor="black", zorder=3))
        ax.text(tee_x, _Y_LINE + 0.12, "tee", ha="center", va="bottom", **kw_text)
        bus_y = _Y_LINE - 0.3
        wire([tee_x, tee_x], [_Y_LINE, bus_y])
        if len(group) > 1:
            wire([x0, x0 + width], [bus_y, bus_y])
        for j, stub in enumerate(group):
            sx = x0 + j * _STUB_PITCH
            end_y = _Y_LINE - _STUB_DROP
            # The stub cable drawn as a doubled line (coax), then its end.
            coax_outer.append([(sx, bus_y), (sx, end_y)])
            coax_inner.append([(sx, bus_y), (sx, end_y)])
            if stub.termination == "open":
                patch(Circle((sx, end_y - 0.09), 0.09, facecolor="white", edgecolor="black",
                                    linewidth=1.2, zorder=3))
                label_y = end_y - 0.28
            else:
                gy = end_y
                wire([sx, sx], [gy, gy - 0.1])
                for w, dy in ((0.28, 0.1), (0.18, 0.18), (0.08, 0.26)):
                    wire([sx - w, sx + w], [gy - dy, gy - dy])
                label_y = gy - 0.36
            ax.text(sx, label_y, stub_labels[stub_i], ha="center", va="top", linespacing=1.15, **kw_text)
            stub_i += 1
        x = span_end

    wire([x, x + _LEAD], [_Y_LINE, _Y_LINE])
    x += _LEAD
    # Antenna block: a box with a small mast symbol above it.
    patch(Rectangle((x, -0.45), _BOX_W, 0.9, facecolor="white", edgecolor="black", linewidth=1.4))
    ax.text(x + _BOX_W / 2, 0.0, antenna_label, ha="center", va="center", fontweight="bold", **kw_text)
    mx = x + _BOX_W / 2
    wire([mx, mx], [0.45, 0.9])
    wire([mx - 0.25, mx, mx + 0.25], [1.15, 0.9, 1.15])
    x += _BOX_W

    ax.add_collection(LineCollection(wires, colors="black", linewidths=1.4, capstyle="butt"),
                      autolim=False)
    ax.add_collection(LineCollection(coax_outer, colors="black", linewidths=3.2, capstyle="butt"),
                      autolim=False)
    ax.add_collection(LineCollection(coax_inner, colors="white", linewidths=1.4, capstyle="butt"),
                      autolim=False)
    if cable_label:
        ax.text(0.0, -_STUB_DROP - 1.25, cable_label, ha="left", va="top", **kw_text)
    xlim, ylim = drawing_limits(filt)
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    ax.set_axis_off()


def arrangement_width(filt: Filter) -> float:
    """Width of the drawing in drawing units (to choose a figure size)."""
    x = 2 * _BOX_W + 2 * _LEAD
    for group in filt.tees():
        x += _STUB_PITCH * len(group) if len(group) > 1 else 1.2
    x += _LINE_GAP * sum(isinstance(e, Line) for e in filt.elements)
    return x


def arrangement_figure(
    filt: Filter,
    *,
    width_in: float = 7.0,
    height_in: float = 2.4,
    **kwargs: Any,
):
    """A new matplotlib Figure with :func:`draw_arrangement` on it.

    The figure is built without pyplot (no global state); save it with
    ``fig.savefig(...)``. Keyword arguments go to :func:`draw_arrangement`;
    the font shrinks when many elements share the width.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in))
    units_per_in = arrangement_width(filt) / width_in
    kwargs.setdefault("fontsize", max(5.0, min(8.0, 8.0 * 2.4 / max(units_per_in, 1e-9))))
    draw_arrangement(FigureRegion(fig, (0.01, 0.01, 0.98, 0.98), filt), filt, **kwargs)
    return fig
