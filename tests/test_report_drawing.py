"""The arrangement drawing (notchkit.report.drawing).

What the drawing must show follows the filter model's own contract (DEVELOPERS.md):
consecutive stubs share one tee, an open end is drawn open and a shorted end
grounded (common practice for schematic symbols), every stub and every line
section carries its label.
"""

from __future__ import annotations

from matplotlib.patches import Circle

from notchkit.cables import get_cable
from notchkit.cutlist import format_length
from notchkit.filters import Filter, Line, Stub
from notchkit.report.drawing import arrangement_figure, default_stub_labels

CABLE = get_cable("RG-213")


def _filter():
    elements = (Stub(termination="open", length_m=0.50), Line(length_m=0.34),
                Stub(termination="short", length_m=0.70), Stub(termination="open", length_m=0.30))
    return Filter(elements=elements, cable=CABLE, tee_allowance_m=0.03)


def _texts(fig):
    from matplotlib.text import Text

    return [t.get_text() for t in [*fig.texts, *fig.artists] if isinstance(t, Text)]


def _patches(fig):
    return [a for a in fig.get_children() if isinstance(a, Circle)]


def test_one_tee_per_stub_group_and_end_symbols_by_termination():
    filt = _filter()
    fig = arrangement_figure(filt)
    circles = _patches(fig)
    filled = [c for c in circles if c.get_facecolor()[:3] == (0.0, 0.0, 0.0)]
    hollow = [c for c in circles if c.get_facecolor()[:3] == (1.0, 1.0, 1.0)]
    assert len(filled) == len(filt.tees()) == 2
    assert len(hollow) == sum(s.termination == "open" for s in filt.stubs) == 2
    assert _texts(fig).count("tee") == 2


def test_every_stub_and_line_is_labelled_with_its_cut_length():
    filt = _filter()
    text = "\n".join(_texts(arrangement_figure(filt, units="metric")))
    for stub in filt.stubs:
        assert format_length(filt.cut_length_m(stub), "metric") in text
    assert format_length(0.34, "metric") in text  # the line section
    assert "RADIO" in text and "ANTENNA" in text


def test_caller_labels_are_used_verbatim():
    filt = _filter()
    labels = ["F1-S1", "F1-S2", "F1-S3"]
    fig = arrangement_figure(filt, stub_labels=labels, line_labels=["L1"])
    texts = _texts(fig)
    for lab in labels:
        assert lab in texts
    assert len(default_stub_labels(filt)) == 3


def test_pdf_drawing_writes_every_label_of_the_sketch():
    # The PDF draws the same Sketch as the PNG; pypdf (an independent reader) must find
    # each of its labels on the page, and one circle per tee and open end.
    import io

    from pypdf import PdfReader
    from reportlab.pdfgen.canvas import Canvas

    from notchkit.report.drawing import arrangement_sketch
    from notchkit.report.pdf import CORE_FONT
    from notchkit.report.pdfdraw import draw_sketch
    from notchkit.report.sketch import Dot

    filt = _filter()
    sketch = arrangement_sketch(filt, units="metric", cable_label="All stubs: RG-213")
    buf = io.BytesIO()
    c = Canvas(buf, pagesize=(600, 300))
    draw_sketch(c, CORE_FONT.face, sketch, (20, 20, 560, 260))
    c.showPage()
    c.save()
    text = PdfReader(io.BytesIO(buf.getvalue())).pages[0].extract_text()
    for label in sketch.labels():
        for line in label.split("\n"):
            assert line in text, line
    dots = [it for it in sketch.items if isinstance(it, Dot)]
    assert len(dots) == len(filt.tees()) + sum(s.termination == "open" for s in filt.stubs)


LONG = "TX county-fire-dispatch-primary-repeater-output-146.52-simplex"


def test_a_long_radio_name_stays_inside_its_box_in_the_png():
    # matplotlib's own renderer measures the drawn text: every line of the radio's label must
    # lie inside the radio's box, the name shortened with "..." once the size is at its floor.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.patches import Rectangle
    from matplotlib.text import Text

    from notchkit.report.sketch import ELLIPSIS, MIN_FIT_SCALE

    filt = _filter()
    fig = arrangement_figure(filt, radio_label=LONG, fontsize=8.0)
    renderer = FigureCanvasAgg(fig).get_renderer()
    box = min((a for a in fig.get_children() if isinstance(a, Rectangle) and a is not fig.patch),
              key=lambda a: a.get_window_extent(renderer).x0).get_window_extent(renderer)
    (label,) = [t for t in fig.artists if isinstance(t, Text) and t.get_text().startswith("TX\n")]
    ext = label.get_window_extent(renderer)
    assert box.x0 < ext.x0 and ext.x1 < box.x1, (box, ext)
    first, second = label.get_text().split("\n")
    assert first == "TX" and second.endswith(ELLIPSIS) and "county-fire" in second
    assert label.get_fontsize() == 8.0 * MIN_FIT_SCALE
    short = arrangement_figure(filt, radio_label="TX net-2m", fontsize=8.0)
    (t,) = [t for t in short.artists if isinstance(t, Text) and t.get_text().startswith("TX\n")]
    assert t.get_text() == "TX\nnet-2m" and t.get_fontsize() == 8.0  # a name that fits is untouched


def test_a_long_radio_name_stays_inside_its_box_in_the_pdf():
    # pypdf (an independent reader) gives each drawn string with its position and size; its
    # width from the font's own metrics must keep it inside the radio's box.
    import io

    from pypdf import PdfReader
    from reportlab.pdfbase.pdfmetrics import stringWidth
    from reportlab.pdfgen.canvas import Canvas

    from notchkit.report.drawing import arrangement_sketch
    from notchkit.report.pdf import CORE_FONT
    from notchkit.report.pdfdraw import draw_sketch
    from notchkit.report.sketch import ELLIPSIS, Box

    filt = _filter()
    sketch = arrangement_sketch(filt, radio_label=LONG, fontsize=8.0)
    rect = (20, 20, 560, 260)
    buf = io.BytesIO()
    c = Canvas(buf, pagesize=(600, 300))
    draw_sketch(c, CORE_FONT.face, sketch, rect)
    c.showPage()
    c.save()
    radio = min((it for it in sketch.items if isinstance(it, Box)), key=lambda b: b.x)
    sx = rect[2] / (sketch.xlim[1] - sketch.xlim[0])
    left = rect[0] + (radio.x - sketch.xlim[0]) * sx
    right = left + radio.w * sx
    drawn = []

    def visit(text, cm, tm, font, size):
        if text.strip():
            drawn.append((text.strip(), tm[4] * cm[0] + cm[4], size * tm[0] * cm[0]))

    PdfReader(io.BytesIO(buf.getvalue())).pages[0].extract_text(visitor_text=visit)
    name = [d for d in drawn if "county-fire" in d[0]]
    assert len(name) == 1 and name[0][0].endswith(ELLIPSIS), drawn
    text, x, size = name[0]
    width = stringWidth(text, CORE_FONT.face.bold, size)
    assert left < x and x + width < right, (left, x, width, right)
