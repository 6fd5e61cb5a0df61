"""Intermodulation products, their levels by route, and blocking by several carriers.

Sources named beside each check value:
- Combinatorics (compositions of n into k positive parts: C(n-1, k-1)), and an independent
  brute force over integer coefficient vectors with itertools.
- The memoryless power-series model of a non-linearity (textbook: e.g. Razavi, RF
  Microelectronics, ch. 2; Pozar, Microwave Engineering, "intercept point"): a product with
  coefficients c moves |c_j| dB per dB of carrier j; at equal tones three-tone 3rd-order
  ("triple beat") products are 6.02 dB above two-tone ones; the intercept relation
  P_IM3 = 2 P1 + P2 - 2 IIP3 (P_IM3 = 3 P_in - 2 IIP3 for equal tones), P_IM2 = P1 + P2 - IIP2.
  Checked here also numerically: the FFT of x^n for a sum of tones.
- Turnaround loss (common practice): the product 2 f_M - f_i formed in transmitter M's output
  stage lies a fixed conversion loss below the incoming carrier i.
- Power sum of uncorrelated carriers, 10 log10(sum 10^(P/10)) (textbook).
"""

from __future__ import annotations

import itertools
import json
import math
from collections import Counter

import numpy as np
import pytest

from notchkit.site import model
from notchkit.site.model import Antenna, Band, Coupling, Radio, Receive, Site, Transmit
from notchkit.threats import levels, survey
from notchkit.threats.products import coefficient_sets, combine, orders

P50 = 10 * math.log10(50e3)  # 50 W in dBm = 46.99 (definition of dBm)


def tx(f, power_w=50.0, **kw):
    return Transmit(band=Band(lo_mhz=f, hi_mhz=f), power_w=power_w, bandwidth_khz=1e-6, **kw)


def rx(lo, hi=None, **kw):
    return Receive(band=Band(lo_mhz=lo, hi_mhz=lo if hi is None else hi), bandwidth_khz=1.0, **kw)


def radio(name, t=None, r=None, x=0.0):
    return Radio(name=name, tx=t, rx=r, antenna=Antenna(x_m=x))


def site(*radios, couplings=(), **kw):
    return Site(name="Test Hill", cable="RG-213", radios=tuple(radios), couplings=tuple(couplings), **kw)


def couple(**pairs):
    return [Coupling(a=k[0], b=k[1], isolation_db=v) for k, v in pairs.items()]


def brute_coefficients(k, max_order):
    """Every integer vector with k non-zero entries and 2 <= sum |c| <= max_order, c ~ -c."""
    out = set()
    for c in itertools.product(range(-max_order, max_order + 1), repeat=k):
        if 0 in c or not 2 <= sum(map(abs, c)) <= max_order:
            continue
        out.add(max(c, tuple(-x for x in c)))
    return out


# ---------------------------------------------------------------- enumeration


@pytest.mark.parametrize("k", [2, 3])
@pytest.mark.parametrize("max_order", [2, 3, 4, 5, 7])
def test_coefficient_sets_match_brute_force(k, max_order):
    got = coefficient_sets(k, max_order)
    rows = [tuple(r) for r in got.tolist()]
    assert len(rows) == len(set(rows))  # each physical product once
    assert {max(r, tuple(-x for x in r)) for r in rows} == brute_coefficients(k, max_order)
    # combinatorics: C(n-1, k-1) compositions times 2^(k-1) sign patterns per order n
    per_order = Counter(orders(got).tolist())
    for n in range(max(2, k), max_order + 1):
        assert per_order[n] == math.comb(n - 1, k - 1) * 2 ** (k - 1)


def test_issue_counts_two_and_three_transmitters():
    # three transmitters: 3 pairs x (4 third + 8 fifth) = 36 two-tone 3rd/5th products,
    # 4 three-tone 3rd-order and 24 three-tone 5th-order products (combinatorics above)
    two, three = coefficient_sets(2, 5), coefficient_sets(3, 5)
    assert 3 * int(np.isin(orders(two), (3, 5)).sum()) == 36
    assert int((orders(three) == 3).sum()) == 4 and int((orders(three) == 5).sum()) == 24


