"""Spool calibration: two trimmed stubs set the first cuts of the rest.

A fictional drum of RG-213 whose real velocity factor is 0.68 (the library
publishes 0.66; a 3 % faster spool). Two stubs of a real plan of
``sites/ridge-eoc.yaml`` are cut to the plan's first cut, "measured" alone with
scikit-rf's line model (``DefinedGammaZ0``, ``gamma = alpha + j 2 pi f / (c VF)``
with VF 0.68) and trimmed with ``notchkit trim ... --spool --calibration``;
the plan made again with that calibration must give every other stub a first
cut at least as long as the length its resonance really needs, and no longer
than that plus the trim margin. The truth is the textbook quarter-wave relation
``L = n c VF / (4 f) - tee allowance`` (Pozar, *Microwave Engineering*, 4th ed.,
sec. 2.3) with VF 0.68; the trim margin is the plan's own (3 %, at least
10 mm: common practice). Should the site declare connection hardware, the
measured stub carries the plan JSON's plug and short (tests/hw_bench.py) and
the truth is the lossless input impedance of plug and cable (Pozar eq. 2.44).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
import skrf
from hw_bench import plan_hardware, stub_network, truth_length_m
from skrf.media import DefinedGammaZ0

from notchkit.cables import get_cable
from notchkit.calibration import read_calibration
from notchkit.cli import main
from notchkit.planfile import read_plan

C = 299_792_458.0  # m/s, exact (SI definition)
ROOT = Path(__file__).resolve().parents[1]
SITE = ROOT / "sites" / "ridge-eoc.yaml"
VF_TRUE = 0.68
MARGIN_PCT, MIN_EXTRA_M = 3.0, 0.010  # the plan's trim margin (common practice)


def stub_alone(stub, length_m, vf, seed, hw=None):
    """The stub alone at its connector; with the plan's hardware, its plug and short too."""
    cable = get_cable("RG-213")
    n = stub.quarter_waves
    f0 = n * C * vf / (4 * length_m)
    freq = skrf.Frequency(0.8 * f0 / 1e6, 1.2 * f0 / 1e6, 801, "MHz")
    if hw is not None:
        net = stub_network(freq, termination=stub.termination, length_m=length_m, vf=vf, cable=cable,
                           hw=hw, ports=1)
    else:
        gamma = cable.alpha_np_per_m(freq.f) + 1j * 2 * np.pi * freq.f / (C * vf)
        media = DefinedGammaZ0(frequency=freq, z0=50.0, gamma=gamma)
        net = (media.delay_open if stub.termination == "open" else media.delay_short)(length_m, "m")
    rng = np.random.default_rng(seed)
    shape = net.s.shape
    net.s = net.s + 1e-3 * (rng.standard_normal(shape) + 1j * rng.standard_normal(shape)) / math.sqrt(2)
    return net


def truth_cut_m(stub, vf, hw=None):
    """The cable that puts the stub's resonance at the tee where the plan wants it; with the
    plan's hardware, the length (plug included) whose resonance alone at the plug's mating
    face is the plan's (Pozar eq. 2.44, tests/hw_bench.py)."""
    if hw is not None:
        return truth_length_m(termination=stub.termination, quarter_waves=stub.quarter_waves,
                              resonance_hz=stub.resonance_alone_mhz * 1e6, vf=vf, z0=50.0, hw=hw)
    return stub.quarter_waves * C * vf / (4 * stub.resonance_mhz * 1e6) - stub.allowance_m


