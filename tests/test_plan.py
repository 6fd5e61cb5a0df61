"""`notchkit plan`: the PDF, HTML, curves, Touchstone and JSON of a whole site.

The site is designed once per module (the solver is the slow part); the other
runs reuse that design report. Outside references:
- pypdf (a PDF reader independent of the matplotlib writer) extracts the text;
- scikit-rf reads the Touchstone files (Touchstone 1.1 specification);
- ISO 216 (A4 = 210 x 297 mm) and ANSI/ASME Y14.1 (Letter = 8.5 x 11 in) give
  the page sizes, 1 in = 25.4 mm = 72 PDF points (ISO 32000-1 sec. 8.3.2.3);
- Pozar, *Microwave Engineering*, 4th ed., sec. 2.3: a stub of path l resonates
  at f = n c VF / (4 l) (n odd open, even short), checked against the printed target.
"""

from __future__ import annotations

import csv
import hashlib
import importlib
import io
import json
import math
import re
from pathlib import Path

import numpy as np
import pytest
from hw_bench import truth_length_m

from notchkit.cli import main
from notchkit.cutlist import format_length
from notchkit.filters import evaluate
from notchkit.lines import C0, db20
from notchkit.report.pdf import expected_label_pages
from notchkit.report.text import mhz, mhz4

plan_mod = importlib.import_module("notchkit.siteplan")  # the module behind notchkit.plan

SITE = """\
# A fictional two-radio knoll: a 2 m and a 70 cm transceiver on one mast.
site: Test Knoll
cable: RG-213
transceivers:
  - name: vhf-a
    freq_mhz: 146.52
    tx: {power_w: 50, harmonic_suppression_dbc: 60}
    rx: {sensitivity_dbm: -120, blocking_dbm: -25}
    antenna: {x_m: 0.0, y_m: 0.0, height_m: 10.0, gain_dbi: 3.0}
    feedline: {cable: RG-213, length_m: 20}
  - name: uhf-b
    freq_mhz: 446.0
    tx: {power_w: 25, harmonic_suppression_dbc: 60}
    rx: {sensitivity_dbm: -121, blocking_dbm: -25}
    antenna: {x_m: 3.0, y_m: 0.0, height_m: 10.0, gain_dbi: 3.0}
    feedline: {cable: RG-213, length_m: 20}
"""


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _pdf_pages(src: Path | bytes) -> list[str]:
    """Each page's text (from a file or from PDF bytes), as pypdf extracts it."""
    from pypdf import PdfReader

    reader = PdfReader(io.BytesIO(src) if isinstance(src, bytes) else str(src))
    return [" ".join((p.extract_text() or "").split()) for p in reader.pages]


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    d = tmp_path_factory.mktemp("plan")
    site = d / "knoll.yaml"
    site.write_text(SITE)
    before = _sha(site)
    result = plan_mod.plan(site, d / "plan.pdf", html=d / "plan.html", outdir=d / "out")
    return {"dir": d, "site": site, "hash": before, "result": result}


@pytest.fixture
def reuse_design(run, monkeypatch):
    """Later runs reuse the module's design report (same site, same result)."""
    report = run["result"].design
    monkeypatch.setattr(plan_mod, "_run_design", lambda site, **_kw: report)
    return report


def _cuts(result):
    return [c for d in result.design.designs for c in d.cuts]


def test_site_file_is_never_touched(run):
    assert _sha(run["site"]) == run["hash"]


def test_page_count_is_cover_threats_one_per_filter_labels_cautions(run):
    res = run["result"]
    pages = _pdf_pages(res.pdf)
    n_filters = len(res.design.designs)
    n_stubs = len(_cuts(res))
    assert n_filters >= 1 and n_stubs >= 1
    threat_pages = res.layout.threats
    assert threat_pages >= 1
    assert len(pages) == 1 + threat_pages + n_filters + expected_label_pages(n_stubs, "a4") + 1
    assert res.pages == len(pages)
    assert "Threats" in pages[1]
    for k, d in enumerate(res.design.designs):
        assert pages[1 + threat_pages + k].count(f"{d.id}:") >= 1  # the filter's own page
    assert "Cut labels" in pages[1 + threat_pages + n_filters]
    assert "Cautions" in pages[-1]


