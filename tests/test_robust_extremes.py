"""Numeric extremes: the edges of the frequency range, bands that touch or
overlap, zero-length and very long stubs, a lossless cable, 1 W and 10 kW.

Check values come from outside notchkit: scikit-rf's own transmission-line
media (``skrf.media.DefinedGammaZ0``), textbook network formulas (Pozar,
*Microwave Engineering*, 4th ed., Wiley 2012: the shunt-element S-parameters of
Table 4.2 / sec. 4.3 and the terminated lossy line of sec. 2.7), and the
definition of available power (a source of EMF ``V_s`` peak and resistance
``R_s`` makes ``|V_s|^2 / (8 R_s)`` available).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import warnings

import numpy as np
import pytest
from fuzz_strategies import built

from notchkit.cables import LosslessCableWarning, get_cable, library
from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, EXIT_UNMET, DesignError, NotchkitError
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch, to_network, write_touchstone

C0 = 299_792_458.0  # m/s, exact by the SI definition of the metre
F_MIN_HZ, F_MAX_HZ = 0.1e6, 6e9  # the documented range, docs/site-format.md
SWEEP_HZ = np.geomspace(F_MIN_HZ, F_MAX_HZ, 241)

needs_design = pytest.mark.skipif(not built("design"), reason="notchkit design is not built yet")


def finite_json(doc) -> None:
    json.dumps(doc, allow_nan=False)  # raises on NaN or infinity anywhere


# ---------------------------------------------------------------------------
# Cables across 0.1 MHz - 6 GHz
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("cable", library(), ids=lambda c: c.name)
def test_cable_loss_is_finite_positive_and_rising_over_the_whole_range(cable):
    loss = cable.loss_db_per_100m(SWEEP_HZ / 1e6)
    assert np.all(np.isfinite(loss)) and np.all(loss > 0)
    # matched loss rises with frequency (skin effect and dielectric loss; common practice)
    assert np.all(np.diff(loss) > 0)
    alpha = cable.alpha_np_per_m(SWEEP_HZ)
    # 1 Np = 20/ln(10) dB = 8.686 dB (definition of the neper)
    np.testing.assert_allclose(alpha * 100 * 20 / math.log(10), loss, rtol=1e-12)


# ---------------------------------------------------------------------------
# Zero-length and very long stubs, checked against scikit-rf's own media
# ---------------------------------------------------------------------------

LENGTHS_M = (0.0, 1e-6, 0.5, 50.0, 5000.0)


def skrf_stub(cable, termination: str, length_m: float, freq_hz):
    """The same stub in scikit-rf: a shunt open/short delay on a line of the cable's gamma and Z0."""
    import skrf
    from skrf.media import DefinedGammaZ0

    beta = 2 * np.pi * freq_hz / (C0 * cable.velocity_factor)
    gamma = cable.alpha_np_per_m(freq_hz) + 1j * beta
    media = DefinedGammaZ0(skrf.Frequency.from_f(freq_hz, unit="hz"), z0_port=50.0,
                           z0=cable.z0_ohm, gamma=gamma)
    build = media.shunt_delay_open if termination == "open" else media.shunt_delay_short
    return build(length_m, unit="m").s


@pytest.mark.parametrize("length_m", LENGTHS_M)
@pytest.mark.parametrize("termination", ["open", "short"])
@pytest.mark.parametrize("cable_name", ["RG-58", "RG-213", "RG-174"])
def test_extreme_stub_matches_scikit_rf_over_the_whole_range(cable_name, termination, length_m):
    cable = get_cable(cable_name)
    filt = Filter(elements=(Stub(termination=termination, length_m=length_m),), cable=cable)
    s = evaluate(filt, SWEEP_HZ)
    assert np.all(np.isfinite(s))
    ref = skrf_stub(cable, termination, length_m, SWEEP_HZ)
    if termination == "short" and length_m == 0.0:
        # an ideal dead short: scikit-rf gives S21 = 0 exactly; notchkit models 1 nm of line,
        # a finite admittance, so S21 is tiny but not zero
        np.testing.assert_allclose(s, ref, atol=1e-5)
    else:
        np.testing.assert_allclose(s, ref, atol=1e-9)


