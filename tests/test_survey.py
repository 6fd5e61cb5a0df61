"""Tests of the site survey (notchkit.survey) against outside sources.

Sources named beside each check value:
- ITU-R Recommendation P.525 (free-space loss).
- Site-engineering antenna isolation formulas (horizontal 22 + 20log(d/lambda) - G,
  vertical 28 + 40log(d/lambda), slant interpolation), as published in repeater and
  cellular installation notes.
- SI 2019 (Boltzmann constant) for kTB.
- 47 CFR 97.307(d)/(e) (US amateur spurious-emission limits); ITU-R SM.329 (from memory).
- Hand arithmetic on amateur band edges (47 CFR 97.301 band plan: 80 m 3.5-4.0, 40 m
  7.0-7.3, 20 m 14.0-14.35, 15 m 21.0-21.45, 6 m 50-54, 2 m 144-148, 70 cm 420-450 MHz).
"""

from __future__ import annotations

import itertools
import json
import math

import numpy as np
import pytest

from notchkit.cables import get_cable
from notchkit.errors import SiteError, UsageError
from notchkit.site.model import (
    Antenna,
    Band,
    Coupling,
    Feedline,
    Limits,
    Radio,
    Receive,
    Site,
    Transmit,
)
from notchkit.threats import (
    KTB_DBM_PER_HZ,
    free_space_loss_db,
    horizontal_isolation_db,
    noise_floor_dbm,
    slant_isolation_db,
    spurious_suppression_dbc,
    survey,
    vertical_isolation_db,
)
from notchkit.threats.isolation import estimate_isolation_db
from notchkit.threats.products import THREE_TONE


def band(lo, hi=None):
    return Band(lo_mhz=lo, hi_mhz=lo if hi is None else hi)


def tx(lo, hi=None, power_w=50.0, **kw):
    return Transmit(band=band(lo, hi), power_w=power_w, **kw)


def rx(lo, hi=None, **kw):
    return Receive(band=band(lo, hi), **kw)


def radio(name, t=None, r=None, x=0.0, h=10.0, g=0.0, **kw):
    return Radio(name=name, tx=t, rx=r, antenna=Antenna(x_m=x, height_m=h, gain_dbi=g), **kw)


NO_CEILING = {"max_stub_rejection_db": 200.0}
"""The mechanism tests below look at levels and notches, not at the stub ceiling
(tests/test_survey_operating.py checks that)."""


def site(*radios, couplings=(), **kw):
    kw.setdefault("limits", Limits(**NO_CEILING))
    kw.setdefault("depth_ceiling_db", 200.0)  # the survey's filter ceiling is the site's depth ceiling
    return Site(name="Test Hill", cable="RG-213", radios=tuple(radios), couplings=couplings, **kw)


def find(result, mechanism, victim, order=None, sources=None):
    out = [
        t
        for t in result.threats
        if t.mechanism == mechanism
        and t.victim == victim
        and (order is None or t.order == order)
        and (sources is None or set(t.sources) == set(sources))
    ]
    return out


# ---------------------------------------------------------------- isolation


def test_free_space_loss_itu_p525_check_values():
    # ITU-R P.525: L = 32.45 + 20log f(MHz) + 20log d(km); 1 km at 100 MHz = 72.45 dB
    assert free_space_loss_db(100.0, 1000.0) == pytest.approx(72.45, abs=1e-9)
    # 10 km at 1000 MHz = 32.45 + 60 + 20 = 112.45 dB (same formula, by hand)
    assert free_space_loss_db(1000.0, 10_000.0) == pytest.approx(112.45, abs=1e-9)
    # doubling distance adds 20log10(2) = 6.02 dB (inverse-square law)
    assert free_space_loss_db(146.0, 200.0) - free_space_loss_db(146.0, 100.0) == pytest.approx(
        6.0206, abs=1e-4
    )


def test_horizontal_isolation_agrees_with_free_space_friis():
    # I_h = 22 + 20log(d/lambda) - (Ga+Gb): 22 ~ 20log10(4*pi) = 21.98, so I_h equals
    # the P.525 free-space loss minus the gains to within 0.03 dB (Friis, textbook).
    f, d = 146.0, 30.0
    ih = horizontal_isolation_db(f, d, 3.0, 2.0)
    assert ih == pytest.approx(free_space_loss_db(f, d) - 5.0, abs=0.03)
    assert 20 * math.log10(4 * math.pi) == pytest.approx(21.98, abs=0.005)


