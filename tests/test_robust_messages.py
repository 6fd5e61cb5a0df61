"""Every message through one sanitiser; text drawn as written; library noise as warnings.

Terminal control: ECMA-48 (ISO/IEC 6429) defines the C0 set (0x00-0x1F, ESC =
0x1B starts an escape sequence), DEL (0x7F) and the C1 set (0x80-0x9F; 0x9B is
the 8-bit CSI). Unicode UAX #9 table 4 lists the bidi formatting characters
(LRE, RLE, PDF, LRO, RLO, LRI, RLI, FSI, PDI, LRM, RLM, ALM). None of them may
reach the terminal or the HTML raw.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from fuzz_strategies import touchstone_text

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, EXIT_UNMET
from notchkit.textsafe import BIDI_CONTROLS, clean

ROOT = Path(__file__).resolve().parent.parent

# ECMA-48 C0 (without TAB, LF), DEL, C1; UAX #9 table 4; lone surrogates
C0 = [chr(c) for c in range(0x20) if c not in (0x09, 0x0A)]
C1 = [chr(c) for c in range(0x80, 0xA0)]
UAX9 = ["\u202a", "\u202b", "\u202c", "\u202d", "\u202e", "\u2066", "\u2067", "\u2068", "\u2069",
        "\u200e", "\u200f", "\u061c"]
DANGEROUS = C0 + ["\x7f"] + C1 + UAX9 + ["\ud800", "\udfff"]


def raw_control(text: str) -> str | None:
    for c in text:
        if c in DANGEROUS:
            return c
    return None


def test_the_sanitiser_escapes_every_dangerous_character_and_nothing_else():
    assert set(UAX9) == set(BIDI_CONTROLS)
    for c in DANGEROUS:
        out = clean(f"a{c}b")
        assert raw_control(out) is None and out.startswith("a") and out.endswith("b"), repr(c)
        assert "\\x" in out or "\\u" in out
    for text in ["Überlingen", "Ретранслятор", "中継局", "Ζ0 = 50 Ω", "tab\there", "two\nlines"]:
        assert clean(text) == text
    assert clean("two\nlines", one_line=True) == "two\\nlines"
    assert clean("\x1b[2J") == "\\x1b[2J"


def test_a_file_name_with_escapes_and_a_newline_is_printed_escaped(tmp_path, capsys):
    name = tmp_path / "odd\x1b[31m\nname\u202e.yaml"
    assert main(["check", str(name)]) == EXIT_BAD_INPUT
    out, err = capsys.readouterr()
    assert raw_control(err) is None and len(err.splitlines()) == 1, err


def test_trim_prints_an_escaped_measurement_name(tmp_path, capsys):
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0 as C_LIGHT

    cable = get_cable("RG-213")
    length = C_LIGHT * cable.velocity_factor / (4 * 146e6)  # quarter wave (Pozar sec. 6.3)
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    path = tmp_path / "a\x1b]0;title\x07\x9b2J.s2p"
    path.write_text(touchstone_text(f, s), encoding="utf-8")
    rc = main(["trim", str(path), "--cable", "RG-213", "--termination", "open", "--target-mhz", "146"])
    out, err = capsys.readouterr()
    assert rc == EXIT_OK, err
    assert raw_control(out) is None and raw_control(err) is None
    assert "\\x1b]0;title\\x07\\x9b2J" in out


def test_html_escapes_control_and_bidi_characters():
    from notchkit.report.html import _e

    assert raw_control(_e("a\x1b[2J\u202eb<")) is None
    assert _e("a<b") == "a&lt;b"


# ---------------------------------------------------------------------------
# matplotlib: no mathtext, no TeX
# ---------------------------------------------------------------------------


def test_a_dollar_in_names_draws_as_a_dollar(tmp_path, capsys):
    """``$...$`` in a cable or site name crashed matplotlib's mathtext after the PDF was written."""
    site = tmp_path / "dollar.yaml"
    site.write_text(r"""
site: 'Fictional $\frac{1}{0}$ Hill'
cable: "cheap$coax$"
cables:
  - {name: "cheap$coax$", z0_ohm: 50, velocity_factor: 0.66, loss_table: [[10, 1.9], [100, 6.5], [1000, 24]]}
transmitters:
  - {name: TX2M, freq_mhz: 146.52, power_w: 50, antenna: {x_m: 0, y_m: 0, height_m: 10}}
receivers:
  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}
""", encoding="utf-8")
    rc = main(["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--html", str(tmp_path / "p.html"),
               "--outdir", str(tmp_path / "o")])
    out, err = capsys.readouterr()
    assert rc in (EXIT_OK, EXIT_UNMET), err
    assert "Traceback" not in err
    assert "cheap$coax$" in (tmp_path / "p.html").read_text(encoding="utf-8")


