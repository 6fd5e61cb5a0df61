"""The terminal, the HTML page and the PDF print the same tables in the same words.

A real plan of the example site sites/ridge-eoc.yaml is made with ``notchkit plan``
(PDF and HTML), and the terminal text of ``notchkit plan``, ``notchkit survey`` and
``notchkit design`` on the same site is captured. The PDF text is read back with
pypdf (an independent reader, test-only dependency), the HTML with the standard
library's parser. Each terminal table row, its cells joined by single spaces, must
appear in the PDF's and the HTML's text the same way: same figures, same units in
the headings, same state words ("meets" / "DOES NOT MEET") and the same "-" for no
value. The headings are written out here, not taken from the code.
"""

from __future__ import annotations

import html.parser
import re
from pathlib import Path

import pytest

from notchkit.cli import main

SITE = Path(__file__).resolve().parents[1] / "sites" / "ridge-eoc.yaml"

HEADINGS = {
    "threats": ("#", "Source", "Victim", "Mechanism", "Order", "Freq (MHz)", "Level (dBm)", "Limit (dBm)",
                "Excess (dB)", "More", "Stub helps at"),
    "matrix": ("TX \\ RX",),
    "filters": ("Filter", "Location", "Stubs", "Notches", "Pass bands", "Result", "Build yield"),
    "requirements": ("Band", "Range", "Required", "Design gives", "Result", "Builds", "Why"),
    "cuts": ("Part", "Cable", "Kind", "First cut", "Final (mm)", "Final (in)", "Trim to (MHz)",
             "Trim (mm/MHz)", "Tee"),
    "power": ("Stub", "End", "Max V (pk)", "End V (pk)", "End I (A pk)", "Max I (A pk)", "Heat (W)",
              "Hottest (W/m)", "Rating (V pk)", "V margin"),
}
STATE_WORDS = ("meets", "DOES NOT MEET")
# Words the outputs used to disagree on: none of them may come back.
OLD_WORDS = (re.compile(r"(?<!DOES )NOT MET"), re.compile(r"\blimit dBm\b"), re.compile(r"\bthreshold dBm\b"),
             re.compile(r"\bmet\b"), re.compile(r"\bok\b"), re.compile(r"tx \\ rx"))


def _flat(text: str) -> str:
    return " ".join(text.split())