def test_vertical_isolation_published_table():
    # Vertical separation 28 + 40log(d/lambda): d = 1, 2, 10 lambda -> 28, 40, 68 dB
    # (the published table of the formula rounds 40log2 = 12.04 to 12).
    lam = 299.792458 / 147.0
    assert vertical_isolation_db(147.0, lam) == pytest.approx(28.0, abs=1e-9)
    assert vertical_isolation_db(147.0, 2 * lam) == pytest.approx(40.04, abs=0.01)
    assert vertical_isolation_db(147.0, 10 * lam) == pytest.approx(68.0, abs=1e-9)
    # worked example in the same note: 147 MHz, 3 m apart -> about 35 dB
    assert vertical_isolation_db(147.0, 3.0) == pytest.approx(34.7, abs=0.3)


def test_slant_isolation_interpolates_by_angle():
    # slant: I_h + (I_v - I_h) * theta/90; at 45 degrees it is the mean of I_h and I_v
    f, d = 440.0, 5.0
    ih = horizontal_isolation_db(f, d, 0.0, 0.0)
    iv = vertical_isolation_db(f, d)
    assert slant_isolation_db(f, d, d, 0.0, 0.0) == pytest.approx(0.5 * (ih + iv), abs=1e-9)


def test_estimate_picks_formula_by_geometry_and_stays_finite():
    iso, method = estimate_isolation_db(
        [146.0, 146.0, 146.0, 146.0], [20.0, 0.0, 0.0, 10.0], [0.0, 6.0, 0.0, 10.0], 0.0, 0.0
    )
    assert iso[0] == pytest.approx(free_space_loss_db(146.0, 20.0), abs=1e-9)
    assert iso[1] == pytest.approx(vertical_isolation_db(146.0, 6.0), abs=1e-9)
    assert np.all(np.isfinite(iso))
    assert iso[2] == 0.0  # co-located: the passive floor (cannot couple better than 0 dB)
    assert list(method) == [2, 3, 1, 4]


# ---------------------------------------------------------------- thresholds and limits


def test_ktb_from_si_boltzmann():
    # k = 1.380649e-23 J/K (SI 2019, exact); 10log10(k*290*1000) = -173.98 dBm/Hz
    assert KTB_DBM_PER_HZ == pytest.approx(
        10 * math.log10(1.380649e-23 * 290 * 1000), abs=1e-12
    )
    assert KTB_DBM_PER_HZ == pytest.approx(-173.98, abs=0.005)
    assert KTB_DBM_PER_HZ == pytest.approx(-174.0, abs=0.05)  # the rounded figure (common practice)
    # 16 kHz FM channel, NF 8 dB: -173.98 + 8 + 42.04 = -123.94 dBm
    assert noise_floor_dbm(8.0, 16.0) == pytest.approx(-123.94, abs=0.01)


@pytest.mark.parametrize(
    ("freq_mhz", "power_w", "expected_db"),
    [
        (7.15, 100.0, 43.0),  # 47 CFR 97.307(d): below 30 MHz, at least 43 dB
        (14.2, 1500.0, 43.0),  # 97.307(d): independent of power
        (146.52, 100.0, 60.0),  # 97.307(e): 30-225 MHz, above 25 W: 60 dB
        (146.52, 25.0, 60.0),  # 97.307(e): 25 W, spur <= 25 uW: 10log(25/25e-6) = 60 dB
        (146.52, 5.0, 10 * math.log10(5.0 / 25e-6)),  # 25 uW cap: 53.01 dB
        (146.52, 0.2, 40.0),  # 40 dB below (20 uW < 25 uW)
        (146.52, 0.05, 50 + 10 * math.log10(0.05)),  # need not be below 10 uW: 36.99 dB
        (440.0, 50.0, 43 + 10 * math.log10(50.0)),  # ITU-R SM.329 Cat. A (from memory): 59.99
        (440.0, 1000.0, 70.0),  # SM.329: 70 dBc is less stringent than 43 + 30 = 73
    ],
)
def test_spurious_defaults_reproduce_published_rules(freq_mhz, power_w, expected_db):
    value, source = spurious_suppression_dbc(freq_mhz, power_w)
    assert value == pytest.approx(expected_db, abs=1e-9)
    assert source.startswith("default:")


