"""How a site operates: scenarios, bands worked one at a time, installed filters,
receiver selectivity by offset, band noise, coupling tables, antenna gain out of
band, the near-field bound and the stub ceiling.

Every check value is a hand calculation from a published form named beside it:
- ITU-R Recommendation P.525 free-space loss, 32.45 + 20 log f(MHz) + 20 log d(km).
- The near-field boundary r = lambda / (2 pi) (Hertzian-dipole field terms; Balanis,
  Antenna Theory, ch. 4).
- Linear interpolation in dB against log10 frequency (or offset), the form the
  survey documents (docs/survey.md), computed here by hand with math.log10.
- kTB at 290 K with the SI 2019 Boltzmann constant, -173.98 dBm/Hz.
- Amateur band edges from 47 CFR 97.301 (15 m 21.0-21.45, 10 m 28.0-29.7 MHz).
- 47 CFR 97.307(e): 60 dB spurious suppression at 30-225 MHz above 25 W.
- scikit-rf's own attenuator model for the measured Touchstone filter.
"""

from __future__ import annotations

import math

import pytest

from notchkit.cli import main
from notchkit.site import load_site
from notchkit.site.model import (
    Antenna,
    Band,
    Coupling,
    InstalledFilter,
    Limits,
    Radio,
    Receive,
    Scenario,
    Site,
    Transmit,
)
from notchkit.threats import limits as L
from notchkit.threats import survey

KTB = 10 * math.log10(1.380649e-23 * 290 * 1000)  # SI 2019: -173.98 dBm/Hz


def band(lo, hi=None):
    return Band(lo_mhz=lo, hi_mhz=lo if hi is None else hi)


def fsl(f_mhz, d_m):
    """ITU-R P.525 free-space basic transmission loss."""
    return 32.45 + 20 * math.log10(f_mhz) + 20 * math.log10(d_m / 1000)


def interp_log(x, x0, y0, x1, y1):
    """Straight line in y against log10 x (the documented interpolation), by hand."""
    t = (math.log10(x) - math.log10(x0)) / (math.log10(x1) - math.log10(x0))
    return y0 + t * (y1 - y0)


NO_CEILING = Limits(max_stub_rejection_db=200.0)


def mk(*radios, **kw):
    if "limits" not in kw:  # no ceiling: neither per stub nor the site's depth ceiling
        kw["limits"] = NO_CEILING
        kw.setdefault("depth_ceiling_db", 200.0)
    return Site(name="Test Flats (fictional)", cable="RG-213", radios=tuple(radios), **kw)


def tx_radio(name, f, x=0.0, power_w=100.0, **kw):
    return Radio(name=name, tx=Transmit(band=band(f), power_w=power_w), antenna=Antenna(x_m=x), **kw)


def rx_radio(name, f, x=0.0, **rxkw):
    return Radio(name=name, rx=Receive(band=band(f), **rxkw), antenna=Antenna(x_m=x))


def only(threats, **match):
    got = [t for t in threats if all(getattr(t, k) == v for k, v in match.items())]
    assert len(got) == 1, (match, [(t.mechanism, t.sources, t.victim) for t in threats])
    return got[0]


# ---------------------------------------------------------------- scenarios


def test_default_scenario_is_all_at_once_and_keeps_old_numbers():
    a = tx_radio("A", 146.52)
    c = rx_radio("C", 439.56, x=500.0)
    res = survey(mk(a, c))
    h = only(res.threats, mechanism="harmonic")
    assert h.scenario == ("all at once",)
    # 100 W on 2 m: 60 dB below the carrier (47 CFR 97.307(e)); P.525 over 500 m at the
    # low edge of the overlap of 3 x [146.512, 146.528] with [439.552, 439.568]
    f = 439.56 - 0.008
    assert h.level_dbm == pytest.approx(50.0 - 60.0 - fsl(f, 500.0), abs=1e-6)


def test_threats_only_between_radios_of_one_scenario():
    a = tx_radio("A", 146.52)
    b = rx_radio("B", 446.0, x=300.0)
    c = rx_radio("C", 439.56, x=500.0)
    scen = (Scenario(name="day", radios=("A", "B")), Scenario(name="night", radios=("C",)))
    res = survey(mk(a, b, c, scenarios=scen))
    assert not [t for t in res.threats if t.victim == "C"]  # A and C never on together
    f = only(res.threats, mechanism="fundamental", victim="B")
    assert f.scenario == ("day",)
    assert any("scenarios (radios active together" in n for n in res.notes)


def test_intermod_needs_every_transmitter_and_the_victim_in_one_scenario():
    # 2*147 - 146 = 148 MHz (hand arithmetic) lands on R
    t1, t2 = tx_radio("T1", 146.0), tx_radio("T2", 147.0, x=20.0)
    r = rx_radio("R", 148.0, x=40.0)
    together = mk(t1, t2, r)
    assert [t for t in survey(together).threats if t.mechanism == "intermod" and t.victim == "R"]
    apart = mk(t1, t2, r, scenarios=(Scenario(name="s1", radios=("T1", "R")),
                                     Scenario(name="s2", radios=("T2", "R"))))  # fmt: skip
    assert not [t for t in survey(apart).threats if t.mechanism == "intermod"]