class _Text(html.parser.HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.parts: list[str] = []
        self._skip = 0

    def handle_starttag(self, tag, attrs):
        self._skip += tag in ("style", "script")
        self.parts.append(" ")

    def handle_endtag(self, tag):
        self._skip -= tag in ("style", "script")
        self.parts.append(" ")

    def handle_data(self, data):
        if not self._skip:
            self.parts.append(data)


@pytest.fixture(scope="module")
def outputs(tmp_path_factory):
    from pypdf import PdfReader

    d = tmp_path_factory.mktemp("words")
    capsys_out = {}
    import contextlib
    import io

    for name, argv in (("plan", ["plan", str(SITE), "-o", str(d / "p.pdf"), "--html", str(d / "p.html")]),
                       ("survey", ["survey", str(SITE)]), ("design", ["design", str(SITE)])):
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            code = main(argv)
        assert code in (0, 1), name
        capsys_out[name] = buf.getvalue()
    pdf = "\n".join(p.extract_text() for p in PdfReader(str(d / "p.pdf")).pages)
    parser = _Text()
    parser.feed((d / "p.html").read_text(encoding="utf-8"))
    return {"terminal": capsys_out, "pdf": _flat(pdf), "html": _flat("".join(parser.parts))}


def _rows_after(text: str, heading_start: str) -> list[str]:
    """The rows of every terminal table whose heading line starts with ``heading_start``
    (after the rule under it, up to the first line that is not a row), cells joined by one space."""
    lines = text.splitlines()
    rows = []
    for k in (i for i, line in enumerate(lines) if line.strip().startswith(heading_start)):
        assert set(lines[k + 1].strip()) <= {"-", " "}, lines[k + 1]
        for line in lines[k + 2:]:
            if not re.search(r"\S {2,}\S", line) or line.strip().startswith(("Model:", "Line:")):
                break
            rows.append(_flat(line))
    return rows


def test_every_output_has_the_same_headings(outputs):
    term = outputs["terminal"]
    where = {"threats": term["survey"], "matrix": term["survey"], "filters": term["plan"],
             "requirements": term["design"], "cuts": term["design"], "power": term["design"]}
    for table, heads in HEADINGS.items():
        for out in (where[table], outputs["pdf"], outputs["html"]):
            flat = _flat(out)
            for h in heads:
                assert h in flat, (table, h)


def test_terminal_rows_read_the_same_in_the_pdf_and_the_html(outputs):
    term = outputs["terminal"]
    rows = {
        "filters": _rows_after(term["plan"], "Filter  "),
        "matrix": _rows_after(term["survey"], "TX \\ RX"),
        "threats": _rows_after(term["survey"], "#  Source"),
        "requirements": _rows_after(term["design"], "Band  "),
        "cuts": _rows_after(term["design"], "Part  "),
        "power": _rows_after(term["design"], "Stub  "),
    }
    # ridge-eoc: 5 filters, 4 transmitters, 20 source-victim pairs (sites/ridge-eoc.yaml)
    assert len(rows["filters"]) == 5 and len(rows["matrix"]) == 4 and len(rows["threats"]) >= 10
    assert len(rows["requirements"]) >= 5
    assert len(rows["cuts"]) >= 11  # 11 stubs, and the line sections
    # ridge-eoc: four transmitters' filters carry a carrier (F2-F5; 10 stubs), each with UHF hardware
    assert len(rows["power"]) == 10
    for table, found in rows.items():
        for row in found:
            assert row in outputs["pdf"], (table, row)
            assert row in outputs["html"], (table, row)
    # the matrix prints "-" where a radio meets itself, in every output
    assert any(" - " in f" {r} " for r in rows["matrix"])


def test_state_words_are_the_same_everywhere(outputs):
    term = outputs["terminal"]
    filter_rows = _rows_after(term["plan"], "Filter  ")
    states = [next(w for w in STATE_WORDS if f" {w} " in f" {r} ") for r in filter_rows]
    for row, state in zip(filter_rows, states, strict=True):
        fid = row.split()[0]
        for out in (outputs["pdf"], outputs["html"]):
            assert row in out and state in row, fid
    everything = {"pdf": outputs["pdf"], "html": outputs["html"], **term}
    for name, text in everything.items():
        for old in OLD_WORDS:
            assert not old.search(text), (name, old.pattern)


def test_the_power_titles_and_notes_read_the_same_in_every_output(outputs):
    """The terminal prints the plan's power-check titles (carrier, delivered power, heat) and
    notes word for word: the through line's voltage at each port and tee, every connector's
    voltage and margin, the connectors' rating and the matched-load note; and none of its old
    one-off wording."""
    design = outputs["terminal"]["design"]
    titles = [_flat(x).removesuffix(":") for x in design.splitlines()
              if x.strip().startswith("Power check at ")]
    notes = [_flat(x) for x in design.splitlines()
             if x.strip().startswith(("Through line (peak", "Connectors (UHF, rated",
                                      "Connectors (UHF) checked at every", "Voltages assume"))]
    assert len(titles) == 4 and all(" W delivered, " in t for t in titles)  # F2-F5 carry a carrier
    assert len(notes) == 4 * 4
    # both ports of every filter with a carrier, and every stub's plug (F2-F5: 10 stubs)
    assert sum(n.count(" port ") for n in notes if n.startswith("Through line")) == 2 * 4
    assert sum(n.count(" plug ") for n in notes if n.startswith("Connectors (UHF, rated")) == 10
    for line in (*titles, *notes):
        assert line in outputs["pdf"] and line in outputs["html"], line
    assert "power check:" not in design and "W/m peak)" not in design


def test_the_pdf_and_the_html_share_their_sections_and_warnings(outputs):
    words = ("Threats", "Tolerance", "Power check", "Trimming steps", "Cut labels", "Cautions",
             "Read the cautions page before anyone cuts, climbs or transmits.",
             "Work on RF equipment can hurt or kill. Read this page before anyone cuts, climbs or transmits.",
             "Print at 100 % scale, cut along the dashed lines and tape each label to its stub's cable "
             "next to the connector.")
    for w in words:
        assert w in outputs["pdf"] and w in outputs["html"], w


def test_a_terminal_table_keeps_alignment_no_value_marks_and_its_note():
    from notchkit.report.rows import Table
    from notchkit.report.terminal import table_lines

    t = Table(title="Power", header=("Stub", "Max V (pk)"), rows=(("F1-S1", "85"), ("F1-S22", "-")),
              align=("left", "right"), widths=(1.0, 1.0), note="word " * 30)
    lines = table_lines(t, "  ")
    assert lines[:5] == ["  Power:", "  Stub    Max V (pk)", "  ------  ----------", "  F1-S1           85",
                         "  F1-S22           -"]
    assert all(len(x) <= 102 for x in lines[5:])
    assert " ".join(" ".join(lines[5:]).split()) == ("word " * 30).strip()
    empty = table_lines(Table(title="", header=("A",), rows=(), align=("left",), widths=(1.0,)))
    assert empty == ["A", "-", "(none)"]