# ---------------------------------------------------------------- harmonics


def test_harmonic_coincidences_come_from_band_arithmetic():
    # Each transmitter and receiver on its own mast far apart; 2.7 kHz SSB bandwidth on HF.
    ssb = {"bandwidth_khz": 2.7}
    s = site(
        radio("tx80", t=tx(3.5, 4.0, 100, **ssb), x=0),
        radio("tx40", t=tx(7.0, 7.3, 100, **ssb), x=1000),
        radio("tx6", t=tx(50.0, 54.0, 100), x=2000),
        radio("tx2", t=tx(146.52, power_w=50), x=3000),
        radio("rx40", r=rx(7.0, 7.3, **ssb), x=4000),
        radio("rx20", r=rx(14.0, 14.35, **ssb), x=5000),
        radio("rx15", r=rx(21.0, 21.45, **ssb), x=6000),
        radio("rx2", r=rx(144.0, 148.0), x=7000),
        radio("rx70", r=rx(420.0, 450.0), x=8000),
    )
    res = survey(s)
    got = {(t.sources[0], t.victim, t.order) for t in res.threats if t.mechanism == "harmonic"}
    # By hand (widening each band by half its channel bandwidth, 1.35 kHz on HF, 8 kHz VHF/UHF):
    #   tx2: 146.52 x 3 = 439.56 in 420-450 (70 cm)
    #   tx40: 7.0-7.3 x 2 = 14.0-14.6 overlaps 14.0-14.35; x 3 = 21.0-21.9 overlaps 21.0-21.45
    #   tx80: 3.5-4.0 x 2 = 7.0-8.0 overlaps 7.0-7.3; x 4 = 14.0-16.0 overlaps 14.0-14.35;
    #         x 5 = 17.5-20.0 misses; x 3 = 10.5-12.0 misses
    #   tx40 x 4 = 28.0-29.2, x 5 = 35-36.5: miss every receiver
    #   tx6: 50-54 x 3 = 150-162 vs 144-148: no overlap (149.976 > 148.008); x 8 not evaluated
    #   tx2 x 2 = 293.04, x 4 = 586.08, x 5 = 732.6: miss
    #   tx6 x 2 = 100-108, x 4 = 200-216, x 5 = 250-270: miss
    expected = {
        ("tx2", "rx70", 3),
        ("tx40", "rx20", 2),
        ("tx40", "rx15", 3),
        ("tx80", "rx40", 2),
        ("tx80", "rx20", 4),
    }
    assert got == expected
    (h70,) = find(res, "harmonic", "rx70", 3)
    assert h70.f_mhz == pytest.approx(439.56, abs=1e-9)  # 146.52 * 3
    (h20,) = find(res, "harmonic", "rx20", 2, ["tx40"])
    # overlap of 2*[6.99865, 7.30135] = [13.9973, 14.6027] with [13.99865, 14.35135]
    assert (h20.f_lo_mhz, h20.f_hi_mhz) == pytest.approx((13.99865, 14.35135), abs=1e-9)
    (h15,) = find(res, "harmonic", "rx15", 3)
    # 3*[6.99865, 7.30135] = [20.99595, 21.90405] with [20.99865, 21.45135]
    assert (h15.f_lo_mhz, h15.f_hi_mhz) == pytest.approx((20.99865, 21.45135), abs=1e-9)
    (h40,) = find(res, "harmonic", "rx40", 2)
    # 2*[3.49865, 4.00135] = [6.9973, 8.0027] with [6.99865, 7.30135]
    assert (h40.f_lo_mhz, h40.f_hi_mhz) == pytest.approx((6.99865, 7.30135), abs=1e-9)


def test_six_metre_third_harmonic_reaches_two_metres_only_when_widened():
    # 50-54 x 3 = 150-162; a 2 m receiver widened to 149.98-150.02 (40 kHz) catches the edge
    s = site(radio("tx6", t=tx(50.0, 54.0, 100)), radio("rx", r=rx(150.0, bandwidth_khz=40.0), x=50))
    (t,) = find(survey(s), "harmonic", "rx", 3)
    # 3 * (50 - 0.008) = 149.976; overlap with [149.98, 150.02] is [149.98, 150.02]
    assert (t.f_lo_mhz, t.f_hi_mhz) == pytest.approx((149.98, 150.02), abs=1e-9)


