"""Cut list: lengths, unit conversions and trim rate against textbook formulas and the model."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from notchkit.cables import get_cable
from notchkit.cutlist import (
    cut_list,
    electrical_degrees,
    format_cut_list,
    format_length,
    inches_16ths,
    quarter_wave_m,
    stub_resonance_mhz,
)
from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub, evaluate_batch
from notchkit.site.model import DEFAULT_TEE_ALLOWANCE_M

C = 299_792_458.0  # speed of light, m/s (exact by the SI definition of the metre)
INCH_M = 0.0254  # 1 in = 25.4 mm exactly (NIST SP 811, appendix B.8)


def _filter(*elements, allowance=DEFAULT_TEE_ALLOWANCE_M, cable="RG-213"):
    return Filter(elements=tuple(elements), cable=get_cable(cable), tee_allowance_m=allowance)


def test_quarter_wave_7150khz_vf066():
    # Textbook quarter wave l = c VF / (4 f): 299792458 * 0.66 / (4 * 7.15e6) = 6.9184 m.
    assert quarter_wave_m(7.15, 0.66) == pytest.approx(6.918, abs=5e-4)
    assert quarter_wave_m(7.15, 0.66) == pytest.approx(C * 0.66 / (4 * 7.15e6), rel=1e-12)


def test_cut_list_lengths_degrees_and_allowance():
    length = C * 0.66 / (4 * 7.15e6)  # textbook quarter wave on RG-213's VF 0.66
    f = _filter(Stub(termination="open", length_m=length))
    (cut,) = cut_list(f, notch_mhz=[7.15], pass_mhz=[14.2])
    assert cut.stub_id == "F1-S1" and cut.termination == "open" and cut.tee == 1
    assert cut.length_m == pytest.approx(length)
    # cut length = electrical path less the tee allowance (30 mm, common practice)
    assert cut.cut_length_m == pytest.approx(length - 0.030)
    # first cut: 3 % long (common practice)
    assert cut.first_cut_m == pytest.approx((length - 0.030) * 1.03)
    # a quarter wave is 90 degrees at its frequency; 360 l f / (c VF) at 14.2 MHz
    notch, pas = cut.electrical
    assert (notch.role, notch.freq_mhz, notch.degrees) == ("notch", 7.15, pytest.approx(90.0))
    assert pas.degrees == pytest.approx(90.0 * 14.2 / 7.15)
    # its own resonance: the quarter-wave frequency c VF / (4 l)
    assert cut.resonance_mhz == pytest.approx(7.15) and cut.quarter_waves == 1
    assert cut.serves_notch_mhz == 7.15


def test_first_cut_is_at_least_10mm_long():
    f = _filter(Stub(termination="short", length_m=0.2))
    (cut,) = cut_list(f, notch_mhz=[500.0], pass_mhz=[])
    assert cut.first_cut_m - cut.cut_length_m == pytest.approx(0.010)


def test_resonance_family_nearest_the_notch():
    q = quarter_wave_m(7.15, 0.66)
    # An open quarter wave at 7.15 MHz also notches 3 f = 21.45 MHz (textbook: odd multiples).
    res, n, served = stub_resonance_mhz("open", q, 0.66, [21.2])
    assert n == 3 and res == pytest.approx(3 * 7.15) and served == 21.2
    # A shorted quarter wave at 7.15 MHz notches 2 f (a half wave there): n even.
    res, n, _ = stub_resonance_mhz("short", q, 0.66, [14.2])
    assert n == 2 and res == pytest.approx(14.3)
    # Without a notch: the lowest series resonance (open n=1, shorted n=2).
    assert stub_resonance_mhz("short", q, 0.66, [])[1] == 2


def _resonance_mhz(kind, length_m, cable, guess_mhz):
    """Frequency of the deepest |S21| of one stub alone, found on the lossy model."""
    def mag(f_mhz):
        s21, _ = evaluate_batch((kind,), [[length_m]], cable, [f_mhz * 1e6])
        return abs(s21[0, 0])

    r = minimize_scalar(mag, bounds=(0.95 * guess_mhz, 1.05 * guess_mhz), method="bounded",
                        options={"xatol": 1e-7})
    return r.x


@pytest.mark.parametrize("kind, n, f_mhz", [("open", 1, 7.15), ("short", 2, 146.0), ("open", 3, 435.0)])
def test_trim_rate_against_the_model(kind, n, f_mhz):
    # dl/df = -l/f follows from l = n c VF / (4 f); check it against the lossy model:
    # remove 1 mm and find how far the notch of the stub alone moves (evaluate_batch).
    cable = get_cable("RG-213")
    length = n * C * 0.66 / (4 * f_mhz * 1e6)
    (cut,) = cut_list(_filter(Stub(termination=kind, length_m=length)), notch_mhz=[f_mhz], pass_mhz=[])
    assert cut.trim_rate_mm_per_mhz == pytest.approx(1000 * length / f_mhz)
    f0 = _resonance_mhz(kind, length, cable, f_mhz)
    f1 = _resonance_mhz(kind, length - 0.001, cable, f_mhz)
    shift_mhz_per_mm = f1 - f0
    assert shift_mhz_per_mm > 0  # shorter stub, higher resonance
    assert 1.0 / shift_mhz_per_mm == pytest.approx(cut.trim_rate_mm_per_mhz, rel=0.02)


def test_two_stubs_one_tee_and_line_numbering():
    f = _filter(Stub(termination="open", length_m=3.0), Stub(termination="short", length_m=2.0),
                Line(length_m=1.0), Stub(termination="open", length_m=1.5))
    cuts = cut_list(f, notch_mhz=[20.0], pass_mhz=[10.0], filter_id="F7")
    assert [c.stub_id for c in cuts] == ["F7-S1", "F7-S2", "F7-S3"]
    assert [c.tee for c in cuts] == [1, 1, 2]
    assert [c.element_index for c in cuts] == [0, 1, 3]
    short = cuts[1]
    assert short.dc_path_to_ground and "DC ground" in short.dc_note and "preamplifier" in short.dc_note
    assert "solder" in short.end
    assert not cuts[0].dc_path_to_ground and "does not" in cuts[0].dc_note and "flush" in cuts[0].end
    text = format_cut_list(cuts)
    # cut 3.0 m - 30 mm = 2970 mm = 116.929 in -> 116 15/16 in (25.4 mm/in, NIST SP 811)
    assert "F7-S3" in text and "about 2970 mm (116 15/16 in)" in text
    doc = json.loads(json.dumps([c.to_json() for c in cuts], allow_nan=False))
    assert doc[1]["termination"] == "short"
    assert doc[0]["cut_length_in"] == pytest.approx(2970 / 25.4)  # NIST SP 811: 25.4 mm/in
    assert doc[0]["cut_length_text"] == "2970 mm (116 15/16 in)"


def test_stub_shorter_than_allowance_is_refused():
    f = _filter(Stub(termination="short", length_m=0.02))
    with pytest.raises(DesignError, match=r"F1-S1: stub length_m 0.0200 m must exceed the tee allowance"):
        cut_list(f, notch_mhz=[1000.0], pass_mhz=[])


def test_bad_inputs():
    f = _filter(Stub(termination="open", length_m=1.0))
    with pytest.raises(DesignError, match="trim_margin_pct -1"):
        cut_list(f, notch_mhz=[], pass_mhz=[], trim_margin_pct=-1)
    with pytest.raises(DesignError, match="notch_mhz: -7"):
        cut_list(f, notch_mhz=[-7], pass_mhz=[])
    with pytest.raises(DesignError, match="units 'cubits' must be one of metric, imperial, both"):
        format_length(1.0, "cubits")


@pytest.mark.parametrize(
    "m, expected",
    [
        (0.0254, (1, 0)),  # 25.4 mm = 1 in exactly (NIST SP 811)
        (1.234, (48, 9)),  # 1234 / 25.4 = 48.583 in; x16 = 777.3 -> 777 = 48 in + 9/16
        (0.0127, (0, 8)),  # 1/2 in
        (INCH_M / 32, (0, 1)),  # exactly 1/32 in: half a sixteenth rounds up
        (INCH_M / 32 * 0.999, (0, 0)),
        (INCH_M * (12 + 15.6 / 16), (13, 0)),  # 12 15.6/16 in rounds up to 13 in
    ],
)
def test_inches_16ths(m, expected):
    assert inches_16ths(m) == expected


def test_format_length():
    assert format_length(1.234) == "1234 mm (48 9/16 in)"
    assert format_length(1.234, "metric") == "1234 mm"
    assert format_length(0.0127, "imperial") == "1/2 in"  # reduced fraction
    assert format_length(INCH_M * 10.75, "imperial") == "10 3/4 in"
    assert format_length(INCH_M * 10, "imperial") == "10 in"


def test_inches_round_trip_within_1_32_inch():
    # nearest sixteenth: the error is at most half a sixteenth (1/32 in)
    for m in np.linspace(0.01, 20.0, 997):
        whole, six = inches_16ths(m)
        assert abs((whole + six / 16) * INCH_M - m) <= INCH_M / 32 + 1e-12


def test_electrical_degrees_formula():
    # 360 l f / (c VF): a full wavelength c VF / f is 360 degrees.
    lam = C * 0.8 / 50e6
    assert electrical_degrees(lam, 50.0, 0.8) == pytest.approx(360.0)
    assert math.isclose(electrical_degrees(lam / 3, 50.0, 0.8), 120.0)
