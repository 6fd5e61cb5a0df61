"""Short ``repr`` and notebook HTML of the main results (notchkit.report.summary).

These check presentation, not physics: a result's repr is a few lines that
name it, its state and its key facts, never the full nested dump; the HTML is
the same facts, escaped.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

import notchkit
from notchkit.report.summary import MAX_ROWS, state_word, summary, summary_html, summary_repr

SITE = Path(__file__).resolve().parents[1] / "sites" / "ridge-eoc.yaml"


@pytest.fixture(scope="module")
def ridge():
    site = notchkit.load_site(SITE)
    report = notchkit.design(site, workers=1)
    return site, report


def test_design_report_repr_is_short_and_names_every_filter(ridge):
    _, report = ridge
    text = repr(report)
    assert text.startswith("<DesignReport ")
    assert len(text.splitlines()) <= MAX_ROWS + 3
    assert len(text) < 3000
    for d in report.designs:
        assert d.id in text and d.where in text
    assert state_word(report.meets) in text.splitlines()[0]


def test_design_repr_lists_each_stub_with_both_units(ridge):
    _, report = ridge
    d = report.designs[0]
    text = repr(d)
    for c in d.cuts:
        assert c.stub_id in text
    assert " mm" in text and " in" in text


def test_survey_repr_is_capped_and_says_how_many_more(ridge):
    _, report = ridge
    sv = report.survey
    text = repr(sv)
    assert text.startswith("<SurveyResult ")
    more = len(sv.threats) - MAX_ROWS
    if more > 0:
        assert text.rstrip().endswith(f"... {more} more")
    assert len(text.splitlines()) <= MAX_ROWS + 3


def test_html_has_the_same_facts_and_escapes_them(ridge):
    _, report = ridge
    s = summary(report)
    page = report._repr_html_()
    assert page.startswith("<div>") and page.endswith("</div>")
    for _, value in s.facts:
        assert value in page
    # a name with markup in it is escaped, never passed through
    odd = dataclasses.replace(report, site_name="<b>Ridge & Co</b>")
    page = summary_html(odd)
    assert "<b>Ridge" not in page and "&lt;b&gt;Ridge &amp; Co&lt;/b&gt;" in page


def test_state_words_are_the_same_everywhere():
    assert [state_word(x) for x in (True, False, None)] == ["meets", "does not meet", "not shown"]


def test_anything_else_is_a_type_error():
    with pytest.raises(TypeError):
        summary_repr(object())


def test_threats_without_an_order_print_a_dash_not_zero(capsys):
    from notchkit.cli import main
    from notchkit.report.text import order_text, threat_table

    path = SITE.parent / "hilltop-repeaters.yaml"
    sv = notchkit.survey(notchkit.load_site(path))
    noise = [t for t in sv.threats if t.mechanism == "noise"]
    assert noise, "the example site has transmitter-noise threats"
    assert {order_text(t) for t in noise} == {"-"}
    table = threat_table(sv)
    col = table.header.index("Order")
    assert all(row[col] != "0" for row in table.rows)
    assert main(["survey", str(path)]) == 0
    rows = [line.split() for line in capsys.readouterr().out.splitlines() if " noise " in line]
    assert rows and all("0" not in r[r.index("noise") + 1:r.index("noise") + 2] for r in rows)


@pytest.mark.parametrize("name", ["ridge-eoc.yaml", "hilltop-repeaters.yaml"])
def test_a_filter_is_labelled_by_whose_reception_it_guards(name):
    site = notchkit.load_site(SITE.parent / name)
    sv = notchkit.survey(site)
    seen = set()
    for req in sv.filters:
        victims = {t.victim for t in sv.threats if (req.radio, req.side) in t.filters}
        own, others = req.radio in victims, bool(victims - {req.radio})
        want = {(True, True): "both", (True, False): "receiver", (False, True): "others"}.get((own, others))
        assert req.protects == want, req.radio
        seen.add(want)
        if req.side == "tx" and want == "receiver":
            assert req.label == f"filter at {req.radio}, for its receiver"  # not "tx filter"
        elif req.side == "tx" and want == "others":
            assert req.label == f"tx filter at {req.radio}"
        elif req.side == "rx":
            assert req.label == f"rx filter at {req.radio}"
    assert "receiver" in seen  # the examples have a transceiver whose filter guards only itself
