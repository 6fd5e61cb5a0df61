"""Voltage, current and heat against textbook line solutions and scikit-rf."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from notchkit.cables import get_cable
from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub, evaluate, to_network
from notchkit.power import power_check

C = 299_792_458.0  # m/s, exact (SI)


class Lossless:
    """A lossless 50-ohm medium (the Medium protocol of notchkit.filters)."""

    name = "ideal"
    z0_ohm = 50.0
    velocity_factor = 0.66
    max_voltage_v = None

    def alpha_np_per_m(self, freq_hz):
        return np.zeros_like(np.asarray(freq_hz, dtype=float))


def _wl(f_mhz, vf=0.66):
    return C * vf / (f_mhz * 1e6)


def _filter(*elements, cable=None):
    return Filter(elements=tuple(elements), cable=cable or Lossless(), tee_allowance_m=0.03)


@pytest.mark.parametrize("power_w, v_peak", [(100.0, 100.0), (1500.0, 387.298)])
def test_matched_line_peak_voltage(power_w, v_peak):
    # P = V^2 / (2 R) for peak phasors (textbook): 100 W into 50 ohm is 100 V peak,
    # 1500 W is sqrt(2 * 1500 * 50) = 387.3 V peak. A shorted quarter wave is an open
    # circuit at its frequency (Pozar sec. 2.3), so the line stays matched.
    f = _filter(Stub(termination="short", length_m=_wl(14.2) / 4), Line(length_m=3.7))
    pc = power_check(f, power_w=power_w, freq_mhz=14.2)
    assert pc.delivered_w == pytest.approx(power_w, rel=1e-9)
    for node in pc.nodes:
        assert node.voltage_peak_v == pytest.approx(v_peak, rel=1e-4)
        assert node.ratio_to_matched == pytest.approx(1.0, rel=1e-6)
    assert pc.lines[0].max_voltage_peak_v == pytest.approx(v_peak, rel=1e-4)
    assert pc.total_dissipated_w == pytest.approx(0.0, abs=1e-9)


def test_shorted_quarter_wave_end_current():
    # Lossless shorted stub: V(d) = j I_end Z0 sin(beta d), so |I_end| = |V_tee| / (Z0 sin beta l)
    # (standing-wave solution, Pozar sec. 2.3). At a quarter wave: 100 V / 50 ohm = 2 A at 100 W,
    # and the stub's own largest voltage is the tee voltage (sin is largest at the input).
    f = _filter(Stub(termination="short", length_m=_wl(14.2) / 4))
    (s,) = power_check(f, power_w=100.0, freq_mhz=14.2).stubs
    assert s.end_current_peak_a == pytest.approx(2.0, rel=1e-4)
    assert s.max_current_peak_a == pytest.approx(2.0, rel=1e-4)
    assert s.end_voltage_peak_v == 0.0
    assert s.max_voltage_peak_v == pytest.approx(s.tee_voltage_peak_v, rel=1e-6)
    # off the quarter wave: 60 degrees long at 10 MHz
    g = _filter(Stub(termination="short", length_m=_wl(10.0) / 6))
    (s,) = power_check(g, power_w=100.0, freq_mhz=10.0).stubs
    assert s.end_current_peak_a == pytest.approx(s.tee_voltage_peak_v / (50.0 * math.sin(math.pi / 3)))


@pytest.mark.parametrize("degrees", [30.0, 45.0, 60.0, 80.0])
def test_open_stub_end_voltage(degrees):
    # Lossless open stub shorter than a quarter wave: V_end = V_tee / cos(beta l) and the
    # end is the largest voltage on it (textbook standing wave, Pozar sec. 2.3).
    beta_l = math.radians(degrees)
    length = _wl(7.1) * degrees / 360.0
    (s,) = power_check(_filter(Stub(termination="open", length_m=length)), power_w=500.0,
                       freq_mhz=7.1).stubs
    assert s.end_voltage_peak_v == pytest.approx(s.tee_voltage_peak_v / math.cos(beta_l), rel=1e-9)
    assert s.max_voltage_peak_v == pytest.approx(s.end_voltage_peak_v, rel=1e-9)
    assert s.max_voltage_at_m == pytest.approx(length)
    assert s.end_current_peak_a == 0.0


def test_open_stub_longer_than_quarter_wave_has_interior_maximum():
    # 216-degree open stub: lossless |V(d)| = |V_end| |cos beta d| (Pozar sec. 2.3) passes
    # a null 90 degrees from the end and peaks again at 180; the largest value is |V_end|
    # and |V_tee| = |V_end| |cos 216 deg|.
    length = _wl(7.1) * 0.6  # 216 degrees: passes a voltage null at 90 degrees from the end
    (s,) = power_check(_filter(Stub(termination="open", length_m=length)), power_w=100.0,
                       freq_mhz=7.1).stubs
    assert s.max_voltage_peak_v == pytest.approx(s.end_voltage_peak_v, rel=1e-9)
    assert s.end_voltage_peak_v == pytest.approx(s.tee_voltage_peak_v / abs(math.cos(math.radians(216))))


def test_notching_open_quarter_wave_against_a_lumped_circuit():
    # At its exact quarter-wave frequency an open lossy stub is Zin = Z0 coth(alpha l + j pi/2)
    # = Z0 tanh(alpha l), a small resistor (Pozar sec. 2.7). Source EMF E = sqrt(8 P R) with
    # 50 ohm inside (available power P), 50 ohm load: V_tee = E Rp / (50 + Rp), Rp = Rin || 50;
    # and V_end = V_tee / cosh(gamma l) = V_tee / (j sinh(alpha l)).
    cable = get_cable("RG-213")
    f_mhz = 7.15
    length = _wl(f_mhz) / 4
    alpha = float(cable.alpha_np_per_m(f_mhz * 1e6))
    pc = power_check(_filter(Stub(termination="open", length_m=length), cable=cable), power_w=1000.0,
                     freq_mhz=f_mhz)
    r_in = 50.0 * math.tanh(alpha * length)
    rp = r_in * 50.0 / (r_in + 50.0)
    v_tee = math.sqrt(8 * 1000.0 * 50.0) * rp / (50.0 + rp)
    (s,) = pc.stubs
    assert s.tee_voltage_peak_v == pytest.approx(v_tee, rel=1e-6)
    assert s.end_voltage_peak_v == pytest.approx(v_tee / math.sinh(alpha * length), rel=1e-6)
    assert s.dissipated_w == pytest.approx(v_tee**2 / (2 * r_in), rel=1e-6)


def test_stub_heat_by_the_perturbation_method():
    # Low-loss line (Pozar sec. 2.7, perturbation method): the power lost per metre is
    # 2 alpha P(z); on a shorted quarter wave at its pass frequency the lossless current is
    # I_end cos(beta d), so the stub dissipates about |I_end|^2 alpha Z0 lambda / 8.
    cable = get_cable("RG-213")
    f_mhz = 14.2
    lam = _wl(f_mhz)
    f = _filter(Stub(termination="short", length_m=lam / 4), cable=cable)
    pc = power_check(f, power_w=1000.0, freq_mhz=f_mhz)
    (s,) = pc.stubs
    alpha = float(cable.alpha_np_per_m(f_mhz * 1e6))
    assert s.dissipated_w == pytest.approx(s.end_current_peak_a**2 * alpha * 50.0 * lam / 8, rel=0.02)
    assert s.peak_heat_w_per_m >= s.heat_w_per_m > 0
    # the default thermal flag: 1 W/m per mm of outer diameter (rule of thumb, from memory)
    if cable.outer_diameter_mm:
        assert pc.heat_limit_w_per_m == pytest.approx(cable.outer_diameter_mm)


def _skrf_filter(filt, freq_hz):
    """The same filter built from scikit-rf's own media (DefinedGammaZ0), independently."""
    import skrf
    from skrf.media import DefinedGammaZ0

    cable = filt.cable
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    beta = 2 * np.pi * np.asarray(freq_hz) / (C * cable.velocity_factor)
    gam = cable.alpha_np_per_m(np.asarray(freq_hz)) + 1j * beta
    m = DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=cable.z0_ohm, gamma=gam)
    net = None
    for e in filt.elements:
        if isinstance(e, Line):
            part = m.line(e.length_m, unit="m")
        elif e.termination == "open":
            part = m.shunt_delay_open(e.length_m, unit="m")
        else:
            part = m.shunt_delay_short(e.length_m, unit="m")
        net = part if net is None else net ** part
    return net