def test_zero_length_stubs_are_nothing_or_a_short():
    """Shunt element Y across a Z0 line: S11 = -YZ0/(2+YZ0), S21 = 2/(2+YZ0) (Pozar Table 4.2)."""
    cable = get_cable("RG-213")
    s_open = evaluate(Filter(elements=(Stub(termination="open", length_m=0.0),), cable=cable), SWEEP_HZ)
    # Y = 0: the tee with nothing on it
    np.testing.assert_allclose(s_open[:, 0, 0], 0, atol=1e-12)
    np.testing.assert_allclose(s_open[:, 1, 0], 1, atol=1e-12)
    s_short = evaluate(Filter(elements=(Stub(termination="short", length_m=0.0),), cable=cable), SWEEP_HZ)
    # Y -> infinity: total reflection, S11 -> -1, S21 -> 0
    np.testing.assert_allclose(s_short[:, 0, 0], -1, atol=1e-5)
    np.testing.assert_allclose(s_short[:, 1, 0], 0, atol=1e-5)


@pytest.mark.parametrize("termination", ["open", "short"])
def test_a_5_km_lossy_stub_looks_like_its_own_z0(termination):
    """A line so long that its loss hides the end presents Z0 (Pozar sec. 2.7: Zin -> Z0 as
    alpha*l -> infinity), so the tee sees a shunt Y = 1/Z0: S21 = 2/(2 + 50/Z0)."""
    cable = get_cable("RG-213")
    f = np.geomspace(100e6, F_MAX_HZ, 50)  # above 100 MHz RG-213 loses > 5 dB/100 m: > 250 dB on 5 km
    assert np.all(cable.loss_db_per_100m(f / 1e6) * 50 > 250)
    s = evaluate(Filter(elements=(Stub(termination=termination, length_m=5000.0),), cable=cable), f)
    yz = 50.0 / cable.z0_ohm
    np.testing.assert_allclose(s[:, 1, 0], 2 / (2 + yz), rtol=1e-9)
    np.testing.assert_allclose(s[:, 0, 0], -yz / (2 + yz), rtol=1e-9)


def test_batch_evaluation_of_extreme_lengths_is_finite():
    cable = get_cable("RG-58")
    kinds = ("open", "line", "short")
    lengths = np.array([[0.0, 0.0, 0.0], [5000.0, 5000.0, 5000.0], [0.0, 5000.0, 1e-9], [1e-9, 0.0, 5000.0]])
    s21, s11 = evaluate_batch(kinds, lengths, cable, SWEEP_HZ)
    assert np.all(np.isfinite(s21)) and np.all(np.isfinite(s11))
    # a passive network: |S11|^2 + |S21|^2 <= 1 (conservation of power, lossy line)
    assert np.all(np.abs(s11) ** 2 + np.abs(s21) ** 2 <= 1 + 1e-9)


def test_extreme_filter_writes_a_touchstone_file_scikit_rf_reads(tmp_path):
    import skrf

    cable = get_cable("RG-213")
    elements = (Stub(termination="short", length_m=0.0), Line(length_m=1.0),
                Stub(termination="open", length_m=5000.0), Stub(termination="open", length_m=0.0))
    filt = Filter(elements=elements, cable=cable)
    path = write_touchstone(filt, SWEEP_HZ, tmp_path / "extreme.s2p")
    net = skrf.Network(str(path))
    assert np.all(np.isfinite(net.s))
    np.testing.assert_allclose(net.f, SWEEP_HZ, rtol=1e-9)
    np.testing.assert_allclose(net.s, to_network(filt, SWEEP_HZ).s, atol=1e-6)


def test_a_5_km_series_line_evaluates_to_finite_s_parameters():
    cable = get_cable("RG-213")
    filt = Filter(elements=(Stub(termination="open", length_m=1.0), Line(length_m=5000.0)), cable=cable)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        s = evaluate(filt, SWEEP_HZ)
    assert [w.category.__name__ for w in caught] == []
    assert np.all(np.isfinite(s))
    # reciprocal network: S12 == S21 (Pozar sec. 4.3); both ~0 through 5 km of lossy line
    s21_batch, _ = evaluate_batch(filt.kinds, filt.lengths_m[None, :], cable, SWEEP_HZ)
    np.testing.assert_allclose(s[:, 1, 0], s21_batch[0], atol=1e-12)
    np.testing.assert_allclose(s[:, 0, 1], s[:, 1, 0], atol=1e-12)


