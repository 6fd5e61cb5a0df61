"""The arrangement drawing: radio, through line, tees, hanging stubs, antenna.

A plain black-and-white schematic (not to scale), built as a
:class:`notchkit.report.sketch.Sketch` (lines, boxes, dots, labels) that
matplotlib draws for the PNG images and the PDF writer draws on its page: the
radio box on the left, the through line to the antenna on the
right, a tee dot at each stub group, each stub hanging down from its tee with
its end drawn open (a small hollow circle) or shorted (a ground symbol), and
each line section between tees labelled with its length.

matplotlib is imported inside :func:`arrangement_figure` only; nothing changes
global style.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

from notchkit.cutlist import format_length as length_text
from notchkit.elements import element_ids
from notchkit.filters import Filter, Line, Stub
from notchkit.report.sketch import Box, Dot, HAlign, Label, Lines, Point, Sketch, VAlign, to_matplotlib

if TYPE_CHECKING:
    from matplotlib.figure import Figure

# Layout in drawing units (the x axis is scaled to the figure's width).
_BOX_W = 1.6  # radio / antenna block width
_STUB_PITCH = 2.9  # horizontal distance between stubs on one tee
_LINE_GAP = 2.8  # horizontal run drawn for a line section between tees
_LEAD = 1.2  # run from the radio box to the first tee, and from the last tee on
_STUB_DROP = 1.5  # drawn stub height below the through line
_Y_LINE = 0.0
_LINE_LABEL_Y = 0.4  # a line section's label above the tees' labels (it is wider than its run)
_BOX_PAD = 0.08  # room kept clear each side of a name inside an end block


def default_stub_labels(filt: Filter, units: str = "both", ids: Sequence[str] | None = None) -> list[str]:
    """``S1 open`` / ``cut 512 mm (20 3/16 in)`` labels for each stub, radio side first."""
    out = []
    own_ids = [i for i, e in zip(element_ids(filt, ""), filt.elements, strict=True) if e.kind.shunt]
    for i, stub in enumerate(filt.stubs):
        sid = ids[i] if ids is not None else own_ids[i]
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


def drawing_limits(filt: Filter) -> tuple[tuple[float, float], tuple[float, float]]:
    """The x and y limits of the drawing of ``filt``, in drawing units."""
    return (-0.2, arrangement_width(filt) + 0.2), (-_STUB_DROP - 1.45, 1.35)


def arrangement_sketch(
    filt: Filter,
    *,
    stub_labels: Sequence[str] | None = None,
    line_labels: Sequence[str] | None = None,
    radio_label: str = "RADIO",
    antenna_label: str = "ANTENNA",
    cable_label: str | None = None,
    units: str = "both",
    fontsize: float = 8.0,
) -> Sketch:
    """The drawing of ``filt``'s arrangement.

    Parameters
    ----------
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
    stub_labels = list(stub_labels) if stub_labels is not None else default_stub_labels(filt, units)
    line_labels = list(line_labels) if line_labels is not None else default_line_labels(filt, units)
    n_lines = sum(isinstance(e, Line) for e in filt.elements)
    if len(stub_labels) != len(filt.stubs) or len(line_labels) != n_lines:
        raise ValueError("one label per stub and per line section is needed")
    xlim, ylim = drawing_limits(filt)
    pen = _Pen(Sketch(xlim=xlim, ylim=ylim), fontsize)
    x = pen.end_block(0.0, radio_label)
    pen.wire([x, x + _LEAD], [_Y_LINE, _Y_LINE])
    x += _LEAD
    stub_i = line_i = 0
    elements = list(filt.elements)
    k = 0
    while k < len(elements):
        e = elements[k]
        if isinstance(e, Line):
            pen.wire([x, x + _LINE_GAP], [_Y_LINE, _Y_LINE])
            pen.text(x + _LINE_GAP / 2, _Y_LINE + _LINE_LABEL_Y, f"line\n{line_labels[line_i]}", va="bottom",
                     linespacing=1.1)
            line_i += 1
            x += _LINE_GAP
            k += 1
            continue
        group: list[Stub] = []
        while k < len(elements) and isinstance(stub := elements[k], Stub):
            group.append(stub)
            k += 1
        x = _tee(pen, x, group, stub_labels[stub_i:stub_i + len(group)])
        stub_i += len(group)
    pen.wire([x, x + _LEAD], [_Y_LINE, _Y_LINE])
    x += _LEAD
    pen.end_block(x, antenna_label)
    mx = x + _BOX_W / 2  # a small mast symbol above the antenna block
    pen.wire([mx, mx], [0.45, 0.9])
    pen.wire([mx - 0.25, mx, mx + 0.25], [1.15, 0.9, 1.15])
    return pen.finish(cable_label)


