"""Monte Carlo tolerance: limits that must hold whatever the random draws."""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest

from notchkit.buildyield import format_tolerance, tolerance
from notchkit.cables import get_cable
from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub, evaluate
from notchkit.lines import db20
from notchkit.requirements import NotchSpec
from notchkit.site.model import Band

C = 299_792_458.0  # m/s, exact (SI)
VF = 0.66
Q40 = C * VF / (4 * 7.15e6)  # open quarter wave at 7.15 MHz (textbook l = c VF / 4 f)


def _single(length=Q40, kind="open", cable=None):
    return Filter(elements=(Stub(termination=kind, length_m=length),), cable=cable or get_cable("RG-213"),
                  tee_allowance_m=0.03)


def _worst_db(filt, lo, hi, n=15):
    """Independent nominal: the ABCD path (filters.evaluate), not the batched one."""
    s = evaluate(filt, np.linspace(lo, hi, n) * 1e6)
    return float((-db20(s[:, 1, 0])).min())


def test_zero_tolerance_is_exactly_the_nominal():
    f = _single()
    nominal = _worst_db(f, 7.0, 7.3)
    notches = [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=nominal - 0.5),
               NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=nominal + 0.5)]
    t = tolerance(f, notches, cut_tolerance_mm=0.0, vf_spread=0.0, samples=500,
                  pass_bands=[Band(lo_mhz=14.0, hi_mhz=14.35)])
    assert t.notches[0].nominal_worst_db == pytest.approx(nominal, abs=1e-6)
    assert t.notches[0].probability == 1.0 and t.notches[1].probability == 0.0
    assert t.notches[0].p05_worst_db == pytest.approx(nominal, abs=1e-6)
    # an open quarter wave at 40 m is a half wave at 20 m: transparent (textbook)
    assert t.passes[0].probability == 1.0 and t.passes[0].nominal_worst_swr < 1.1
    assert t.probability_all == 0.0


def test_larger_tolerance_never_helps_a_centred_notch():
    # Common random numbers (same seed): scaling every cut error up can only move the
    # notch further from the band it is centred on.
    f = _single()
    spec = [NotchSpec(lo_mhz=7.1, hi_mhz=7.2, required_db=_worst_db(f, 7.1, 7.2) - 1.0)]
    probs = [tolerance(f, spec, cut_tolerance_mm=tol, vf_spread=0.0, samples=2000, seed=3)
             .notches[0].probability for tol in (5, 20, 40, 80, 160)]
    assert probs[0] == 1.0
    assert all(a >= b for a, b in zip(probs, probs[1:], strict=False))
    assert probs[-1] < 0.9


def test_vf_spread_reduces_probability_statistically():
    f = _single()
    spec = [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=_worst_db(f, 7.0, 7.3) - 3.0)]
    probs = [tolerance(f, spec, vf_spread=s, samples=4000, seed=11).notches[0].probability
             for s in (0.0, 0.005, 0.01, 0.02)]
    assert all(a >= b - 0.02 for a, b in zip(probs, probs[1:], strict=False))
    assert probs[0] == 1.0 and probs[-1] < probs[0]


def test_wide_margin_gives_about_one():
    f = _single()
    nominal = _worst_db(f, 7.0, 7.3)
    t = tolerance(f, [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=nominal - 15.0)], samples=10_000)
    assert t.notches[0].probability >= 0.999


def test_knife_edge_gives_about_half():
    # Band well below the stub's resonance: the worst attenuation (at the band's low edge)
    # rises monotonically as the stub gets electrically longer, so a requirement equal to
    # the nominal is met by the half of the symmetric draws that lengthen it.
    f = _single()
    nominal = _worst_db(f, 6.5, 6.6)
    t = tolerance(f, [NotchSpec(lo_mhz=6.5, hi_mhz=6.6, required_db=nominal)], samples=10_000, seed=5)
    assert 0.45 < t.notches[0].probability < 0.55
    # and the sensitivity says so: a longer stub helps (positive dB per mm)
    (s,) = t.notches[0].sensitivity
    assert s.element_id == "F1-S1" and s.db_per_mm > 0