def test_max_harmonic_override():
    s = site(radio("tx80", t=tx(3.5, 4.0, 100)), radio("rx20", r=rx(14.0, 14.35), x=500))
    assert find(survey(s), "harmonic", "rx20", 4)  # 4 * 3.5-4.0 = 14-16
    assert not find(survey(s, max_harmonic=3), "harmonic", "rx20")
    with pytest.raises(UsageError, match="max_harmonic: 0"):
        survey(s, max_harmonic=0)


# ---------------------------------------------------------------- levels


def test_levels_are_power_minus_losses_with_measured_coupling():
    coupling = (Coupling(a="A", b="B", isolation_db=40.0),)
    s = site(
        radio("A", t=tx(146.52, power_w=100, harmonic_suppression_dbc=65.0)),
        radio("B", r=rx(420.0, 450.0, sensitivity_dbm=-120.0, blocking_dbm=-25.0), x=3),
        couplings=coupling,
    )
    res = survey(s)
    p = 10 * math.log10(100 * 1000)  # 100 W = 50 dBm
    (fund,) = find(res, "fundamental", "B")
    assert fund.level_dbm == pytest.approx(p - 40.0, abs=1e-9)  # no feedline given: 0 dB
    assert fund.threshold_dbm == -25.0
    assert fund.isolation_method.startswith("measured")
    (harm,) = find(res, "harmonic", "B", 3)
    assert harm.level_dbm == pytest.approx(p - 65.0 - 40.0, abs=1e-9)
    assert harm.threshold_dbm == -120.0
    assert any("0 dB feedline loss" in n for n in res.notes)
    for t in res.threats:  # sum of levels: excess = level - threshold
        assert t.excess_db == pytest.approx(t.level_dbm - t.threshold_dbm, abs=1e-9)
        assert t.required_db == pytest.approx(t.excess_db + 6.0, abs=1e-9)


def test_feedline_loss_from_cable_model():
    s = site(
        radio("A", t=tx(146.52, power_w=100), feedline=Feedline(cable="RG-213", length_m=30.0)),
        radio("B", r=rx(439.0, 440.0), x=20.0, feedline=Feedline(cable="RG-58", length_m=10.0)),
    )
    (h,) = find(survey(s), "harmonic", "B", 3)
    f = h.f_lo_mhz  # the path is evaluated at the low edge of the overlap (conservative)
    assert f == pytest.approx(3 * 146.512)  # 146.52 widened by 8 kHz, times 3
    loss = (
        get_cable("RG-213").loss_db_per_100m(f) * 0.30 + get_cable("RG-58").loss_db_per_100m(f) * 0.10
    )
    iso = free_space_loss_db(h.f_lo_mhz, 20.0)  # horizontal spacing, 0 dBi: ITU-R P.525
    supp = 60.0  # 47 CFR 97.307(e), 100 W on 2 m
    assert h.level_dbm == pytest.approx(50.0 - supp - float(loss) - float(iso), abs=0.01)


def test_noise_level_and_threshold():
    # P + noise(dBc/Hz) + 10log10(B) - isolation vs kTB + NF + 10log10(B)
    s = site(
        radio("A", t=tx(146.52, power_w=50, noise_dbc_hz=-150.0)),
        radio("B", r=rx(155.0, noise_figure_db=6.0), x=10.0),
        couplings=(Coupling(a="A", b="B", isolation_db=30.0),),
    )
    (n,) = find(survey(s), "noise", "B")
    p = 10 * math.log10(50e3)
    assert n.level_dbm == pytest.approx(p - 150.0 + 10 * math.log10(16e3) - 30.0, abs=1e-9)
    assert n.threshold_dbm == pytest.approx(-173.98 + 6.0 + 10 * math.log10(16e3), abs=0.01)


def test_colocated_antennas_give_finite_json():
    s = site(
        radio("A", t=tx(146.52), r=rx(146.52)),
        radio("B", t=tx(446.0), r=rx(446.0)),
        radio("C", r=rx(439.56)),
    )
    res = survey(s)
    text = json.dumps(res.to_json(), allow_nan=False)
    assert "Infinity" not in text
    for t in res.threats:
        assert math.isfinite(t.isolation_db) and "co-located" in t.isolation_method


# ---------------------------------------------------------------- transceivers, filters


