"""notchkit.lines and notchkit.filters against textbook formulas and facts of the trade.

Each check value is derived from a formula named beside it, not from running the
code under test. Pozar = D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from notchkit import lines
from notchkit.cables import Cable, get_cable
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch

Z_SYS = 50.0


def lossless(z0_ohm: float = 50.0, vf: float = 0.66) -> Cable:
    return Cable(name="lossless test line", z0_ohm=z0_ohm, velocity_factor=vf)


def quarter_wave_m(freq_hz: float, vf: float) -> float:
    # lambda/4 in the cable = c / (4 f) * VF (textbook: v_p = VF c, lambda = v_p / f).
    return 299_792_458.0 / (4.0 * freq_hz) * vf


def test_speed_of_light_is_the_si_value():
    # SI definition of the metre: c = 299 792 458 m/s exactly.
    assert lines.C0 == 299_792_458.0


def test_phase_constant_gives_quarter_wave_at_c_over_4f_times_vf():
    # beta = omega / v_p with v_p = VF * c (Pozar sec. 2.1): beta * lambda/4 = pi/2.
    for f, vf in ((7.1e6, 0.66), (146.52e6, 0.78), (446.0e6, 0.695)):
        g = lines.gamma(f, 0.0, vf)
        assert g.real == 0.0
        assert g.imag * quarter_wave_m(f, vf) == pytest.approx(math.pi / 2, rel=1e-12)


def test_gamma_carries_alpha_unchanged():
    g = lines.gamma(np.array([1e6, 1e8]), np.array([0.001, 0.02]), 0.66)
    np.testing.assert_array_equal(g.real, [0.001, 0.02])


def test_lossless_open_quarter_wave_is_a_short_and_half_wave_is_open():
    # Pozar sec. 2.3: open line Zin = -j Z0 cot(beta l): 0 at lambda/4, infinite at lambda/2.
    f, vf, z0 = 146.0e6, 0.66, 50.0
    g = lines.gamma(f, 0.0, vf)
    q = quarter_wave_m(f, vf)
    assert abs(lines.zin_open(z0, g, q)) < 1e-9 * z0
    assert abs(lines.zin_open(z0, g, 2 * q)) > 1e9 * z0
    # shorted line Zin = j Z0 tan(beta l): infinite at lambda/4, 0 at lambda/2
    assert abs(lines.zin_short(z0, g, q)) > 1e9 * z0
    assert abs(lines.zin_short(z0, g, 2 * q)) < 1e-9 * z0
    # admittance forms are the reciprocals
    assert abs(lines.yin_short(z0, g, q)) < 1e-9 / z0
    assert abs(lines.yin_open(z0, g, 2 * q)) < 1e-9 / z0


def test_quarter_wave_transformer():
    # Pozar sec. 2.5: a lossless lambda/4 line of Z1 turns ZL into Z1^2 / ZL.
    f, vf = 100e6, 0.8
    g = lines.gamma(f, 0.0, vf)
    zin = lines.zin_terminated(75.0, g, quarter_wave_m(f, vf), 112.5)
    assert zin == pytest.approx(75.0**2 / 112.5, rel=1e-9)


def test_lossy_terminated_line_matches_pozar_eq_2_91():
    # Pozar eq. 2.91, Z_in = Z0 (ZL + Z0 tanh(gl)) / (Z0 + ZL tanh(gl)), written here
    # with exponentials (reflection-coefficient form, Pozar eq. 2.43 with gamma):
    # Z_in = Z0 (1 + G e^{-2gl}) / (1 - G e^{-2gl}), G = (ZL - Z0) / (ZL + Z0).
    rng = np.random.default_rng(7)
    z0 = 50.0
    zl = rng.uniform(5, 200, 20) + 1j * rng.uniform(-100, 100, 20)
    g = rng.uniform(0.001, 0.05, 20) + 1j * rng.uniform(0.5, 20, 20)
    length = rng.uniform(0.05, 5.0, 20)
    gam = (zl - z0) / (zl + z0)
    e = np.exp(-2 * g * length)
    expected = z0 * (1 + gam * e) / (1 - gam * e)
    np.testing.assert_allclose(lines.zin_terminated(z0, g, length, zl), expected, rtol=1e-10)


def test_matched_line_loss_is_the_cable_table_loss():
    # A matched line of length l passes S21 = e^{-gamma l} (Pozar sec. 2.7), so its
    # insertion loss is the cable's dB/100 m times l/100 (definition of matched loss).
    cable = get_cable("RG-213")
    f = np.array([3.5e6, 50e6, 146e6, 446e6, 1.2e9])
    filt = Filter(elements=(Stub(termination="open", length_m=0.0), Line(length_m=37.0)),
                  cable=cable)
    s = evaluate(filt, f)
    loss_db = -20 * np.log10(np.abs(s[:, 1, 0]))
    np.testing.assert_allclose(loss_db, cable.loss_db_per_100m(f / 1e6) * 0.37, rtol=1e-9)
    # and the phase: S21 = e^{-alpha l} e^{-j beta l}, beta = 2 pi f / (VF c)
    alpha = cable.loss_db_per_100m(f / 1e6) / 100 / (20 / math.log(10))
    beta = 2 * np.pi * f / (cable.velocity_factor * 299_792_458.0)
    np.testing.assert_allclose(s[:, 1, 0], np.exp(-(alpha + 1j * beta) * 37.0), rtol=1e-9)


@pytest.mark.parametrize("name", ["RG-213", "RG-58", "RG-174"])
@pytest.mark.parametrize("f0_mhz", [14.2, 146.0, 446.0])
def test_lossy_open_quarter_wave_notch_depth(name, f0_mhz):
    # At resonance gamma l = alpha l + j pi/2, so Z_in = Z0 coth(gamma l) = Z0 tanh(alpha l)
    # (Pozar sec. 2.7, lossy line input impedance; coth(x + j pi/2) = tanh x).
    # A shunt impedance Z across a line between two Z_sys ports gives
    # S21 = 2 Z / (2 Z + Z_sys) (Pozar table 4.2, ABCD of a shunt element -> S).
    # For small alpha l: |S21| ~ 2 Z0 alpha l / Z_sys.
    cable = get_cable(name)
    f0 = f0_mhz * 1e6
    q = quarter_wave_m(f0, cable.velocity_factor)
    al = float(cable.alpha_np_per_m(f0)) * q
    z = cable.z0_ohm * math.tanh(al)
    exact = 2 * z / (2 * z + Z_SYS)
    filt = Filter(elements=(Stub(termination="open", length_m=q),), cable=cable)
    s21 = evaluate(filt, [f0])[0, 1, 0]
    assert s21 == pytest.approx(exact, rel=1e-9)
    s21_batch, s11_batch = evaluate_batch(("open",), [[q]], cable, [f0])
    assert s21_batch[0, 0] == pytest.approx(exact, rel=1e-9)
    assert s11_batch[0, 0] == pytest.approx(exact - 1.0, rel=1e-9)  # shunt: S11 = S21 - 1
    approx_db = 20 * math.log10(2 * cable.z0_ohm * al / Z_SYS)
    # the approximation drops the 2Z in the denominator and tanh -> its argument:
    # its error is about 20 log10(1 + 2 Z0 alpha l / Z_sys) dB
    bound = 20 * math.log10(1 + 2 * cable.z0_ohm * al / Z_SYS) * 1.05 + 1e-6
    assert 20 * math.log10(abs(s21)) == pytest.approx(approx_db, abs=bound)
    assert bound < 1.0 and approx_db < -18  # a real, deep notch: the test is not vacuous


def test_deeper_notch_on_lower_loss_cable():
    # Follows from |S21| ~ 2 Z0 alpha l / Z_sys: RG-213 (lower loss) notches deeper than RG-58.
    f0 = 146e6
    depth = {}
    for name in ("RG-58", "RG-213"):
        c = get_cable(name)
        q = quarter_wave_m(f0, c.velocity_factor)
        s21, _ = evaluate_batch(("open",), [[q]], c, [f0])
        depth[name] = 20 * np.log10(abs(s21[0, 0]))
    assert depth["RG-213"] < depth["RG-58"] - 5


def _db(x):
    return 20 * np.log10(np.abs(x))


@pytest.mark.parametrize("name", ["lossless", "RG-213"])
def test_shorted_quarter_wave_passes_f_and_3f_notches_2f(name):
    # Common practice: a shorted lambda/4 stub is transparent at f and its odd
    # harmonics and a short at 2f (where it is lambda/2 long).
    cable = lossless() if name == "lossless" else get_cable(name)
    f0 = 50e6
    q = quarter_wave_m(f0, cable.velocity_factor)
    s21, _ = evaluate_batch(("short",), [[q]], cable, [f0, 2 * f0, 3 * f0])
    db = _db(s21[0])
    assert db[0] > -0.05 and db[2] > -0.05
    assert db[1] < -30


@pytest.mark.parametrize("name", ["lossless", "RG-213"])
def test_open_quarter_wave_notches_f_and_3f_passes_2f(name):
    # Common practice: an open lambda/4 stub shorts f and 3f and is transparent at 2f.
    cable = lossless() if name == "lossless" else get_cable(name)
    f0 = 50e6
    q = quarter_wave_m(f0, cable.velocity_factor)
    s21, _ = evaluate_batch(("open",), [[q]], cable, [f0, 2 * f0, 3 * f0])
    db = _db(s21[0])
    assert db[0] < -30 and db[2] < -30
    assert db[1] > -0.05


def test_open_stub_notch_is_at_the_quarter_wave_frequency():
    # The deepest point of a dense sweep lies at f0 = c VF / (4 l) within the sweep step.
    cable = get_cable("RG-58")
    f0 = 146.52e6
    q = quarter_wave_m(f0, cable.velocity_factor)
    f = np.linspace(140e6, 153e6, 13001)
    s21, _ = evaluate_batch(("open",), [[q]], cable, f)
    assert f[np.argmin(np.abs(s21[0]))] == pytest.approx(f0, abs=2e3)


def test_lossless_filters_conserve_power_and_are_reciprocal():
    # Lossless reciprocal network: S unitary and S21 = S12 (Pozar sec. 4.3).
    rng = np.random.default_rng(11)
    cable = lossless(z0_ohm=50.0, vf=0.8)
    f = np.linspace(10e6, 500e6, 57)
    for _ in range(20):
        kinds = rng.choice(["open", "short", "line"], size=rng.integers(1, 5))
        if "line" not in kinds or all(k == "line" for k in kinds):
            kinds = np.append(kinds, "open")
        elements = tuple(
            Line(length_m=float(x)) if k == "line"
            else Stub(termination=str(k), length_m=float(x))
            for k, x in zip(kinds, rng.uniform(0.05, 2.0, len(kinds)), strict=True)
        )
        s = evaluate(Filter(elements=elements, cable=cable), f)
        np.testing.assert_allclose(s[:, 0, 1], s[:, 1, 0], rtol=1e-9, atol=1e-12)
        power = np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2
        np.testing.assert_allclose(power, 1.0, atol=1e-9)


def test_lossy_filters_absorb_power():
    # Passive lossy network: |S11|^2 + |S21|^2 < 1.
    cable = get_cable("RG-174")
    f = np.linspace(10e6, 1e9, 101)
    filt = Filter(elements=(Stub(termination="open", length_m=0.4), Line(length_m=0.3),
                            Stub(termination="short", length_m=0.7)), cable=cable)
    s = evaluate(filt, f)
    power = np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2
    assert np.all(power < 1.0)


def test_shunt_and_series_abcd_to_s():
    # Pozar table 4.2 (ABCD -> S, equal real references Z): shunt Y gives
    # S21 = 2 / (2 + Y Z), S11 = -Y Z / (2 + Y Z); series Zs gives S21 = 2 Z / (2 Z + Zs).
    y, z = 0.013 - 0.02j, 50.0
    s = lines.abcd_to_s(lines.abcd_shunt(y), z, z)
    assert s[1, 0] == pytest.approx(2 / (2 + y * z))
    assert s[0, 0] == pytest.approx(-y * z / (2 + y * z))
    zs = 30 + 40j
    s = lines.abcd_to_s(lines.abcd_series(zs), z, z)
    assert s[1, 0] == pytest.approx(2 * z / (2 * z + zs))
    assert s[0, 0] == pytest.approx(zs / (2 * z + zs))


def test_consecutive_stubs_share_one_tee():
    # Two stubs with no line between them: their admittances add at one node
    # (Kirchhoff), so the filter equals one shunt of Y1 + Y2.
    cable = get_cable("RG-213")
    f = np.linspace(20e6, 300e6, 31)
    g = lines.gamma(f, cable.alpha_np_per_m(f), cable.velocity_factor)
    y = lines.yin_open(cable.z0_ohm, g, 0.61) + lines.yin_short(cable.z0_ohm, g, 0.93)
    expected = 2 / (2 + y * Z_SYS)
    filt = Filter(elements=(Stub(termination="open", length_m=0.61),
                            Stub(termination="short", length_m=0.93)), cable=cable)
    np.testing.assert_allclose(evaluate(filt, f)[:, 1, 0], expected, rtol=1e-9)
    s21, _ = evaluate_batch(("open", "short"), [[0.61, 0.93]], cable, f)
    np.testing.assert_allclose(s21[0], expected, rtol=1e-9)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.sampled_from([0.25, 0.5, 1.0, 1.5, 2.0]), min_size=1, max_size=40))
def test_distinct_rows_gives_back_every_row(lengths):
    # The batched cores compute an element once per distinct length and copy it
    # (notchkit.lines.distinct_rows): values[where] must be the column itself, the
    # values strictly ascending, and a column with more than half its rows distinct
    # (or a chunk too small to search) is left alone.
    from notchkit.lines import distinct_rows

    col = np.array(lengths)
    found = distinct_rows(col, points=100, min_points=400)
    if len(col) < 4 or len(set(lengths)) * 2 > len(col):
        assert found is None
        return
    values, where = found
    assert values.shape == (len(set(lengths)), 1)
    assert np.all(np.diff(values[:, 0]) > 0)
    assert np.array_equal(values[where, 0], col)
    assert distinct_rows(col, points=1, min_points=10**6) is None