def test_trim_png_of_a_measurement_named_with_dollars(tmp_path, capsys):
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0 as C_LIGHT

    cable = get_cable("RG-213")
    length = C_LIGHT * cable.velocity_factor / (4 * 146e6)
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    path = tmp_path / "$\\frac{1}{0}$ $x^$.s2p"
    path.write_text(touchstone_text(f, s), encoding="utf-8")
    png = tmp_path / "plot.png"
    rc = main(["trim", str(path), "--cable", "RG-213", "--termination", "open", "--target-mhz", "146",
               "--png", str(png)])
    assert rc == EXIT_OK, capsys.readouterr().err
    assert png.read_bytes().startswith(b"\x89PNG")


def test_plot_settings_switch_mathtext_and_tex_off():
    from notchkit.report.curves import MPL_RC

    assert MPL_RC["text.parse_math"] is False and MPL_RC["text.usetex"] is False


def test_an_unwritable_matplotlib_config_dir_is_one_warning_line(tmp_path):
    """matplotlib logs two raw lines when its config folder cannot be made; the command prints
    one ``warning:`` line instead."""
    env = dict(os.environ, MPLCONFIGDIR=str(tmp_path / "file" / "cannot"))
    (tmp_path / "file").write_text("a file where a folder is wanted", encoding="utf-8")
    site = ROOT / "sites" / "ridge-eoc.yaml"
    r = subprocess.run([sys.executable, "-m", "notchkit", "plan", str(site), "-o", str(tmp_path / "p.pdf"),
                        "--html", str(tmp_path / "p.html")], capture_output=True, text=True, env=env,
                       timeout=300, cwd=ROOT)
    assert r.returncode in (EXIT_OK, EXIT_UNMET), r.stderr
    lines = r.stderr.splitlines()
    assert all(line.startswith("warning: ") for line in lines), lines
    assert sum("matplotlib" in line for line in lines) == 1, lines


# ---------------------------------------------------------------------------
# JSON outputs
# ---------------------------------------------------------------------------


def test_json_dumps_refuses_non_finite_numbers():
    from notchkit.errors import DesignError
    from notchkit.jsonvalues import dumps

    assert json.loads(dumps({"a": 1.0})) == {"a": 1.0}
    for bad in (float("inf"), float("nan"), -float("inf")):
        with pytest.raises(DesignError, match="non-finite"):
            dumps({"a": [bad]})


def test_a_site_file_name_with_odd_bytes_is_escaped_in_every_output(tmp_path, capsys):
    """A file name that is not UTF-8 (byte 0xFF: a lone surrogate in Python) with an ESC in it:
    the plan is written, and the PDF, HTML and terminal show escapes, never the raw characters."""
    import pypdf

    name = os.fsdecode(b"odd\xffname\x1b.yaml")
    site = tmp_path / name
    site.write_bytes((ROOT / "sites" / "ridge-eoc.yaml").read_bytes())
    rc = main(["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--html", str(tmp_path / "p.html")])
    out, err = capsys.readouterr()
    assert rc in (EXIT_OK, EXIT_UNMET), err
    assert raw_control(out) is None and raw_control(err) is None
    text = pypdf.PdfReader(str(tmp_path / "p.pdf")).pages[0].extract_text()
    assert "odd\\udcffname\\x1b.yaml" in text
    assert raw_control((tmp_path / "p.html").read_text(encoding="utf-8")) is None