def test_transceiver_does_not_threaten_its_own_receiver():
    s = site(radio("R", t=tx(146.94), r=rx(146.34)), radio("U", r=rx(439.0, 440.0), x=30))
    res = survey(s)
    assert not [t for t in res.threats if t.victim == "R" and "R" in t.sources]
    assert any("duplexer" in n for n in res.notes)


def test_rx_side_notch_for_fundamental_and_pass_bands():
    s = site(
        radio("V", t=tx(146.52, power_w=50)),
        radio("U", t=tx(446.0, power_w=5), r=rx(446.0), x=2.0, stub_cable="RG-58"),
    )
    res = survey(s)
    (f,) = find(res, "fundamental", "U")
    # U is a transceiver: its one filter (at the radio port, labelled tx) takes the rx-side notch
    assert f.excess_db > 0 and f.filters == (("U", "tx"),)
    req = next(r for r in res.filters if (r.radio, r.side) == ("U", "tx"))
    # pass band: the transceiver's tx/rx 446.0 widened by 8 kHz each side (one band, merged)
    assert [x for b in req.pass_bands for x in (b.lo_mhz, b.hi_mhz)] == pytest.approx([445.992, 446.008])
    assert req.cable == "RG-58" and req.power_w == 5
    assert [x for n in req.notches for x in (n.lo_mhz, n.hi_mhz)] == pytest.approx([146.512, 146.528])
    assert req.notches[0].required_db == pytest.approx(f.excess_db + 6.0)


def test_too_close_gives_no_notch_and_says_so():
    # 146.52 vs 147.00: 0.33 % apart, far inside the 3 % rule
    s = site(radio("V", t=tx(146.52, power_w=50)), radio("W", r=rx(147.0), x=3.0))
    (f,) = find(survey(s), "fundamental", "W")
    assert f.excess_db > 0
    assert f.filters == () and f.remedy.startswith("no stub") and "cavities" in f.remedy
    assert survey(s).filters == ()


def test_notches_merge_overlapping_bands():
    # Two receivers whose bands overlap get 3rd harmonics of one transmitter: one notch.
    s = site(
        radio("V", t=tx(146.0, 148.0, power_w=100)),
        radio("U1", r=rx(438.0, 441.0), x=5.0),
        radio("U2", r=rx(440.0, 445.0), x=10.0),
    )
    res = survey(s)
    req = next(r for r in res.filters if (r.radio, r.side) == ("V", "tx"))
    harm = [t for t in res.threats if t.mechanism == "harmonic"]
    assert len(harm) == 2 and len(req.notches) == 1
    n = req.notches[0]
    assert n.lo_mhz == pytest.approx(min(t.f_lo_mhz for t in harm))
    assert n.hi_mhz == pytest.approx(max(t.f_hi_mhz for t in harm))
    assert n.required_db == pytest.approx(max(t.required_db for t in harm))


def test_negative_excess_listed_without_notch():
    s = site(
        radio("V", t=tx(146.52, power_w=1, harmonic_suppression_dbc=90)),
        radio("U", r=rx(439.0, 440.0, sensitivity_dbm=-100.0, blocking_dbm=0.0), x=3000.0),
        limits=Limits(rejection_margin_db=10.0, **NO_CEILING),
    )
    res = survey(s)
    assert res.threats and all(t.excess_db < 0 for t in res.threats)
    assert res.filters == ()
    assert all(t.remedy.startswith("none needed") for t in res.threats)
    assert all(t.required_db == pytest.approx(t.excess_db + 10.0) for t in res.threats)


# ---------------------------------------------------------------- intermod


def test_intermod_worked_examples():
    # 2*146.52 - 147.00 = 146.04; 2*147.00 - 146.52 = 147.48; 3*146.52 - 2*147.00 = 145.56;
    # three tones 146.52 + 147.00 - 147.30 = 146.22 (hand arithmetic)
    s = site(
        radio("A", t=tx(146.52)),
        radio("B", t=tx(147.00), x=10),
        radio("C", t=tx(147.30), x=400, h=60),
        radio("R1", r=rx(146.04), x=20),
        radio("R2", r=rx(147.48), x=30),
        radio("R3", r=rx(145.56), x=40),
        radio("R4", r=rx(146.22), x=50),
    )
    res = survey(s)
    (a,) = find(res, "intermod", "R1", 3, ["A", "B"])
    assert a.f_mhz == pytest.approx(146.04, abs=1e-9) and a.product == "2*A - B"
    (b,) = find(res, "intermod", "R2", 3, ["A", "B"])
    assert b.f_mhz == pytest.approx(147.48, abs=1e-9)
    (c,) = find(res, "intermod", "R3", 5, ["A", "B"])
    assert c.f_mhz == pytest.approx(145.56, abs=1e-9)
    (d,) = find(res, "intermod", "R4", 3, ["A", "B", "C"])
    assert d.f_mhz == pytest.approx(146.22, abs=1e-9)
    # all of these are 2 m products in 2 m transmitters: too close for stubs at the mixer
    assert all(t.filters == () for t in (a, b, c, d))
    out = res.to_json()["threats"]
    assert any(isinstance(t["source"], list) and t["mechanism"] == "intermod" for t in out)