# ---------------------------------------------------------------- bands worked one at a time


def two_band_site(**kw):
    # a 15 m / 10 m transceiver (47 CFR 97.301 band edges) and a 10 m receiver 200 m away
    x = Radio(
        name="X",
        tx=Transmit(band=band(21.0, 21.45), bands=(band(21.0, 21.45), band(28.0, 29.7)), power_w=1000.0,
                    bandwidth_khz=2.7),
        rx=Receive(band=band(21.0, 21.45), bands=(band(21.0, 21.45), band(28.0, 29.7)), bandwidth_khz=2.7),
    )  # fmt: skip
    y = rx_radio("Y", 28.5, x=200.0, bandwidth_khz=2.7)
    return mk(x, y, **kw)


def test_a_radio_never_threatens_itself_and_threats_count_per_band():
    res = survey(two_band_site())
    assert not [t for t in res.threats if t.victim == "X" and "X" in t.sources]
    fund = [t for t in res.threats if t.mechanism == "fundamental" and t.victim == "Y"]
    # one threat per operating choice of X
    assert sorted(t.operating for t in fund) == [("X: 21-21.45 MHz",), ("X: 28-29.7 MHz",)]
    # no product made of X's two bands (X transmits on one at a time)
    assert not [t for t in res.threats if t.mechanism == "intermod"]
    assert any("several bands one at a time" in n for n in res.notes)


def test_one_filter_passes_every_band_and_says_which_notch_serves_which():
    # X's 2nd harmonic on 15 m (42.0-42.9 MHz, hand arithmetic) reaches a fictional 42 MHz
    # receiver W: a notch needed on 15 m only; a 6 m transmitter Z overloads X on both bands
    base = two_band_site()
    w = Radio(name="W", rx=Receive(band=band(42.0, 42.9)), antenna=Antenna(x_m=200.0))
    z = tx_radio("Z", 50.1, x=-200.0)
    res = survey(mk(base.radios[0], w, z))
    filt = [f for f in res.filters if f.radio == "X"]
    assert len(filt) == 1
    passes = [x for b in filt[0].pass_bands for x in (b.lo_mhz, b.hi_mhz)]
    # emission edges widened by half of 2.7 kHz (0.00135 MHz)
    assert passes == pytest.approx([20.99865, 21.45135, 27.99865, 29.70135], abs=1e-9)
    labels = [b for b, _ in filt[0].band_use]
    assert labels == ["21-21.45 MHz", "28-29.7 MHz"]
    lows = [round(n.lo_mhz, 1) for n in filt[0].notches]
    assert lows == [42.0, 50.1]
    assert dict(filt[0].band_use) == {"21-21.45 MHz": (0, 1), "28-29.7 MHz": (1,)}
    assert "[needed on 21-21.45 MHz]" in filt[0].reasons[0]
    data = res.to_json()
    (fj,) = [f for f in data["filters"] if f["radio"] == "X"]
    assert [u["band"] for u in fj["band_use"]] == labels


def test_loader_reads_band_lists_and_channel_lists(tmp_path):
    p = tmp_path / "s.yaml"
    p.write_text(
        "site: Two Band Knoll (fictional)\n"
        "transceivers:\n"
        "  - name: run\n"
        "    band_mhz: [[21.0, 21.45], [28.0, 29.7]]\n"
        "    tx: {power_w: 100}\n"
        "receivers:\n"
        "  - name: scan\n"
        "    freq_mhz: [146.52, 147.555]\n",
        encoding="utf-8",
    )
    s = load_site(p)
    run = s.radio("run")
    assert run.n_choices == 2 and run.tx.choices == run.rx.choices
    assert [b.lo_mhz for b in s.radio("scan").rx.choices] == [146.52, 147.555]


# ---------------------------------------------------------------- installed filters


def test_installed_rejection_interpolated_in_db_against_log_frequency():
    table = ((100.0, 40.0), (146.52, 0.5), (500.0, 60.0))
    a = tx_radio("A", 146.52, installed=(InstalledFilter(name="bpf", port="tx", rejection=table),))
    c = rx_radio("C", 439.56, x=500.0)
    bare = only(survey(mk(tx_radio("A", 146.52), c)).threats, mechanism="harmonic")
    got = only(survey(mk(a, c)).threats, mechanism="harmonic")
    f = got.f_lo_mhz
    expect = interp_log(f, 146.52, 0.5, 500.0, 60.0)
    assert got.installed_db == pytest.approx(expect, abs=1e-9)
    assert bare.level_dbm - got.level_dbm == pytest.approx(expect, abs=1e-9)
    assert got.installed == ("A: bpf (band-pass, tx)",)
    assert got.to_json()["installed_rejection_db"] == pytest.approx(expect, abs=1e-3)