def test_sensitivity_against_independent_finite_difference():
    cable = get_cable("RG-213")
    f = Filter(elements=(Stub(termination="open", length_m=Q40), Line(length_m=2.0),
                         Stub(termination="short", length_m=2 * Q40)), cable=cable, tee_allowance_m=0.03)
    t = tolerance(f, [NotchSpec(lo_mhz=6.6, hi_mhz=6.7, required_db=5.0)], samples=100)
    h = 1e-3
    for j, sens in enumerate(t.notches[0].sensitivity):
        el = list(f.elements)
        up = [dataclasses.replace(e, length_m=e.length_m + (h if i == j else 0)) for i, e in enumerate(el)]
        dn = [dataclasses.replace(e, length_m=e.length_m - (h if i == j else 0)) for i, e in enumerate(el)]
        fd = (_worst_db(dataclasses.replace(f, elements=tuple(up)), 6.6, 6.7)
              - _worst_db(dataclasses.replace(f, elements=tuple(dn)), 6.6, 6.7)) / 2.0
        assert sens.db_per_mm == pytest.approx(fd, rel=0.05, abs=1e-4)
    assert [s.element_id for s in t.notches[0].sensitivity] == ["F1-S1", "F1-L1", "F1-S2"]


def test_length_scaling_is_only_used_for_a_small_rest():
    # The documented model: within a VF bin, VF' is the bin's cable with lengths x VF_bin/VF'.
    # Check against a cable whose VF really is VF' (exact; same loss per metre): a change
    # of half a bin (0.01 / 24) must be below 0.01 dB; scaling all the way from VF 0.66 to
    # 0.67 is about 20 log10(0.67 / 0.66) = 0.13 dB off at the loss-limited notch bottom,
    # which is why the run uses bins.
    cable = get_cable("RG-213")
    freqs = np.linspace(6.5, 7.5, 41) * 1e6
    for vf_to, bound in ((0.66 + 0.01 / 48, 0.01), (0.67, 0.2)):
        exact = evaluate(_single(cable=dataclasses.replace(cable, velocity_factor=vf_to)), freqs)[:, 1, 0]
        scaled = evaluate(_single(length=Q40 * 0.66 / vf_to, cable=cable), freqs)[:, 1, 0]
        assert np.max(np.abs(db20(exact) - db20(scaled))) < bound


def test_vf_draws_match_a_direct_evaluation():
    # One sample, no cut error, VF spread on: the run's worst attenuation must lie between
    # the independent nominal evaluations at VF0 - spread and VF0 + spread (monotone here).
    cable = get_cable("RG-213")
    f = _single()
    spec = [NotchSpec(lo_mhz=6.5, hi_mhz=6.6, required_db=0.0)]
    t = tolerance(f, spec, cut_tolerance_mm=0.0, vf_spread=0.01, samples=2000, seed=4)
    lo = _worst_db(_single(cable=dataclasses.replace(cable, velocity_factor=0.67)), 6.5, 6.6)
    hi = _worst_db(_single(cable=dataclasses.replace(cable, velocity_factor=0.65)), 6.5, 6.6)
    n = t.notches[0]
    assert lo - 1e-3 <= n.p05_worst_db <= n.median_worst_db <= hi + 1e-3
    # the median build is the nominal one (symmetric uniform VF draw, monotone response)
    assert n.median_worst_db == pytest.approx(_worst_db(f, 6.5, 6.6), abs=0.05)


def test_vf_spread_default_follows_the_cable():
    cable = get_cable("RG-213")
    spec = [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=10)]
    published = dataclasses.replace(cable, vf_tolerance=0.02)
    assert tolerance(_single(cable=published), spec, samples=10).vf_spread == 0.02
    unpublished = dataclasses.replace(cable, vf_tolerance=None)
    assert tolerance(_single(cable=unpublished), spec, samples=10).vf_spread == 0.01