def test_every_product_family_of_150_160_175_found_with_its_frequency():
    # The three transmitters of the issue; one receiver 1-1000 MHz hears every product.
    freqs = {"A": 150.0, "B": 160.0, "C": 175.0}
    s = site(*(radio(n, t=tx(f)) for n, f in freqs.items()), radio("R", r=rx(1.0, 1000.0), x=30.0))
    res = survey(s)
    got = Counter(
        (len(t.sources), t.order, round(t.f_mhz, 6)) for t in res.threats if t.mechanism == "intermod"
    )
    expected = Counter()
    names = list(freqs)
    for k in (2, 3):
        for combo in itertools.combinations(names, k):
            for c in brute_coefficients(k, 5):
                f = abs(sum(ci * freqs[n] for ci, n in zip(c, combo, strict=True)))
                if 1.0 <= f <= 1000.0:
                    expected[(k, sum(map(abs, c)), round(f, 6))] += 1
    assert got == expected
    by_family = Counter((k, n) for (k, n, _), cnt in expected.items() for _ in range(cnt))
    assert by_family[(3, 5)] == 24 and by_family[(3, 3)] == 4  # none missing (the issue's gap)


def test_max_im_order_limits_the_enumeration():
    freqs = {"A": 150.0, "B": 160.0, "C": 175.0}
    radios = [radio(n, t=tx(f)) for n, f in freqs.items()] + [radio("R", r=rx(1.0, 1000.0), x=30.0)]
    res = survey(site(*radios, max_im_order=3))
    im = [t for t in res.threats if t.mechanism == "intermod"]
    assert {t.order for t in im} == {2, 3} and res.max_im_order == 3
    # 3 pairs x (2 second + 4 third) + 4 three-tone third-order, all inside 1-1000 MHz
    assert len(im) == 3 * 6 + 4


def test_intervals_of_every_coefficient_set_bound_point_products():
    # Interval arithmetic (textbook): |sum c_i f_i| for f_i in [lo_i, hi_i] lies in the interval,
    # whose ends are reached at corners (or 0 when the sum changes sign).
    rng = np.random.default_rng(5)
    coeffs = coefficient_sets(3, 5)
    lo = rng.uniform(1.0, 500.0, size=(40, 3))
    hi = lo + rng.uniform(0.0, 30.0, size=(40, 3))
    plo, phi = combine(coeffs, lo, hi)
    corners = np.array(list(itertools.product((0, 1), repeat=3)))
    pts = np.where(corners[None, :, :] == 0, lo[:, None, :], hi[:, None, :])
    raw = pts @ coeffs.T  # (40, 8, n_coef)
    straddles = (raw.min(axis=1) < 0) & (raw.max(axis=1) > 0)
    assert np.allclose(phi, np.abs(raw).max(axis=1))
    assert np.allclose(plo, np.where(straddles, 0.0, np.abs(raw).min(axis=1)))


# ---------------------------------------------------------------- the power-law factor


@pytest.mark.parametrize("n", [2, 3, 4, 5])
def test_combinatorial_factor_matches_fft_of_power_series(n):
    # y = x^n for x = sum of three unit cosines: the FFT amplitude of each order-n product,
    # relative to the (n-1, 1) product, is the textbook factor (n!/prod|c|!) ratio.
    size = 1 << 15
    bins = (1031, 1433, 1877)
    t = np.arange(size)
    x = sum(np.cos(2 * np.pi * b * t / size) for b in bins)
    spec = np.abs(np.fft.rfft(x**n)) * 2 / size
    every = [c for k in (1, 2, 3) for c in itertools.product(range(-n, n + 1), repeat=3)
             if sum(map(abs, c)) <= n and sum(map(abs, c)) % 2 == n % 2]  # fmt: skip
    where = Counter(abs(int(np.dot(c, bins))) for c in set(every))
    ref = spec[(n - 1) * bins[0] + bins[1]]
    checked = 0
    for k in (2, 3):
        for c in coefficient_sets(k, n, n):
            full = tuple(c) + (0,) * (3 - k)
            b = abs(int(np.dot(full, bins)))
            if where[b] != 2 or b == 0:  # c and -c only: no other product shares the bin
                continue
            want = levels.degeneracy_db(np.abs(c)) - levels.degeneracy_db([n - 1, 1])
            assert 20 * math.log10(spec[b] / ref) == pytest.approx(float(want), abs=1e-6)
            checked += 1
    assert checked >= 2
    if n == 3:  # triple beat 6.02 dB above the two-tone product (textbook)
        assert float(levels.degeneracy_db([1, 1, 1])) == pytest.approx(20 * math.log10(2), abs=1e-12)


