"""Element kinds as objects: registry, ids numbered in one place, each kind's two-ports.

Reference two-ports are compared with scikit-rf 2.x media
(``skrf.media.DefinedGammaZ0``: ``shunt_delay_open``, ``shunt_delay_short``,
``line``); the standing-wave hook with the textbook line equations
V(d) = V+ e^{gd} + V- e^{-gd} (Pozar, Microwave Engineering, 4th ed., sec. 2.1).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import skrf

from notchkit.cables import get_cable
from notchkit.elements import KINDS, LINE, OPEN, SHORT, Kind, element_ids, kind_of
from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch

C0 = 299_792_458.0  # m/s, SI definition
F = np.linspace(5e6, 500e6, 97)


def _media(cable, f=F):
    gam = cable.alpha_np_per_m(f) + 1j * 2 * np.pi * f / (C0 * cable.velocity_factor)
    return skrf.media.DefinedGammaZ0(frequency=skrf.Frequency.from_f(f, unit="hz"), z0_port=50.0,
                                     z0=cable.z0_ohm, gamma=gam), gam


def test_kinds_are_objects_that_keep_their_names():
    assert OPEN == "open" and SHORT == "short" and LINE == "line"
    assert isinstance(OPEN, Kind) and kind_of("short") is SHORT and kind_of(LINE) is LINE
    assert json.dumps([OPEN, LINE]) == '["open", "line"]'
    assert sorted((LINE, SHORT, OPEN)) == ["line", "open", "short"]
    assert {"open": 1}[OPEN] == 1
    assert set(KINDS) == {"open", "short", "line"}
    assert Stub(termination="open", length_m=1.0).kind is OPEN
    assert Line(length_m=1.0).kind is LINE
    with pytest.raises(DesignError, match="element kind 'tee'"):
        kind_of("tee")


def test_ids_numbered_in_one_place_per_prefix():
    filt = Filter(elements=(Stub(termination="open", length_m=1.0), Stub(termination="short", length_m=1.0),
                            Line(length_m=0.5), Stub(termination="open", length_m=1.0)),
                  cable=get_cable("RG-213"))
    assert element_ids(filt, "F2") == ("F2-S1", "F2-S2", "F2-L1", "F2-S3")
    assert element_ids(["line", "open"], "") == ("L1", "S1")


@pytest.mark.parametrize("kind", [OPEN, SHORT, LINE])
def test_each_kind_reference_two_port_equals_scikit_rf(kind):
    cable = get_cable("RG-58")
    media, gam = _media(cable)
    length = 0.731
    ref = {"open": media.shunt_delay_open, "short": media.shunt_delay_short, "line": media.line}[kind](
        length, unit="m")
    mat, log_scale = kind.abcd(cable.z0_ohm, gam, length)
    abcd = mat * np.exp(np.asarray(log_scale))[..., None, None] if np.ndim(log_scale) else mat
    np.testing.assert_allclose(abcd, ref.a, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("kind", ["open", "short", "line"])
def test_batched_hook_equals_reference_hook(kind):
    cable = get_cable("RG-8X")
    lengths = np.array([[0.05], [0.4], [1.3], [2.9]])
    kinds = (kind_of(kind), LINE) if kind != "line" else (OPEN, LINE)  # a filter needs a stub
    both = np.column_stack([lengths[:, 0], np.full(4, 0.3)])
    s21, s11 = evaluate_batch(kinds, both, cable, F)
    for i in range(4):
        els = tuple(Line(length_m=x) if k == "line" else Stub(termination=k, length_m=x)
                    for k, x in zip(kinds, both[i], strict=True))
        s = evaluate(Filter(elements=els, cable=cable), F)
        np.testing.assert_allclose(s21[i], s[:, 1, 0], rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(s11[i], s[:, 0, 0], rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("kind", [OPEN, SHORT])
def test_standing_wave_hook_matches_line_equations(kind):
    # Pozar sec. 2.1: with the load at d = 0, V(d) = V_L (cosh gd + Z0/Z_L sinh gd),
    # I(d) = V_L (sinh gd / Z0 + cosh gd / Z_L); open: Z_L -> inf, short: V_L = 0, I(d) = I_L cosh gd.
    cable = get_cable("RG-213")
    f = 146e6
    g = complex(cable.alpha_np_per_m(f) + 1j * 2 * np.pi * f / (C0 * cable.velocity_factor))
    length = 0.37
    d = np.linspace(0.0, length, 11)
    v, i, end_v, end_i = kind.standing_wave(100.0 + 0j, cable.z0_ohm, g, length, d)
    assert abs(v[-1] - 100.0) < 1e-9  # the tee voltage is the one given
    # The input admittance of the hook's wave equals the kind's own admittance (reference physics).
    assert abs(i[-1] / v[-1] - complex(kind.admittance(cable.z0_ohm, g, length))) < 1e-12
    if kind is OPEN:
        assert end_i == 0.0 and abs(v[0]) == pytest.approx(end_v)
    else:
        assert end_v == 0.0 and abs(i[0]) == pytest.approx(end_i) and abs(v[0]) < 1e-12


def test_a_new_kind_needs_only_its_class():
    # A lumped shunt capacitor as a new kind, defined here without touching any module: the
    # batched core, the reference cascade and the ids use it; checked against scikit-rf's
    # media.shunt_capacitor (Y = j omega C).
    from dataclasses import dataclass

    from notchkit.lines import abcd_shunt

    class ShuntCap(Kind):
        prefix = "C"
        shunt = True

        def batch_into(self, sweep, x, y0, work, out):
            out[...] = 1j * 2 * np.pi * sweep.f[None, :] * x * 1e-12  # x: capacitance in pF
            return out

        def abcd(self, z0, g, length_m):
            f = np.asarray(g).imag * C0 * cable.velocity_factor / (2 * np.pi)
            return abcd_shunt(1j * 2 * np.pi * f * length_m * 1e-12), 0.0

    @dataclass(frozen=True)
    class Cap:
        length_m: float  # the capacitance, pF (the element's one number)
        kind: Kind = ShuntCap("cap")

    cable = get_cable("RG-213")
    stub = Stub(termination="open", length_m=0.4)
    filt = Filter(elements=(stub, Line(length_m=0.2), Cap(length_m=12.0)), cable=cable)
    s21, s11 = evaluate_batch(filt.kinds, filt.lengths_m, cable, F)
    np.testing.assert_allclose(s21[0], evaluate(filt, F)[:, 1, 0], rtol=1e-9, atol=1e-12)
    media, _ = _media(cable)
    ref = media.shunt_delay_open(0.4, unit="m") ** media.line(0.2, unit="m") ** media.shunt_capacitor(12e-12)
    np.testing.assert_allclose(s21[0], ref.s[:, 1, 0], rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(s11[0], ref.s[:, 0, 0], rtol=1e-9, atol=1e-12)
    assert element_ids(filt, "F1") == ("F1-S1", "F1-L1", "F1-C1")