def test_seeded_and_deterministic():
    f = _single()
    spec = [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=_worst_db(f, 7.0, 7.3) - 2)]
    a = tolerance(f, spec, samples=3000, seed=1)
    b = tolerance(f, spec, samples=3000, seed=1)
    c = tolerance(f, spec, samples=3000, seed=2)
    assert a == b
    assert a.notches[0].median_worst_db != c.notches[0].median_worst_db
    doc = json.dumps(a.to_json(), allow_nan=False)
    assert json.loads(doc)["cut_distribution"] == "uniform"
    assert "builds" in format_tolerance(a)


def test_bad_inputs():
    f = _single()
    spec = [NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=10)]
    with pytest.raises(DesignError, match="samples 0 must be between 1 and 1e"):
        tolerance(f, spec, samples=0)
    with pytest.raises(DesignError, match="cut_tolerance_mm -2"):
        tolerance(f, spec, cut_tolerance_mm=-2)
    with pytest.raises(DesignError, match="needs at least one notch or pass band"):
        tolerance(f, [])
    with pytest.raises(DesignError, match="band 1: 7.3-7.0 MHz"):
        tolerance(f, [NotchSpec(lo_mhz=7.3, hi_mhz=7.0, required_db=10)])


def test_band_grid_follows_the_phase_swing_across_the_band():
    # Phase constant beta = 2 pi f / (c VF) (textbook). 25 kHz at 146 MHz on 3 m of VF 0.66
    # cable: theta = 13.9 rad, swing 13.9 x 25e3 / 146.0125e6 = 0.0024 rad -> edges and centre.
    from notchkit.buildyield import band_sizes

    cable = get_cable("RG-213")  # VF 0.66
    f = Filter(elements=(Stub(termination="open", length_m=1.0), Line(length_m=2.0)), cable=cable,
               tee_allowance_m=0.03)
    channel = Band(lo_mhz=145.9875, hi_mhz=146.0125)
    airband = Band(lo_mhz=118.0, hi_mhz=137.0)  # theta 13.05 rad, swing 1.81 rad -> capped
    narrow_40m = Band(lo_mhz=7.0, hi_mhz=7.3)  # theta 0.695 rad, swing 0.0286 rad -> 4 points
    assert band_sizes([channel, airband, narrow_40m], f, 11, 0.01) == [3, 11, 4]
    assert band_sizes([channel, airband], f, 11, None) == [11, 11]


def test_channel_grid_gives_the_dense_worst_and_the_same_run_as_a_full_grid():
    # A 2 m / 70 cm style filter with channel-wide bands and one wide band. Reference: the
    # worst attenuation over each band from the independent ABCD path on 201 points.
    cable = get_cable("RG-213")
    q435 = C * VF / (4 * 435e6)
    f = Filter(elements=(Stub(termination="open", length_m=q435 + 0.03), Line(length_m=0.7),
                         Stub(termination="short", length_m=3 * q435 + 0.03)), cable=cable,
               tee_allowance_m=0.03)
    notches = [NotchSpec(lo_mhz=434.99, hi_mhz=435.01, required_db=20.0),
               NotchSpec(lo_mhz=438.0, hi_mhz=438.025, required_db=10.0),
               NotchSpec(lo_mhz=300.0, hi_mhz=320.0, required_db=1.0)]
    passes = [Band(lo_mhz=146.0, hi_mhz=146.025)]
    fast = tolerance(f, notches, pass_bands=passes, samples=400, seed=2)
    full = tolerance(f, notches, pass_bands=passes, samples=400, seed=2, phase_step_rad=None)
    assert _same(fast.to_json(), full.to_json())
    for n in fast.notches[:2]:  # channel-wide: edges and centre are the dense answer
        assert n.nominal_worst_db == pytest.approx(_worst_db(f, n.lo_mhz, n.hi_mhz, n=201), abs=0.01)