def test_intermod_level_model():
    # product = P_other - isolation(other->mixer) - conversion - isolation(mixer->victim)
    s = site(
        radio("A", t=tx(146.52, power_w=50, im_conversion_db=12.0)),
        radio("B", t=tx(447.0, power_w=50, im_conversion_db=12.0), x=1),
        # intercept points high enough that the receiver's own front end is not the worst route
        radio("R", r=rx(2 * 447.0 - 146.52, iip2_dbm=100.0, iip3_dbm=60.0), x=2),
        couplings=(
            Coupling(a="A", b="B", isolation_db=30.0),
            Coupling(a="B", b="R", isolation_db=35.0),
            Coupling(a="A", b="R", isolation_db=50.0),
        ),
    )
    res = survey(s)
    (t,) = find(res, "intermod", "R", 3)
    p = 10 * math.log10(50e3)
    # mixer B: A arrives at p - 30, converts with 12 dB, leaves through 35 dB to R
    # mixer A: B arrives at p - 30, converts with 12 dB, leaves through 50 dB: weaker
    assert t.mixer == "B" and t.route == "transmitter"
    assert t.level_dbm == pytest.approx(p - 30 - 12 - 35, abs=1e-9)
    # a stub at B's output notching A's 2 m fundamental (3x away from B's 447 MHz)
    assert ("B", "tx") in t.filters
    req = next(r for r in res.filters if (r.radio, r.side) == ("B", "tx"))
    assert [x for n in req.notches for x in (n.lo_mhz, n.hi_mhz)] == pytest.approx([146.512, 146.528])
    # depth: the route through mixer B's excess plus the 6 dB margin (site default)
    assert req.notches[0].required_db == pytest.approx(t.excess_db + 6.0, abs=1e-9)


def _brute_force_products(freqs, rx_bands, max_order=5):
    """Independent reference: every product of 2 and 3 transmitters by plain loops over all
    integer coefficient vectors (every coefficient non-zero, sum |c| = 2..max_order; c and -c
    are one product: the frequency |sum c f| is the same), channels only."""
    hits = set()
    names = list(freqs)
    for k in (2, 3):
        for combo in itertools.combinations(names, k):
            seen = set()
            for c in itertools.product(range(-max_order, max_order + 1), repeat=k):
                if 0 in c or not 2 <= sum(map(abs, c)) <= max_order:
                    continue
                canon = max(c, tuple(-x for x in c))
                if canon in seen:
                    continue
                seen.add(canon)
                f = abs(sum(ci * freqs[n] for ci, n in zip(c, combo, strict=True)))
                for v, (lo, hi) in rx_bands.items():
                    if lo - 0.008 <= f <= hi + 0.008:
                        hits.add((frozenset(combo), v, sum(map(abs, c)), round(f, 6)))
    return hits


def test_intermod_enumeration_matches_brute_force():
    rng = np.random.default_rng(20260)
    freqs = {f"T{i}": float(np.round(rng.uniform(144.0, 148.0), 3)) for i in range(7)}
    rx_bands = {f"R{i}": (lo, lo + 0.5) for i, lo in enumerate(rng.uniform(140.0, 152.0, 6))}
    radios = [radio(n, t=tx(f, bandwidth_khz=1e-6), x=10.0 * k) for k, (n, f) in enumerate(freqs.items())]
    radios += [
        radio(n, r=Receive(band=band(lo, hi), bandwidth_khz=16.0), x=500.0 + 10 * k)
        for k, (n, (lo, hi)) in enumerate(rx_bands.items())
    ]
    res = survey(site(*radios))
    got = {
        (frozenset(t.sources), t.victim, t.order, round(t.f_mhz, 6))
        for t in res.threats
        if t.mechanism == "intermod"
    }
    expected = _brute_force_products(freqs, rx_bands)
    assert len(expected) > 10
    assert got == expected