# ---------------------------------------------------------------- transmitter route


def _three(couplings, **rx_kw):
    radios = [radio("A", t=tx(150.0)), radio("B", t=tx(160.0)), radio("C", t=tx(175.0)),
              radio("R", r=rx(10.0, 700.0, **rx_kw), x=30.0)]  # fmt: skip
    return survey(site(*radios, couplings=couplings))


def _product(res, label):
    (t,) = [t for t in res.threats if t.mechanism == "intermod" and t.product == label]
    return t


TX_COUPLINGS = couple(AB=30.0, AC=30.0, BC=60.0, AR=20.0, BR=80.0, CR=80.0)


def test_transmitter_route_levels_by_hand():
    # Mixer A (carrier P50), B and C arrive at A 30 dB down (P50 - 30); A -> R 20 dB.
    # Receiver route made negligible with very high intercept points.
    res = _three(TX_COUPLINGS, iip2_dbm=120.0, iip3_dbm=80.0)
    inc = P50 - 30.0
    l3, step = 10.0, 5.0  # documented defaults (common practice)
    cases = {
        # 2A - B: the turnaround definition, incoming - L3 (common practice)
        "2*A - B": (140.0, inc - l3),
        # 2B - A: the incoming carrier squared, 2 P_B - P_A - L3 (power law): 30 dB weaker here
        "2*B - A": (170.0, 2 * inc - P50 - l3),
        # A + B - C: P_B + P_C - P_A - L3 + 6.02 dB (power law, triple beat factor)
        "A + B - C": (135.0, 2 * inc - P50 - l3 + 20 * math.log10(2)),
        # 3A - 2B: P_A - L5 + 2 (P_B - P_A) + 20log10(4!/(3!2!)), L5 = L3 + 2 step
        "3*A - 2*B": (130.0, P50 - (l3 + 2 * step) + 2 * (inc - P50) + 20 * math.log10(2)),
        # A + B: 2nd order, P_B - L2, L2 = L3 + step
        "A + B": (310.0, inc - (l3 + step)),
        # 3A - B: 4th order (3, 1), P_B - L4
        "3*A - B": (290.0, inc - (l3 + step)),
        # 2B - 2A: 4th order (2, 2), P_A - L4 + 2 (P_B - P_A) + 20log10(3!/(2!2!))
        "2*B - 2*A": (20.0, P50 - (l3 + step) + 2 * (inc - P50) + 20 * math.log10(1.5)),
        # 2C - A - B: three-tone 4th order, + (P_B - P_A) + 2 (P_C - P_A) + 20log10(3!/2!)
        "2*C - A - B": (40.0, P50 - (l3 + step) + 3 * (inc - P50) + 20 * math.log10(3)),
        # 2A + B - 2C: three-tone 5th order, + (P_B - P_A) + 2 (P_C - P_A) + 20log10(4!/(2!2!))
        "2*A + B - 2*C": (110.0, P50 - (l3 + 2 * step) + 3 * (inc - P50) + 20 * math.log10(6)),
        # 3A - B - C: three-tone 5th order (3, 1, 1), 20log10(4!/3!)
        "3*A - B - C": (115.0, P50 - (l3 + 2 * step) + 2 * (inc - P50) + 20 * math.log10(4)),
    }
    for label, (f, at_mixer) in cases.items():
        t = _product(res, label)
        assert t.f_mhz == pytest.approx(f, abs=1e-6)
        assert (t.route, t.mixer) == ("transmitter", "A")
        assert t.level_dbm == pytest.approx(at_mixer - 20.0, abs=1e-9), label
    data = json.loads(json.dumps(res.to_json()))
    row = next(r for r in data["threats"] if r["product"] == "2*A - B")
    assert row["route"] == "transmitter" and row["mixer"] == "A" and "conversion" in row["level_model"]