@pytest.mark.parametrize("f_mhz", [7.15, 9.0, 14.2, 21.2])
def test_dissipation_conserves_energy_against_scikit_rf(f_mhz):
    # Power absorbed by a two-port driven from a matched source of available power P:
    # P (1 - |S11|^2 - |S21|^2). S from scikit-rf's media (independent of our ABCD code)
    # and from filters.to_network; the sum of the stubs' and lines' dissipation must agree.
    cable = get_cable("RG-213")
    q = _wl(7.15) / 4
    f = _filter(Stub(termination="open", length_m=q), Line(length_m=2.3),
                Stub(termination="short", length_m=q), Stub(termination="open", length_m=1.1), cable=cable)
    pc = power_check(f, power_w=1000.0, freq_mhz=f_mhz)
    fr = np.array([f_mhz * 1e6])
    for net in (_skrf_filter(f, fr), to_network(f, fr)):
        s = net.s[0]
        absorbed = 1000.0 * (1 - abs(s[0, 0]) ** 2 - abs(s[1, 0]) ** 2)
        assert pc.total_dissipated_w == pytest.approx(absorbed, rel=0.01)
        assert pc.output_w == pytest.approx(1000.0 * abs(s[1, 0]) ** 2, rel=0.01)
        assert pc.delivered_w == pytest.approx(1000.0 * (1 - abs(s[0, 0]) ** 2), rel=0.01)
    assert all(s.dissipated_w >= 0 for s in pc.stubs)