@pytest.fixture(scope="module")
def plans(tmp_path_factory):
    from notchkit.siteplan import plan

    folder = tmp_path_factory.mktemp("cal")
    nominal = plan(SITE, folder / "a.pdf", outdir=folder / "a")
    doc = read_plan(nominal.outdir / "plan.json")
    cal = folder / "drum-7.json"
    outs = []
    for k, sid in enumerate(("F1-S1", "F3-S1")):
        _, stub = doc.stub(sid)
        net = stub_alone(stub, stub.first_cut_m, VF_TRUE, seed=k,
                         hw=plan_hardware(nominal.outdir / "plan.json", sid))
        net.write_touchstone(f"SWEEP-{sid}", dir=str(folder))
        argv = ["trim", str(folder / f"SWEEP-{sid}.s1p"), "--cable", "RG-213", "--plan",
                str(nominal.outdir / "plan.json"), "--stub", sid, "--plan-length", "first-cut",
                "--spool", "drum-7", "--calibration", str(cal), "--json"]
        outs.append(argv)
    return {"folder": folder, "nominal": doc, "cal": cal, "argv": outs,
            "plan_json": nominal.outdir / "plan.json"}


def test_two_trims_calibrate_the_third_stubs_first_cut(plans, capsys):
    from notchkit.siteplan import plan

    for argv in plans["argv"]:
        code = main(argv)
        out, err = capsys.readouterr()
        assert code == 0, err
        got = json.loads(out)
        assert got["velocity_factor"] == pytest.approx(VF_TRUE, abs=0.003)
        assert got["calibration"]["spool"] == "drum-7"
    cal = read_calibration(plans["cal"])
    assert cal.cable == "RG-213" and len(cal.samples) == 2
    assert cal.velocity_factor == pytest.approx(VF_TRUE, abs=0.002)

    folder = plans["folder"]
    res = plan(SITE, folder / "b.pdf", outdir=folder / "b", calibration=[plans["cal"]])
    calibrated = read_plan(res.outdir / "plan.json")
    checked = 0
    for f in calibrated.filters:
        assert f.cable.calibration["spool"] == "drum-7"  # the JSON says so
        assert f.cable.velocity_factor == pytest.approx(cal.velocity_factor)
        for s in f.stubs:
            if s.id in ("F1-S1", "F3-S1"):
                continue
            truth = truth_cut_m(s, VF_TRUE, plan_hardware(res.outdir / "plan.json", s.id))
            margin = max(truth * MARGIN_PCT / 100, MIN_EXTRA_M)
            assert truth < s.first_cut_m <= truth + margin + 0.0005, s.id
            checked += 1
    assert checked >= 5
    # and the printed plan says so on every filter page
    assert all(any("spool 'drum-7'" in x for x in ft.facts) for ft in res.text.filters)

    # Without the calibration the longest stub's first cut is shorter than the spool needs
    # (the spool is 3.03 % faster, the trim margin 3 %): it could never be trimmed to its resonance.
    s = max((x for f in plans["nominal"].filters for x in f.stubs), key=lambda x: x.first_cut_m)
    assert s.first_cut_m < truth_cut_m(s, VF_TRUE, plan_hardware(plans["plan_json"], s.id))


def test_a_calibration_file_of_another_spool_is_refused(plans, tmp_path, capsys):
    other = tmp_path / "x.json"
    other.write_text(json.dumps({"spool": "drum-1", "cable": "RG-213", "samples": []}))
    argv = list(plans["argv"][0])
    argv[argv.index("--calibration") + 1] = str(other)
    code = main(argv)
    out, err = capsys.readouterr()
    assert code == 2 and "--calibration" in err and "drum-1" in err
    assert json.loads(other.read_text())["samples"] == []


@pytest.mark.parametrize("content", ['{"spool": "d", "cable": "RG-213", "samples": [{"source": "trim", '
                                     '"piece": "F1-S1", "velocity_factor": 4.6}]}', "not json", "[]"])
def test_bad_calibration_files_stop_the_plan_before_anything_is_written(tmp_path, capsys, content):
    bad = tmp_path / "bad.json"
    bad.write_text(content)
    code = main(["plan", str(SITE), "-o", str(tmp_path / "p.pdf"), "--calibration", str(bad)])
    err = capsys.readouterr().err
    assert code == 2 and str(bad) in err and len(err.strip().splitlines()) == 1
    assert not (tmp_path / "p.pdf").exists()