@pytest.mark.parametrize("length", [-1.0, -1e-12, float("nan"), float("inf"), float("-inf")])
@pytest.mark.parametrize("element", ["open", "short", "line"])
def test_impossible_lengths_are_refused_with_the_value(element, length):
    with pytest.raises(DesignError, match=r"length .* m must be finite and >= 0") as info:
        if element == "line":
            Line(length_m=length)
        else:
            Stub(termination=element, length_m=length)
    assert repr(length) in str(info.value)


# ---------------------------------------------------------------------------
# Design at the frequency edges, adjacent and overlapping bands
# ---------------------------------------------------------------------------


@needs_design
@pytest.mark.parametrize(
    "passes, notches",
    [
        ([(0.1, 0.11)], [(5900.0, 6000.0)]),
        ([(5900.0, 6000.0)], [(0.1, 0.12)]),
        ([(0.1, 0.2), (5990.0, 6000.0)], [(146.0, 148.0)]),
    ],
    ids=["pass-bottom-notch-top", "pass-top-notch-bottom", "both-edges"],
)
def test_design_at_the_edges_of_the_range_is_finite(passes, notches):
    from notchkit.synthesis import design_request

    report = design_request(passes, notches, cable="RG-213")
    doc = report.to_json()
    finite_json(doc)
    (f,) = doc["filters"]
    assert f["meets"] is report.meets
    if not report.meets:  # an unmet design says what is missing
        assert f["shortfall"]


@needs_design
@pytest.mark.parametrize("band", ["0.09-0.2", "5999-6000.5", "0-1", "1e-3-1"])
def test_design_outside_the_range_is_refused(capsys, band):
    rc = main(["design", "--pass", band, "--notch", "430-440"])
    err = capsys.readouterr().err
    assert rc == EXIT_BAD_INPUT
    assert err.startswith("error: ") and len(err.splitlines()) == 1
    assert band in err or "0.1-6000" in err, err


@needs_design
def test_notch_adjacent_to_a_pass_band_designs_and_reports(capsys):
    """10 kHz between a pass band and a notch at 146 MHz: a coax stub's Q (a few hundred,
    common practice) cannot give 30 dB there, so the design is computed and shows what is missing."""
    from notchkit.synthesis import design_request

    report = design_request([(146.0, 146.4)], [(146.41, 146.8)], cable="RG-213")
    finite_json(report.to_json())
    sol = report.designs[0].solution
    assert report.meets == (not sol.shortfall)
    rc = main(["design", "--pass", "146.0-146.4", "--notch", "146.41-146.8"])
    out, err = capsys.readouterr()
    assert rc == (EXIT_OK if report.meets else EXIT_UNMET)
    assert "Traceback" not in err
    if not report.meets:
        assert "DOES NOT MEET" in out and "what is missing" in out


OVERLAPS = {
    "sharing-an-edge": ([(146.0, 146.4)], [(146.4, 146.8)]),
    "overlapping": ([(146.0, 146.5)], [(146.3, 146.8)]),
    "notch-inside-pass": ([(144.0, 148.0)], [(146.0, 146.1)]),
    "pass-inside-notch": ([(146.0, 146.1)], [(144.0, 148.0)]),
    "second-pass-overlaps": ([(50.0, 54.0), (146.0, 148.0)], [(147.0, 147.5), (430.0, 440.0)]),
}