def test_installed_ports_and_no_credit_outside_the_table():
    # a receive-path filter on a transmitter does nothing to what it emits; outside the
    # table nothing is credited
    rx_only = InstalledFilter(name="pre", port="rx", rejection=((100.0, 30.0), (500.0, 30.0)))
    narrow = InstalledFilter(name="lpf", port="antenna", rejection=((140.0, 0.2), (150.0, 0.2)))
    a = tx_radio("A", 146.52, installed=(rx_only, narrow))
    c = rx_radio("C", 439.56, x=500.0)
    assert only(survey(mk(a, c)).threats, mechanism="harmonic").installed_db == 0.0
    # the same receive-path filter at the victim does count, at the arriving frequency
    c2 = Radio(name="C", rx=Receive(band=band(439.56)), antenna=Antenna(x_m=500.0), installed=(rx_only,))
    assert only(survey(mk(tx_radio("A", 146.52), c2)).threats, mechanism="harmonic").installed_db == 30.0


def test_band_switched_filter_only_on_its_band():
    bpf15 = InstalledFilter(name="bpf15", rejection=((14.0, 50.0), (21.2, 0.5), (30.0, 50.0)),
                            for_band=band(21.0, 21.45))  # fmt: skip
    s = two_band_site()
    x = s.radios[0]
    s = mk(Radio(name="X", tx=x.tx, rx=x.rx, installed=(bpf15,)), s.radios[1])
    fund = {t.operating: t for t in survey(s).threats if t.mechanism == "fundamental"}
    on15 = fund[("X: 21-21.45 MHz",)]
    on10 = fund[("X: 28-29.7 MHz",)]
    # on 15 m the filter passes X's own carrier at 21.0 MHz with a loss read from the table
    assert on15.installed_db == pytest.approx(interp_log(20.99865, 14.0, 50.0, 21.2, 0.5), abs=1e-6)
    assert on10.installed_db == 0.0  # not in line on 10 m


def test_touchstone_filter_read_with_scikit_rf(tmp_path):
    skrf = pytest.importorskip("skrf")
    freq = skrf.Frequency(100, 600, 51, unit="MHz")
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50)
    media.attenuator(-20.0, d=0).write_touchstone(str(tmp_path / "att20"))  # scikit-rf: |S21| = 0.1
    (tmp_path / "s.yaml").write_text(
        "site: Pad Hill (fictional)\n"
        "transmitters:\n"
        "  - {name: A, freq_mhz: 146.52, power_w: 100}\n"
        "receivers:\n"
        "  - name: C\n"
        "    freq_mhz: 439.56\n"
        "    antenna: {x_m: 500}\n"
        "    installed: [{name: pad, port: rx, kind: notch, touchstone: att20.s2p}]\n",
        encoding="utf-8",
    )
    s = load_site(tmp_path / "s.yaml")
    (flt,) = s.radio("C").installed
    assert flt.touchstone == "att20.s2p"
    assert [r for _, r in flt.rejection] == pytest.approx([20.0] * 51, abs=1e-9)  # -20 log10 0.1
    h = only(survey(s).threats, mechanism="harmonic")
    assert h.installed_db == pytest.approx(20.0, abs=1e-9)


# ---------------------------------------------------------------- receiver selectivity, band noise


def test_selectivity_table_by_offset_from_the_band_edge():
    # carrier 146.52 (16 kHz wide); receiver band 146.62 (16 kHz): gap = 0.1 - 0.016 = 0.084 MHz
    sel = ((0.01, -60.0), (1.0, -20.0))
    a = tx_radio("A", 146.52)
    r = rx_radio("R", 146.62, x=300.0, selectivity=sel)
    f = only(survey(mk(a, r)).threats, mechanism="fundamental")
    gap = (146.62 - 0.008) - (146.52 + 0.008)
    assert f.threshold_dbm == pytest.approx(interp_log(gap, 0.01, -60.0, 1.0, -20.0), abs=1e-9)
    assert "selectivity table" in f.threshold_source


@pytest.mark.parametrize(
    ("offset_mhz", "expected_dbm"),
    [
        # base class (VHF/UHF FM): -29 dBm flat from 1 to 10 MHz (84 dBuV e.m.f. into 50 ohm:
        # 84 - 6 - 107 = -29 dBm, EN 300 086 from memory); 10 kHz: -47 dBm; halfway in
        # log offset between 0.01 and 1 MHz (0.1 MHz): -38 dBm (hand interpolation)
        (5.0, -29.0),
        (0.1, -38.0),
        (0.001, -47.0),  # held below the first row
    ],
)
def test_fm_class_default(offset_mhz, expected_dbm):
    a = tx_radio("A", 150.0)
    # receiver band edge `offset_mhz` above the carrier's edge (both 16 kHz wide)
    f_rx = 150.0 + 0.016 + offset_mhz
    r = rx_radio("R", f_rx, x=300.0, receiver_class="base")
    f = only(survey(mk(a, r)).threats, mechanism="fundamental")
    assert f.threshold_dbm == pytest.approx(expected_dbm, abs=1e-6)
    assert "EN 300 086" in f.threshold_source


