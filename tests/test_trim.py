"""Tests for `notchkit trim` (notchkit/trimming.py, notchkit/cli/trim.py).

Independent reference: the measurements are synthesised with scikit-rf's own
transmission-line media (``skrf.media.DefinedGammaZ0`` with
``gamma = alpha + j 2 pi f / (c VF)`` and ``z0 = 50``: ``delay_open`` /
``delay_short`` for a stub alone, ``shunt_delay_open`` / ``shunt_delay_short``
for a stub across a tee), plus seeded complex Gaussian noise of 1e-3 on S,
written with ``Network.write_touchstone`` and read back through the command.

The expected numbers come from the textbook quarter-wave relation
``f_n = n c VF / (4 L)`` for a line of ``n`` quarter waves (e.g. Pozar,
*Microwave Engineering*, 4th ed., section 6.3; ARRL Antenna Book, chapter on
transmission lines) with the VF and length the synthetic stub was built with,
not from notchkit's own arithmetic. Q is checked against Pozar's transmission
line resonator result ``Q = beta / (2 alpha)`` (eq. 6.33).
"""

from __future__ import annotations

import json
import math
import os

import numpy as np
import pytest
import skrf
from skrf.media import DefinedGammaZ0

from notchkit.cli import main
from notchkit.errors import MeasurementError
from notchkit.trimming import find_resonance, inches_16ths, read_measurement, trim

C = 299_792_458.0  # speed of light, m/s (exact, SI definition)
INCH = 0.0254  # m per inch (exact, international inch, 1959)
NOISE = 1e-3  # complex Gaussian noise on S, typical of a calibrated hobby analyser


def stub_network(
    *,
    termination: str,
    ports: int,
    length_m: float,
    vf: float,
    start_mhz: float,
    stop_mhz: float,
    points: int = 401,
    alpha_at_100mhz: float = 0.01,
    seed: int = 0,
    noise: float = NOISE,
) -> skrf.Network:
    """A measured stub synthesised with scikit-rf; alpha grows as sqrt(f) (skin effect)."""
    freq = skrf.Frequency(start_mhz, stop_mhz, points, "MHz")
    alpha = alpha_at_100mhz * np.sqrt(freq.f / 100e6)
    gamma = alpha + 1j * 2 * np.pi * freq.f / (C * vf)
    media = DefinedGammaZ0(frequency=freq, z0=50.0, gamma=gamma)
    if ports == 1:
        build = media.delay_open if termination == "open" else media.delay_short
    else:
        build = media.shunt_delay_open if termination == "open" else media.shunt_delay_short
    ntwk = build(length_m, "m")
    rng = np.random.default_rng(seed)
    ntwk.s = ntwk.s + noise * (
        rng.standard_normal(ntwk.s.shape) + 1j * rng.standard_normal(ntwk.s.shape)
    ) / math.sqrt(2)
    return ntwk


def write(ntwk: skrf.Network, folder, name: str) -> str:
    ntwk.write_touchstone(name, dir=str(folder))
    return str(folder / f"{name}.s{ntwk.nports}p")