def _same(a, b):
    """Equal JSON documents, floats to 1e-9."""
    if isinstance(a, dict):
        assert a.keys() == b.keys()
        return all(_same(a[k], b[k]) for k in a)
    if isinstance(a, list):
        assert len(a) == len(b)
        return all(_same(x, y) for x, y in zip(a, b, strict=True))
    if isinstance(a, float):
        assert a == pytest.approx(b, abs=1e-9)
        return True
    assert a == b
    return True


# ---------------------------------------------------------------- the trim workflow


def _lossless():
    from notchkit.cables import Cable

    return Cable(name="lossless 50", z0_ohm=50.0, velocity_factor=VF)


def _trim_probability(required_db, read_pct, step_mm, e0):
    """P(a trimmed lossless open quarter-wave stub still gives ``required_db`` at f0).

    A shunt impedance Z on a 50-ohm line has S21 = 2Z / (2Z + Z0) (Pozar sec. 4.4,
    table 4.2); an open stub of Z0 = 50 ohm has Z = -j Z0 cot(theta) (Pozar sec. 2.3),
    so |S21|^2 = 4 cot^2 / (4 cot^2 + 1). With theta = (pi/2)(e/e0), e = e0(1 + d) + s,
    it meets iff |d + s/e0| <= (2/pi) atan(c_max), c_max^2 = r / (4 (1 - r)),
    r = 10^(-A/10). d ~ U(-read, read), s ~ U(0, step): integrated on a fine grid.
    """
    r = 10 ** (-required_db / 10)
    w = 2 / np.pi * np.arctan(np.sqrt(r / (4 * (1 - r))))
    d = np.linspace(-read_pct / 100, read_pct / 100, 2001)[:, None]
    s = np.linspace(0, step_mm * 1e-3, 2001)[None, :] / e0
    return float(np.mean(np.abs(d + s) <= w))


@pytest.mark.parametrize(("required_db", "read_pct", "step_mm"), [(30.0, 1.0, 5.0), (40.0, 0.5, 2.0),
                                                                   (25.0, 2.0, 0.0)])
def test_trimmed_stub_matches_the_textbook_probability(required_db, read_pct, step_mm):
    f0 = 146.0
    e0 = C * VF / (4 * f0 * 1e6)
    filt = _single(length=e0, cable=_lossless())
    notch = [NotchSpec(lo_mhz=f0, hi_mhz=f0, required_db=required_db)]
    # trimming takes out the cut error and the reel's VF error: give both absurd values
    t = tolerance(filt, notch, cut_tolerance_mm=40.0, vf_spread=0.05, samples=20_000, seed=3, trimmed=[True],
                  trim_step_mm=step_mm, trim_freq_error_pct=read_pct)
    expect = _trim_probability(required_db, read_pct, step_mm, e0)
    assert 0.05 < expect < 0.995  # the case discriminates
    sigma = np.sqrt(expect * (1 - expect) / 20_000)
    assert t.notches[0].probability == pytest.approx(expect, abs=4 * sigma + 0.003)
    assert t.workflow == "trimmed" and t.build_yield == t.probability_all


def test_untrimmed_line_sections_keep_the_cut_and_vf_errors():
    """A line section is cut to length: its spread is the cut and the reel's VF, so the
    same filter with its line trimmed (electrically exact) does at least as well."""
    cable = get_cable("RG-213")
    q = C * VF / (4 * 21.225e6)
    filt = Filter(elements=(Stub(termination="open", length_m=3 * q), Line(length_m=2.0),
                            Stub(termination="open", length_m=3 * q)), cable=cable, tee_allowance_m=0.03)
    notch = [NotchSpec(lo_mhz=21.0, hi_mhz=21.45, required_db=_worst_db(filt, 21.0, 21.45) - 1.0)]
    common = {"cut_tolerance_mm": 20.0, "vf_spread": 0.03, "samples": 3000}
    cut = tolerance(filt, notch, trimmed=[True, False, True], **common)
    exact = tolerance(filt, notch, trimmed=[True, True, True], trim_freq_error_pct=0.0, trim_step_mm=0.0,
                      **common)
    assert cut.probability_all < exact.probability_all == 1.0
    assert cut.to_json()["trimmed"] == [True, False, True]
    assert "1 piece(s) cut to length" in format_tolerance(cut)