def test_delivered_power_option():
    cable = get_cable("RG-213")
    f = _filter(Stub(termination="open", length_m=_wl(7.15) / 4), cable=cable)
    s11 = evaluate(f, [10e6])[0, 0, 0]
    a = power_check(f, power_w=100.0, freq_mhz=10.0)
    d = power_check(f, power_w=100.0, freq_mhz=10.0, power_is="delivered")
    assert a.delivered_w == pytest.approx(100.0 * (1 - abs(s11) ** 2), rel=1e-6)
    assert d.delivered_w == pytest.approx(100.0, rel=1e-9)
    # voltages scale with the square root of the power
    ratio = math.sqrt(100.0 / a.delivered_w)
    assert d.stubs[0].max_voltage_peak_v == pytest.approx(a.stubs[0].max_voltage_peak_v * ratio)


def test_voltage_rating_warning_and_kilovolt_caution():
    # RG-58 engineering working voltage 1400 V RMS (MIL-C-17/28C via cables.yaml): 1980 V peak.
    # An open quarter wave notching a 1500 W carrier takes it across its open end.
    cable = get_cable("RG-58")
    assert cable.max_voltage_v == 1400
    f = _filter(Stub(termination="open", length_m=_wl(7.15) / 4), cable=cable)
    pc = power_check(f, power_w=1500.0, freq_mhz=7.15)
    s = pc.stubs[0]
    assert pc.rating_peak_v == pytest.approx(1400 * math.sqrt(2))
    assert s.voltage_margin == pytest.approx(1400 * math.sqrt(2) / s.max_voltage_peak_v)
    thin = s.voltage_margin < 2.0
    assert thin == any("F1-S1" in w and "V RMS" in w for w in pc.warnings)
    assert (s.max_voltage_peak_v >= 1000.0) == any("CAUTION" in c for c in pc.cautions)
    assert s.max_voltage_peak_v > 500.0  # the notching stub's end is far above the line voltage
    # low power: no voltage warning at all
    low = power_check(f, power_w=5.0, freq_mhz=7.15)
    assert not any("V RMS" in w for w in low.warnings) and not low.cautions
    assert json.loads(json.dumps(pc.to_json(), allow_nan=False))["stubs"][0]["termination"] == "open"


def test_kilovolts_at_a_high_power_notch():
    # A 5 kW carrier notched by an RG-213 open quarter wave: the end voltage must exceed the
    # matched-line 707 V peak (sqrt(2 * 5000 * 50)) and the caution must be shown.
    cable = get_cable("RG-213")
    f = _filter(Stub(termination="open", length_m=_wl(7.15) / 4), cable=cable)
    pc = power_check(f, power_w=5000.0, freq_mhz=7.15)
    assert pc.stubs[0].end_voltage_peak_v > math.sqrt(2 * 5000 * 50)
    assert any("CAUTION" in c and "licensed practice" in c for c in pc.cautions)


def test_unrated_cable_and_bad_inputs():
    f = _filter(Stub(termination="short", length_m=1.0))
    pc = power_check(f, power_w=10.0, freq_mhz=20.0, vswr_note=False)
    assert pc.rating_peak_v is None and pc.stubs[0].voltage_margin is None
    assert any("no published voltage rating" in n for n in pc.notes)
    assert not any("SWR" in n for n in pc.notes)
    with pytest.raises(DesignError, match="power_w -5 must be a finite power > 0 W"):
        power_check(f, power_w=-5, freq_mhz=20.0)
    with pytest.raises(DesignError, match="freq_mhz 0 must be"):
        power_check(f, power_w=5, freq_mhz=0)
    with pytest.raises(DesignError, match="power_is 'peak' must be 'available' or 'delivered'"):
        power_check(f, power_w=5, freq_mhz=20.0, power_is="peak")


