"""The trim route on a plan made with UHF connection hardware.

``sites/ridge-eoc.yaml`` (UHF connection hardware, ``hardware: {family: uhf}``,
also the default without a block) is planned by the library's own
:func:`notchkit.siteplan.plan`. Each stub is then
"measured" with scikit-rf as built: its PL-259 plug (35 ohm, 15 mm, the plan
JSON's figures), its RG-213 cable (``DefinedGammaZ0``, the library's loss
figures) and its open end or its short with 3 nH (tests/hw_bench.py), cut to
the printed first cut. The truth is the length (plug included) whose series
resonance alone at the plug's mating face is the plan's, from the textbook
lossless input impedance (Pozar, *Microwave Engineering*, 4th ed., eq. 2.44).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from hw_bench import C, plan_hardware, stub_network, truth_length_m
from test_trim_plan import CUT_TOLERANCE_MM, printed_commands, run, synthesise

from notchkit.cables import get_cable
from notchkit.planfile import read_plan

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def uhf_plan(tmp_path_factory):
    from notchkit.siteplan import plan

    folder = tmp_path_factory.mktemp("ridge-uhf")
    site = ROOT / "sites" / "ridge-eoc.yaml"
    assert "\nhardware:\n  family: uhf\n" in site.read_text()
    return plan(site, folder / "plan.pdf", outdir=folder / "out")


def test_the_plan_cuts_are_the_textbook_lengths_with_the_plug_and_short(uhf_plan):
    path = uhf_plan.outdir / "plan.json"
    doc = read_plan(path)
    checked = 0
    for f in doc.filters:
        for s in f.stubs:
            hw = plan_hardware(path, s.id)
            assert hw["family"] == "uhf" and hw["z_pair_ohm"] == 35.0 and s.allowance_m == 0.0
            truth = truth_length_m(termination=s.termination, quarter_waves=s.quarter_waves,
                                   resonance_hz=s.resonance_alone_mhz * 1e6, vf=0.66, z0=50.0, hw=hw)
            assert s.cut_length_m == pytest.approx(truth, abs=1e-4), s.id  # 0.1 mm
            checked += 1
    assert checked >= 5


def _trim_all(plan_res, tmp_path, capsys, monkeypatch, *, ports, vf_true):
    path = plan_res.outdir / "plan.json"
    doc = read_plan(path)
    cable = get_cable("RG-213")
    monkeypatch.chdir(tmp_path)
    out = []
    for k, (sid, argv, target, n) in enumerate(printed_commands(plan_res)):
        _, stub = doc.stub(sid)
        hw = plan_hardware(path, sid)
        truth = truth_length_m(termination=stub.termination, quarter_waves=n, vf=vf_true,
                               resonance_hz=stub.resonance_alone_mhz * 1e6, z0=cable.z0_ohm, hw=hw)
        f_now = n * C * vf_true / (4 * stub.first_cut_m)
        ntwk = synthesise(termination=stub.termination, ports=ports, length_m=stub.first_cut_m, vf=vf_true,
                          cable=cable, f_lo=min(f_now, target * 1e6) * 0.8,
                          f_hi=max(f_now, target * 1e6) * 1.2, seed=k, hw=hw)
        name = argv[0] if ports == 1 else argv[0].replace(".s1p", ".s2p")
        ntwk.write_touchstone(name.rsplit(".", 1)[0], dir=str(tmp_path))
        code, text, err = run(capsys, [name, *argv[1:]])
        assert code == 0, f"{sid}: {err}"
        doc_out = json.loads(text)
        out.append((sid, doc_out["cut_mm"], (stub.first_cut_m - truth) * 1000, doc_out["velocity_factor"]))
    return out


@pytest.mark.parametrize("vf_true", [0.66, 0.645], ids=["vf-nominal", "vf-2pct-slow"])
def test_the_stub_alone_trims_to_the_true_cut(uhf_plan, tmp_path, capsys, monkeypatch, vf_true):
    # The one-port route inverts the stub with its plug and short: the advised cut is the
    # textbook one and the VF it reports is the cable's own (the one the sweep was built with).
    for sid, got, truth, vf in _trim_all(uhf_plan, tmp_path, capsys, monkeypatch, ports=1, vf_true=vf_true):
        assert got == pytest.approx(truth, abs=CUT_TOLERANCE_MM), sid
        assert vf == pytest.approx(vf_true, abs=0.005), sid


def test_the_stub_through_the_tee_trims_to_the_true_cut(uhf_plan, tmp_path, capsys, monkeypatch):
    # Through the tee the notch includes the tee's 25 mm side arm (tests/hw_bench.py builds it in
    # scikit-rf); trim inverts the same chain, so the cut and the cable's VF are the true ones.
    for sid, got, truth, vf in _trim_all(uhf_plan, tmp_path, capsys, monkeypatch, ports=2, vf_true=0.66):
        assert got == pytest.approx(truth, abs=CUT_TOLERANCE_MM), sid
        assert vf == pytest.approx(0.66, abs=0.005), sid


@pytest.mark.parametrize(("termination", "n", "ports", "length"),
                         [("open", 1, 1, 0.140), ("open", 1, 2, 0.140), ("short", 2, 1, 0.300),
                          ("short", 2, 2, 0.300)])
def test_the_hardware_option_without_a_plan(tmp_path, termination, n, ports, length):
    # A UHF stub built in scikit-rf (tests/hw_bench.py) at VF 0.64, trimmed with the library's
    # hardware option and a target of its own: the advised cut leaves the textbook length whose
    # alone resonance (one port) is the target (Pozar eq. 2.44), and the VF is the cable's.
    import skrf

    from notchkit.hardware import Hardware
    from notchkit.trimming import trim

    hw = Hardware.of("uhf")
    cable = get_cable("RG-213")
    vf_true, target_mhz = 0.64, 330.0
    freq = skrf.Frequency(200, 420, 1201, "MHz")
    ntwk = stub_network(freq, termination=termination, length_m=length, vf=vf_true, cable=cable,
                        hw=hw.to_json(), ports=ports)
    name = f"stub.s{ports}p"
    ntwk.write_touchstone("stub", dir=str(tmp_path))
    res = trim(tmp_path / name, cable="RG-213", termination=termination, target_mhz=target_mhz,
               length_m=length, quarter_waves=n, hardware=hw)
    assert res.velocity_factor == pytest.approx(vf_true, abs=0.005)
    if ports == 1:
        truth = truth_length_m(termination=termination, quarter_waves=n, resonance_hz=target_mhz * 1e6,
                               vf=vf_true, z0=cable.z0_ohm, hw=hw.to_json())
        assert res.target_length_m == pytest.approx(truth, abs=CUT_TOLERANCE_MM / 1000)
    else:  # through the tee: the same stub cut to the advised length notches at the target
        cut = stub_network(freq, termination=termination, length_m=res.target_length_m, vf=vf_true,
                           cable=cable, hw=hw.to_json(), ports=2)
        f_notch = freq.f[int(abs(cut.s[:, 1, 0]).argmin())]
        assert f_notch == pytest.approx(target_mhz * 1e6, rel=2 * (freq.f[1] - freq.f[0]) / freq.f[0])


def test_a_bad_hardware_option_is_refused(tmp_path):
    from notchkit.errors import UsageError
    from notchkit.trimming import trim

    s1p = tmp_path / "x.s1p"
    s1p.write_text("# MHz S RI R 50\n" + "".join(f"{100 + i} 0.5 0.5\n" for i in range(10)))
    with pytest.raises(UsageError, match="^hardware: "):
        trim(s1p, cable="RG-213", termination="open", target_mhz=105.0, length_m=0.5,
             hardware={"family": "uhf"})


def test_trim_to_with_hardware_is_the_stub_alone_and_the_notch_sits_lower():
    # With connection hardware (the default UHF family) the cut list's "Trim to" is the stub's
    # series resonance alone at its plug's mating face; through the tee the side arm adds
    # length, so the notch sits lower, where the design needs it. Both are checked on
    # scikit-rf builds of the stub (hw_bench.stub_network: plug, cable, the short's
    # inductance, the tee's side arm; Pozar sec. 2.7 lines).
    import numpy as np
    import skrf

    import notchkit
    from notchkit.cuttext import resonance_text

    d = notchkit.design_request([(144.0, 148.0)], [(432.0, 438.0, 35.0)]).designs[0]
    hw = d.to_json()["model"]["hardware"]
    cable = get_cable("RG-213")
    assert d.cuts and all(c.trimmed_alone for c in d.cuts)
    for c in d.cuts:
        assert "the stub alone at its plug" in resonance_text(c)
        freq = skrf.Frequency(300, 600, 30001, unit="mhz")
        alone = stub_network(freq, termination=c.termination, length_m=c.length_m,
                             vf=c.velocity_factor, cable=cable, hw=hw, ports=1)
        z = alone.z[:, 0, 0]
        near = np.abs(freq.f / 1e6 - c.resonance_mhz) < 0.05 * c.resonance_mhz
        f_alone = freq.f[near][np.argmin(np.abs(z[near]))] / 1e6
        assert f_alone == pytest.approx(c.resonance_mhz, rel=1e-3)
        tee = stub_network(freq, termination=c.termination, length_m=c.length_m,
                           vf=c.velocity_factor, cable=cable, hw=hw, ports=2)
        s21 = np.abs(tee.s[:, 1, 0])
        window = (freq.f / 1e6 > 0.8 * c.resonance_mhz) & (freq.f / 1e6 < 1.05 * c.resonance_mhz)
        f_notch = freq.f[window][np.argmin(s21[window])] / 1e6
        assert f_notch < c.resonance_mhz
        assert 420.0 < f_notch < 450.0  # near the 432-438 MHz band it exists for