def test_every_class_default_names_its_source():
    for name, (table, src) in L.SELECTIVITY_BY_CLASS.items():
        assert table and all(o > 0 for o, _ in table), name
        assert "from memory" in src or "common practice" in src, name
    # the emf-to-available-power conversion behind -29 dBm (50 ohm, matched: half the emf)
    assert 84 - 20 * math.log10(2) - 107 == pytest.approx(-29.0, abs=0.03)


def test_band_noise_is_the_floor_for_noise_threats():
    a = Radio(name="A", tx=Transmit(band=band(7.1), power_w=100.0, noise_dbc_hz=-140.0,
                                    bandwidth_khz=2.7), antenna=Antenna())  # fmt: skip
    r = rx_radio("R", 7.2, x=300.0, bandwidth_khz=2.7, band_noise_dbm=-110.0)
    n = only(survey(mk(a, r)).threats, mechanism="noise")
    own = KTB + 8.0 + 10 * math.log10(2700)  # kTB + NF 8 dB + 10 log B = -131.7 dBm
    assert own < -110.0
    assert n.threshold_dbm == -110.0 and "band noise" in n.threshold_source
    quiet = only(survey(mk(a, rx_radio("R", 7.2, x=300.0, bandwidth_khz=2.7))).threats, mechanism="noise")
    assert quiet.threshold_dbm == pytest.approx(own, abs=1e-9)
    assert n.excess_db == pytest.approx(quiet.excess_db - (-110.0 - own), abs=1e-9)


# ---------------------------------------------------------------- coupling and antennas


def test_several_measured_couplings_interpolate_in_db_against_log_frequency():
    x = two_band_site().radios[0]
    y = rx_radio("Y", 25.0, x=200.0)
    cps = (Coupling(a="X", b="Y", isolation_db=38.0, freq_mhz=14.0),
           Coupling(a="Y", b="X", isolation_db=44.0, freq_mhz=27.0))  # fmt: skip
    res = survey(mk(x, y, couplings=cps))
    fund = {t.operating: t for t in res.threats if t.mechanism == "fundamental"}
    on15 = fund[("X: 21-21.45 MHz",)]
    assert on15.isolation_db == pytest.approx(interp_log(on15.f_lo_mhz, 14.0, 38.0, 27.0, 44.0), abs=1e-9)
    assert on15.coupling_source == "measured"
    on10 = fund[("X: 28-29.7 MHz",)]
    assert on10.isolation_db == pytest.approx(44.0)  # held beyond the last measurement
    assert on10.to_json()["coupling_source"] == "measured"


def test_antenna_gain_out_of_band_is_at_most_isotropic():
    # a 10 dBi 2 m yagi radiating its 3rd harmonic at 440 MHz: outside 144-148 no gain credited
    a = Radio(name="A", tx=Transmit(band=band(146.52), power_w=100.0),
              antenna=Antenna(gain_dbi=10.0, band_mhz=band(144.0, 148.0)))  # fmt: skip
    c = Radio(name="C", rx=Receive(band=band(439.56)), antenna=Antenna(x_m=500.0, gain_dbi=6.0))
    h = only(survey(mk(a, c)).threats, mechanism="harmonic")
    # P.525 minus the gains: A 0 dBi out of band, C 6 dBi in its own band
    assert h.isolation_db == pytest.approx(fsl(h.f_lo_mhz, 500.0) - 0.0 - 6.0, abs=1e-9)
    assert h.coupling_source == "formula"
    mism = Radio(name="A", tx=a.tx, antenna=Antenna(gain_dbi=10.0, band_mhz=band(144.0, 148.0),
                                                    out_of_band_loss_db=6.0))  # fmt: skip
    h2 = only(survey(mk(mism, c)).threats, mechanism="harmonic")
    assert h2.isolation_db - h.isolation_db == pytest.approx(6.0, abs=1e-9)


def test_antenna_gain_table_interpolated():
    a = Radio(name="A", tx=Transmit(band=band(146.52), power_w=100.0),
              antenna=Antenna(gain_table=((100.0, 8.0), (1000.0, -2.0))))  # fmt: skip
    c = rx_radio("C", 439.56, x=500.0)
    h = only(survey(mk(a, c)).threats, mechanism="harmonic")
    g = interp_log(h.f_lo_mhz, 100.0, 8.0, 1000.0, -2.0)
    assert h.isolation_db == pytest.approx(fsl(h.f_lo_mhz, 500.0) - g, abs=1e-9)


