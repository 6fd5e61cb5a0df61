"""The user's defaults file ($XDG_CONFIG_HOME/notchkit/defaults.yaml), imperial plans, plan progress."""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest

import notchkit
from notchkit.cli import main
from notchkit.cli.progress import terminal_progress
from notchkit.defaults import DefaultsError, UserDefaults, load_defaults
from notchkit.report.text import MM_PER_IN, plan_text

SITES = Path(__file__).resolve().parent.parent / "sites"

USER_LIB = """\
sources:
  own-sheet: {cite: "our own sweep of the drum, 2026"}
cables:
  - name: Drum-7
    z0_ohm: {value: 50, source: own-sheet}
    velocity_factor: {value: 0.83, source: own-sheet}
    loss:
      - source: own-sheet
        unit: dB/100m
        points: [[10, 1.0], [100, 3.3], [450, 7.5]]
"""


def _write(tmp_path: Path, text: str) -> Path:
    (tmp_path / "notchkit").mkdir(exist_ok=True)
    p = tmp_path / "notchkit" / "defaults.yaml"
    p.write_text(text, encoding="utf-8")
    return p


def test_missing_file_is_empty_defaults(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    assert load_defaults() == UserDefaults()


def test_every_key_is_read(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    p = _write(tmp_path, "units: imperial\npage_size: letter\nanalyser_mhz: [1, 600]\ncables: mine.yaml\n")
    d = load_defaults()
    assert (d.units, d.page_size, d.analyser_mhz) == ("imperial", "letter", (1.0, 600.0))
    assert d.cables == p.parent / "mine.yaml" and d.path == p


@pytest.mark.parametrize(("text", "where"), [
    ("units: furlongs\n", r":1:8: units: 'furlongs' is not allowed \(metric, imperial, both\)"),
    ("page_size: a4\npage: a3\n", r":2:1: page: unknown key"),
    ("analyser_mhz: [600, 1]\n", r":1:15: analyser_mhz: low 600 must be below high 1 MHz"),
    ("analyser_mhz: [1, x]\n", r":1:19: analyser_mhz: 'x' is not a number"),
    ("units: [metric\n", r":\d+:\d+: not valid YAML"),
    ("- units\n", r":1:1: \(top\): must be a mapping"),
])
def test_a_bad_file_is_one_line_with_line_and_column(tmp_path, monkeypatch, text, where):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    p = _write(tmp_path, text)
    with pytest.raises(DefaultsError, match=re.escape(str(p)) + where):
        load_defaults()


def test_a_bad_file_stops_plan_with_exit_2_and_writes_nothing(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    _write(tmp_path, "units: furlongs\n")
    out = tmp_path / "plan.pdf"
    assert main(["plan", str(SITES / "ridge-eoc.yaml"), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "units: 'furlongs' is not allowed" in err
    assert not out.exists()


def test_personal_cable_library_named_in_the_defaults(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    (tmp_path / "lib.yaml").write_text(USER_LIB, encoding="utf-8")
    _write(tmp_path, f"cables: {tmp_path / 'lib.yaml'}\n")
    assert notchkit.get_cable("Drum-7").velocity_factor == 0.83
    _write(tmp_path, "cables: nowhere.yaml\n")
    with pytest.raises(notchkit.CableError, match=r"defaults\.yaml: cables: .*nowhere\.yaml is not a file"):
        notchkit.get_cable("RG-213")


def test_analyser_flag_is_checked():
    assert main(["plan", str(SITES / "ridge-eoc.yaml"), "-o", "x.pdf", "--analyser-mhz", "600-1"]) == 2


@pytest.fixture(scope="module")
def ridge():
    site = notchkit.load_site(SITES / "ridge-eoc.yaml")
    return site, notchkit.design(site, workers=1)


def test_imperial_plan_prints_no_millimetres(ridge):
    site, report = ridge
    kw = dict(site=site, sv=report.survey, designs=report.designs, date="2026-01-01", version="0")
    text = plan_text(units="imperial", **kw)
    words = []
    for f in text.filters:
        words += [*f.facts, *f.tolerance, *f.trim_steps, *f.stub_labels, *f.cuts.header]
        words += [cell for row in f.cuts.rows for cell in row]
    words += [line for tag in text.tags for line in tag.lines]
    joined = "\n".join(words)
    assert not re.search(r"\bmm\b", joined), [w for w in words if re.search(r"\bmm\b", w)]
    assert "in/MHz" in joined
    # the trim rate in inches is the metric one over 25.4 mm/in (the inch's definition)
    metric = plan_text(units="metric", **kw)
    c = report.designs[0].cuts[0]
    col = metric.filters[0].cuts.header.index("Trim (mm/MHz)")
    assert float(metric.filters[0].cuts.rows[0][col]) == pytest.approx(c.trim_rate_mm_per_mhz, abs=0.05)
    col = text.filters[0].cuts.header.index("Trim (in/MHz)")
    assert float(text.filters[0].cuts.rows[0][col]) == pytest.approx(c.trim_rate_mm_per_mhz / MM_PER_IN,
                                                                     abs=5e-4)


def test_analyser_range_precedence_flag_then_site_file_then_defaults(ridge):
    import dataclasses

    from notchkit.defaults import with_analyser
    from notchkit.site.model import DEFAULT_ANALYSER_MHZ

    site, _ = ridge
    assert (site.allowances.analyser_lo_mhz, site.allowances.analyser_hi_mhz) == DEFAULT_ANALYSER_MHZ
    mine = with_analyser(site, None, (1.0, 600.0)).allowances
    assert (mine.analyser_lo_mhz, mine.analyser_hi_mhz) == (1.0, 600.0)
    flag = with_analyser(site, (2.0, 200.0), (1.0, 600.0)).allowances
    assert (flag.analyser_lo_mhz, flag.analyser_hi_mhz) == (2.0, 200.0)
    own = dataclasses.replace(site, allowances=dataclasses.replace(site.allowances, analyser_hi_mhz=450.0))
    kept = with_analyser(own, None, (1.0, 600.0)).allowances
    assert kept.analyser_hi_mhz == 450.0
    assert with_analyser(site, None, None) is site


class _Tty(io.StringIO):
    def __init__(self, tty: bool) -> None:
        super().__init__()
        self.tty = tty

    def isatty(self) -> bool:
        return self.tty


def test_progress_only_on_a_terminal():
    assert terminal_progress(stream=_Tty(False)) is None
    assert terminal_progress(enabled=False, stream=_Tty(True)) is None
    out = _Tty(True)
    p = terminal_progress(stream=out)
    assert p is not None
    p("F1 (1/5): rx filter at wx-alert")
    p.done()
    assert "F1 (1/5)" in out.getvalue() and out.getvalue().endswith("\r\x1b[K")


def test_plan_reports_progress(ridge, tmp_path):
    site, _ = ridge
    seen: list[str] = []
    notchkit.plan(site, tmp_path / "p.pdf", progress=seen.append)
    assert any(m.startswith("F1") for m in seen) and seen[-1] == "writing the PDF"
    assert not (tmp_path / "p.pdf.tmp").exists()


@pytest.fixture
def chatter():
    from notchkit.cli import progress

    yield progress
    progress.configure()


@pytest.mark.parametrize("argv", [["-q", "check", "SITE"], ["check", "SITE", "--quiet"]])
def test_quiet_is_accepted_before_or_after_the_command(argv, chatter, capsys):
    argv = [str(SITES / "ridge-eoc.yaml") if a == "SITE" else a for a in argv]
    assert main(argv) == 0
    assert capsys.readouterr().err == ""
    assert terminal_progress(stream=_Tty(True)) is None  # quiet: no progress even on a terminal


def test_quiet_and_verbose_together_is_a_usage_error(chatter, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["-q", "check", str(SITES / "ridge-eoc.yaml"), "-v"])
    assert exc.value.code == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_verbose_progress_is_plain_lines_off_a_terminal(chatter):
    chatter.configure(verbose=True)
    out = _Tty(False)
    p = terminal_progress(stream=out)
    assert p is not None
    p("F1 (1/2 done)")
    p("writing the PDF")
    p.done()
    assert out.getvalue() == "F1 (1/2 done)\nwriting the PDF\n"


def test_quiet_counts_warnings_instead_of_printing_them(capsys):
    import warnings

    from notchkit.cli import _print_warnings

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        warnings.warn("cable X: no loss table", UserWarning, stacklevel=1)
        warnings.warn("cable X: no loss table", UserWarning, stacklevel=1)
        warnings.warn("sweep is coarse", UserWarning, stacklevel=1)
    _print_warnings(caught, None, True)
    assert capsys.readouterr().err == "warning: 2 warning(s) not shown (run without --quiet to see them)\n"
    _print_warnings(caught, None, False)
    assert capsys.readouterr().err == "warning: cable X: no loss table\nwarning: sweep is coarse\n"


def test_a_defaults_path_that_is_not_a_regular_file_is_refused(tmp_path, monkeypatch):
    import os

    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    (tmp_path / "notchkit").mkdir()
    os.mkfifo(tmp_path / "notchkit" / "defaults.yaml")  # a FIFO with no writer must not hang
    with pytest.raises(DefaultsError, match=r"defaults\.yaml:1:1: .* a FIFO.*not a regular file"):
        load_defaults()


def test_an_oversized_defaults_file_is_refused_unread(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    _write(tmp_path, "# " + "x" * (64 * 1024) + "\n")
    with pytest.raises(DefaultsError, match=r"defaults\.yaml:1:1: the defaults file"):
        load_defaults()