@needs_design
@pytest.mark.parametrize("name", sorted(OVERLAPS))
def test_overlapping_pass_and_notch_is_refused_clearly(capsys, name):
    from notchkit.synthesis import design_request

    passes, notches = OVERLAPS[name]
    with pytest.raises(DesignError, match="^cannot pass and notch the same frequency"):
        design_request(passes, notches, cable="RG-213")
    argv = ["design"]
    for lo, hi in passes:
        argv += ["--pass", f"{lo}-{hi}"]
    for lo, hi in notches:
        argv += ["--notch", f"{lo}-{hi}"]
    rc = main(argv)
    out, err = capsys.readouterr()
    assert rc == EXIT_BAD_INPUT
    assert out == ""
    (line,) = err.splitlines()
    assert line.startswith("error: cannot pass and notch the same frequency")
    assert "MHz" in line  # the message shows the bands


# ---------------------------------------------------------------------------
# A lossless user-defined cable
# ---------------------------------------------------------------------------


@needs_design
def test_lossless_user_cable_warns_and_still_designs():
    from notchkit.cables import Cable
    from notchkit.synthesis import design_request

    with pytest.warns(LosslessCableWarning, match="lossless"):
        cable = Cable.from_table(name="Userline", z0_ohm=50.0, velocity_factor=0.66)
    assert cable.lossless
    report = design_request([(144.0, 148.0)], [(430.0, 440.0)], cable=cable)
    finite_json(report.to_json())
    # a lossless line: |S11|^2 + |S21|^2 = 1 (no loss, conservation of power; Pozar sec. 4.3)
    filt = report.designs[0].filter
    s = evaluate(filt, np.linspace(100e6, 500e6, 401))
    np.testing.assert_allclose(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2, 1.0, atol=1e-9)


LOSSLESS_SITE = """\
site: Fictional Flat
cable: Userline
cables:
  - {name: Userline, z0_ohm: 50, velocity_factor: 0.66}
transmitters:
  - {name: TX2M, freq_mhz: 146.52, power_w: 100, antenna: {x_m: 0, y_m: 0, height_m: 10}}
receivers:
  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}
"""


@pytest.fixture(scope="module")
def lossless_run(tmp_path_factory):
    """``notchkit design`` on a site whose only cable is lossless, in a real process."""
    if not built("design"):
        pytest.skip("notchkit design is not built yet")
    path = tmp_path_factory.mktemp("lossless") / "site.yaml"
    path.write_text(LOSSLESS_SITE, encoding="utf-8")
    return subprocess.run([sys.executable, "-m", "notchkit", "design", str(path)],
                          capture_output=True, text=True, timeout=300)


def test_lossless_site_cable_designs_with_a_warning(lossless_run):
    assert lossless_run.returncode in (EXIT_OK, EXIT_UNMET), lossless_run.stderr
    assert "Traceback" not in lossless_run.stderr
    assert "F1" in lossless_run.stdout  # it designed a filter
    assert "lossless" in lossless_run.stderr  # and the user was told


def test_lossless_warning_is_one_clean_line(lossless_run):
    lines = [x for x in lossless_run.stderr.splitlines() if x.strip()]
    assert lines and all(x.startswith("warning: ") for x in lines), lines


# ---------------------------------------------------------------------------
# 1 W and 10 kW
# ---------------------------------------------------------------------------


def _hand_open_stub(cable, length_m: float, freq_hz: float, power_w: float) -> tuple[float, float]:
    """Peak tee and end voltage of one open stub between a matched 50-ohm source and load.

    Available power P from EMF V_s with R_s = 50: |V_s| = sqrt(8 P R_s). The stub's input
    admittance is tanh(gamma l)/Z0 (open lossy line, Pozar eq. 2.91 inverted), in parallel with
    the 50-ohm load; the open end carries V_tee / cosh(gamma l) (Pozar sec. 2.7).
    """
    beta = 2 * math.pi * freq_hz / (C0 * cable.velocity_factor)
    g = complex(float(cable.alpha_np_per_m(freq_hz)), beta)
    y_stub = np.tanh(g * length_m) / cable.z0_ohm
    z_par = 1 / (1 / 50.0 + y_stub)
    v_s = math.sqrt(8 * power_w * 50.0)
    v_tee = v_s * z_par / (50.0 + z_par)
    return abs(v_tee), abs(v_tee / np.cosh(g * length_m))