def test_filter_pages_have_labelled_axes_with_the_same_ticks_as_the_images(run):
    # "axes labelled with units" (the issue); the PDF's curve and the PNG images are
    # drawn from one PlotLayout, so each filter page prints that layout's tick labels.
    from notchkit.report.curves import LEGEND, plot_layout

    res = run["result"]
    pages = _pdf_pages(res.pdf)
    first = 1 + res.layout.threats
    for k, d in enumerate(res.design.designs):
        page = pages[first + k]
        assert "Frequency (MHz)" in page and "S21, S11 (dB)" in page
        filt, curve, spans = _curve_parts(d, run)
        lay = plot_layout(curve, *spans)
        words = page.split()
        for _v, label in (*lay.xticks, *lay.yticks):
            assert label in words, (d.id, label)
        for key in lay.legend:
            assert LEGEND[key] in page


def _curve_parts(d, run):
    from notchkit.report.curves import curve_data
    from notchkit.report.text import design_filter

    filt = design_filter(d)
    spans = plan_mod._spans(d, None)
    return filt, curve_data(filt, spans[0] + spans[1]), spans


def test_pdf_text_has_every_cut_length_and_target_resonance(run):
    res = run["result"]
    text = " ".join(_pdf_pages(res.pdf))
    for d in res.design.designs:
        vf = d.filter.cable.velocity_factor
        hw = d.to_json()["model"]["hardware"]
        assert hw["family"] == "uhf"  # no hardware: block: the default UHF hardware
        for c in d.cuts:
            assert f"FIRST CUT {format_length(c.first_cut_m, 'both')}" in text  # its label leads with it
            assert f"about {format_length(c.cut_length_m, 'both')}" in text
            # The printed target resonance is the stub's own series resonance with its plug and
            # short: the length (plug included) that resonates there by the textbook lossless
            # input impedance (Pozar eq. 2.44, tests/hw_bench.py) is the cut, within 0.1 mm.
            assert f"trim to {mhz(round(c.resonance_mhz, 4))} MHz" in text
            truth = truth_length_m(termination=c.termination, quarter_waves=c.quarter_waves,
                                   resonance_hz=c.resonance_mhz * 1e6, vf=vf, z0=50.0, hw=hw)
            assert c.length_m == pytest.approx(truth, abs=1e-4)
            # and the cable's own quarter-wave formula (Pozar sec. 2.3) is within the plug's share
            plain = c.quarter_waves * C0 * vf / (4 * c.length_m) / 1e6
            assert 0.9 < c.resonance_mhz / plain < 1.0
            assert c.cut_length_m == pytest.approx(c.length_m - d.filter.tee_allowance_m, abs=1e-12)


def test_pdf_threat_pages_list_the_worst_of_every_pair(run):
    from notchkit.report.text import threat_groups

    res = run["result"]
    pages = _pdf_pages(res.pdf)
    threat_text = " ".join(pages[1:1 + res.layout.threats])
    sv = res.survey
    assert len(sv.threats) >= 1
    groups = threat_groups(sv.threats)
    assert sum(n for _, n in groups) == len(sv.threats)
    for t in sv.threats:
        assert t.victim in threat_text
    for t, _ in groups:  # the worst of each (sources, victim) pair, printed in full
        assert mhz4(t.f_mhz) in threat_text
        assert float(mhz4(t.f_mhz)) == pytest.approx(t.f_mhz, abs=5e-5)  # printed to 100 Hz
        assert f"{t.excess_db:.1f}" in threat_text
        assert f"{t.level_dbm:.1f}" in threat_text


def test_not_met_is_spelled_out_on_the_cover(run):
    res = run["result"]
    cover = _pdf_pages(res.pdf)[0]
    unmet = [d for d in res.design.designs if not d.meets]
    if unmet:
        assert "DOES NOT MEET" in cover
        for d in unmet:
            assert f"DOES NOT MEET: {d.id}:" in cover
    assert res.meets == (not unmet)


