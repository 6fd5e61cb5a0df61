"""Physical properties of the filter model and agreement of its two evaluation paths.

Independent references (scikit-rf's own media, closed forms) are in
test_filters_skrf.py and test_lines_reference.py; this file checks properties
that any correct two-port model must have.
"""

from __future__ import annotations

import numpy as np
import pytest

from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch, write_touchstone
from notchkit.lines import C0


class _Medium:
    """A plain medium: 50 ohm, VF 0.66, loss rising as sqrt(f) (conductor loss shape)."""

    z0_ohm = 50.0
    velocity_factor = 0.66

    def __init__(self, k: float = 2e-6):
        self.k = k

    def alpha_np_per_m(self, freq_hz):
        return self.k * np.sqrt(np.asarray(freq_hz, dtype=float))


FREQ = np.linspace(1e6, 500e6, 401)
RNG = np.random.default_rng(20261202)


def _random_filter(rng, medium):
    n = int(rng.integers(1, 5))
    elements = []
    for _ in range(n):
        r = rng.random()
        if r < 0.4:
            elements.append(Stub(termination="open", length_m=float(rng.uniform(0.05, 8.0))))
        elif r < 0.8:
            elements.append(Stub(termination="short", length_m=float(rng.uniform(0.05, 8.0))))
        else:
            elements.append(Line(length_m=float(rng.uniform(0.05, 8.0))))
    if not any(isinstance(e, Stub) for e in elements):
        elements.append(Stub(termination="open", length_m=1.0))
    return Filter(elements=tuple(elements), cable=medium)


def test_batch_equals_explicit_abcd_path():
    medium = _Medium()
    for _ in range(50):
        flt = _random_filter(RNG, medium)
        s = evaluate(flt, FREQ)
        s21, s11 = evaluate_batch(flt.kinds, flt.lengths_m, medium, FREQ)
        np.testing.assert_allclose(s21[0], s[:, 1, 0], atol=1e-12)
        np.testing.assert_allclose(s11[0], s[:, 0, 0], atol=1e-12)


def test_batch_many_candidates_match_one_by_one():
    medium = _Medium()
    kinds = ("open", "line", "short")
    lengths = RNG.uniform(0.1, 5.0, size=(300, 3))  # more than one memory chunk
    s21, s11 = evaluate_batch(kinds, lengths, medium, FREQ)
    for i in (0, 57, 299):
        one21, one11 = evaluate_batch(kinds, lengths[i], medium, FREQ)
        np.testing.assert_allclose(s21[i], one21[0], atol=1e-13)
        np.testing.assert_allclose(s11[i], one11[0], atol=1e-13)


def test_reciprocal_and_symmetric_where_it_must_be():
    # A passive network of reciprocal lines is reciprocal: S21 == S12 (Pozar sec. 4.3).
    medium = _Medium()
    for _ in range(20):
        s = evaluate(_random_filter(RNG, medium), FREQ)
        np.testing.assert_allclose(s[:, 0, 1], s[:, 1, 0], atol=1e-12)


def test_lossless_filter_conserves_power():
    # Lossless network: |S11|^2 + |S21|^2 = 1 (unitary S-matrix, Pozar sec. 4.3).
    medium = _Medium(k=0.0)
    for _ in range(20):
        s = evaluate(_random_filter(RNG, medium), FREQ)
        np.testing.assert_allclose(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2, 1.0, atol=1e-9)


def test_lossy_filter_absorbs_power():
    medium = _Medium(k=5e-6)
    for _ in range(20):
        s = evaluate(_random_filter(RNG, medium), FREQ)
        assert np.all(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2 <= 1.0 + 1e-12)


def test_stubs_at_one_tee_add_admittances():
    # Two shunt admittances at one node equal one admittance of their sum.
    medium = _Medium()
    f = np.array([10e6, 50e6, 144e6])
    two, _ = evaluate_batch(("open", "short"), [1.3, 0.7], medium, f)
    from notchkit.lines import abcd_shunt, abcd_to_s, gamma, yin_open, yin_short

    g = gamma(f, medium.alpha_np_per_m(f), medium.velocity_factor)
    y = yin_open(50.0, g, 1.3) + yin_short(50.0, g, 0.7)
    np.testing.assert_allclose(two[0], abcd_to_s(abcd_shunt(y))[:, 1, 0], atol=1e-13)


def test_zero_length_short_is_a_dead_short_and_zero_length_open_is_nothing():
    medium = _Medium()
    s21_short, _ = evaluate_batch(("short",), [0.0], medium, FREQ)
    s21_open, s11_open = evaluate_batch(("open",), [0.0], medium, FREQ)
    assert np.all(np.isfinite(s21_short))
    assert np.all(np.abs(s21_short) < 1e-6)
    np.testing.assert_allclose(np.abs(s21_open), 1.0, atol=1e-9)
    np.testing.assert_allclose(np.abs(s11_open), 0.0, atol=1e-9)


def test_very_long_stub_stays_finite():
    medium = _Medium(k=1e-5)
    s21, s11 = evaluate_batch(("open", "short"), [5000.0, 3000.0], medium, np.linspace(0.1e6, 6e9, 301))
    assert np.all(np.isfinite(s21)) and np.all(np.isfinite(s11))


def test_open_quarter_wave_notches_its_frequency():
    # Common practice: an open quarter-wave stub shorts the line at its frequency.
    medium = _Medium(k=0.0)
    f0 = 7.15e6
    length = C0 * medium.velocity_factor / (4 * f0)
    s21, _ = evaluate_batch(("open",), [length], medium, [f0])
    assert abs(s21[0, 0]) < 1e-9


def test_bad_elements_are_refused():
    with pytest.raises(DesignError, match="termination"):
        Stub(termination="closed", length_m=1.0)
    with pytest.raises(DesignError, match="finite"):
        Line(length_m=float("nan"))
    with pytest.raises(DesignError, match="at least one stub"):
        Filter(elements=(Line(length_m=1.0),), cable=_Medium())
    with pytest.raises(DesignError, match="kind"):
        evaluate_batch(("stub",), [1.0], _Medium(), FREQ)


def test_tees_group_consecutive_stubs():
    flt = Filter(
        elements=(
            Stub(termination="open", length_m=1.0),
            Stub(termination="short", length_m=1.0),
            Line(length_m=2.0),
            Stub(termination="open", length_m=1.0),
        ),
        cable=_Medium(),
        tee_allowance_m=0.03,
    )
    assert flt.tees() == [[0, 1], [3]]
    assert flt.cut_length_m(flt.stubs[0]) == pytest.approx(0.97)
    assert flt.total_cable_m == pytest.approx(3 * 0.97 + 2.0)


def test_touchstone_round_trip(tmp_path):
    import skrf

    flt = Filter(elements=(Stub(termination="open", length_m=1.7),), cable=_Medium())
    path = write_touchstone(flt, FREQ, tmp_path / "f1.s2p", comment="test filter")
    net = skrf.Network(str(path))
    np.testing.assert_allclose(net.s, evaluate(flt, FREQ), atol=1e-9)
    assert not list(tmp_path.glob(".notchkit-*")), "temporary files left behind"