@pytest.mark.parametrize("power_w", [1.0, 10_000.0])
def test_power_check_voltages_match_the_hand_formula(power_w):
    from notchkit.power import power_check

    cable = get_cable("RG-213")
    # an open stub a quarter wave long at 146 MHz, carrying a 100 MHz carrier (off resonance)
    length = C0 * cable.velocity_factor / (4 * 146e6)
    filt = Filter(elements=(Stub(termination="open", length_m=length),), cable=cable)
    pc = power_check(filt, power_w=power_w, freq_mhz=100.0)
    finite_json(pc.to_json())
    (stub,) = pc.stubs
    v_tee, v_end = _hand_open_stub(cable, length, 100e6, power_w)
    assert stub.tee_voltage_peak_v == pytest.approx(v_tee, rel=1e-6)
    assert stub.end_voltage_peak_v == pytest.approx(v_end, rel=1e-6)
    # on a line shorter than a quarter wave the open end is the voltage maximum
    assert stub.max_voltage_peak_v == pytest.approx(v_end, rel=1e-3)
    has_caution = any("CAUTION" in c and "V peak" in c for c in pc.cautions)
    assert has_caution == (v_end >= 1000.0)
    if power_w == 10_000.0:
        assert v_end > 1000.0 and has_caution  # ~1.1 kV: the kilovolt caution must show
    else:
        assert v_end < 20.0 and not has_caution


@needs_design
def test_design_power_scales_as_the_square_root_of_power():
    """A linear network: voltages scale with sqrt(P), dissipation with P (1 W vs 10 kW: x100, x10^4)."""
    from notchkit.synthesis import design_request

    def run(p):
        # ideal junctions: the textbook matched-line voltage below needs no connector sections
        r = design_request([(144.0, 148.0)], [(430.0, 440.0)], cable="RG-213", power_w=p, power_mhz=146.52,
                           hardware="ideal")
        doc = r.to_json()
        finite_json(doc)
        return r.designs[0].power

    low, high = run(1.0), run(10_000.0)
    assert low is not None and high is not None
    for a, b in zip(low.stubs, high.stubs, strict=True):
        assert b.max_voltage_peak_v == pytest.approx(100.0 * a.max_voltage_peak_v, rel=1e-9)
        assert b.dissipated_w == pytest.approx(1e4 * a.dissipated_w, rel=1e-9)
    vmax = max(s.max_voltage_peak_v for s in high.stubs)
    # matched at 146.52 MHz, the tee alone sees sqrt(2 P Z) = 1000 V peak at 10 kW
    assert max(n.voltage_peak_v for n in high.nodes) == pytest.approx(1000.0, rel=0.02)
    assert bool(high.cautions) == (vmax >= 1000.0)
    assert not low.cautions


@needs_design
@pytest.mark.parametrize("power_w", [1, 10_000])
def test_sites_with_1_w_and_10_kw_transmitters_give_finite_numbers(tmp_path, capsys, power_w):
    path = tmp_path / "site.yaml"
    path.write_text(
        "site: Fictional Flat\n"
        f"transmitters:\n  - {{name: TXA, freq_mhz: 146.52, power_w: {power_w}, "
        "antenna: {x_m: 0, y_m: 0, height_m: 10}}\n"
        "receivers:\n  - {name: RXB, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}\n",
        encoding="utf-8",
    )
    for cmd in ("survey", "design"):
        rc = main([cmd, str(path), "--json"])
        out, err = capsys.readouterr()
        assert rc in (EXIT_OK, EXIT_UNMET), err
        finite_json(json.loads(out))


def test_nothing_but_notchkit_errors_at_absurd_library_inputs():
    """Direct library calls with absurd values raise NotchkitError, never something else."""
    cable = get_cable("RG-213")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for bad in (float("nan"), -5.0, float("inf")):
            with pytest.raises(NotchkitError):
                Stub(termination="open", length_m=bad)
        with pytest.raises(NotchkitError):
            Stub(termination="sideways", length_m=1.0)  # type: ignore[arg-type]
        with pytest.raises(NotchkitError):
            Filter(elements=(), cable=cable)
        with pytest.raises(NotchkitError):
            get_cable("no-such-cable")