def test_html_is_self_contained_and_prints_the_same_numbers(run):
    res = run["result"]
    html = res.html.read_text(encoding="utf-8")
    assert html.startswith("<!DOCTYPE html>")
    assert "@media print" in html and "break-after: page" in html
    srcs = re.findall(r'(?:src|href)="([^"]+)"', html)
    assert srcs and all(s.startswith("data:image/") for s in srcs)  # nothing to fetch
    for d in res.design.designs:
        for c in d.cuts:
            assert f"FIRST CUT {format_length(c.first_cut_m, 'both')}" in html
            assert format_length(c.first_cut_m, "both") in html
    from notchkit.report.text import threat_groups

    for t, _ in threat_groups(res.survey.threats):
        assert mhz4(t.f_mhz) in html and f"{t.excess_db:.1f}" in html
    # The very rows of the PDF's tables are the HTML's.
    for row in res.text.filters[0].cuts.rows:
        for cell in row:
            assert cell.replace("&", "&amp;") in html


def test_touchstone_files_load_in_scikit_rf_and_match_the_design(run):
    import skrf

    res = run["result"]
    s2p = sorted(res.outdir.glob("*.s2p"))
    assert len(s2p) == len(res.design.designs)
    for d, path in zip(res.design.designs, s2p, strict=True):
        assert path.name.startswith(f"{d.id}-")
        net = skrf.Network(str(path))
        s = evaluate(d.filter, net.f)
        np.testing.assert_allclose(net.s[:, 1, 0], s[:, 1, 0], atol=1e-6)
        np.testing.assert_allclose(net.s[:, 0, 0], s[:, 0, 0], atol=1e-6)
        assert float(np.real(net.z0[0, 0])) == 50.0


def test_curve_csv_and_png_per_filter(run):
    res = run["result"]
    for d in res.design.designs:
        (csv_path,) = res.outdir.glob(f"{d.id}-*.csv")
        (png_path,) = res.outdir.glob(f"{d.id}-*.png")
        assert png_path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # ISO/IEC 15948 signature
        rows = list(csv.reader(io.StringIO(csv_path.read_text())))
        assert rows[0] == ["freq_mhz", "s21_db", "s11_db"]
        data = np.array(rows[1:], dtype=float)
        assert np.all(np.diff(data[:, 0]) > 0)
        s = evaluate(d.filter, data[:, 0] * 1e6)
        np.testing.assert_allclose(data[:, 1], np.maximum(db20(s[:, 1, 0]), -300.0), atol=1e-4)
        np.testing.assert_allclose(data[:, 2], np.maximum(db20(s[:, 0, 0]), -300.0), atol=1e-4)
        lo = min([b.lo_mhz for b in d.requirement.pass_bands] + [n.lo_mhz for n in d.requirement.notches])
        hi = max([b.hi_mhz for b in d.requirement.pass_bands] + [n.hi_mhz for n in d.requirement.notches])
        assert data[0, 0] < lo and data[-1, 0] > hi


def test_plan_json_feeds_notchkit_trim(run):
    from notchkit.trimming import load_plan_stub

    res = run["result"]
    doc = json.loads((res.outdir / "plan.json").read_text())
    assert doc["site"] == "Test Knoll"
    assert doc["survey"]["threats"] and len(doc["survey"]["threats"]) == len(res.survey.threats)
    assert len(doc["filters"]) == len(res.design.designs)
    for f, d in zip(doc["filters"], res.design.designs, strict=True):
        stubs = [e for e in f["elements"] if e["kind"] == "stub"]
        for e, c in zip(stubs, d.cuts, strict=True):
            assert e["id"] == c.stub_id
            assert e["cut_length_m"] == pytest.approx(c.cut_length_m, abs=1e-9)
            assert e["first_cut_m"] == pytest.approx(c.first_cut_m, abs=1e-9)
            ps = load_plan_stub(res.outdir / "plan.json", c.stub_id)
            assert ps.cut_length_m == pytest.approx(c.cut_length_m, abs=1e-9)
    assert doc["meets"] == res.meets