def test_no_formula_inside_the_near_field():
    # 1.9 MHz: lambda = 157.8 m, lambda/(2 pi) = 25.1 m
    r_nf = 299.792458 / 1.9 / (2 * math.pi)
    assert r_nf == pytest.approx(25.11, abs=0.01)
    a = tx_radio("A", 1.9)
    near = survey(mk(a, rx_radio("R", 3.6, x=20.0)))
    f = only(near.threats, mechanism="fundamental")
    assert f.isolation_db == 0.0 and f.coupling_source == "bound"
    assert "lambda/(2 pi)" in f.isolation_method
    bound = survey(mk(a, rx_radio("R", 3.6, x=20.0), near_field_isolation_db=15.0))
    assert only(bound.threats, mechanism="fundamental").isolation_db == 15.0
    far = only(survey(mk(a, rx_radio("R", 3.6, x=30.0))).threats, mechanism="fundamental")
    assert far.coupling_source == "formula"
    assert far.isolation_db == pytest.approx(fsl(far.f_lo_mhz, 30.0), abs=1e-9)
    # a measured figure replaces the bound
    meas = mk(a, rx_radio("R", 3.6, x=20.0), couplings=(Coupling(a="A", b="R", isolation_db=22.0),))
    assert only(survey(meas).threats, mechanism="fundamental").coupling_source == "measured"


# ---------------------------------------------------------------- the stub ceiling


@pytest.mark.parametrize(
    ("required", "freq", "expected"),
    [
        (55.0, 146.0, None),  # within the 60 dB ceiling: stubs
        (95.0, 146.0, "cavity"),  # ceiling + up to 40 dB at VHF
        (95.0, 14.0, "band-pass filter"),  # the same below 30 MHz
        (125.0, 146.0, "spacing"),  # up to 30 dB beyond that
        (140.0, 146.0, "time-sharing"),
    ],
)
def test_remedy_class_boundaries(required, freq, expected):
    ceiling = L.stub_ceiling_db(40.0, 60.0, 3)  # min(60, 3 x 40) = 60 dB
    assert ceiling == 60.0
    got = None if required <= ceiling else L.remedy_class(required, ceiling, freq)
    assert got == expected


def test_not_a_stub_job_asks_no_stub_and_says_what_would():
    a = tx_radio("A", 146.52)
    c = rx_radio("C", 439.56, x=30.0)
    capped = survey(mk(a, c, limits=Limits()))  # default ceiling 60 dB
    h = only(capped.threats, mechanism="harmonic")
    assert h.required_db > 60.0
    assert h.remedy_class in ("cavity", "spacing", "time-sharing")
    assert h.remedy.startswith("not a stub job") and h.filters == ()
    assert not [f for f in capped.filters if f.radio == "A"]
    free = survey(mk(a, c))  # without the ceiling the same threat asks for a notch
    assert only(free.threats, mechanism="harmonic").filters == (("A", "tx"),)


def test_the_stub_ceiling_is_the_sites_depth_ceiling():
    """One practical ceiling: the notch depth the design claims at most (depth_ceiling_db, a
    leakage floor added in power, docs/hardware.md) is the deepest notch the survey asks of
    stubs; a requirement above it is not a stub job, with its remedy class."""
    from notchkit.hardware import DEFAULT_DEPTH_CEILING_DB
    from notchkit.synthesis import design

    a = tx_radio("A", 146.52)
    c = rx_radio("C", 439.56, x=30.0)
    lim = Limits(max_stub_rejection_db=200.0)
    free = survey(mk(a, c, limits=lim, depth_ceiling_db=150.0))
    need = only(free.threats, mechanism="harmonic").required_db
    assert need > DEFAULT_DEPTH_CEILING_DB  # the default ceiling refuses it (test above)
    above = survey(mk(a, c, limits=lim, depth_ceiling_db=need + 5.0))
    assert only(above.threats, mechanism="harmonic").filters == (("A", "tx"),)
    below = survey(mk(a, c, limits=lim, depth_ceiling_db=need - 5.0))
    h = only(below.threats, mechanism="harmonic")
    assert h.filters == () and h.remedy.startswith("not a stub job") and h.remedy_class != "stub"
    # every notch the survey does ask for stays within what the design may claim
    site = mk(a, c, limits=lim, depth_ceiling_db=need + 5.0)
    res = design(site, workers=1)
    for d in res.designs:
        assert d.filter.cable.depth_ceiling_db == site.depth_ceiling_db
        assert all(n.required_db < d.filter.cable.depth_ceiling_db for n in d.requirement.notches)


# ---------------------------------------------------------------- bad input


BASE = """\
site: Bad Flats (fictional)
transceivers:
  - name: run
    band_mhz: [[21.0, 21.45], [28.0, 29.7]]
    tx: {power_w: 100}
receivers:
  - name: scan
    freq_mhz: 146.52
"""