_element = st.one_of(
    st.builds(lambda t, m: Stub(termination=t, length_m=m), st.sampled_from(["open", "short"]),
              st.floats(0.05, 12.0)),
    st.builds(lambda m: Line(length_m=m), st.floats(0.0, 12.0)),
)


@settings(max_examples=30, deadline=None)
@given(elements=st.lists(_element, min_size=1, max_size=4), f_mhz=st.floats(1.0, 500.0),
       cable=st.sampled_from(["RG-58", "RG-213"]))
def test_energy_conservation_property(elements, f_mhz, cable):
    # Energy conservation on any filter: heat in stubs and lines = P (1 - |S11|^2 - |S21|^2)
    # with S from the independent ABCD path (filters.evaluate); output = P |S21|^2.
    if not any(isinstance(e, Stub) for e in elements):
        elements.append(Stub(termination="open", length_m=1.0))
    f = _filter(*elements, cable=get_cable(cable))
    pc = power_check(f, power_w=100.0, freq_mhz=f_mhz)
    s = evaluate(f, [f_mhz * 1e6])[0]
    absorbed = 100.0 * (1 - abs(s[0, 0]) ** 2 - abs(s[1, 0]) ** 2)
    assert pc.total_dissipated_w == pytest.approx(absorbed, rel=0.01, abs=1e-6)
    assert pc.output_w == pytest.approx(100.0 * abs(s[1, 0]) ** 2, rel=1e-6, abs=1e-9)
    for st_ in pc.stubs:
        assert st_.max_voltage_peak_v >= st_.tee_voltage_peak_v * (1 - 1e-9)
        assert st_.dissipated_w >= -1e-9


# ---------------------------------------------------------------- with connection hardware


def _hw_parts(freq, cable, hw):
    """scikit-rf parts of a UHF filter (tests/hw_bench.py: lossless PTFE hardware lines)."""
    from hw_bench import PTFE_VF, _media

    fam = hw.family
    tee = _media(freq, fam.tee_z_ohm, PTFE_VF)
    plug = _media(freq, fam.z_pair_ohm, PTFE_VF).line(fam.plug_mm * 1e-3, "m")
    line = _media(freq, cable.z0_ohm, cable.velocity_factor, cable.alpha_np_per_m(freq.f))
    arm = tee.line(fam.tee_through_mm * 1e-3, "m")
    side = tee.line(fam.tee_side_mm * 1e-3, "m")

    def branch(length_m, termination):  # side arm, plug, cable (two-port, junction first)
        body = side ** plug ** line.line(length_m - fam.plug_mm * 1e-3, "m")
        end = line.open() if termination == "open" else line.inductor(hw.short_nh * 1e-9) ** line.short()
        return body, body ** end

    return line, arm, plug, branch


