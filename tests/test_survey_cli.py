"""`notchkit survey` on the command line (a small fictional site in tmp_path)."""

from __future__ import annotations

import json
import math

import pytest

from notchkit.cli import main

SITE = """\
site: Test Knoll (fictional)
cable: RG-213
transmitters:
  - name: vhf-tx
    freq_mhz: 146.52
    power_w: 50
    antenna: {x_m: 0.0, y_m: 0.0, height_m: 10.0, gain_dbi: 0.0}
receivers:
  - name: uhf-rx
    freq_mhz: 439.56
    antenna: {x_m: 100.0, y_m: 0.0, height_m: 10.0, gain_dbi: 0.0}
"""


@pytest.fixture
def site_file(tmp_path):
    path = tmp_path / "knoll.yaml"
    path.write_text(SITE)
    return path


def test_json_output(site_file, capsys):
    before = site_file.read_bytes()
    assert main(["survey", str(site_file), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert site_file.read_bytes() == before  # the input is never modified
    (harm,) = [t for t in data["threats"] if t["mechanism"] == "harmonic"]
    # 146.52 MHz x 3 = 439.56 MHz (hand arithmetic) lands on the 70 cm receiver
    assert harm["source"] == "vhf-tx" and harm["victim"] == "uhf-rx" and harm["order"] == 3
    assert harm["f_mhz"] == pytest.approx(439.56)
    # 50 W on 2 m: 60 dB suppression (47 CFR 97.307(e)); 100 m apart: P.525 free-space loss
    fsl = 32.45 + 20 * math.log10(3 * 146.512) + 20 * math.log10(0.100)
    assert harm["level_dbm"] == pytest.approx(10 * math.log10(50e3) - 60.0 - fsl, abs=0.01)
    # threshold: kTB -173.98 + NF 8 + 10log10(16000) = -123.94 dBm (site defaults)
    assert harm["excess_db"] == pytest.approx(harm["level_dbm"] + 123.94, abs=0.01)
    # how the site operates: no scenarios given = all at once; no installed filter;
    # 100 m is far beyond lambda/2pi = 0.11 m at 439.56 MHz, so the formula is used
    assert harm["scenario"] == ["all at once"] and harm["operating"] == []
    assert harm["installed_rejection_db"] == 0 and harm["installed"] == []
    assert harm["coupling_source"] == "formula" and harm["remedy_class"] == "stub"
    (filt,) = [f for f in data["filters"] if f["side"] == "tx"]
    assert filt["radio"] == "vhf-tx" and filt["pass"] == [[146.512, 146.528]]
    assert filt["notch"][0]["required_db"] == pytest.approx(harm["excess_db"] + 6.0, abs=0.01)


def test_table_output(site_file, capsys):
    assert main(["survey", str(site_file)]) == 0
    out = capsys.readouterr().out
    assert "Threats, worst first" in out and "harmonic" in out and "vhf-tx (transmitter output)" in out
    assert "Filter requirements:" in out and "local codes" in out


def test_max_harmonic_option(site_file, capsys):
    assert main(["survey", str(site_file), "--json", "--max-harmonic", "2"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert not [t for t in data["threats"] if t["mechanism"] == "harmonic"]


def test_bad_input_exit_2(tmp_path, site_file, capsys):
    assert main(["survey", str(tmp_path / "missing.yaml")]) == 2
    assert main(["survey", str(site_file), "--max-harmonic", "0"]) == 2
    captured = capsys.readouterr()
    assert "max_harmonic: 0" in captured.err and "Traceback" not in captured.err
    assert captured.out == ""


CLOSE = """\
site: Close Call (fictional)
cable: RG-213
transmitters:
  - name: tx-a
    freq_mhz: 146.52
    power_w: 50
    antenna: {x_m: 0.0, y_m: 0.0, height_m: 10.0}
receivers:
  - name: rx-b
    freq_mhz: 147.0
    antenna: {x_m: 3.0, y_m: 0.0, height_m: 10.0}
"""


def test_table_matrix_and_remedies(tmp_path, capsys):
    path = tmp_path / "close.yaml"
    path.write_text(CLOSE)
    assert main(["survey", str(path)]) == 0
    out = capsys.readouterr().out
    # 146.52 vs 147.00 MHz: 0.33 % apart, inside the 3 % rule: no stub, a remedy instead
    assert "no stub: " in out and "cavit" in out.split("Remedies where")[0]  # in the threat table
    assert "Remedies where no stub" in out and "cavities" in out
    assert "TX \\ RX" in out and "rx-b" in out.split("TX \\ RX")[1].splitlines()[0]