@pytest.mark.parametrize(
    ("old", "new", "where", "says"),
    [
        ("[[21.0, 21.45], [28.0, 29.7]]", "[[21.0, 21.45], [21.2, 29.7]]", "4:31",
         "transceivers[0].band_mhz[1]: [21.2, 29.7] overlaps [21, 21.45]"),
        ("    tx: {power_w: 100}\n",
         "    tx: {power_w: 100}\n    rx: {freq_mhz: [21.1, 28.5, 29.6]}\n", "3:5",
         "transceivers[0]: tx works 2 bands or channels and rx 3"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\nscenarios: [{name: s, radios: [run, scna]}]\n", "9:37",
         "scenarios[0].radios[1]: no radio named 'scna' (did you mean 'scan'?"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\n    installed: [{name: pre}]\n", "9:17",
         "receivers[0].installed[0].rejection: give rejection or touchstone, one of them"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\n    installed: [{name: p, touchstone: gone.s2p}]\n",
         "9:39", "receivers[0].installed[0].touchstone: no file"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\n    receiver_class: sdr\n", "9:21",
         "receivers[0].receiver_class: 'sdr' is not known"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\n    selectivity: [[1, -20], [0.5, -30]]\n", "9:29",
         "receivers[0].selectivity[1]: offset_mhz 0.5 does not rise above 1"),
        ("freq_mhz: 146.52\n", "freq_mhz: 146.52\ncouplings:\n  - {between: [run, scan], isolation_db: 30, "
         "freq_mhz: 28}\n  - {between: [scan, run], isolation_db: 33, freq_mhz: 28}\n", "11:15",
         "couplings[1].between: coupling between 'scan' and 'run' given twice at the same frequency"),
    ],
)
def test_bad_operating_keys_give_one_line_and_exit_2(tmp_path, monkeypatch, capsys, old, new, where, says):
    monkeypatch.chdir(tmp_path)
    text = BASE.replace(old, new, 1)
    assert text != BASE
    (tmp_path / "s.yaml").write_text(text, encoding="utf-8")
    before = (tmp_path / "s.yaml").read_bytes()
    assert main(["check", "s.yaml"]) == 2
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1, err
    assert err[0].startswith(f"s.yaml:{where}: {says}"), err[0]
    assert "Traceback" not in err[0]
    assert (tmp_path / "s.yaml").read_bytes() == before


# ---------------------------------------------------------------- the new examples

ROOT = __import__("pathlib").Path(__file__).resolve().parent.parent


def test_contest_example_asks_stubs_only_for_what_stubs_can_do():
    site = load_site(ROOT / "sites" / "contest-two-position.yaml")
    res = survey(site)
    ceiling = L.stub_ceiling_db(site.limits.max_stub_rejection_db, site.depth_ceiling_db,
                                site.limits.max_stubs)  # fmt: skip
    above = [t for t in res.threats if t.excess_db > 0]
    assert above
    for t in above:
        assert t.remedy_class in L.REMEDY_CLASSES[1:], t.remedy_class
        if t.remedy_class == "stub":
            assert t.filters and t.required_db <= ceiling
        else:
            assert not t.filters
    for f in res.filters:
        assert all(n.required_db <= ceiling for n in f.notches)
    # both positions on one band: a carrier inside the other's band, time-sharing
    same = [t for t in above if t.mechanism == "fundamental" and {t.sources[0], t.victim} == {"run", "mult"}
            and t.operating[0].split(": ")[1] == t.operating[1].split(": ")[1]]  # fmt: skip
    assert len(same) == 10 and {t.remedy_class for t in same} == {"time-sharing"}
    # the run radio's 80 m second harmonic lands in 40 m (2 x 3.5-4.0 = 7.0-8.0 MHz, hand
    # arithmetic): a stub at run, switched in on 80 m only, since run also works 40 m
    (h,) = [t for t in above if t.mechanism == "harmonic" and t.sources == ("run",)
            and t.operating == ("run: 3.5-4 MHz", "mult: 7-7.3 MHz")]  # fmt: skip
    assert h.filters == (("run", "tx"),) and h.scenario == ("contest",)
    assert h.coupling_source == "measured"
    # the 80 m band-pass at run and the 40 m band-pass at mult are both in the path at 7 MHz
    assert h.installed == (
        "run: 80 m band-pass (band-pass, antenna)", "mult: 40 m band-pass (band-pass, antenna)"
    )
    on80 = [f for f in res.filters if f.radio == "run" and f.band_use[0][0] == "3.5-4 MHz"]
    assert len(on80) == 1 and [b.lo_mhz for b in on80[0].pass_bands] == pytest.approx([3.49865])
    # the skimmer is never evaluated against the run position (different scenarios)
    assert not [t for t in res.threats if "run" in t.sources and t.victim == "skimmer"]