def test_each_input_moves_the_product_by_its_exponent():
    # +1 dB on B's power: 2A - B (x1) +1 dB; 2B - A (x2) +2 dB; A + B - C (x1) +1 dB (power law)
    base = _three(TX_COUPLINGS, iip2_dbm=120.0, iip3_dbm=80.0)
    radios = [radio("A", t=tx(150.0)), radio("B", t=tx(160.0, power_w=50.0 * 10**0.1)),
              radio("C", t=tx(175.0)),
              radio("R", r=rx(10.0, 700.0, iip2_dbm=120.0, iip3_dbm=80.0), x=30.0)]  # fmt: skip
    up = survey(site(*radios, couplings=TX_COUPLINGS))
    for label, slope in (("2*A - B", 1), ("2*B - A", 2), ("A + B - C", 1), ("3*A - 2*B", 2)):
        rise = _product(up, label).level_dbm - _product(base, label).level_dbm
        assert rise == pytest.approx(slope, abs=1e-9)


def test_notch_depth_shares_the_excess_over_the_exponents():
    # Only 2B - A = 170 MHz reaches R. Mixer A: 2 (P50 - 30) - P50 - 10 - 20 dB to R.
    # A notch of X dB on B at A's output lowers the product by 2X (B counts twice),
    # so A's filter asks (excess + margin) / 2 (power law; margin 6 dB, site default).
    s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)),
             radio("R", r=rx(170.0, sensitivity_dbm=-120.0, iip2_dbm=120.0, iip3_dbm=80.0), x=30.0),
             couplings=couple(AB=30.0, AR=20.0, BR=80.0))  # fmt: skip
    res = survey(s)
    t = _product(res, "2*B - A")
    level = 2 * (P50 - 30) - P50 - 10 - 20
    assert t.level_dbm == pytest.approx(level, abs=1e-9) and t.mixer == "A"
    req = next(f for f in res.filters if f.radio == "A")
    (notch,) = [n for n in req.notches if n.lo_mhz <= 160.0 <= n.hi_mhz]
    assert notch.required_db == pytest.approx((level + 120.0 + 6.0) / 2, abs=1e-9)


# ---------------------------------------------------------------- receiver route


RX_COUPLINGS = couple(AB=150.0, AC=150.0, BC=150.0, AR=70.0, BR=76.0, CR=73.0)


def test_receiver_route_levels_by_hand():
    # Carriers at R's input: A P50-70, B P50-76, C P50-73 dBm; IIP2 +20, IIP3 -10 dBm.
    res = _three(RX_COUPLINGS, iip2_dbm=20.0, iip3_dbm=-10.0)
    pa, pb, pc = P50 - 70, P50 - 76, P50 - 73
    cases = {
        "2*A - B": 2 * pa + pb - 2 * (-10.0),  # two-tone intercept relation (textbook)
        "A + B": pa + pb - 20.0,  # IIP2 relation (textbook)
        "A + B - C": pa + pb + pc - 2 * (-10.0) + 20 * math.log10(2),  # triple beat +6.02 dB
    }
    for label, want in cases.items():
        t = _product(res, label)
        assert (t.route, t.mixer) == ("receiver", None), label
        assert t.level_dbm == pytest.approx(want, abs=1e-9), label
        assert "intercept" in t.level_model and "IIP" in t.details[0]
    # 5th order: no intercept figure, so only transmitter routes (negligible here)
    assert _product(res, "3*A - 2*B").route == "transmitter"


def test_equal_tones_give_three_p_minus_two_iip3():
    # P_IM3 = 3 P_in - 2 IIP3 for two equal tones (textbook intercept relation)
    s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)),
             radio("R", r=rx(140.0, iip3_dbm=-5.0), x=30.0),
             couplings=couple(AB=150.0, AR=80.0, BR=80.0))  # fmt: skip
    t = _product(survey(s), "2*A - B")
    assert t.level_dbm == pytest.approx(3 * (P50 - 80) - 2 * (-5.0), abs=1e-9)


def test_product_never_exceeds_the_weakest_carrier_forming_it():
    # Inputs far above IIP3: the extrapolated power law would exceed the inputs (common practice cap)
    s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)),
             radio("R", r=rx(140.0, iip3_dbm=-20.0), x=30.0),
             couplings=couple(AB=150.0, AR=20.0, BR=26.0))  # fmt: skip
    t = _product(survey(s), "2*A - B")
    assert 2 * (P50 - 20) + (P50 - 26) + 40 > P50 - 26  # the raw power law would be above
    assert t.level_dbm == pytest.approx(P50 - 26, abs=1e-9)
    assert levels.CLAMP_NOTE in t.details
    # and a route inside the power law's range carries no such note
    low = survey(site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)),
                      radio("R", r=rx(140.0, iip3_dbm=-5.0), x=30.0),
                      couplings=couple(AB=150.0, AR=80.0, BR=80.0)))  # fmt: skip
    assert levels.CLAMP_NOTE not in _product(low, "2*A - B").details