def test_drift_lowers_the_yield_of_a_narrow_margin():
    e0 = C * VF / (4 * 146e6)
    filt = _single(length=e0, cable=_lossless())
    notch = [NotchSpec(lo_mhz=146.0, hi_mhz=146.0, required_db=35.0)]
    calm = tolerance(filt, notch, samples=4000, trimmed=[True])
    warm = tolerance(filt, notch, samples=4000, trimmed=[True], drift_pct=1.0)
    assert warm.probability_all < calm.probability_all and warm.drift_pct == 1.0


def test_a_trimmed_stub_keeps_its_plug_whatever_the_reels_velocity_factor():
    """With connector hardware a stub's length includes its plug, which is hardware with its own
    velocity factor: a stub trimmed exactly to its resonance (no reading error, no step left on)
    on a reel of any VF is electrically the same stub, so every build gives the nominal notch
    (its loss aside). The check builds the stub with scikit-rf (tests/hw_bench.py: PTFE plug,
    tee arms, cable on ``DefinedGammaZ0``) on the two extreme reels, its cable cut to the same
    electrical length ``l_c VF / VF_0`` (electrical length goes as l / VF, Pozar sec. 2.3):
    the simulated builds must lie between those two."""
    from hw_bench import filter_network

    from notchkit.hardware import Hardware, Model

    cable = get_cable("RG-213")
    hw = Hardware.of("uhf")
    model = Model(cable=cable, hardware=hw, depth_ceiling_db=None)
    plug = hw.family.plug_mm * 1e-3
    vf0, spread = cable.velocity_factor, 0.02
    length = plug + C * vf0 / (4 * 440e6)  # a quarter wave of cable at 440 MHz behind the plug

    def skrf_s21(vf, f_hz):
        fj = {"elements": [{"kind": "stub", "termination": "open",
                            "length_m": plug + (length - plug) * vf / vf0}],
              "cable": {"type": cable.name, "z0_ohm": cable.z0_ohm, "velocity_factor": vf},
              "model": {"hardware": hw.to_json(), "line_model": "classic"}}
        return np.abs(filter_network(fj, f_hz, cable=cable).s[:, 1, 0])

    sweep = np.linspace(300e6, 500e6, 4001)
    f_notch = float(sweep[np.argmin(skrf_s21(vf0, sweep))])  # the tee arms and plug pull it down
    band = np.array([f_notch - 1e6, f_notch + 1e6])  # the band's worst is at an edge (monotone skirts)
    ends = [float(np.min(-20 * np.log10(skrf_s21(vf0 + d, band)))) for d in (-spread, spread)]
    filt = Filter(elements=(Stub(termination="open", length_m=length),), cable=model, tee_allowance_m=0.0)
    t = tolerance(filt, [NotchSpec(lo_mhz=band[0] / 1e6, hi_mhz=band[1] / 1e6, required_db=3.0)],
                  cut_tolerance_mm=5.0, vf_spread=spread, samples=400, seed=5, trimmed=[True],
                  trim_step_mm=0.0, trim_freq_error_pct=0.0)
    n = t.notches[0]
    assert 30.0 < min(ends) and max(ends) - min(ends) < 0.2  # a deep notch, the same on every reel
    # scaling the 15 mm plug with the reel (about 0.2 mm at the extremes) put p05 near 35 dB
    for got in (n.p05_worst_db, n.median_worst_db):
        assert min(ends) - 0.02 <= got <= max(ends) + 0.02