def test_repeater_example_duplexer_already_covers_the_six_metre_carrier():
    site = load_site(ROOT / "sites" / "copper-butte-repeaters.yaml")
    res = survey(site)
    (f,) = [t for t in res.threats if t.mechanism == "fundamental" and t.sources == ("rpt-6m",)
            and t.victim == "rpt-70cm"]  # fmt: skip
    # 6 m duplexer tx branch at 53.004 MHz: between its 53.01 (1.5 dB) and 52.5 (30 dB) rows,
    # by hand in dB against log f; 70 cm duplexer rx branch at 53 MHz: between 50 (65 dB) and
    # 150 MHz (55 dB)
    f0 = 53.01 - 0.005625
    six = interp_log(f0, 52.5, 30.0, 53.01, 1.5)
    seventy = interp_log(f0, 50.0, 65.0, 150.0, 55.0)
    assert f.installed_db == pytest.approx(six + seventy, abs=1e-6)
    assert f.excess_db < 0 and f.remedy_class == "none"
    assert not [n for r in res.filters if r.radio == "rpt-70cm" for n in r.notches]


def test_plan_text_says_which_notch_each_band_needs():
    from notchkit.report.text import band_use_text

    base = two_band_site()
    w = Radio(name="W", rx=Receive(band=band(42.0, 42.9)), antenna=Antenna(x_m=200.0))
    z = tx_radio("Z", 50.1, x=-200.0)
    (req,) = [f for f in survey(mk(base.radios[0], w, z)).filters if f.radio == "X"]
    text = band_use_text(req)
    assert "on 21-21.45 MHz: notch 1, notch 2; on 28-29.7 MHz: notch 2." in text
    contest = survey(load_site(ROOT / "sites" / "contest-two-position.yaml"))
    switched = [f for f in contest.filters if f.radio == "run"]
    assert len(switched) == 4  # one per band that needs a stub (15 m needs none)
    assert band_use_text(switched[0]).startswith("Band-switched: this filter is in line only while run works")
    # each of the set names its band wherever it is listed (filters table, titles), so four
    # filters at one radio are told apart; a filter that passes every band names none
    from notchkit.report.rows import location_text, short_location

    bands = [f.switched_band for f in switched]
    assert len(set(bands)) == 4 and all(bands)
    for f, b in zip(switched, bands, strict=True):
        assert location_text(f) == f"run on {b} (transmitter output)"
        assert short_location(f) == f"run on {b} (transmitter output)"
        assert f.label.endswith(f", on {b}")
    assert req.switched_band is None and " on " not in location_text(req)


def test_sites_built_in_python_are_checked_too():
    from notchkit.errors import SiteError

    a = tx_radio("A", 146.52, installed=(InstalledFilter(name="f", port="mast", rejection=()),))
    r = Radio(name="R", rx=Receive(band=band(440.0), receiver_class="radar",
                                   selectivity=((1.0, -20.0), (0.5, -30.0))))  # fmt: skip
    with pytest.raises(SiteError) as info:
        survey(mk(a, r))
    fields = sorted(p.field for p in info.value.problems)
    assert fields == ["radios[0].installed[0].port", "radios[0].installed[0].rejection",
                      "radios[1].rx.receiver_class", "radios[1].rx.selectivity"]  # fmt: skip


def test_inverted_l_and_yagi_out_of_band():
    # a 160 m inverted-L (1.8-2.0 MHz, 0 dBi) and a 10 dBi 2 m yagi 78 m apart: at 1.8 MHz the
    # yagi is far from resonance, so no gain above 0 dBi is credited; 78 m is beyond
    # lambda/(2 pi) = 26.5 m, so ITU-R P.525 applies: 32.45 + 20 log 1.8 + 20 log 0.078
    inv_l = Radio(name="L", tx=Transmit(band=band(1.8, 2.0), power_w=1000.0, bandwidth_khz=2.7),
                  antenna=Antenna())  # fmt: skip
    yagi = Radio(name="Y", rx=Receive(band=band(144.0, 148.0)), antenna=Antenna(x_m=78.0, gain_dbi=10.0))
    f = only(survey(mk(inv_l, yagi)).threats, mechanism="fundamental")
    assert f.isolation_db == pytest.approx(fsl(1.8 - 0.00135, 78.0), abs=1e-9)
    assert f.isolation_db == pytest.approx(15.39, abs=0.01)  # hand arithmetic


def test_unreadable_touchstone_is_one_line(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "junk.s2p").write_text("not a sweep\n1 2 3\n", encoding="utf-8")
    (tmp_path / "s.yaml").write_text(BASE.replace(
        "freq_mhz: 146.52\n", "freq_mhz: 146.52\n    installed: [{name: p, touchstone: junk.s2p}]\n"),
        encoding="utf-8")  # fmt: skip
    assert main(["check", "s.yaml"]) == 2
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1 and err[0].startswith(
        "s.yaml:9:39: receivers[0].installed[0].touchstone: 'junk.s2p' could not be read as Touchstone"
    ), err