def test_receiver_class_defaults_and_given_figures():
    # base class IIP3 -2 dBm: from memory, 70 dB IM response rejection at -107 dBm through
    # 3 P_int - 2 IIP3 = P_IM (ETSI EN 300 086 style); never the only check (see the FFT test)
    assert (3 * (-107 + 70) - (-107)) / 2 == levels.RECEIVER_CLASSES["base"][1]
    assert tuple(levels.RECEIVER_CLASSES) == model.RECEIVER_CLASSES
    pa = pb = P50 - 80
    cases = (({"receiver_class": "base"}, -2.0, "class 'base'"),
             ({}, levels.RECEIVER_CLASSES["mobile"][1], "default class 'mobile'"),
             ({"receiver_class": "base", "iip3_dbm": 3.0}, 3.0, "receiver's iip3_dbm"))  # fmt: skip
    # Front-end selectivity of the class's blocking table (docs/survey.md): B's carrier is
    # 19.9995 MHz from R's band (R's edges widened by 0.5 kHz), where the base table gives
    # -29 + 19 log10(19.9995/10) = -23.28 dBm, 5.72 dB above its 1 MHz level (hand
    # interpolation in dB against log offset); A's (9.9995 MHz) is still at -29 dBm: 0 dB.
    front_b = 19.0 * math.log10((160.0 - (140.0 + 0.0005)) / 10.0)
    for kw, iip3, word in cases:
        s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)), radio("R", r=rx(140.0, **kw), x=30.0),
                 couplings=couple(AB=150.0, AR=80.0, BR=80.0))  # fmt: skip
        t = _product(survey(s), "2*A - B")
        front = front_b if "receiver_class" in kw else 0.0
        assert t.level_dbm == pytest.approx(2 * pa + pb - front - 2 * iip3, abs=1e-9)
        assert word in t.details[0]


# ---------------------------------------------------------------- blocking


def test_several_carriers_sum_against_blocking():
    # Three carriers at -34 dBm each (P50 + 34 dB isolation) at a 1000 MHz receiver, blocking -30:
    # total -34 + 10log10(3) = -29.23 dBm, excess 0.77 dB (power sum, textbook).
    iso = P50 + 34.0
    s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)), radio("C", t=tx(175.0)),
             radio("R", r=rx(1000.0, blocking_dbm=-30.0), x=30.0),
             couplings=couple(AB=150.0, AC=150.0, BC=150.0, AR=iso, BR=iso, CR=iso))  # fmt: skip
    res = survey(s)
    (b,) = [t for t in res.threats if t.mechanism == "blocking"]
    assert b.level_dbm == pytest.approx(-34.0 + 10 * math.log10(3), abs=1e-9)
    assert b.excess_db == pytest.approx(10 * math.log10(3) - 4.0, abs=1e-9)
    # no single carrier is over the limit
    assert all(t.excess_db < 0 for t in res.threats if t.mechanism == "fundamental")
    # notch the strongest until the rest (-34 dBm) is under half the limit (-33.01): two carriers,
    # each to an equal share of limit - 3.01 - margin 6, i.e. by -34 - (-30 - 3.01 - 6 - 3.01) dB
    (req,) = [f for f in res.filters if f.radio == "R"]
    assert len(req.notches) == 2 and len(b.sources) == 2
    for n in req.notches:
        assert n.required_db == pytest.approx(-34.0 + 30.0 + 2 * 10 * math.log10(2) + 6.0, abs=1e-9)
    row = next(t for t in res.to_json()["threats"] if t["mechanism"] == "blocking")
    assert isinstance(row["source"], list) and "power sum" in row["level_model"]


def test_blocking_needs_two_carriers_outside_the_band():
    s = site(radio("A", t=tx(150.0)), radio("R", r=rx(1000.0), x=30.0))
    assert not [t for t in survey(s).threats if t.mechanism == "blocking"]


# ---------------------------------------------------------------- scale: the cap