class _Pen:
    """The sketch being drawn: its black lines, coax and dots gathered, drawn in that order."""

    def __init__(self, sk: Sketch, fontsize: float) -> None:
        self.sk, self.fontsize = sk, fontsize
        self.wires: list[tuple[Point, ...]] = []  # every black line, drawn as one item
        self.coax: list[tuple[Point, ...]] = []
        self.dots: list[Dot] = []  # drawn over the lines

    def wire(self, xs: Sequence[float], ys: Sequence[float]) -> None:
        self.wires.append(tuple(zip(xs, ys, strict=True)))

    def text(self, x: float, y: float, s: str, *, ha: HAlign = "center", va: VAlign = "center",
             bold: bool = False, linespacing: float = 1.2, fit_w: float | None = None) -> None:
        self.sk.items.append(Label(x, y, s, self.fontsize, ha=ha, va=va, bold=bold, linespacing=linespacing,
                                   fit_w=fit_w))

    def end_block(self, x: float, label: str) -> float:
        """The radio's or the antenna's box at ``x``, its label on two lines (``TX`` over the
        radio's name: one line ran out of the box), a long name shrunk or shortened to the box
        (:attr:`Label.fit_w`); returns its right edge."""
        self.sk.items.append(Box(x, -0.45, _BOX_W, 0.9, width=1.4))
        self.text(x + _BOX_W / 2, 0.0, label.replace(" ", "\n", 1), bold=True, linespacing=1.1,
                  fit_w=_BOX_W - 2 * _BOX_PAD)
        return x + _BOX_W

    def finish(self, cable_label: str | None) -> Sketch:
        sk = self.sk
        sk.items.append(Lines(tuple(self.wires), width=1.4))
        sk.items.append(Lines(tuple(self.coax), width=3.2))
        sk.items.append(Lines(tuple(self.coax), width=1.4, grey=1.0))
        sk.items.extend(self.dots)
        if cable_label:
            self.text(0.0, -_STUB_DROP - 1.25, cable_label, ha="left", va="top")
        return sk


def _tee(pen: _Pen, x: float, group: Sequence[Stub], labels: Sequence[str]) -> float:
    """One tee at ``x``: a dot on the through line, a bus when several stubs share it, each stub
    hanging from it with its end and label; returns where the through line goes on."""
    width = _STUB_PITCH * (len(group) - 1)
    x0 = x + _STUB_PITCH / 2 if len(group) > 1 else x + 0.6
    tee_x = x0 + width / 2
    span_end = x0 + width + (_STUB_PITCH / 2 if len(group) > 1 else 0.6)
    pen.wire([x, span_end], [_Y_LINE, _Y_LINE])
    pen.dots.append(Dot(tee_x, _Y_LINE, 0.07, fill=0.0))
    pen.text(tee_x, _Y_LINE + 0.12, "tee", va="bottom")
    bus_y = _Y_LINE - 0.3
    pen.wire([tee_x, tee_x], [_Y_LINE, bus_y])
    if len(group) > 1:
        pen.wire([x0, x0 + width], [bus_y, bus_y])
    for j, (stub, label) in enumerate(zip(group, labels, strict=True)):
        sx = x0 + j * _STUB_PITCH
        end_y = _Y_LINE - _STUB_DROP
        pen.coax.append(((sx, bus_y), (sx, end_y)))  # the stub cable drawn doubled (coax), then its end
        label_y = stub.kind.draw_end(pen.wire, pen.dots, sx, end_y)  # the kind draws its own end
        pen.text(sx, label_y, label, va="top", linespacing=1.15)
    return span_end


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
    stub_labels: Sequence[str] | None = None,
    line_labels: Sequence[str] | None = None,
    radio_label: str = "RADIO",
    antenna_label: str = "ANTENNA",
    cable_label: str | None = None,
    units: str = "both",
    fontsize: float | None = None,
) -> Figure:
    """A new matplotlib Figure with :func:`arrangement_sketch` drawn on it.

    The figure is built without pyplot (no global state); save it with
    ``fig.savefig(...)``. The labels are :func:`arrangement_sketch`'s; without
    ``fontsize`` the font shrinks when many elements share the width.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in))
    units_per_in = arrangement_width(filt) / width_in
    if fontsize is None:
        fontsize = max(5.0, min(8.0, 8.0 * 2.4 / max(units_per_in, 1e-9)))
    sketch = arrangement_sketch(filt, stub_labels=stub_labels, line_labels=line_labels,
                                radio_label=radio_label, antenna_label=antenna_label, cable_label=cable_label,
                                units=units, fontsize=fontsize)
    to_matplotlib(sketch, fig, (0.01, 0.01, 0.98, 0.98))
    return fig
