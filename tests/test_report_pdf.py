"""Page layout of the PDF (notchkit.report.pdf): fonts, line pitch, labels per page.

References: ISO 216 (A4 210 x 297 mm), ANSI Letter (8.5 x 11 in); the PDF standard
14 fonts are spelled in WinAnsiEncoding (ISO 32000-1 annex D), i.e. Windows-1252;
pypdf (independent of the writer) extracts the text.
"""

from __future__ import annotations

import io

import pytest

from notchkit.report.pdf import (
    CORE_FONT,
    EMBEDDED_FONT,
    LINE_EM,
    MARGIN_IN,
    PAGE_SIZES_IN,
    _Page,
    choose_font,
    page_size_in,
    tags_per_page,
)


def _layout_ys(font, text, size):
    import logging

    import matplotlib
    from matplotlib.backends.backend_pdf import PdfFile, RendererPdf
    from matplotlib.figure import Figure

    log = logging.getLogger("matplotlib.font_manager")
    level = log.level
    log.setLevel(logging.ERROR)
    try:
        with matplotlib.rc_context(font.rc):
            fig = Figure(figsize=(4, 4), dpi=72)
            renderer = RendererPdf(PdfFile(io.BytesIO()), 72, 288, 288)
            t = fig.text(0, 1, text, fontsize=size, va="top", linespacing=font.linespacing)
            _, lines, _ = t._get_layout(renderer)
            return [xy[1] + wad[1] for _, wad, xy in lines]  # top of each line box
    finally:
        log.setLevel(level)


@pytest.mark.parametrize("font", [CORE_FONT, EMBEDDED_FONT], ids=["core", "embedded"])
def test_every_line_of_a_block_is_exactly_one_pitch_tall(font):
    # Lines with tall glyphs, apostrophes, descenders and blanks all get the same box.
    text = "simplex-2m's input\n(146.3320)\n\nplain\ngyp|[]"
    for size in (6.0, 8.0, 11.0):
        tops = _layout_ys(font, text, size)
        steps = [a - b for a, b in zip(tops, tops[1:], strict=False)]
        assert steps == pytest.approx([LINE_EM * size] * len(steps), abs=1e-6)


def test_core_font_only_for_windows_1252_text():
    assert choose_font(["Cedar Ridge 146.52 MHz", "F1-S2 cut 318 mm (12 1/2 in)"]) is CORE_FONT
    assert choose_font(["Szczyt \u0141\u00f3d\u017a"]) is EMBEDDED_FONT  # L-stroke is not in cp1252


def test_embedded_font_gives_extractable_text():
    import matplotlib
    from matplotlib.figure import Figure
    from pypdf import PdfReader

    with matplotlib.rc_context(EMBEDDED_FONT.rc):
        fig = Figure(figsize=(3, 2))
        fig.text(0.1, 0.5, "\u0141\u00f3d\u017a 318 mm")
        buf = io.BytesIO()
        fig.savefig(buf, format="pdf")
    text = PdfReader(io.BytesIO(buf.getvalue())).pages[0].extract_text()
    assert "318 mm" in text and "\u0141" in text


def test_page_sizes_and_labels_fit():
    assert page_size_in("a4") == pytest.approx((210 / 25.4, 297 / 25.4))  # ISO 216
    assert page_size_in("letter") == (8.5, 11.0)  # ANSI Letter
    for name, (w, h) in PAGE_SIZES_IN.items():
        n = tags_per_page(name)
        assert n >= 10
        page = _Page((w, h), dry=True)
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
    from notchkit.report.curves import curve_data, notch_spans, pass_spans
    from notchkit.report.pdf import render_pdf
    from notchkit.report.text import plan_text
    from notchkit.requirements import FilterRequirement, NotchSpec
    from notchkit.site.model import Band, Radio, Receive, Site
    from notchkit.survey import SurveyResult

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
    spans = (pass_spans(req.pass_bands, 0.5), notch_spans(req.notches))
    data, layout = render_pdf(pt, [(filt, curve_data(filt, spans[0] + spans[1]), spans)])
    assert layout.filters == 2
    pages = [p.extract_text() for p in PdfReader(io.BytesIO(data)).pages]
    assert len(pages) == layout.total
    first, second = pages[1 + layout.threats], pages[2 + layout.threats]
    assert "F1: rx filter at rx-a" in first and "(continued)" in second
    assert "Trimming steps" in second and "reason 59" in first