def test_cap_keeps_the_worst_and_counts_the_rest():
    rng = np.random.default_rng(3)
    freqs = np.round(rng.uniform(144, 148, 8), 3).tolist()
    radios = [radio(f"T{i}", t=tx(f), x=7.0 * i) for i, f in enumerate(freqs)]
    radios += [radio(f"R{i}", r=rx(lo, lo + 1.0), x=300 + 5.0 * i)
               for i, lo in enumerate((140, 143, 146, 149))]  # fmt: skip
    full = survey(site(*radios))
    capped = survey(site(*radios), max_threats=5)
    im_full = sorted((t.excess_db for t in full.threats if t.mechanism == "intermod"), reverse=True)
    im_cap = [t.excess_db for t in capped.threats if t.mechanism == "intermod"]
    assert len(im_full) > 20 and len(im_cap) == 5
    assert sorted(im_cap, reverse=True) == pytest.approx(im_full[:5])
    ((mech, over, under),) = capped.left_out
    assert mech == "intermod" and over + under == len(im_full) - 5
    assert over == sum(1 for e in im_full[5:] if e > 0)
    assert capped.matrix() == full.matrix()
    assert capped.filters == full.filters  # notches come from every product, kept or not
    left = [{"mechanism": "intermod", "over_limit": over, "under_limit": under}]
    assert capped.to_json()["left_out"] == left


# ---------------------------------------------------------------- the plan's grouping


def test_threat_table_shows_the_worst_of_each_pair_and_caps_rows():
    from notchkit.report.text import threat_groups, threat_table

    rng = np.random.default_rng(11)
    freqs = np.round(rng.uniform(144, 148, 7), 3).tolist()
    radios = [radio(f"T{i}", t=tx(f), x=9.0 * i) for i, f in enumerate(freqs)]
    radios += [radio(f"R{i}", r=rx(lo, lo + 2.0), x=200 + 5.0 * i) for i, lo in enumerate((141, 146))]
    res = survey(site(*radios))
    pairs = {(tuple(sorted(t.sources)), t.victim) for t in res.threats}
    groups = threat_groups(res.threats)
    assert len(groups) == len(pairs) < len(res.threats)
    def key(t):
        return tuple(sorted(t.sources)), t.victim

    for worst, n in groups:
        same = [t for t in res.threats if key(t) == key(worst)]
        assert n == len(same) and worst.excess_db == max(t.excess_db for t in same)
    table = threat_table(res)
    assert len(table.rows) == len(pairs)
    capped = threat_table(res, max_rows=4)
    assert len(capped.rows) == 4 and f"{len(pairs) - 4} more source-victim pairs" in capped.note


def test_large_site_matrix_becomes_a_list_of_worst_pairs():
    from notchkit.report.text import MATRIX_MAX_RECEIVERS, matrix_table

    n = MATRIX_MAX_RECEIVERS + 2
    radios = [radio(f"T{i}", t=tx(146.0 + 0.1 * i), x=5.0 * i) for i in range(3)]
    radios += [radio(f"R{i}", r=rx(150.0 + 2.0 * i), x=100.0 + 3.0 * i) for i in range(n)]
    res = survey(site(*radios))
    table = matrix_table(res)
    m = res.matrix()
    over = sorted((v for row in m.excess_db for v in row if v is not None and v > 0), reverse=True)
    assert over and len(table.rows) == len(over)
    assert [float(r[2]) for r in table.rows] == pytest.approx(over, abs=0.05)
    assert len(matrix_table(res, max_rows=2).rows) == 2


def test_max_threats_must_be_a_whole_number():
    from notchkit.errors import UsageError

    s = site(radio("A", t=tx(150.0)), radio("B", t=tx(160.0)), radio("R", r=rx(140.0), x=30.0))
    for bad in (-1, 2.5, True):
        with pytest.raises(UsageError, match="max_threats"):
            survey(s, max_threats=bad)
    notes = " ".join(survey(s).notes)
    assert "class mobile (default)" in notes and "R" in notes


