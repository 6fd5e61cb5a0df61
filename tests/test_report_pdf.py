"""Page layout of the PDF (notchkit.report.pdf): fonts, line pitch, labels per page.

References: ISO 216 (A4 210 x 297 mm), ANSI Letter (8.5 x 11 in); the PDF standard
14 fonts are spelled in WinAnsiEncoding (ISO 32000-1 annex D), i.e. Windows-1252;
pypdf (independent of the writer) extracts the text.
"""

from __future__ import annotations

import functools
import io

import pytest

from notchkit.report.pdf import tags_per_page
from notchkit.report.pdfpage import (
    CORE_FONT,
    EMBEDDED_FONT,
    LINE_EM,
    MARGIN_IN,
    PAGE_SIZES_IN,
    Page,
    choose_font,
    page_size_in,
)


def _one_page(font, draw):
    """PDF bytes of one A4 page drawn by ``draw(page)`` with ``font``."""
    from reportlab.pdfgen.canvas import Canvas

    from notchkit.report.pdfpage import register_font

    register_font(font)
    buf = io.BytesIO()
    w, h = PAGE_SIZES_IN["a4"]
    c = Canvas(buf, pagesize=(w * 72, h * 72))
    draw(Page((w, h), font=font, canvas=c))
    c.showPage()
    c.save()
    return buf.getvalue()


def _baselines(data):
    """(text, baseline y in points) of every text run, read back by pypdf's own parser."""
    from pypdf import PdfReader

    out = []

    def visit(text, cm, tm, font_dict, font_size):
        if text.strip():
            out.append((text.strip(), tm[5] * cm[3] + cm[5]))

    PdfReader(io.BytesIO(data)).pages[0].extract_text(visitor_text=visit)
    return out


@pytest.mark.parametrize("font", [CORE_FONT, EMBEDDED_FONT], ids=["core", "embedded"])
def test_every_line_of_a_block_is_exactly_one_pitch_tall(font):
    # Lines with tall glyphs, apostrophes, descenders and blanks all get the same pitch;
    # a blank line keeps its room.
    lines = ["simplex-2m's input", "(146.3320)", "", "plain", "gyp|[]"]
    for size in (6.0, 8.0, 11.0):
        runs = _baselines(_one_page(font, lambda p, size=size: p.block(1.0, 2.0, lines, size)))
        ys = {t: y for t, y in runs}
        assert list(ys) == [s for s in lines if s]
        pitch = LINE_EM * size
        expected = [ys[lines[0]] - k * pitch for k in range(len(lines))]
        got = [ys.get(s) for s in lines]
        assert [g for g in got if g is not None] == pytest.approx(
            [e for e, g in zip(expected, got, strict=True) if g is not None], abs=1e-3)


def test_line_boxes_stack_from_the_cursor():
    # A block's first baseline is one ascender plus half the leading below the cursor
    # (Helvetica AFM ascender 718 / 1000 em), so text stays inside its line box.
    size = 10.0
    (text, y), = _baselines(_one_page(CORE_FONT, lambda p: p.put(1.0, 2.0, "Axis", size)))
    top = (PAGE_SIZES_IN["a4"][1] - 2.0) * 72
    assert top - y == pytest.approx((0.718 + 0.5 * (LINE_EM - 0.925)) * size, abs=1e-3)


def test_core_font_only_for_windows_1252_text():
    assert choose_font(["Cedar Ridge 146.52 MHz", "F1-S2 cut 318 mm (12 1/2 in)"]) is CORE_FONT
    assert choose_font(["Szczyt \u0141\u00f3d\u017a"]) is EMBEDDED_FONT  # L-stroke is not in cp1252


def test_embedded_font_gives_extractable_text():
    from pypdf import PdfReader

    data = _one_page(EMBEDDED_FONT, lambda p: p.put(1.0, 1.0, "\u0141\u00f3d\u017a 318 mm", 9.0, bold=True))
    text = PdfReader(io.BytesIO(data)).pages[0].extract_text()
    assert "318 mm" in text and "\u0141\u00f3d\u017a" in text
    assert b"FontFile2" in data  # the TrueType font is embedded (ISO 32000-1 sec. 9.9)


def test_page_sizes_and_labels_fit():
    assert page_size_in("a4") == pytest.approx((210 / 25.4, 297 / 25.4))  # ISO 216
    assert page_size_in("letter") == (8.5, 11.0)  # ANSI Letter
    for name, (w, h) in PAGE_SIZES_IN.items():
        n = tags_per_page(name)
        assert n >= 10
        page = Page((w, h), dry=True)
        assert page.bottom < h - MARGIN_IN + 1e-9


def test_unknown_page_size_is_a_usage_error():
    from notchkit.errors import UsageError

    with pytest.raises(UsageError, match="page size 'a3' must be one of a4, letter"):
        page_size_in("a3")


