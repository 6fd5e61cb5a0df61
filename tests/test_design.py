"""Design orchestration, its JSON and the `notchkit design` command.

The reference for every reported figure is scikit-rf 2.x, built only from the
JSON elements, the JSON's connection hardware and the cable's published figures:
``skrf.media.DefinedGammaZ0`` with ``gamma = alpha + j 2 pi f / (c VF)`` (Pozar,
*Microwave Engineering* 4th ed., sec. 2.7), the line's ``z0`` = the cable's Z0 and
``z0_port`` = 50 ohm; the tee arms, plugs and the short's inductance as scikit-rf
lines and inductors (tests/hw_bench.py), cascaded with ``**``. Designs use the
default hardware (UHF, as a site without ``hardware:``); one site sets
``family: ideal`` to check the classic model's tee allowance.
"""

from __future__ import annotations

import json
import math
import os
import textwrap

import numpy as np
import pytest
import skrf
from hw_bench import filter_network

from notchkit.cli import main
from notchkit.errors import CableError, DesignError
from notchkit.site import load_site
from notchkit.synthesis import design, design_request, write_touchstones

C = 299_792_458.0  # m/s, exact (SI)

TINY_SITE = textwrap.dedent(
    """\
    # Fictional two-radio rooftop used by the design tests.
    site: Test Roof Alpha
    cable: RG-213
    transceivers:
      - name: vhf-base
        freq_mhz: 146.52
        tx: {power_w: 50, harmonic_suppression_dbc: 70}
        rx: {sensitivity_dbm: -110}
        antenna: {x_m: 0, y_m: 0, height_m: 10, gain_dbi: 3}
      - name: uhf-base
        freq_mhz: 446.0
        tx: {power_w: 25, harmonic_suppression_dbc: 70}
        rx: {sensitivity_dbm: -110}
        antenna: {x_m: 30, y_m: 0, height_m: 10, gain_dbi: 3}
    allowances: {tee_allowance_m: 0.035, trim_margin_pct: 4}
    """
)

CONTEST = dict(pass_bands=[(14.0, 14.35), (28.0, 29.7)], notches=[(7.0, 7.3), (21.0, 21.45, 30.0)])
HARMONIC = dict(pass_bands=[(144.0, 148.0)], notches=[(432.0, 444.0, 30.0)])
UNMET = dict(pass_bands=[(144.0, 148.0)], notches=[(420.0, 450.0, 60.0)])


@pytest.fixture(scope="module")
def contest():
    return design_request(**CONTEST, cable="RG-213")


@pytest.fixture(scope="module")
def harmonic():
    return design_request(**HARMONIC, cable="RG-213")


@pytest.fixture(scope="module")
def unmet():
    return design_request(**UNMET, cable="RG-58", max_stubs=1)


@pytest.fixture(scope="module")
def site_report(tmp_path_factory):
    path = tmp_path_factory.mktemp("site") / "tiny.yaml"
    path.write_text(TINY_SITE)
    return design(load_site(path))


def skrf_s21_db(fjson, freq_hz, with_ceiling=True):
    """|S21| in dB of the JSON filter, built with scikit-rf media only (tests/hw_bench.py: the
    connection hardware of the JSON's ``model.hardware`` included, or the ideal model's shunt stubs)."""
    net = filter_network(fjson, freq_hz)
    s21 = np.abs(net.s[:, 1, 0])
    ceiling = (fjson.get("model") or {}).get("depth_ceiling_db")
    if ceiling is not None and with_ceiling:  # the stated leakage floor, added in power (docs/hardware.md)
        s21 = np.sqrt(s21**2 + 10 ** (-ceiling / 10))
    return 20 * np.log10(s21), net.s[:, 0, 0]


# ---------------------------------------------------------------- figures against scikit-rf


@pytest.mark.parametrize("name", ["contest", "harmonic", "unmet", "site_report"])
def test_reported_figures_agree_with_scikit_rf(name, request):
    doc = request.getfixturevalue(name).to_json()
    assert doc["filters"]
    for fj in doc["filters"]:
        for band in fj["pass"]:
            f = np.linspace(band["lo_mhz"], band["hi_mhz"], 301) * 1e6
            s21_db, s11 = skrf_s21_db(fj, f)
            assert float(-s21_db.min()) == pytest.approx(band["worst_insertion_loss_db"], abs=0.1)
            rho = np.abs(s11).max()
            assert (1 + rho) / (1 - rho) == pytest.approx(band["worst_swr"], rel=0.02)
        for band in fj["notch"]:
            f = np.linspace(band["lo_mhz"], band["hi_mhz"], 301) * 1e6
            s21_db, _ = skrf_s21_db(fj, f)
            assert float(-s21_db.max()) == pytest.approx(band["worst_attenuation_db"], abs=0.1)


