"""The stub solver against the rules of the trade, textbook formulas and its own contract.

Sources
-------
- Common practice (amateur stub-filter lore, e.g. the station-integration
  chapters of the ARRL Handbook): an open quarter-wave stub notches f, 3f, 5f
  and passes 2f, 4f; a shorted quarter-wave stub passes f, 3f and notches 2f, 4f.
- D. M. Pozar, *Microwave Engineering*, 4th ed., 2012: sec. 2.3 (a lossless
  line l long is ``beta l = 2 pi f l / (c VF)``), sec. 2.7 (lossy line:
  ``Z_in = Z0 coth(gamma l)`` for an open end, so a resonant open quarter wave
  shows ``Z0 tanh(alpha l) ~ Z0 alpha l``), table 4.2 (a shunt impedance ``Z``
  across a ``Z_sys`` line: ``S21 = 2 Z / (2 Z + Z_sys)``).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from notchkit.cables import get_cable
from notchkit.errors import DesignError
from notchkit.filters import Stub, evaluate
from notchkit.lines import C0, db20, swr_from_s11, yin_open, yin_short
from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site.model import Band, Limits
from notchkit.solver import MIN_CUT_M, VERIFY_POINTS, _compensation_lengths, _Problem, solve

TEE = 0.03


def req(passes, notches, cable="RG-213"):
    return FilterRequirement(
        radio=None, side=None,
        pass_bands=tuple(Band(lo_mhz=a, hi_mhz=b) for a, b in passes),
        notches=tuple(NotchSpec(lo_mhz=a, hi_mhz=b, required_db=d) for a, b, d in notches),
        cable=cable,
    )


def run(r, cable="RG-213", **limits):
    return solve(r, cable=get_cable(cable), limits=Limits(**limits), tee_allowance_m=TEE)


def quarter_wave_m(freq_mhz, vf):
    # Pozar sec. 2.3: a quarter wave is c VF / (4 f)
    return C0 * vf / (4.0 * freq_mhz * 1e6)


@pytest.fixture(scope="module")
def rg213():
    return get_cable("RG-213")


# ---------------------------------------------------------------- rules of the trade


def test_shorted_quarter_wave_at_40m_passes_40_and_15_notches_20(rg213):
    # Common practice: a shorted lambda/4 at f passes f and 3f and notches 2f.
    # 20 dB over the whole 20 m band is what one RG-213 stub can do (the notch of
    # a half-wave resonance is about 2 % wide at 20 dB).
    sol = run(req([(7.0, 7.3), (21.0, 21.45)], [(14.0, 14.35, 20.0)]))
    assert sol.meets
    assert len(sol.filter.elements) == 1
    stub = sol.filter.elements[0]
    assert isinstance(stub, Stub) and stub.termination == "short"
    expected = quarter_wave_m(7.15, rg213.velocity_factor)
    assert stub.length_m == pytest.approx(expected, rel=0.03)


def test_open_quarter_wave_at_40m_passes_20_and_10_notches_40_and_15(rg213):
    # Common practice: an open lambda/4 at f notches f and 3f and passes 2f and 4f.
    # 15 dB over both notch bands is within reach of one stub (the 3f notch is a
    # third as wide in relative terms as the f notch).
    sol = run(req([(14.0, 14.35), (28.0, 29.7)], [(7.0, 7.3, 15.0), (21.0, 21.45, 15.0)]))
    assert sol.meets
    assert len(sol.filter.elements) == 1
    stub = sol.filter.elements[0]
    assert isinstance(stub, Stub) and stub.termination == "open"
    assert stub.length_m == pytest.approx(quarter_wave_m(7.15, rg213.velocity_factor), rel=0.03)


def test_two_metre_third_harmonic_notched_while_passing_two_metres():
    # A 2 m transmitter's 3rd harmonic (3 x 144-148 = 432-444 MHz). No single
    # stub resonant at 3f is matched at f (its susceptance there is +-0.577/Z0:
    # tan 30 deg, Pozar sec. 2.3), so the solver needs a compensating pair.
    sol = run(req([(144.0, 148.0)], [(432.0, 444.0, 30.0)]))
    assert sol.meets
    assert len(sol.filter.stubs) == 2
    assert sol.notches[0].worst_attenuation_db >= 30.0
    assert sol.passes[0].worst_swr <= 1.5


def test_seventy_cm_fundamental_notched_at_a_two_metre_receiver():
    sol = run(req([(144.0, 148.0)], [(420.0, 450.0, 20.0)]))
    assert sol.meets
    assert sol.notches[0].worst_attenuation_db >= 20.0
    assert sol.passes[0].worst_insertion_loss_db <= 0.5


def test_contest_case_needs_two_stubs():
    # Pass 20 m and 10 m, notch 40 m and 15 m by 30 dB each (a contest station):
    # one stub cannot (see the 15 dB case above), two can.
    r = req([(14.0, 14.35), (28.0, 29.7)], [(7.0, 7.3, 30.0), (21.0, 21.45, 30.0)])
    one = run(r, max_stubs=1)
    assert not one.meets
    two = run(r, max_stubs=3)
    assert two.meets
    assert len(two.filter.stubs) == 2


def test_single_resonant_stub_depth_is_the_cable_loss_limit(rg213):
    # Pozar sec. 2.7 + table 4.2: at resonance an open quarter wave is
    # Z = Z0 tanh(alpha l) ~ Z0 alpha l, and S21 = 2Z / (2Z + Zsys). Ask for far
    # more than is possible on a 2 kHz notch so the solver maximises the depth.
    f0 = 100.0
    r = req([(199.9, 200.1)], [(f0 - 0.001, f0 + 0.001, 90.0)])
    sol = run(r, max_stubs=1)
    assert not sol.meets
    length = quarter_wave_m(f0, rg213.velocity_factor)
    alpha = float(rg213.alpha_np_per_m(f0 * 1e6))
    z = rg213.z0_ohm * math.tanh(alpha * length)
    limit_db = 20.0 * math.log10((2.0 * z + 50.0) / (2.0 * z))
    assert sol.notches[0].worst_attenuation_db == pytest.approx(limit_db, abs=1.0)
    assert sol.filter.stubs[0].termination == "open"


# ---------------------------------------------------------------- honesty of the result


def test_unmeetable_request_reports_best_and_shortfall():
    # 60 dB over a 30 MHz band with one RG-58 stub is far beyond the cable-loss
    # limit of a single stub (Pozar 2.7: ~40 dB at the exact resonance only).
    sol = run(req([(144.0, 148.0)], [(420.0, 450.0, 60.0)], cable="RG-58"), cable="RG-58", max_stubs=1)
    assert not sol.meets
    assert len(sol.filter.stubs) == 1
    notch = [s for s in sol.shortfall if s.quantity == "attenuation"]
    assert notch and notch[0].missing_db == pytest.approx(60.0 - sol.notches[0].worst_attenuation_db)
    assert notch[0].missing_db > 0
    text = " ".join(sol.advice)
    assert "another stub" in text
    assert "narrow the notch" in text


@pytest.mark.parametrize(
    "passes, notches",
    [
        ([(7.0, 7.3), (21.0, 21.45)], [(14.0, 14.35, 20.0)]),
        ([(144.0, 148.0)], [(432.0, 444.0, 30.0)]),
        ([(144.0, 148.0)], [(420.0, 450.0, 60.0)]),
    ],
)
def test_meets_agrees_with_an_independent_dense_sweep(passes, notches):
    # Recompute with the explicit-ABCD evaluator (filters.evaluate, not the
    # batched path the solver uses) on our own sweep of 401 points per band.
    r = req(passes, notches)
    sol = run(r)
    ok = True
    for b in r.pass_bands:
        f = np.linspace(b.lo_mhz, b.hi_mhz, 401) * 1e6
        s = evaluate(sol.filter, f)
        il = -db20(s[:, 1, 0])
        swr = swr_from_s11(s[:, 0, 0])
        ok &= bool(il.max() <= 0.5 + 1e-9 and swr.max() <= 1.5 + 1e-9)
        assert il.max() == pytest.approx(sol.passes[r.pass_bands.index(b)].worst_insertion_loss_db, abs=0.05)
    for i, n in enumerate(r.notches):
        f = np.linspace(n.lo_mhz, n.hi_mhz, 401) * 1e6
        att = -db20(evaluate(sol.filter, f)[:, 1, 0])
        ok &= bool(att.min() >= n.required_db - 1e-9)
        assert att.min() == pytest.approx(sol.notches[i].worst_attenuation_db, abs=0.1)
    # meets only when the sweep really meets everything (a margin of 0.05 dB
    # either way is the resolution difference between the two sweeps)
    if sol.meets:
        assert all(x.margin_db >= 0 for x in sol.notches)
    assert sol.meets == ok or min(abs(x.margin_db) for x in sol.notches) < 0.05


def test_verification_sweep_covers_every_band_edge_to_edge():
    r = req([(144.0, 148.0)], [(432.0, 444.0, 30.0)])
    sol = run(r)
    f = sol.verify_freq_hz / 1e6
    for lo, hi in ((144.0, 148.0), (432.0, 444.0)):
        inside = f[(f >= lo - 1e-9) & (f <= hi + 1e-9)]
        assert inside.size >= VERIFY_POINTS
        assert inside.min() == pytest.approx(lo) and inside.max() == pytest.approx(hi)


def test_every_stub_leaves_something_to_cut():
    sol = run(req([(144.0, 148.0)], [(420.0, 450.0, 20.0)]))
    for s in sol.filter.stubs:
        assert s.length_m - TEE >= MIN_CUT_M - 1e-12


def test_total_cable_cap_is_respected():
    r = req([(14.0, 14.35), (28.0, 29.7)], [(7.0, 7.3, 30.0), (21.0, 21.45, 30.0)])
    sol = run(r, max_total_cable_m=10.0)
    assert sol.filter.total_cable_m <= 10.0 + 1e-9
    assert sol.max_total_cable_m == 10.0


def test_deterministic():
    r = req([(144.0, 148.0)], [(432.0, 444.0, 30.0)])
    a, b = run(r), run(r)
    assert a.filter == b.filter
    assert a.notches == b.notches and a.passes == b.passes


# ---------------------------------------------------------------- refusals


def test_overlapping_pass_and_notch_is_refused():
    with pytest.raises(DesignError) as e:
        run(req([(14.0, 14.35)], [(14.2, 14.5, 30.0)]))
    assert str(e.value) == (
        "cannot pass and notch the same frequency: pass 14.0-14.35 overlaps notch 14.2-14.5 MHz"
    )


def test_no_notch_is_refused():
    with pytest.raises(DesignError, match="nothing to notch"):
        run(req([(14.0, 14.35)], []))


def test_no_pass_band_is_refused():
    with pytest.raises(DesignError, match="no pass band"):
        run(req([], [(7.0, 7.3, 20.0)]))


def test_bad_max_stubs_is_refused():
    with pytest.raises(DesignError, match="max_stubs 0 must be an integer >= 1"):
        run(req([(14.0, 14.35)], [(7.0, 7.3, 20.0)]), max_stubs=0)


# ---------------------------------------------------------------- the closed form


@pytest.mark.parametrize("kind", ["open", "short"])
@pytest.mark.parametrize("b_norm", [-1.7, -0.577, 0.3, 1.2])
def test_reactance_compensation_cancels_the_susceptance(kind, b_norm, rg213):
    # Pozar sec. 5.2 (stub tuning): a lossless open stub has Y = j tan(beta l)/Z0,
    # a shorted one Y = -j cot(beta l)/Z0; the compensating stub's B is -B.
    r = req([(144.0, 148.0)], [(432.0, 444.0, 30.0)])
    p = _Problem(r, rg213, Limits(), TEE, 50.0)
    f = 146e6
    b = b_norm / rg213.z0_ohm
    lengths = _compensation_lengths(p, b, kind, f)
    assert lengths
    g = 1j * 2 * math.pi * f / (C0 * rg213.velocity_factor)  # lossless gamma
    for length in lengths:
        y = yin_open(rg213.z0_ohm, g, length) if kind == "open" else yin_short(rg213.z0_ohm, g, length)
        assert complex(y).imag == pytest.approx(-b, rel=1e-9, abs=1e-12)


# ---------------------------------------------------------------- contract over random requests


def _random_requests(n, seed=20261202):
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < n:
        f_pass = float(rng.uniform(3.0, 500.0))
        ratio = float(rng.choice([0.5, 1 / 3, 2.0, 3.0, 1.3, 0.7]))
        f_notch = f_pass * ratio
        w_pass = f_pass * float(rng.uniform(0.002, 0.04))
        w_notch = f_notch * float(rng.uniform(0.0005, 0.03))
        r = req([(f_pass - w_pass / 2, f_pass + w_pass / 2)],
                [(f_notch - w_notch / 2, f_notch + w_notch / 2, float(rng.uniform(15.0, 40.0)))])
        out.append(r)
    return out


@pytest.mark.parametrize("r", _random_requests(5), ids=lambda r: f"{r.notches[0].lo_mhz:.1f}MHz")
def test_solver_contract_on_random_requests(r, rg213):
    msgs = []
    sol = solve(r, cable=rg213, limits=Limits(max_stubs=2), tee_allowance_m=TEE, progress=msgs.append)
    assert msgs and all(isinstance(m, str) for m in msgs)
    # meets is exactly "every verified band meets"
    assert sol.meets == (all(p.meets for p in sol.passes) and all(n.meets for n in sol.notches))
    for p in sol.passes:
        assert p.meets == (p.worst_insertion_loss_db <= 0.5 and p.worst_swr <= 1.5)
    # the reported worst figures are what an independent evaluation gives (Pozar table 4.1 ABCD path)
    for b, p in zip(r.pass_bands, sol.passes, strict=True):
        s = evaluate(sol.filter, np.linspace(b.lo_mhz, b.hi_mhz, 301) * 1e6)
        assert -db20(s[:, 1, 0]).min() == pytest.approx(p.worst_insertion_loss_db, abs=0.1)
    for n, res in zip(r.notches, sol.notches, strict=True):
        s = evaluate(sol.filter, np.linspace(n.lo_mhz, n.hi_mhz, 301) * 1e6)
        assert -db20(s[:, 1, 0]).max() == pytest.approx(res.worst_attenuation_db, abs=0.1)
    # limits on every element
    assert len(sol.filter.stubs) <= 2
    assert sol.filter.total_cable_m <= sol.max_total_cable_m + 1e-9
    for e in sol.filter.elements:
        assert e.length_m >= (0.05 if e.kind == "line" else TEE + MIN_CUT_M) - 1e-12


@pytest.mark.parametrize("seed", range(20))
def test_unique_rows_equals_numpy_unique_along_rows(seed):
    # numpy's own np.unique(axis=0) is the reference: the same rows, the same order.
    from notchkit.solver import _unique_rows

    rng = np.random.default_rng(seed)
    rows = np.round(rng.uniform(0.0, 3.0, size=(int(rng.integers(1, 300)), int(rng.integers(1, 6)))), 1)
    rows = np.concatenate([rows, rows[: rows.shape[0] // 2]])  # repeats, some far apart
    np.testing.assert_array_equal(_unique_rows(rows), np.unique(rows, axis=0))


# ---------------------------------------------------------------- search misses (regression)

# A transmitter filter on a crowded VHF/UHF hilltop (the fictional example's weather
# transmitter): pass 162.475 MHz, five notches from 12 to 43 dB, at most three stubs.
# An earlier search met it with the design below; a later one, after a child kept its
# parent's second stub where the third stub's optimum needs it elsewhere, stopped 0.5 dB
# short. The reference design is checked with scikit-rf's own media, not notchkit's model.
WX_PASS = [(162.469, 162.481)]
WX_NOTCHES = [(117.995835, 137.004165, 12.1), (146.332, 146.348, 15.8), (444.092, 444.108, 42.9),
              (449.092, 449.108, 19.2), (460.244375, 460.255625, 24.0)]
WX_REFERENCE = (("open", "line", "short", "line", "short"), (0.111, 0.050, 1.359, 0.363, 0.805))


def _skrf_meets(kinds, lengths, cable, notches, passes, il_max=0.5, swr_max=1.5):
    """Every notch and pass band checked on a 201-point sweep of scikit-rf's network
    (DefinedGammaZ0 with the cable's loss and velocity factor; shunt_delay_open/short, line)."""
    from tests.test_filters_skrf import skrf_reference

    ok = []
    for lo, hi, need in notches:
        f = np.linspace(lo, hi, 201) * 1e6
        s = skrf_reference(kinds, lengths, cable, f, 50.0)
        ok.append(float(np.min(-db20(s[:, 1, 0]))) >= need)
    for lo, hi in passes:
        f = np.linspace(lo, hi, 201) * 1e6
        s = skrf_reference(kinds, lengths, cable, f, 50.0)
        ok.append(float(np.max(-db20(s[:, 1, 0]))) <= il_max)
        ok.append(float(np.max(swr_from_s11(s[:, 0, 0]))) <= swr_max)
    return all(ok)


def test_search_finds_a_design_that_a_reference_design_shows_exists(rg213):
    from notchkit.site.model import Allowances

    kinds, lengths = WX_REFERENCE
    # the requirement can be met: the reference design meets it in scikit-rf's model
    assert _skrf_meets(kinds, lengths, rg213, WX_NOTCHES, WX_PASS)
    allowances = Allowances(tee_allowance_m=0.035, cut_tolerance_mm=1.5, vf_spread=0.01)
    sol = solve(req(WX_PASS, WX_NOTCHES), cable=rg213, tee_allowance_m=0.035, allowances=allowances,
                limits=Limits(max_insertion_loss_db=0.5, max_swr=1.5, max_stubs=3, max_total_cable_m=12))
    assert sol.meets
    # and what the solver found meets in scikit-rf's model too
    assert _skrf_meets(sol.filter.kinds, sol.filter.lengths_m, rg213,
                       WX_NOTCHES, WX_PASS)


def test_a_design_that_meets_as_designed_ranks_before_any_that_does_not():
    from types import SimpleNamespace

    from notchkit.solver import _ranked

    def v(meets, build_yield, margin, viol, n_stubs=1, cable=1.0):
        filt = SimpleNamespace(stubs=(None,) * n_stubs, total_cable_m=cable)
        return SimpleNamespace(meets=meets, build_yield=build_yield, viol=viol, score=margin, filt=filt,
                               notches=(SimpleNamespace(margin_db=margin),))

    fragile = v(True, 0.05, 0.1, 0.0, n_stubs=3, cable=5.0)
    near_miss = v(False, None, -0.01, 0.01, n_stubs=1, cable=0.2)
    robust = v(True, 0.95, 3.0, 0.0, n_stubs=3, cable=6.0)
    assert _ranked([near_miss, fragile], 0.9, 15.0) == [fragile, near_miss]
    assert _ranked([near_miss, fragile, robust], 0.9, 15.0) == [robust, fragile, near_miss]