# ---------------------------------------------------------------- output


def test_sorted_matrix_and_json_keys():
    s = site(
        radio("V", t=tx(146.52, power_w=50)),
        radio("U", t=tx(446.0, power_w=40), r=rx(439.0, 440.0), x=4.0),
        radio("H", r=rx(14.0, 14.35), x=40.0),
    )
    res = survey(s)
    ex = [t.excess_db for t in res.threats]
    assert ex == sorted(ex, reverse=True)
    m = res.matrix()
    for t in res.threats:
        for src in t.sources:
            assert m.worst(src, t.victim) >= t.excess_db
    data = json.loads(json.dumps(res.to_json(), allow_nan=False))
    for t in data["threats"]:
        assert {"source", "victim", "mechanism", "order", "f_mhz", "excess_db"} <= set(t)
        assert t["mechanism"] in {"fundamental", "harmonic", "intermod", "noise", "blocking"}
    for f in data["filters"]:
        assert {"radio", "side", "pass", "notch"} <= set(f) and f["side"] in {"tx", "rx"}
        for n in f["notch"]:
            assert {"lo_mhz", "hi_mhz", "required_db"} <= set(n) and n["required_db"] > 0


def test_bad_values_raise_site_error_naming_the_field():
    s = site(radio("V", t=tx(146.52, power_w=0.0)), radio("U", r=rx(440.0), x=4.0))
    with pytest.raises(SiteError, match=r"radios\[0\]\.tx\.power_w: 0\.0 must be > 0 W"):
        survey(s)


def test_non_finite_figures_refused():
    s = site(radio("V", t=tx(146.52)), radio("U", r=rx(440.0, sensitivity_dbm=float("inf")), x=4.0))
    with pytest.raises(SiteError, match=r"radios\[1\]\.rx\.sensitivity_dbm: inf must be a finite"):
        survey(s)


def test_random_sites_stay_finite_and_consistent():
    # Property check over seeded random sites: co-located and stacked antennas, ranges and
    # channels, transceivers; every number finite, excess = level - threshold, sorted.
    rng = np.random.default_rng(4242)
    bands = [(3.5, 4.0), (7.0, 7.3), (14.0, 14.35), (50.0, 54.0), (144.0, 148.0), (420.0, 450.0)]
    for _ in range(5):
        radios = []
        for i in range(8):
            lo, hi = bands[int(rng.integers(len(bands)))]
            if rng.random() < 0.5:
                lo = hi = round(float(rng.uniform(lo, hi)), 3)
            t = tx(lo, hi, power_w=float(rng.choice([5, 50, 100, 1500])),
                   noise_dbc_hz=-145.0) if rng.random() < 0.7 else None  # fmt: skip
            r = rx(lo, hi) if (t is None or rng.random() < 0.5) else None
            xy = float(rng.choice([0.0, 3.0, 25.0]))
            radios.append(radio(f"N{i}", t=t, r=r, x=xy, h=float(rng.choice([10.0, 10.0, 14.0]))))
        res = survey(site(*radios))
        json.dumps(res.to_json(), allow_nan=False)
        ex = [t.excess_db for t in res.threats]
        assert ex == sorted(ex, reverse=True)
        for t in res.threats:
            assert math.isfinite(t.level_dbm) and math.isfinite(t.isolation_db)
            assert t.excess_db == pytest.approx(t.level_dbm - t.threshold_dbm, abs=1e-9)
            assert t.isolation_db >= 0.0  # passive floor
            assert (t.excess_db > 0) or not t.filters