def test_hardware_voltages_at_tees_plugs_and_stub_ends_equal_scikit_rf():
    # A UHF filter (two stubs sharing tee 1, a line section, a stub at tee 2) at 1 kW, 146 MHz.
    # scikit-rf builds the two halves either side of each junction; with the source's EMF
    # sqrt(8 Z P) behind Z = 50 ohm (available power P), V at the radio port is E Zin/(Zin + Z), and
    # the junction's (V, I) is A^-1 (V1, I1) of the radio-side half (Pozar table 4.1, 4.2).
    import skrf

    from notchkit.hardware import Hardware, Model

    hw = Hardware.of("uhf")
    cable = get_cable("RG-213")
    model = Model(cable=cable, hardware=hw, depth_ceiling_db=None)
    els = (Stub(termination="open", length_m=0.40), Stub(termination="short", length_m=0.63),
           Line(length_m=0.52), Stub(termination="open", length_m=0.31))
    filt = Filter(elements=els, cable=model, tee_allowance_m=0.0)
    p_w, f_mhz = 1000.0, 146.0
    pc = power_check(filt, power_w=p_w, freq_mhz=f_mhz)
    freq = skrf.Frequency.from_f([f_mhz * 1e6], unit="hz")
    line, arm, plug, branch = _hw_parts(freq, cable, hw)
    b1, s1 = branch(0.40, "open")
    _, s2 = branch(0.63, "short")
    b3, s3 = branch(0.31, "open")
    match = line.match()
    first = [arm]
    second = [line.shunt(s1), line.shunt(s2), arm, plug, line.line(0.52 - 2 * hw.family.plug_mm * 1e-3, "m"),
              plug, arm]
    third = [line.shunt(s3), arm]

    def cascade(parts):
        net = parts[0]
        for p in parts[1:]:
            net = net ** p
        return net

    e = math.sqrt(8 * 50.0 * p_w)
    zin = cascade(first + second + third + [match]).z[0, 0, 0]
    v1 = e * zin / (zin + 50.0)
    state = np.array([v1, v1 / zin])
    v_j1 = np.linalg.solve(cascade(first).a[0], state)
    v_j2 = np.linalg.solve(cascade(first + second).a[0], state)
    nodes = {n.where: n.voltage_peak_v for n in pc.nodes}
    assert nodes["radio port"] == pytest.approx(abs(v1), rel=1e-6)
    assert nodes["tee 1"] == pytest.approx(abs(v_j1[0]), rel=1e-6)
    assert nodes["tee 2"] == pytest.approx(abs(v_j2[0]), rel=1e-6)
    # the open stubs' end voltages: V_junction = A11 V_end (I_end = 0) along side arm, plug and cable
    ends = {s.stub_id: s.end_voltage_peak_v for s in pc.stubs}
    assert ends["F1-S1"] == pytest.approx(abs(v_j1[0] / b1.a[0, 0, 0]), rel=1e-6)
    assert ends["F1-S3"] == pytest.approx(abs(v_j2[0] / b3.a[0, 0, 0]), rel=1e-6)
    # every connector section is listed with the UHF rating (500 V peak, from memory) and margin
    conn = {c.where: c for c in pc.connectors}
    assert set(conn) == {"tee 1", "F1-S1 plug", "F1-S2 plug", "F1-L1 plugs", "tee 2", "F1-S3 plug"}
    assert pc.connector_family == "uhf" and pc.connector_rating_peak_v == 500.0
    assert conn["tee 1"].voltage_peak_v >= abs(v_j1[0]) - 1e-9  # the junction is on the tee body
    for c in pc.connectors:
        assert c.margin == pytest.approx(500.0 / c.voltage_peak_v)
        assert (f"{c.where}: " in " ".join(pc.warnings)) == (c.margin < 2.0)
    doc = pc.to_json()
    json.dumps(doc, allow_nan=False)
    assert doc["connectors"][0]["rating_peak_v"] == 500.0


def test_connector_rating_from_the_site_and_each_family_has_a_source(tmp_path):
    from notchkit.hardware import FAMILIES
    from notchkit.power import CONNECTOR_RATINGS
    from notchkit.site import load_site
    from notchkit.synthesis import design_request

    for name in FAMILIES:
        value, source = CONNECTOR_RATINGS[name]
        assert value > 0 and ("from memory" in source or "common practice" in source)
    site = tmp_path / "s.yaml"
    site.write_text("site: Fictional Knoll\ncable: RG-213\ntransmitters:\n  - name: vhf\n"
                    "    freq_mhz: 146.5\n    power_w: 50\nhardware: {family: uhf, connector_peak_v: 300}\n")
    settings = load_site(site).hardware
    assert settings.connector_peak_v == 300.0
    (d,) = design_request([(144.0, 148.0)], [(430.0, 440.0)], power_w=1500.0, power_mhz=146.5,
                          hardware=settings).designs
    pc = d.power
    assert pc.connector_rating_peak_v == 300.0
    # 1500 W into 50 ohm is sqrt(2 P Z) = 387 V peak on a matched line: over a 300 V rating
    assert any("EXCEEDS the UHF connectors' rating 300 V peak" in w for w in pc.warnings)