def run_json(capsys, *argv) -> dict:
    code = main(["trim", *argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def quarter_wave_hz(n: int, vf: float, length_m: float) -> float:
    """Textbook: a line of n quarter waves resonates at n c VF / (4 L)."""
    return n * C * vf / (4.0 * length_m)


# ------------------------------------------------------------------ main job

CASES = [
    # termination, ports, order, VF, length m, target MHz (sweep +/- 20 % around resonance)
    pytest.param("open", 1, 1, 0.66, 0.500, 101.5, id="open-s1p-solidPE"),
    pytest.param("short", 1, 1, 0.83, 0.600, 105.0, id="short-s1p-foam"),
    pytest.param("open", 2, 1, 0.78, 0.420, 141.0, id="open-s2p"),
    pytest.param("short", 2, 2, 0.66, 0.700, 145.0, id="short-s2p-halfwave"),
    pytest.param("open", 1, 3, 0.66, 1.200, 125.0, id="open-s1p-3rd"),
]


@pytest.mark.parametrize(("termination", "ports", "order", "vf", "length_m", "target_mhz"), CASES)
def test_recovers_vf_resonance_and_cut(
    tmp_path, capsys, termination, ports, order, vf, length_m, target_mhz
):
    f_true = quarter_wave_hz(order, vf, length_m)
    ntwk = stub_network(
        termination=termination, ports=ports, length_m=length_m, vf=vf,
        start_mhz=f_true / 1e6 * 0.8, stop_mhz=f_true / 1e6 * 1.2, seed=order * 10 + ports,
    )
    path = write(ntwk, tmp_path, f"stub_{termination}")
    args = [path, "--cable", "RG-213", "--termination", termination,
            "--target-mhz", str(target_mhz), "--length-m", str(length_m)]
    if order != 1:
        args += ["--quarter-waves", str(order)]
    got = run_json(capsys, *args)

    # resonance within 0.05 % of the textbook n c VF / (4 L)
    assert got["resonance_mhz"] == pytest.approx(f_true / 1e6, rel=5e-4)
    # effective VF within 0.2 % of the VF scikit-rf's line was built with
    assert got["velocity_factor"] == pytest.approx(vf, rel=2e-3)
    # the length that puts the resonance on target, from the true VF (textbook)
    want_len = order * C * vf / (4.0 * target_mhz * 1e6)
    assert got["target_length_m"] == pytest.approx(want_len, abs=1e-3)
    assert got["cut_mm"] == pytest.approx((length_m - want_len) * 1000.0, abs=1.0)
    assert got["cut_mm"] > 0
    assert got["too_short"] is False
    # Q = beta / (2 alpha) of a line resonator (Pozar eq. 6.33), within 10 %
    alpha = 0.01 * math.sqrt(f_true / 100e6)
    beta = 2 * math.pi * f_true / (C * vf)
    assert got["q"] == pytest.approx(beta / (2 * alpha), rel=0.10)
    # inches to 1/16 in, rounded toward the smaller cut (exact inch definition)
    assert got["cut_in"] == math.floor(got["cut_mm"] / 25.4 * 16) / 16
    assert got["quarter_waves"] == order


def test_fixed_json_keys(tmp_path, capsys):
    ntwk = stub_network(termination="open", ports=1, length_m=0.5, vf=0.66,
                        start_mhz=80, stop_mhz=120)
    path = write(ntwk, tmp_path, "keys")
    got = run_json(capsys, path, "--cable", "RG-58", "--termination", "open",
                   "--target-mhz", "100", "--length-m", "0.5")
    for key in ("resonance_mhz", "q", "velocity_factor", "target_length_m", "cut_mm"):
        assert key in got
    assert isinstance(got["q"], float)


@pytest.mark.parametrize(("termination", "ports"), [("open", 1), ("short", 2)])
def test_stub_already_too_short(tmp_path, capsys, termination, ports):
    vf, length_m = 0.66, 0.50
    order = 2 if (termination == "short" and ports == 2) else 1
    f_true = quarter_wave_hz(order, vf, length_m)
    target_mhz = f_true / 1e6 * 0.97  # resonance 3 % above the target: the stub is short
    ntwk = stub_network(termination=termination, ports=ports, length_m=length_m, vf=vf,
                        start_mhz=f_true / 1e6 * 0.85, stop_mhz=f_true / 1e6 * 1.15, seed=7)
    path = write(ntwk, tmp_path, "short_one")
    got = run_json(capsys, path, "--cable", "RG-213", "--termination", termination,
                   "--target-mhz", f"{target_mhz:.6f}", "--length-m", str(length_m))
    want_len = order * C * vf / (4.0 * target_mhz * 1e6)  # textbook, true VF
    assert want_len > length_m
    assert got["cut_mm"] == pytest.approx((length_m - want_len) * 1000.0, abs=1.0)
    assert got["cut_mm"] < 0
    assert got["too_short"] is True
    assert "too short" in got["advice"] and "new stub" in got["advice"]
    assert f"{want_len:.3f}" in got["advice"]  # the new length, from the measured VF

    # the human text says it too, with the safety line
    assert main(["trim", path, "--cable", "RG-213", "--termination", termination,
                 "--target-mhz", f"{target_mhz:.6f}", "--length-m", str(length_m)]) == 0
    out = capsys.readouterr().out
    assert "too short" in out
    assert "transmitter off" in out and "never trim a stub connected to a transmitter" in out


def test_without_length_reports_ratio(tmp_path, capsys):
    vf, length_m = 0.66, 0.5
    f_true = quarter_wave_hz(1, vf, length_m)
    ntwk = stub_network(termination="short", ports=1, length_m=length_m, vf=vf,
                        start_mhz=80, stop_mhz=120, seed=3)
    path = write(ntwk, tmp_path, "nolen")
    got = run_json(capsys, path, "--cable", "RG-213", "--termination", "short",
                   "--target-mhz", "100")
    assert got["velocity_factor"] is None and got["cut_mm"] is None
    assert got["target_length_m"] is None
    assert got["resonance_mhz"] == pytest.approx(f_true / 1e6, rel=5e-4)
    # shorten by (1 - f_res/f_target) (length inversely proportional to frequency)
    assert got["shorten_pct"] == pytest.approx((1 - f_true / 100e6) * 100, abs=0.05)
    assert "shorten" in got["advice"]


def test_picks_resonance_nearest_target():
    # physical property: an open stub has series resonances at 1, 3, 5 quarter waves
    vf, length_m = 0.66, 0.5
    f1 = quarter_wave_hz(1, vf, length_m)
    ntwk = stub_network(termination="open", ports=1, length_m=length_m, vf=vf,
                        start_mhz=f1 / 1e6 * 0.5, stop_mhz=f1 / 1e6 * 3.5, points=1201)
    low = find_resonance(ntwk, "open", near_hz=f1)
    high = find_resonance(ntwk, "open", quarter_waves=3, near_hz=3 * f1)
    assert low.freq_hz == pytest.approx(f1, rel=5e-4)
    assert high.freq_hz == pytest.approx(3 * f1, rel=5e-4)
    # the shorted stub's quarter wave is a parallel resonance (|Z| maximum)
    short = stub_network(termination="short", ports=1, length_m=length_m, vf=vf,
                         start_mhz=80, stop_mhz=120)
    res = find_resonance(short, "short")
    assert res.kind == "parallel" and res.freq_hz == pytest.approx(f1, rel=5e-4)


def test_inches_to_sixteenths():
    assert inches_16ths(INCH) == (1.0, "1 in")
    assert inches_16ths(1.5 * INCH) == (1.5, "1 1/2 in")
    assert inches_16ths(3 / 8 * INCH - 1e-4) == (5 / 16, "5/16 in")  # toward the smaller cut
    assert inches_16ths(-INCH / 4) == (-0.25, "-1/4 in")


# ------------------------------------------------------------------ the plot


def test_png_written(tmp_path, capsys):
    ntwk = stub_network(termination="open", ports=2, length_m=0.5, vf=0.66,
                        start_mhz=80, stop_mhz=120)
    path = write(ntwk, tmp_path, "plotme")
    before = (tmp_path / "plotme.s2p").read_bytes()
    png = tmp_path / "trim.png"
    assert main(["trim", path, "--cable", "RG-213", "--termination", "open",
                 "--target-mhz", "100", "--length-m", "0.5", "--png", str(png)]) == 0
    capsys.readouterr()
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, 5.2)
    assert sorted(os.listdir(tmp_path)) == ["plotme.s2p", "trim.png"]  # no temp left over
    assert (tmp_path / "plotme.s2p").read_bytes() == before  # input never modified

    code = main(["trim", path, "--cable", "RG-213", "--termination", "open",
                 "--target-mhz", "100", "--png", str(tmp_path / "nope" / "x.png")])
    err = capsys.readouterr().err
    assert code == 2 and "nope" in err and len(err.strip().splitlines()) == 1


# ------------------------------------------------------------------ bad input


def _bad(tmp_path, capsys, path, *extra, target="100", termination="open"):
    code = main(["trim", str(path), "--cable", "RG-213", "--termination", termination,
                 "--target-mhz", target, *extra])
    out, err = capsys.readouterr()
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    assert "Traceback" not in err
    return lines[0]


def test_not_touchstone(tmp_path, capsys):
    p = tmp_path / "notes.s1p"
    p.write_text("measured on the roof, looked fine\n")
    assert "notes.s1p" in _bad(tmp_path, capsys, p)


def test_binary_file(tmp_path, capsys):
    p = tmp_path / "blob.s1p"
    p.write_bytes(b"\x80\x04\x95\x00\x00")
    assert "blob.s1p" in _bad(tmp_path, capsys, p)


def test_wrong_port_count(tmp_path, capsys):
    freq = skrf.Frequency(80, 120, 21, "MHz")
    three = skrf.Network(frequency=freq, s=np.zeros((21, 3, 3), complex), z0=50)
    p = write(three, tmp_path, "tee3")
    line = _bad(tmp_path, capsys, p)
    assert "tee3.s3p" in line
    p2 = tmp_path / "plot.txt"
    p2.write_text("1 2 3\n")
    assert "plot.txt" in _bad(tmp_path, capsys, p2)


@pytest.mark.parametrize("content", ["", "\n\n", "# MHz S RI R 50\n"])
def test_empty(tmp_path, capsys, content):
    p = tmp_path / "empty.s1p"
    p.write_text(content)
    assert "empty.s1p" in _bad(tmp_path, capsys, p)


def test_missing_and_directory(tmp_path, capsys):
    assert "gone.s1p" in _bad(tmp_path, capsys, tmp_path / "gone.s1p")
    d = tmp_path / "dir.s1p"
    d.mkdir()
    assert "dir.s1p" in _bad(tmp_path, capsys, d)


def test_no_frequency_overlap(tmp_path, capsys):
    ntwk = stub_network(termination="open", ports=1, length_m=0.5, vf=0.66,
                        start_mhz=80, stop_mhz=120)
    p = write(ntwk, tmp_path, "narrow")
    line = _bad(tmp_path, capsys, p, target="440")
    assert "narrow.s1p" in line and "440" in line and "80-120 MHz" in line


def test_no_clear_resonance(tmp_path, capsys):
    freq = skrf.Frequency(80, 120, 201, "MHz")
    media = DefinedGammaZ0(frequency=freq, z0=50.0)
    rng = np.random.default_rng(11)
    load = media.match()  # a 50 ohm load: no resonance anywhere
    load.s = load.s + 1e-3 * rng.standard_normal(load.s.shape)
    p = write(load, tmp_path, "dummyload")
    line = _bad(tmp_path, capsys, p)
    assert "dummyload.s1p" in line and "no clear" in line
    through = media.line(0.3, "m")  # a plain through line: no notch
    p2 = write(through, tmp_path, "through")
    line = _bad(tmp_path, capsys, p2)
    assert "through.s2p" in line and "no clear notch" in line


def test_resonance_at_sweep_edge(tmp_path, capsys):
    vf, length_m = 0.66, 0.5
    f1 = quarter_wave_hz(1, vf, length_m) / 1e6
    ntwk = stub_network(termination="open", ports=1, length_m=length_m, vf=vf,
                        start_mhz=f1 - 10, stop_mhz=f1, points=201)
    p = write(ntwk, tmp_path, "edge")
    line = _bad(tmp_path, capsys, p, target=f"{f1 - 1:.3f}")
    assert "edge.s1p" in line and "edge of the sweep" in line
    # the wanted (1st) resonance cut off by the sweep start: no silent fall-back to the 3rd
    wide = stub_network(termination="open", ports=1, length_m=length_m, vf=vf,
                        start_mhz=f1, stop_mhz=3.5 * f1, points=801)
    with pytest.raises(MeasurementError, match="edge of the sweep"):
        find_resonance(wide, "open", near_hz=1.02 * f1 * 1e6)


def test_shorted_quarter_wave_has_no_notch_through_tee(tmp_path, capsys):
    ntwk = stub_network(termination="short", ports=2, length_m=0.5, vf=0.66,
                        start_mhz=80, stop_mhz=220)
    p = write(ntwk, tmp_path, "tee")
    line = _bad(tmp_path, capsys, p, "--quarter-waves", "1", termination="short")
    assert "--quarter-waves" in line and "even" in line


def test_library_reads_without_writing(tmp_path):
    ntwk = stub_network(termination="open", ports=1, length_m=0.5, vf=0.66,
                        start_mhz=80, stop_mhz=120)
    p = write(ntwk, tmp_path, "lib")
    mtime = os.stat(p).st_mtime_ns
    result = trim(p, cable="RG-213", termination="open", target_mhz=100.0, length_m=0.5)
    assert result.to_json()["resonance_mhz"] == pytest.approx(
        quarter_wave_hz(1, 0.66, 0.5) / 1e6, rel=5e-4)
    assert read_measurement(p).nports == 1
    assert os.stat(p).st_mtime_ns == mtime


def test_library_names_parameters_and_the_command_line_its_flags(tmp_path, capsys):
    # An open stub 0.5 m long (VF 0.66, scikit-rf) said to be 3 m long: the effective VF
    # 4 L f / c would be about 4 (textbook quarter-wave relation); no coax exceeds 1.
    f1 = quarter_wave_hz(1, 0.66, 0.5)
    ntwk = stub_network(termination="open", ports=1, length_m=0.5, vf=0.66,
                        start_mhz=f1 / 1e6 * 0.8, stop_mhz=f1 / 1e6 * 1.2)
    path = write(ntwk, tmp_path, "stub")
    with pytest.raises(MeasurementError) as info:
        trim(path, cable="RG-213", termination="open", target_mhz=f1 / 1e6, length_m=3.0)
    msg = str(info.value)
    assert "impossible" in msg and "quarter_waves 1" in msg and "length_m" in msg and "--" not in msg
    code = main(["trim", path, "--cable", "RG-213", "--termination", "open",
                 "--target-mhz", str(f1 / 1e6), "--length-m", "3"])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    assert "--quarter-waves 1" in err and "--length-m" in err
    assert "quarter_waves" not in err and " length_m" not in err


def test_a_lossless_noiseless_notch_through_the_tee(tmp_path, capsys):
    """A simulated perfect stub (no loss, no noise) takes |S21| to exactly zero at its
    resonance; the notch fit must still find it (it once failed with a singular matrix).
    Truth: the textbook f = c VF / (4 L) (Pozar, section 6.3) of scikit-rf's lossless line."""
    length_m, vf = 0.35, 0.66
    f_true = quarter_wave_hz(1, vf, length_m)
    ntwk = stub_network(termination="open", ports=2, length_m=length_m, vf=vf,
                        start_mhz=f_true / 1e6 * 0.8, stop_mhz=f_true / 1e6 * 1.2, points=401,
                        alpha_at_100mhz=0.0, noise=0.0)
    k = int(np.argmin(abs(ntwk.f - f_true)))
    ntwk.s[k, 1, 0] = ntwk.s[k, 0, 1] = 0.0  # what the lossless model gives on resonance
    ntwk.s[k, 0, 0] = ntwk.s[k, 1, 1] = -1.0
    path = write(ntwk, tmp_path, "perfect_open")
    got = run_json(capsys, path, "--cable", "RG-213", "--termination", "open",
                   "--target-mhz", f"{f_true / 1e6 * 0.98:.4f}", "--length-m", str(length_m))
    assert got["resonance_mhz"] == pytest.approx(f_true / 1e6, rel=5e-4)
    assert got["velocity_factor"] == pytest.approx(vf, rel=2e-3)


def test_the_notch_fit_takes_an_exact_zero():
    """The notch parabola's weights once divided by |S21| = 0 (singular least squares).
    u = |S21|^2 / (1 - |S21|^2) of an ideal notch is a parabola in the fractional
    detuning with its vertex at zero (common practice: a resonator's response near
    resonance); the fit must return that vertex."""
    from notchkit.resonance import _fit_notch

    f = np.linspace(90e6, 110e6, 401)
    u = ((f - 100e6) / 100e6 * 50.0) ** 2
    f0, u_min, _curv, _std = _fit_notch(f, u, 100.2e6)
    assert f0 == pytest.approx(100e6, rel=1e-9)
    assert u_min == pytest.approx(0.0, abs=1e-12)