def test_a_filter_too_big_for_one_page_continues_on_a_second(tmp_path):
    """60 notch bands cannot fit one page at 5 pt: the page splits, and the layout says so."""
    from types import SimpleNamespace

    from pypdf import PdfReader

    from notchkit.cables import get_cable
    from notchkit.cutlist import cut_list
    from notchkit.filters import Filter, Stub
    from notchkit.report.curves import FilterPart, curve_data, notch_spans, pass_spans
    from notchkit.report.pdf import render_pdf
    from notchkit.report.text import plan_text
    from notchkit.requirements import FilterRequirement, NotchSpec
    from notchkit.site.model import Band, Radio, Receive, Site
    from notchkit.threats import SurveyResult

    cable = get_cable("RG-213")
    filt = Filter(elements=(Stub(termination="open", length_m=0.35),), cable=cable, tee_allowance_m=0.03)
    notches = tuple(NotchSpec(lo_mhz=200.0 + 5 * k, hi_mhz=201.0 + 5 * k, required_db=20.0)
                    for k in range(60))
    req = FilterRequirement(radio="rx-a", side="rx", pass_bands=(Band(lo_mhz=144.0, hi_mhz=148.0),),
                            notches=notches, cable="RG-213", reasons=tuple(f"reason {k}" for k in range(60)))
    cuts = cut_list(filt, notch_mhz=[200.5], pass_mhz=[146.0], filter_id="F1")
    d = SimpleNamespace(id="F1", requirement=req, solution=SimpleNamespace(filter=filt, meets=False),
                        cable=cable, cuts=cuts, tolerance=None, power=None, meets=False)
    site = Site(name="Test Flat", cable="RG-213",
                radios=(Radio(name="rx-a", rx=Receive(band=Band(lo_mhz=144.0, hi_mhz=148.0))),))
    sv = SurveyResult(site="Test Flat", transmitters=(), receivers=("rx-a",), threats=(), filters=(req,))
    pt = plan_text(site=site, sv=sv, designs=[d], date="2026-01-01", version="0")
    passes, notch = pass_spans(req.pass_bands, 0.5), notch_spans(req.notches)
    part = FilterPart(filt=filt, curve=curve_data(filt, passes + notch), passes=passes, notches=notch)
    data, layout = render_pdf(pt, [part])
    assert layout.filters == 2
    pages = [p.extract_text() for p in PdfReader(io.BytesIO(data)).pages]
    assert len(pages) == layout.total
    first, second = pages[1 + layout.threats], pages[2 + layout.threats]
    assert "F1: rx filter at rx-a" in first and "(continued)" in second
    assert "Trimming steps" in second and "reason 59" in first


_PARAGRAPH = ("Connect the stub alone to the analyser through the tee it will use; find its resonance "
              "(the dip of the notch, or where the impedance at the tee is lowest). The resonance reads "
              "low because the stub is long: trim by the trim rate in small steps, re-measuring each "
              "time; notchkit trim SWEEP-F1-S1.s1p --cable RG-213 --plan OUTDIR/plan.json --stub F1-S1 "
              "(target 146.4856 MHz, 2.3 mm/MHz) W\u0141\u00f3d\u017a WWWWWWWWWWWWWWWWWWWWWWWWWWWWWWWWWWWW")


@functools.cache
def _dejavu_metrics(bold):
    import importlib.util
    from pathlib import Path

    from fontTools.ttLib import TTFont

    folder = Path(next(iter(importlib.util.find_spec("matplotlib").submodule_search_locations)),
                  "mpl-data", "fonts", "ttf")
    font = TTFont(str(folder / ("DejaVuSans-Bold.ttf" if bold else "DejaVuSans.ttf")))
    hmtx = font["hmtx"]
    return {code: hmtx[name][0] for code, name in font.getBestCmap().items()}, font["head"].unitsPerEm


def _dejavu_width_pt(text, size, bold=False):
    """Advance widths from the TrueType file itself, read by fontTools (hmtx table)."""
    advance, upem = _dejavu_metrics(bold)
    return sum(advance[ord(ch)] for ch in text) * size / upem


@pytest.mark.parametrize("width_in", [1.2, 2.5, 4.0, 6.9])
@pytest.mark.parametrize("bold", [False, True])
def test_wrapped_lines_fit_their_width_measured_by_the_font_file(width_in, bold):
    page = Page(PAGE_SIZES_IN["a4"], dry=True, font=EMBEDDED_FONT)
    size = 8.0
    lines = page.wrap(_PARAGRAPH, width_in, size, bold=bold)
    limit = width_in * 72.0
    for line in lines:
        assert _dejavu_width_pt(line, size, bold) <= limit + 1e-6, line
    # Nothing lost or reordered; a word is split only when it is wider than a line.
    assert "".join("".join(lines).split()) == "".join(_PARAGRAPH.split())
    # Greedy: the next line's first word would not have fitted on the line before.
    for a, b in zip(lines, lines[1:], strict=False):
        first = b.split()[0]
        if _dejavu_width_pt(first, size, bold) <= limit:
            assert _dejavu_width_pt(a + " " + first, size, bold) > limit, (a, first)


def test_helvetica_widths_are_the_standard_font_metrics():
    # Adobe's Helvetica AFM (one of the PDF standard 14 fonts; widths per 1000 em,
    # from memory): space 278, digits 556, "W" 944, "i" 222, "m" 833.
    from notchkit.report.pdfpage import _width_pt

    for text, units in ((" ", 278), ("0123456789", 5560), ("W", 944), ("i", 222), ("m", 833)):
        assert _width_pt(text, "Helvetica", 10.0) == pytest.approx(units / 100.0)