def test_letter_pages_and_metric_units(run, reuse_design, tmp_path):
    res = plan_mod.plan(run["site"], tmp_path / "letter.pdf", units="metric", page_size="letter")
    from pypdf import PdfReader

    reader = PdfReader(str(res.pdf))
    box = reader.pages[0].mediabox
    # ANSI Letter, 72 points per inch
    assert (float(box.width), float(box.height)) == pytest.approx((8.5 * 72, 11 * 72), abs=0.01)
    a4 = PdfReader(str(run["result"].pdf)).pages[0].mediabox
    assert (float(a4.width), float(a4.height)) == pytest.approx((210 / 25.4 * 72, 297 / 25.4 * 72), abs=0.01)
    n_stubs = len(_cuts(res))
    assert len(reader.pages) == (1 + res.layout.threats + len(res.design.designs)
                                 + expected_label_pages(n_stubs, "letter") + 1)
    text = " ".join(" ".join((p.extract_text() or "").split()) for p in reader.pages)
    for c in _cuts(res):
        assert f"FIRST CUT {format_length(c.first_cut_m, 'metric')}" in text
    assert not re.search(r"\d+ \d+/\d+ in\b", text)  # no inches anywhere


def test_cli_prints_summary_and_exit_code_follows_meets(run, reuse_design, tmp_path, capsys):
    out = tmp_path / "cli.pdf"
    code = main(["plan", str(run["site"]), "-o", str(out)])
    printed = capsys.readouterr().out
    assert code == (0 if run["result"].meets else 1)
    assert str(out) in printed and out.is_file()
    assert "Test Knoll" in printed


@pytest.mark.parametrize("case", ["missing-folder", "directory", "outdir-is-file", "html-missing-folder"])
def test_unwritable_output_is_exit_2_and_writes_nothing(run, tmp_path, capsys, monkeypatch, case):
    def boom(site, **_kw):  # the check must come before any design work
        raise AssertionError("designed before checking the outputs")

    monkeypatch.setattr(plan_mod, "_run_design", boom)
    a_file = tmp_path / "a-file"
    a_file.write_text("x")
    args = {
        "missing-folder": ["-o", str(tmp_path / "nope" / "p.pdf")],
        "directory": ["-o", str(tmp_path)],
        "outdir-is-file": ["-o", str(tmp_path / "p.pdf"), "--outdir", str(a_file)],
        "html-missing-folder": ["-o", str(tmp_path / "p.pdf"), "--html", str(tmp_path / "nope" / "p.html")],
    }[case]
    before = sorted(p.name for p in tmp_path.iterdir())
    code = main(["plan", str(run["site"]), *args])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: ") and len(err.strip().splitlines()) == 1
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    assert _sha(run["site"]) == run["hash"]


def test_site_file_as_output_is_refused(run, capsys):
    code = main(["plan", str(run["site"]), "-o", str(run["site"])])
    assert code == 2 and "site file itself" in capsys.readouterr().err
    assert _sha(run["site"]) == run["hash"]


def test_bad_site_is_exit_2_without_output(tmp_path, capsys):
    site = tmp_path / "bad.yaml"
    site.write_text("site: X\ncable: RG-213\ntransmitters:\n  - name: a\n    freq_mhz: -5\n    power_w: 5\n")
    code = main(["plan", str(site), "-o", str(tmp_path / "p.pdf")])
    assert code == 2
    assert not (tmp_path / "p.pdf").exists()
    assert "Traceback" not in capsys.readouterr().err


def test_no_temporary_files_left(run):
    names = [p.name for p in run["dir"].rglob("*")]
    assert not [n for n in names if n.endswith(".part") or n.startswith(".notchkit-")]
    assert math.isfinite(run["result"].pages)


def test_site_needing_no_filter_exits_0_with_cover_threats_labels_cautions(tmp_path, capsys):
    site = tmp_path / "lone.yaml"
    site.write_text("site: Lone Pine\ncable: RG-213\ntransmitters:\n  - name: only-tx\n"
                    "    freq_mhz: 146.52\n    power_w: 5\n")
    out = tmp_path / "lone.pdf"
    assert main(["plan", str(site), "-o", str(out)]) == 0
    assert "no filter is needed" in capsys.readouterr().out
    pages = _pdf_pages(out)
    assert len(pages) == 1 + 1 + 0 + expected_label_pages(0, "a4") + 1
    assert "No filter is needed" in pages[0] and "DOES NOT MEET:" not in pages[0]


