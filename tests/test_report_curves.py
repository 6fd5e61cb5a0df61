"""The curve data, its CSV and its plot (notchkit.report.curves).

References: scikit-rf 2.2's own transmission-line media (DefinedGammaZ0, an
independent model of the same lossy stub); Pozar, *Microwave Engineering*,
4th ed., sec. 2.3 (an open stub a quarter wave long presents a short circuit:
the notch of an open stub sits at f = c VF / (4 l)).
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

from notchkit.cables import get_cable
from notchkit.filters import Filter, Line, Stub
from notchkit.lines import C0, db20
from notchkit.report.curves import (
    LOG_AXIS_RATIO,
    curve_csv_text,
    curve_data,
    curve_figure,
    curve_grid,
    figure_bytes,
    notch_spans,
    pass_spans,
    write_curve_csv,
)

CABLE = get_cable("RG-213")
VF = CABLE.velocity_factor


def _quarter_m(f_mhz: float) -> float:
    return C0 * VF / (4 * f_mhz * 1e6)  # Pozar sec. 2.3: lambda/4 in a line of velocity factor VF


def test_log_axis_only_when_bands_span_more_than_3_to_1():
    vhf = pass_spans([(144.0, 148.0)])
    uhf = notch_spans([(430.0, 450.0, 30.0)])
    near = notch_spans([(155.0, 156.0, 25.0)])
    assert 450.0 / 144.0 > LOG_AXIS_RATIO
    assert curve_grid(vhf + uhf)[1] is True
    assert curve_grid(vhf + near)[1] is False


def test_grid_covers_every_band_with_points_inside():
    spans = pass_spans([(144.0, 148.0)]) + notch_spans([(155.0, 155.02, 25.0)])
    f, _ = curve_grid(spans)
    assert f[0] < 144.0 and f[-1] > 155.02
    assert np.all(np.diff(f) > 0)
    inside = f[(f >= 155.0) & (f <= 155.02)]
    assert inside.size >= 20


def test_curve_matches_scikit_rf_media_model():
    import skrf
    from skrf.media import DefinedGammaZ0

    filt = Filter(elements=(Stub(termination="open", length_m=_quarter_m(155.5)), Line(length_m=0.4),
                            Stub(termination="short", length_m=2 * _quarter_m(155.5))),
                  cable=CABLE, tee_allowance_m=0.03)
    spans = pass_spans([(144.0, 148.0)], 0.5) + notch_spans([(155.0, 156.0, 25.0)])
    cd = curve_data(filt, spans)
    f_hz = cd.freq_mhz * 1e6
    freq = skrf.Frequency.from_f(f_hz, unit="hz")
    alpha = CABLE.alpha_np_per_m(f_hz)
    gam = alpha + 1j * 2 * np.pi * f_hz / (C0 * VF)
    m = DefinedGammaZ0(frequency=freq, z0=CABLE.z0_ohm, gamma=gam, z0_port=50.0)
    ntw = (m.shunt_delay_open(filt.elements[0].length_m, unit="m")
           ** m.line(0.4, unit="m")
           ** m.shunt_delay_short(filt.elements[2].length_m, unit="m"))
    np.testing.assert_allclose(cd.s21_db, db20(ntw.s[:, 1, 0]), atol=1e-6)
    np.testing.assert_allclose(cd.s11_db, db20(ntw.s[:, 0, 0]), atol=1e-6)


def test_open_quarter_wave_notch_is_at_the_quarter_wave_frequency():
    # Pozar sec. 2.3; loss shifts the minimum negligibly at this Q (well under 0.1 %).
    filt = Filter(elements=(Stub(termination="open", length_m=_quarter_m(440.0)),), cable=CABLE)
    cd = curve_data(filt, pass_spans([(144.0, 148.0)]) + notch_spans([(435.0, 445.0, 20.0)]))
    f_min = cd.freq_mhz[np.argmin(cd.s21_db)]
    assert f_min == pytest.approx(440.0, rel=2e-3)


def test_csv_has_three_named_columns_matching_the_curve(tmp_path):
    filt = Filter(elements=(Stub(termination="open", length_m=_quarter_m(155.5)),), cable=CABLE)
    cd = curve_data(filt, pass_spans([(144.0, 148.0)]) + notch_spans([(155.0, 156.0, 25.0)]))
    text = curve_csv_text(cd)
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == ["freq_mhz", "s21_db", "s11_db"]
    data = np.array(rows[1:], dtype=float)
    assert data.shape == (cd.freq_mhz.size, 3)
    np.testing.assert_allclose(data[:, 0], cd.freq_mhz, atol=1e-6)
    np.testing.assert_allclose(data[:, 1], cd.s21_db, atol=1e-4)
    np.testing.assert_allclose(data[:, 2], cd.s11_db, atol=1e-4)
    path = write_curve_csv(cd, tmp_path / "f1.csv")
    assert path.read_text() == text
    assert [p.name for p in tmp_path.iterdir()] == ["f1.csv"]  # no temporary file left behind


def test_plot_has_units_on_both_axes_and_renders_png():
    filt = Filter(elements=(Stub(termination="open", length_m=_quarter_m(440.0)),), cable=CABLE)
    p, n = pass_spans([(144.0, 148.0)], 0.5), notch_spans([(435.0, 445.0, 20.0)])
    fig = curve_figure(curve_data(filt, p + n), p, n, title="F1")
    ax = fig.axes[0]
    assert "(MHz)" in ax.get_xlabel()
    assert "(dB)" in ax.get_ylabel()
    assert ax.get_xscale() == "log"
    png = figure_bytes(fig, "png", dpi=50)
    assert png[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 sec. 5.2


# The plot's ticks are chosen once (plot_layout) for both renderers, matplotlib's
# PNG and the PDF. matplotlib's own locators, a general-purpose reference, must
# pick the same values inside the axis.


@pytest.mark.parametrize("k", range(100))
def test_linear_ticks_are_matplotlibs_max_n_locator(k):
    from matplotlib.ticker import MaxNLocator

    from notchkit.report.curves import linear_ticks

    rng = np.random.default_rng(k)
    lo = float(rng.uniform(-130.0, 500.0))
    hi = lo + float(10 ** rng.uniform(-2.0, 3.0))
    for nbins, steps in ((7, (1.0, 2.0, 5.0, 10.0)), (8, (1.0, 2.0, 2.5, 5.0, 10.0))):
        eps = 1e-9 * (hi - lo)
        ref = [v for v in MaxNLocator(nbins=nbins, steps=list(steps)).tick_values(lo, hi)
               if lo - eps <= v <= hi + eps]
        got = linear_ticks(lo, hi, nbins, steps)
        np.testing.assert_allclose([v for v, _ in got], ref, rtol=0, atol=eps)
        for v, label in got:  # each label spells its value
            assert float(label) == pytest.approx(v, abs=eps)


@pytest.mark.parametrize("k", range(60))
def test_log_ticks_are_matplotlibs_log_locator(k):
    from matplotlib.ticker import LogLocator

    from notchkit.report.curves import log_ticks

    rng = np.random.default_rng(1000 + k)
    lo = float(10 ** rng.uniform(-0.5, 3.5))
    hi = lo * float(10 ** rng.uniform(0.48, 1.5))  # the log axis is used beyond 3:1
    subs = (1.0, 1.5, 2.0, 3.0, 5.0, 7.0)
    ref = [v for v in LogLocator(base=10, subs=subs, numticks=1000).tick_values(lo, hi)
           if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)]
    got = log_ticks(lo, hi)
    if len(ref) <= 12:
        np.testing.assert_allclose([v for v, _ in got], ref, rtol=1e-12)
    else:  # too crowded: fewer multiples of each decade, never more than 12
        assert 0 < len(got) <= 12 and {v for v, _ in got} <= {float(v) for v in ref}