def test_intermod_of_tuning_ranges_by_interval_arithmetic():
    # 2 x [14.0, 14.35] - [21.0, 21.45] = [28.0 - 21.45, 28.7 - 21.0] = [6.55, 7.7] MHz,
    # which overlaps 40 m (7.0-7.3). With 2.7 kHz SSB widening (1.35 kHz each edge):
    # 2 x [13.99865, 14.35135] - [20.99865, 21.45135] = [6.54595, 7.70405]; the part in the
    # widened receiver band [6.99865, 7.30135] is the whole receiver band.
    ssb = {"bandwidth_khz": 2.7}
    s = site(
        radio("T20", t=tx(14.0, 14.35, 100, **ssb)),
        radio("T15", t=tx(21.0, 21.45, 100, **ssb), x=40.0),
        radio("R40", r=rx(7.0, 7.3, **ssb), x=80.0),
    )
    res = survey(s)
    got = [t for t in find(res, "intermod", "R40", 3) if t.product == "2*T20 - T15"]
    assert len(got) == 1
    t = got[0]
    assert (t.f_lo_mhz, t.f_hi_mhz) == pytest.approx((6.99865, 7.30135), abs=1e-9)
    assert t.f_mhz == pytest.approx(7.15, abs=1e-9)  # band centre for ranges


def test_too_close_rule_boundary():
    from notchkit.threats.locations import TOO_CLOSE_FRACTION, too_close

    # pass 100 MHz (a point): a notch 2.9 MHz away is too close, 3.1 MHz away is not (3 % rule)
    assert TOO_CLOSE_FRACTION == 0.03
    assert too_close(102.9, 103.0, [(100.0, 100.0)]) == (100.0, 100.0)
    assert too_close(103.1, 104.0, [(100.0, 100.0)]) is None
    assert too_close(99.0, 101.0, [(100.0, 100.0)]) == (100.0, 100.0)  # overlapping


def test_carrier_inside_receiver_band_uses_sensitivity_and_no_filter():
    s = site(
        radio("T", t=tx(146.52, power_w=5)),
        radio("R", r=rx(144.0, 148.0, sensitivity_dbm=-118.0), x=50.0),
    )
    (f,) = find(survey(s), "fundamental", "R")
    assert f.threshold_dbm == -118.0 and "inside" in f.threshold_source
    assert f.filters == () and "no filter can separate" in f.remedy


def test_interval_arithmetic_bounds_every_point_product():
    # Property (interval arithmetic, textbook): for f_i in [lo_i, hi_i], |sum c_i f_i| lies in
    # the computed interval, and the interval's ends are reached at band corners.
    from notchkit.threats.products import combine

    rng = np.random.default_rng(99)
    lo = rng.uniform(1.0, 500.0, size=(50, 3))
    hi = lo + rng.uniform(0.0, 30.0, size=(50, 3))
    plo, phi = combine(THREE_TONE, lo, hi)
    f = lo[:, None, :] + (hi - lo)[:, None, :] * rng.random((50, 200, 3))
    for c in range(len(THREE_TONE)):
        vals = np.abs(f @ THREE_TONE[c])  # (50, 200)
        assert np.all(vals >= plo[:, c, None] - 1e-9) and np.all(vals <= phi[:, c, None] + 1e-9)
    corners = np.array(list(itertools.product((0, 1), repeat=3)))
    pts = np.where(corners[None, :, :] == 0, lo[:, None, :], hi[:, None, :])  # (50, 8, 3)
    for c in range(len(THREE_TONE)):
        raw = pts @ THREE_TONE[c]
        straddles = (raw.min(axis=1) < 0) & (raw.max(axis=1) > 0)
        top = np.abs(raw).max(axis=1)
        bottom = np.where(straddles, 0.0, np.abs(raw).min(axis=1))
        assert np.allclose(phi[:, c], top) and np.allclose(plo[:, c], bottom)


def test_simplex_radio_is_no_victim_of_products_of_its_own_carrier():
    # Worked example: 439.55 - 2 x 146.52 = 146.51 MHz, inside a 146.52 channel widened by
    # 8 kHz each side (146.512-146.528). A simplex radio cannot receive while it sends: no threat.
    simplex = site(radio("A", t=tx(146.52), r=rx(146.52)), radio("U", t=tx(439.55), x=20.0))
    assert not [t for t in survey(simplex).threats if t.mechanism == "intermod" and t.victim == "A"]
    # A duplex radio (tx 146.52, rx 146.40) does hear the product of its own carrier formed in
    # the neighbour's output stage: 439.44 - 2 x 146.52 = 146.40 MHz.
    duplex = site(radio("A", t=tx(146.52), r=rx(146.40)), radio("U", t=tx(439.44), x=20.0))
    hits = [t for t in survey(duplex).threats if t.mechanism == "intermod" and t.victim == "A"]
    assert hits and all(set(t.sources) == {"A", "U"} for t in hits)