@pytest.mark.parametrize(("f_mhz", "hardware"), [(7.1, None), (14.2, None), (146.0, "uhf")])
def test_rlgc_line_voltages_and_currents_use_its_complex_z0_against_scikit_rf(f_mhz, hardware):
    # line_model: rlgc. scikit-rf's DistributedCircuit computes Z0 = sqrt((R + jwL)/(G + jwC)) and
    # gamma = sqrt((R + jwL)(G + jwC)) (Pozar sec. 2.1) from the line's R, L, G, C per metre; the
    # filter is then built on DefinedGammaZ0 with that complex Z0 (50-ohm ports) at 100 W available
    # (source EMF sqrt(8 Z P)). Junction states are A^-1 (V1, I1) of the radio-side part; an open
    # end's voltage is V_j / A11 and a short end's current V_j / A12 of the stub's own chain (Pozar
    # table 4.1); a line section's voltage at its antenna end is that junction's.
    import skrf
    from skrf.media import DefinedGammaZ0, DistributedCircuit

    from notchkit.hardware import Hardware, Model
    from notchkit.rlgc import rlgc

    cable = get_cable("RG-58")
    hw = Hardware.of(hardware) if hardware else None
    model = Model(cable=cable, hardware=hw, rlgc=True, depth_ceiling_db=None)
    q = C * cable.velocity_factor / (4 * f_mhz * 1e6)
    els = (Stub(termination="open", length_m=1.3 * q), Line(length_m=0.7 * q),
           Stub(termination="short", length_m=2.0 * q))  # a shorted half wave passes
    filt = Filter(elements=els, cable=model, tee_allowance_m=0.0)
    p_w = 100.0
    pc = power_check(filt, power_w=p_w, freq_mhz=f_mhz)
    freq = skrf.Frequency.from_f([f_mhz * 1e6], unit="hz")
    r, ell, g, c = rlgc(cable, freq.f)
    dc = DistributedCircuit(frequency=freq, z0_port=50.0, R=r, L=ell, G=g, C=c)
    z0c, gam = dc.z0_characteristic, dc.gamma
    assert abs(z0c[0].imag) > 0.003 * abs(z0c[0]) or f_mhz > 100  # clearly complex at HF
    line = DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=z0c, gamma=gam)
    plug_m = hw.family.plug_mm * 1e-3 if hw else 0.0
    if hw:
        from hw_bench import PTFE_VF, _media

        _, arm, plug, _ = _hw_parts(freq, cable, hw)
        side = _media(freq, hw.family.tee_z_ohm, PTFE_VF).line(hw.family.tee_side_mm * 1e-3, "m")
    else:
        arm = plug = side = line.thru()

    def branch(length, term):  # junction -> side arm -> plug -> cable -> end
        chain = side ** plug ** line.line(length - plug_m, "m")
        if term == "short" and hw:
            chain = chain ** line.inductor(hw.short_nh * 1e-9)
        end = line.open() if term == "open" else line.short()
        return chain, chain ** end

    b1, s1 = branch(els[0].length_m, "open")
    b3, s3 = branch(els[2].length_m, "short")
    first = [arm]
    second = [line.shunt(s1), arm, plug, line.line(els[1].length_m - 2 * plug_m, "m"), plug, arm]
    third = [line.shunt(s3), arm, line.match()]

    def cascade(parts):
        net = parts[0]
        for p in parts[1:]:
            net = net ** p
        return net

    zin = cascade(first + second + third).z[0, 0, 0]
    v1 = math.sqrt(8 * 50.0 * p_w) * zin / (zin + 50.0)
    state = np.array([v1, v1 / zin])
    v_j1 = np.linalg.solve(cascade(first).a[0], state)
    v_j2 = np.linalg.solve(cascade(first + second).a[0], state)
    stubs = {s.stub_id: s for s in pc.stubs}
    assert {n.where: n.voltage_peak_v for n in pc.nodes}["tee 2"] == pytest.approx(abs(v_j2[0]), rel=1e-6)
    assert stubs["F1-S1"].end_voltage_peak_v == pytest.approx(abs(v_j1[0] / b1.a[0, 0, 0]), rel=1e-6)
    assert stubs["F1-S2"].end_current_peak_a == pytest.approx(abs(v_j2[0] / b3.a[0, 0, 1]), rel=1e-6)
    # the largest voltage on the open stub: along its cable, V(x) = A11(x) V_end from the end
    d = np.linspace(0.0, els[0].length_m - plug_m, 2001)
    v_end = v_j1[0] / b1.a[0, 0, 0]
    vmax = np.max(np.abs(v_end * np.cosh(gam[0] * d)))
    assert stubs["F1-S1"].max_voltage_peak_v == pytest.approx(vmax, rel=1e-4)
    # energy: the stubs and the line section take P (1 - |S11|^2 - |S21|^2)
    s = cascade(first + second + [line.shunt(s3), arm]).s[0]
    assert pc.total_dissipated_w == pytest.approx(p_w * (1 - abs(s[0, 0]) ** 2 - abs(s[1, 0]) ** 2), rel=1e-3)