def test_cli_max_threats(tmp_path, capsys):
    from notchkit.cli import main

    f = tmp_path / "s.yaml"
    f.write_text(
        "site: Test Hill\n"
        "transmitters:\n"
        "  - {name: A, freq_mhz: 150.0, power_w: 50}\n"
        "  - {name: B, freq_mhz: 160.0, power_w: 50, antenna: {x_m: 10}}\n"
        "receivers:\n"
        "  - {name: R, band_mhz: [10, 700], antenna: {x_m: 30}}\n"
    )
    assert main(["survey", str(f), "--json", "--max-threats", "3"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert sum(t["mechanism"] == "intermod" for t in doc["threats"]) == 3
    (left,) = doc["left_out"]
    assert left["over_limit"] + left["under_limit"] > 0
    assert main(["survey", str(f), "--max-threats", "-1"]) == 2
    err = capsys.readouterr().err
    assert "max_threats: -1" in err and "Traceback" not in err


def test_coarse_stage_misses_nothing_at_high_frequencies():
    # Products near 6 GHz whose terms are large (float32 rounding in the coarse stage): the
    # survey finds exactly what an exact float64 brute force finds (independent loops).
    rng = np.random.default_rng(17)
    freqs = {f"T{i}": float(np.round(rng.uniform(1500.0, 5900.0), 4)) for i in range(6)}
    radios = [radio(n, t=tx(f), x=10.0 * k) for k, (n, f) in enumerate(freqs.items())]
    hits = []
    names = list(freqs)
    for k in (2, 3):
        for combo in itertools.combinations(names, k):
            for c in sorted(brute_coefficients(k, 5)):
                f = abs(sum(ci * freqs[n] for ci, n in zip(c, combo, strict=True)))
                if 1000.0 < f < 5990.0:
                    hits.append(f)
    chosen = sorted(rng.choice(hits, 12, replace=False).tolist())
    # receivers exactly one channel wide around chosen products (edges touching the product)
    radios += [radio(f"R{i}", r=Receive(band=Band(lo_mhz=f, hi_mhz=f), bandwidth_khz=1.0), x=500.0 + i)
               for i, f in enumerate(chosen)]  # fmt: skip
    res = survey(site(*radios))
    got = sorted(round(t.f_mhz, 6) for t in res.threats if t.mechanism == "intermod")
    expected = sorted(round(f, 6) for f in hits for g in chosen if abs(f - g) <= 0.0005 + 1e-9)
    assert got == expected and len(got) >= 12


def test_low_receivers_with_high_products_stay_exact():
    # Receivers near 2 MHz (a fine coverage map) and transmitters at 3-5.9 GHz (products up to
    # tens of GHz, far beyond the map): only the difference products land, as the loops say.
    freqs = {"A": 3000.0, "B": 3001.5, "C": 5900.0}
    radios = [radio(n, t=tx(f), x=10.0 * k) for k, (n, f) in enumerate(freqs.items())]
    radios.append(radio("R", r=rx(1.0, 3.0), x=100.0))
    got = sorted(round(t.f_mhz, 6) for t in survey(site(*radios)).threats if t.mechanism == "intermod")
    def f_of(c, combo):
        return abs(sum(ci * freqs[n] for ci, n in zip(c, combo, strict=True)))

    want = sorted(round(f_of(c, combo), 6) for k in (2, 3) for combo in itertools.combinations(freqs, k)
                  for c in brute_coefficients(k, 5) if 1.0 - 0.0005 <= f_of(c, combo) <= 3.0005)  # fmt: skip
    assert got == want and got  # 3001.5 - 3000 = 1.5 MHz at least


def test_example_sites_survey_as_documented():
    # docs/survey.md, "Example sites": threats / over the limit / filter locations after this model
    import re
    from pathlib import Path

    from notchkit.site import load_site

    root = Path(__file__).resolve().parents[1]
    text = (root / "docs" / "survey.md").read_text(encoding="utf-8")
    rows = re.findall(r"^\| ([\w-]+) \| [\d ]+/[\d ]+/[\d ]+ \| (\d+) / (\d+) / (\d+) \|", text, re.M)
    assert {r[0] for r in rows} == {p.stem for p in (root / "sites").glob("*.yaml")}
    # a site's latest row counts (a later table records a later, deliberate change)
    latest = {name: (n, over, locs) for name, n, over, locs in rows}
    for name, (n, over, locs) in latest.items():
        res = survey(load_site(str(root / "sites" / f"{name}.yaml")))
        got = (len(res.threats), sum(t.excess_db > 0 for t in res.threats), len(res.filters))
        assert got == (int(n), int(over), int(locs)), name
