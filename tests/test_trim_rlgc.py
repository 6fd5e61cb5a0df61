"""The effective VF that `notchkit trim` reports is the phase velocity at the measured resonance.

At HF a coax's conductor has internal inductance (a skin-effect surface impedance
``(1 + j) Rs``: internal reactance equal to the resistance, Ramo, Whinnery and Van
Duzer, sec. 5.9), so the wave is slower than the published VF (the high-frequency
limit) says. A stub is built here in scikit-rf (``skrf.media.DefinedGammaZ0``) on
such a line, its constants written out from the textbook (Pozar, *Microwave
Engineering*, 4th ed., eq. 2.85-2.86: ``R = 2 alpha_c Z0``, ``G = 2 alpha_d / Z0``;
``gamma = sqrt((R + j w L)(G + j w C))``, ``Z0 = sqrt((R + j w L)/(G + j w C))``) from the
cable library's published loss split, with a spool's own high-frequency VF. The stub is
measured alone, trimmed with the library's ``trim``, and the calibration built from it
is applied as the design would apply it.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import skrf
from skrf.media import DefinedGammaZ0

from notchkit.cables import get_cable
from notchkit.calibration import SpoolCalibration, calibrated_cable, sample_from_trim
from notchkit.rlgc import phase_velocity_factor
from notchkit.trimming import trim

C = 299_792_458.0  # m/s, exact (SI definition)


def textbook_line(cable, f, vf_hf):
    """``(gamma, Z0)`` of the cable's RLGC line with high-frequency VF ``vf_hf`` (module docstring)."""
    w = 2 * np.pi * f
    a_c, a_d = cable.alpha_split_np_per_m(f)
    z, v = cable.z0_ohm, C * vf_hf
    r, g = 2 * a_c * z, 2 * a_d / z
    l_ext, c = z / v, 1 / (z * v)
    series, shunt = r + 1j * w * (l_ext + r / w), g + 1j * w * c
    return np.sqrt(series * shunt), np.sqrt(series / shunt)


def measured_stub(tmp_path, cable, length_m, vf_hf, f_lo, f_hi):
    freq = skrf.Frequency(f_lo, f_hi, 1601, "MHz")
    gam, z0 = textbook_line(cable, freq.f, vf_hf)
    media = DefinedGammaZ0(frequency=freq, z0=z0, z0_port=50.0, gamma=gam)
    ntwk = media.line(length_m, "m") ** media.open()
    ntwk.write_touchstone("stub", dir=str(tmp_path))
    return tmp_path / "stub.s1p", gam, freq.f


@pytest.mark.parametrize("vf_spool", [0.66, 0.65], ids=["published", "slow-spool"])
def test_trim_reports_the_phase_velocity_and_calibration_gives_the_rlgc_line_its_hf_vf(tmp_path, vf_spool):
    cable = get_cable("RG-58")
    length = 0.25 * C * 0.66 / 7.1e6  # a quarter wave at 7.1 MHz by the published VF
    path, gam, f = measured_stub(tmp_path, cable, length, vf_spool, 6.0, 8.0)
    res = trim(path, cable="RG-58", termination="open", length_m=length, target_mhz=7.0)
    f_res = res.velocity_factor_at_mhz * 1e6
    assert res.velocity_factor_at_mhz == pytest.approx(res.resonance.freq_mhz)
    # the reported VF is omega / (beta c) of the built line at the measured resonance
    beta = np.interp(f_res, f, gam.imag)
    assert res.velocity_factor == pytest.approx(2 * math.pi * f_res / (beta * C), abs=1e-3)
    # and slower than the spool's high-frequency VF by about alpha_c / beta_0 (hand: ~2 % at 7 MHz
    # on RG-58, docs/hardware.md)
    a_c = float(cable.alpha_split_np_per_m(np.array([f_res]))[0][0])
    beta0 = 2 * math.pi * f_res / (C * vf_spool)
    assert res.velocity_factor == pytest.approx(vf_spool / (1 + a_c / beta0), abs=2e-3)
    assert res.velocity_factor < vf_spool - 0.008
    assert res.to_json()["velocity_factor_is"] == "phase velocity over c at the measured resonance"
    # Calibration: on the classic line (one VF) the measured phase VF is used as it is; on the
    # RLGC line the model gets the high-frequency VF, which gives back the measured phase
    # velocity at that frequency and recovers the spool's own VF (no double slowing).
    cal = SpoolCalibration(spool="reel-1", cable="RG-58", samples=(sample_from_trim(res),))
    assert cal.samples[0].freq_mhz == pytest.approx(res.resonance.freq_mhz)
    classic = calibrated_cable(cable, cal, "classic")
    assert classic.velocity_factor == pytest.approx(res.velocity_factor)
    rlgc = calibrated_cable(cable, cal, "rlgc")
    again = float(np.asarray(phase_velocity_factor(rlgc, [f_res])).ravel()[0])
    assert again == pytest.approx(res.velocity_factor, abs=3e-4)
    assert rlgc.velocity_factor == pytest.approx(vf_spool, abs=2e-3)


def test_a_plan_on_the_rlgc_line_compares_the_vf_with_the_line_models(tmp_path):
    # With line_model rlgc in the plan the expected VF at the resonance is the RLGC line's,
    # so a stub on the published cable raises no "differs" warning at HF.
    from notchkit.trimming import expected_phase_vf

    cable = get_cable("RG-58")
    vp = expected_phase_vf(cable, 7.1e6, "rlgc")
    assert vp == pytest.approx(float(phase_velocity_factor(cable, [7.1e6])[0]))
    assert vp < cable.velocity_factor - 0.008 and expected_phase_vf(cable, 7.1e6) == cable.velocity_factor