# ---------------------------------------------------------------- JSON contract


def test_json_keys_of_an_ad_hoc_design(contest):
    doc = contest.to_json()
    text = json.dumps(doc, allow_nan=False)  # every float finite
    assert json.loads(text) == doc
    assert doc["meets"] is True and doc["site"] is None
    (fj,) = doc["filters"]
    assert "radio" not in fj
    assert fj["side"] is None
    assert fj["cable"] == {"type": "RG-213", "z0_ohm": 50.0, "velocity_factor": 0.66}
    assert fj["model"]["hardware"]["family"] == "uhf"  # the default hardware (docs/hardware.md)
    assert fj["meets"] is True
    for e in fj["elements"]:
        assert e["kind"] in ("stub", "line")
        if e["kind"] == "stub":
            assert e["termination"] in ("open", "short")
            # default UHF hardware: the cut runs from the plug's mating face, the plug included,
            # so it is the whole length_m (no tee allowance: the tee's arms are modelled)
            assert e["cut_length_m"] == pytest.approx(e["length_m"])
            assert e["first_cut_m"] > e["cut_length_m"]
            assert e["trim_rate_mm_per_mhz"] > 0
        else:
            assert e["length_m"] > 0
    assert [(b["lo_mhz"], b["hi_mhz"]) for b in fj["pass"]] == [(14.0, 14.35), (28.0, 29.7)]
    assert {"lo_mhz", "hi_mhz", "worst_insertion_loss_db", "worst_swr"} <= set(fj["pass"][0])
    assert [(b["lo_mhz"], b["hi_mhz"], b["required_db"]) for b in fj["notch"]] == [
        (7.0, 7.3, 30.0), (21.0, 21.45, 30.0)]
    assert {"lo_mhz", "hi_mhz", "required_db", "worst_attenuation_db"} <= set(fj["notch"][0])


def test_site_design_ids_radio_side_and_power(site_report):
    doc = site_report.to_json()
    json.dumps(doc, allow_nan=False)
    assert doc["site"] == "Test Roof Alpha"
    ids = [f["id"] for f in doc["filters"]]
    assert ids == [f"F{i}" for i in range(1, len(ids) + 1)]
    assert all(f["radio"] in ("vhf-base", "uhf-base") and f["side"] in ("rx", "tx") for f in doc["filters"])
    assert all(f["power"] is not None for f in doc["filters"])  # both are transceivers
    assert doc["meets"] == all(f["meets"] for f in doc["filters"])
    assert site_report.meets == doc["meets"]
    for d in site_report.designs:
        assert [c.stub_id for c in d.cuts] == [f"{d.id}-S{i}" for i in range(1, len(d.filter.stubs) + 1)]
    # no hardware: block: UHF hardware; the tee allowance is not used, the cut is all of length_m
    for f in doc["filters"]:
        assert f["model"]["hardware"]["family"] == "uhf"
        for e in f["elements"]:
            if e["kind"] == "stub":
                assert e["cut_length_m"] == pytest.approx(e["length_m"])
                assert e["first_cut_m"] >= e["cut_length_m"] * 1.04 - 1e-9


def test_ideal_hardware_keeps_the_site_tee_allowance(tmp_path):
    # hardware: {family: ideal}: the classic model; the site's own tee allowance (35 mm) is what
    # the cut lengths subtract, and the figures are those of ideal shunt stubs (scikit-rf).
    path = tmp_path / "tiny.yaml"
    path.write_text(TINY_SITE + "hardware: {family: ideal}\n")
    doc = design(load_site(path)).to_json()
    assert doc["filters"]
    for f in doc["filters"]:
        assert f["model"]["hardware"] is None
        for e in f["elements"]:
            if e["kind"] == "stub":
                assert e["cut_length_m"] == pytest.approx(e["length_m"] - 0.035)
                assert e["first_cut_m"] >= e["cut_length_m"] * 1.04 - 1e-9
        for band in f["notch"]:
            s21_db, _ = skrf_s21_db(f, np.linspace(band["lo_mhz"], band["hi_mhz"], 301) * 1e6)
            assert float(-s21_db.max()) == pytest.approx(band["worst_attenuation_db"], abs=0.1)