def test_plan_designed_in_processes_is_the_same_file_as_designed_in_one(tmp_path):
    # A fresh interpreter (forking is used only where no other thread runs; this
    # test process may have some). The filters designed in worker processes must
    # give the very same pages as designed here: pypdf, an independent reader,
    # compares every page's content stream byte for byte (the files differ only in
    # their time stamps and ID).
    import subprocess
    import sys
    import textwrap

    site = tmp_path / "knoll.yaml"
    site.write_text(SITE)
    script = textwrap.dedent(f"""
        import importlib
        from pathlib import Path
        from pypdf import PdfReader
        from notchkit.siteplan import plan
        def _forms(page):
            x = page["/Resources"].get("/XObject") or {{}}
            return sorted((str(k), x[k].get_object().get_data()) for k in x)
        pm, dm = importlib.import_module("notchkit.siteplan"), importlib.import_module("notchkit.synthesis")
        one_process, said = pm._run_design, []
        pm._run_design = lambda s, **_k: dm.design(s, workers=2, progress=said.append)
        plan({str(site)!r}, {str(tmp_path / "two.pdf")!r})
        assert any("done" in m for m in said), said  # the worker processes ran
        pm._run_design = one_process
        plan({str(site)!r}, {str(tmp_path / "one.pdf")!r})
        two, one = (PdfReader(str(Path({str(tmp_path)!r}, n))) for n in ("two.pdf", "one.pdf"))
        assert len(two.pages) == len(one.pages)
        for a, b in zip(two.pages, one.pages):
            assert a.get_contents().get_data() == b.get_contents().get_data()
            assert _forms(a) == _forms(b)
        assert one.metadata["/Title"].startswith("Site notch plan"), one.metadata
        assert one.metadata["/Title"] == two.metadata["/Title"]
        print(len(one.pages))
    """)
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert int(out.stdout.strip()) >= 5


def _page_streams(data: bytes) -> list[tuple[bytes, list[tuple[str, bytes]]]]:
    """Every page's content stream and the streams of the forms it draws, as pypdf reads them."""
    from pypdf import PdfReader

    out = []
    for page in PdfReader(io.BytesIO(data)).pages:
        forms = page["/Resources"].get("/XObject") or {}
        out.append((page.get_contents().get_data(),
                    sorted((str(k), forms[k].get_object().get_data()) for k in forms)))
    return out


def _parts_and_text(run, title=None):
    import dataclasses

    result = run["result"]
    parts = [plan_mod._part(d, None) for d in result.design.designs]
    pt = result.text
    if title is not None:
        # and a character of its own on each filter page (outside Windows-1252 too), so
        # an embedded subset would number them by the order the pages were drawn in
        own = ["\u03a9", "\u03bb", "\u0141", "\u017a"]
        filters = tuple(dataclasses.replace(f, title=f"{f.title} {own[k % 4]}")
                        for k, f in enumerate(pt.filters))
        pt = dataclasses.replace(pt, title=title, filters=filters)
    return pt, parts


@pytest.mark.parametrize("title", [None, "Site notch plan: Szczyt \u0141\u00f3d\u017a"])
def test_pdf_pages_are_the_same_each_time_they_are_drawn(run, title):
    # The plan draws its PDF from the finished designs: the same pages, stream for
    # stream, every time (pypdf reads both), with the standard font and with the
    # embedded one (title outside Windows-1252), whose subsets follow the drawing order.
    from notchkit.report.pdf import render_pdf

    pt, parts = _parts_and_text(run, title)
    assert len(parts) >= 2
    footer = "Test Knoll - notch plan"
    fresh, layout = render_pdf(pt, parts, footer=footer)
    again, layout2 = render_pdf(pt, parts, footer=footer)
    assert layout2 == layout
    assert _page_streams(again) == _page_streams(fresh)
    assert len(_page_streams(fresh)) == layout.total
    text = " ".join(_pdf_pages(fresh))
    assert all(ft.title.split(" ")[0] in text for ft in pt.filters)