def test_installed_filter_at_the_victim_lowers_an_intermod_product_by_its_rejection():
    # 2 x 147 - 146 = 148 MHz (hand arithmetic), formed in a transmitter's output stage and
    # radiated to R 2 km away; a receive-path filter giving 30 dB from 147.5 to 149 MHz at R
    # takes exactly 30 dB off it (the carriers at 146 and 147 MHz pass it unchanged; R is an
    # HF-class receiver, so where products formed in its own front end are modelled they are
    # far weaker than this one)
    t1, t2 = tx_radio("T1", 146.0), tx_radio("T2", 147.0, x=20.0)
    pre = InstalledFilter(name="pre", port="rx", rejection=((147.5, 30.0), (149.0, 30.0)))
    bare = rx_radio("R", 148.0, x=2000.0, receiver_class="hf")
    fitted = Radio(name="R", rx=bare.rx, antenna=bare.antenna, installed=(pre,))

    def product(res):
        (t,) = [t for t in res.threats if t.mechanism == "intermod" and t.victim == "R"
                and abs(t.f_mhz - 148.0) < 1e-6]  # fmt: skip
        return t

    a, b = product(survey(mk(t1, t2, bare))), product(survey(mk(t1, t2, fitted)))
    assert a.level_dbm - b.level_dbm == pytest.approx(30.0, abs=1e-9)
    assert b.installed_db == pytest.approx(30.0) and b.installed == ("R: pre (band-pass, rx)",)


def test_stated_blocking_level_wins_over_the_class_table():
    a = tx_radio("A", 150.0)
    r = rx_radio("R", 150.0 + 0.016 + 5.0, x=300.0, receiver_class="base", blocking_dbm=-12.0)
    f = only(survey(mk(a, r)).threats, mechanism="fundamental")
    assert f.threshold_dbm == -12.0 and f.threshold_source == "blocking_dbm"


def test_front_end_selectivity_lowers_products_formed_in_the_receiver():
    # Carriers 9 and 18 MHz off a receiver with the class-hf table: front-end selectivity
    # A = B(gap) - B(1 MHz), with B(1 MHz) = 0 + 10 log(1/0.5)/log(5/0.5) = 3.01 dBm and
    # B(>= 5 MHz) = +10 dBm (hand interpolation in dB against log offset): A = 6.99 dB each.
    # The same receiver with a flat table (no rise) gets none.
    b1 = interp_log(1.0, 0.5, 0.0, 5.0, 10.0)
    assert b1 == pytest.approx(3.0103, abs=1e-4)
    t1, t2 = tx_radio("T1", 130.0), tx_radio("T2", 139.0, x=20.0)  # 2 x 139 - 130 = 148 MHz
    flat = ((0.001, 10.0), (1000.0, 10.0))  # the same far-off level, but no front-end rise

    def level(sel):
        r = rx_radio("R", 148.0, x=60.0, receiver_class="hf", selectivity=sel)
        res = survey(mk(t1, t2, r))
        (t,) = [t for t in res.threats if t.mechanism == "intermod" and t.victim == "R"
                and abs(t.f_mhz - 148.0) < 1e-6]  # fmt: skip
        return t

    cls = L.SELECTIVITY_BY_CLASS["hf"][0]
    a, b = level(cls), level(flat)
    assert a.route == b.route == "receiver"
    # 2 f2 - f1 in the front end: 2 x A(T2) + 1 x A(T1), both carriers >= 5 MHz away
    assert b.level_dbm - a.level_dbm == pytest.approx(3 * (10.0 - b1), abs=1e-6)


def test_contest_example_every_stub_filter_is_met():
    # what the survey leaves to stubs on the contest example is what stubs can do: every
    # filter (band-switched sets included) meets on the lossy model's dense verification
    from notchkit.synthesis import design

    rep = design(load_site(ROOT / "sites" / "contest-two-position.yaml"), workers=1)
    assert rep.designs and all(d.solution.meets for d in rep.designs), [
        d.id for d in rep.designs if not d.solution.meets
    ]


def test_plan_says_how_many_threats_are_beyond_a_stub(tmp_path, capsys):
    # A carrier inside the victim's own band cannot be notched without notching the wanted
    # signal (common practice): the contest example's run and mult positions share bands, so
    # the plan's verdict must not read as if the filters settled the site, and must count them.
    contest = survey(load_site(ROOT / "sites" / "contest-two-position.yaml"))
    beyond = contest.beyond_stubs()
    assert beyond and all(t.excess_db > 0 for t in beyond)
    assert any("no filter can separate them" in t.remedy for t in beyond)
    assert main(["plan", str(ROOT / "sites" / "contest-two-position.yaml"), "-q",
                 "-o", str(tmp_path / "c.pdf")]) == 0
    assert f"{len(beyond)} threat(s) over the limit are beyond a stub alone" in capsys.readouterr().out
    # field day: every threat over the limit has a stub remedy, and the verdict says nothing more
    field = survey(load_site(ROOT / "sites" / "field-day-hf.yaml"))
    assert field.beyond_stubs() == ()
    assert main(["plan", str(ROOT / "sites" / "field-day-hf.yaml"), "-q",
                 "-o", str(tmp_path / "f.pdf")]) == 0
    assert "beyond a stub alone" not in capsys.readouterr().out