def test_progress_only_on_a_terminal(monkeypatch):
    import argparse
    import sys

    from notchkit.cli import design as cli_design

    monkeypatch.setattr(sys.stderr, "isatty", lambda: False, raising=False)
    assert cli_design._progress(argparse.Namespace(json=False)) is None
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True, raising=False)
    assert cli_design._progress(argparse.Namespace(json=True)) is None
    assert callable(cli_design._progress(argparse.Namespace(json=False)))


def test_two_runs_give_identical_json(contest):
    again = design_request(**CONTEST, cable="RG-213")
    assert json.dumps(again.to_json(), sort_keys=True) == json.dumps(contest.to_json(), sort_keys=True)


def test_unmet_design_reports_best_achieved_and_advice(unmet):
    (fj,) = unmet.to_json()["filters"]
    assert fj["meets"] is False
    assert fj["notch"][0]["worst_attenuation_db"] < 60.0
    (short,) = [s for s in fj["shortfall"] if s["quantity"] == "attenuation"]
    assert short["missing_db"] == pytest.approx(60.0 - fj["notch"][0]["worst_attenuation_db"])
    assert any("lower-loss cable" in a for a in fj["advice"])  # RG-58 is the lossiest library cable


def test_design_request_refuses_bad_input():
    with pytest.raises(DesignError, match="outside 0.1-6000 MHz"):
        design_request([(14.0, 14.35)], [(7000.0, 7100.0)], cable="RG-213")
    with pytest.raises(DesignError, match="low edge must be below"):
        design_request([(14.35, 14.0)], [(7.0, 7.3)], cable="RG-213")
    with pytest.raises(CableError, match="not a known cable type"):
        design_request([(14.0, 14.35)], [(7.0, 7.3)], cable="RG-999")


# ---------------------------------------------------------------- Touchstone


def test_touchstone_files_read_back_with_scikit_rf(harmonic, tmp_path):
    (path,) = write_touchstones(harmonic, tmp_path / "out")
    net = skrf.Network(str(path))
    f = net.f
    assert f.min() <= 144e6 and f.max() >= 444e6
    fj = harmonic.to_json()["filters"][0]
    ref, _ = skrf_s21_db(fj, f, with_ceiling=False)  # the file is the filter itself, no leakage path
    assert np.max(np.abs(20 * np.log10(np.abs(net.s[:, 1, 0])) - ref)) < 0.01
    assert not [p for p in os.listdir(path.parent) if p.startswith(".notchkit-")]


# ---------------------------------------------------------------- the command


def test_cli_ad_hoc_meets_exit_0(capsys):
    code = main(["design", "--pass", "144-148", "--notch", "432-444:30", "--cable", "RG-213"])
    out, err = capsys.readouterr()
    assert code == 0
    assert "F1: ad-hoc filter on RG-213" in out
    assert "meets every requirement" in out
    assert "cut list:" in out and " in)" in out  # mm and inches
    assert err == ""


def test_cli_unmet_exit_1_with_best_achieved(capsys):
    code = main(["design", "--pass", "144-148", "--notch", "420-450:60", "--cable", "RG-58",
                 "--max-stubs", "1"])
    out, _ = capsys.readouterr()
    assert code == 1
    assert "DOES NOT MEET" in out
    assert "dB short" in out and "advice:" in out


def test_cli_json_is_json_and_nothing_else(capsys):
    code = main(["design", "--pass", "144-148", "--notch", "432-444:30", "--cable", "RG-213", "--json"])
    out, err = capsys.readouterr()
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert doc["filters"][0]["meets"] is True


def test_cli_site_exit_code_follows_meets(tmp_path, capsys):
    site = tmp_path / "tiny.yaml"
    site.write_text(TINY_SITE)
    code = main(["design", str(site), "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == (0 if doc["meets"] else 1)
    assert site.read_text() == TINY_SITE  # the input is never modified


@pytest.mark.parametrize(
    "argv, message",
    [
        (["--pass", "14-abc", "--notch", "7-7.3"], "error: --pass '14-abc': give a band as LO-HI in MHz"),
        (["--pass", "14.35-14.0", "--notch", "7-7.3"], "error: --pass '14.35-14.0': the low edge 14.35"),
        (["--pass", "14-14.35", "--notch", "7000-7100"], "error: --notch '7000-7100': 7000 MHz is outside"),
        (["--pass", "14-14.35", "--notch", "7-7.3:abc"], "is not a number"),
        (["--pass", "14-14.35", "--notch", "7-7.3", "--cable", "RG-999"],
         "error: cable 'RG-999' is not a known"),
        (["--pass", "14.0-14.35", "--notch", "14.2-14.5"],
         "error: cannot pass and notch the same frequency: pass 14.0-14.35 overlaps notch 14.2-14.5 MHz"),
        (["--pass", "14-14.35"], "at least one --pass LO-HI and one --notch"),
        (["--notch", "14-14.35"], "at least one --pass LO-HI and one --notch"),
    ],
)
def test_cli_bad_input_is_one_line_exit_2(argv, message, capsys):
    code = main(["design", *argv])
    out, err = capsys.readouterr()
    assert code == 2
    assert out == ""
    assert len(err.strip().splitlines()) == 1
    assert message in err


def test_cli_unwritable_touchstone_dir_exit_2(tmp_path, capsys):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    code = main(["design", "--pass", "144-148", "--notch", "432-444:30", "--touchstone", str(blocker)])
    out, err = capsys.readouterr()
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and "--touchstone" in err
    assert blocker.read_text() == "not a folder"


def test_cli_writes_touchstone(tmp_path, capsys):
    code = main(["design", "--pass", "144-148", "--notch", "432-444:30", "--touchstone", str(tmp_path)])
    out, _ = capsys.readouterr()
    assert code == 0
    files = sorted(p.name for p in tmp_path.iterdir())
    assert files == ["F1.s2p"]
    assert f"wrote {tmp_path / 'F1.s2p'}" in out
    assert math.isfinite(skrf.Network(str(tmp_path / "F1.s2p")).s_db.max())


def test_designing_in_processes_gives_the_same_json_as_one_process(tmp_path):
    # Run in a fresh interpreter: forking is used only where no other thread runs,
    # and this test process may have some (the core's thread pool).
    import subprocess
    import sys

    path = tmp_path / "tiny.yaml"
    path.write_text(TINY_SITE)
    script = textwrap.dedent(f"""
        import json
        from notchkit.synthesis import design
        from notchkit.site import load_site
        site = load_site({str(path)!r})
        said = []
        two = design(site, workers=2, progress=said.append)
        one = design(site, workers=1)
        assert any("done" in m for m in said), said  # the process path ran
        print(json.dumps(two.to_json(), sort_keys=True) == json.dumps(one.to_json(), sort_keys=True))
    """)
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "True"


def test_workers_must_be_at_least_one(tmp_path):
    path = tmp_path / "tiny.yaml"
    path.write_text(TINY_SITE)
    with pytest.raises(DesignError, match="workers 0 must be at least 1"):
        design(load_site(path), workers=0)


def test_fork_map_runs_the_jobs_here_where_processes_are_unsafe(monkeypatch):
    # Then fork_map runs the jobs itself: the same results, never None, never an exception.
    import threading

    from notchkit import parallel

    said = []
    assert parallel.fork_map(abs, [1, -2], processes=1, on_result=lambda *a: said.append(a)) == [1, 2]
    assert said == [(0, 1, 1), (1, 2, 2)]  # one worker: the jobs in order, here
    assert parallel.fork_map(abs, [-1], processes=2) == [1]  # one job
    assert parallel.fork_map(abs, [], processes=2) == []
    import concurrent.futures

    def no_sem_open(*_a, **_k):
        raise ImportError("This platform lacks a functioning sem_open implementation")

    with monkeypatch.context() as m:  # a container without /dev/shm
        m.setattr(threading, "active_count", lambda: 1)  # so the pool is really tried
        m.setattr(concurrent.futures, "ProcessPoolExecutor", no_sem_open)
        assert parallel.fork_map(abs, [1, -2], processes=2) == [1, 2]
    monkeypatch.setattr(threading, "active_count", lambda: 2)  # another thread is running
    assert parallel.fork_map(abs, [1, -2], processes=2) == [1, 2]


def test_cores_honour_the_cpu_affinity(monkeypatch):
    import os

    from notchkit import parallel

    monkeypatch.setattr(os, "sched_getaffinity", lambda _pid: {0}, raising=False)
    monkeypatch.setattr(os, "cpu_count", lambda: 8)
    assert parallel.cores() == 1
    monkeypatch.delattr(os, "sched_getaffinity", raising=False)
    assert parallel.cores() == 8


def test_threads_are_capped_at_the_cores(monkeypatch):
    from notchkit import filters, parallel

    monkeypatch.setattr(parallel, "cores", lambda: 1)
    old = filters.set_threads(4)
    try:
        assert filters.set_threads(4) == 1  # asked for 4, given the one core allowed
    finally:
        filters.set_threads(old)
