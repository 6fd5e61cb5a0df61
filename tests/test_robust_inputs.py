"""Bounded input: every file the tool reads, every number it accepts, every size it works on.

Each case reproduces a failure of an attack run (a traceback, a hang, gigabytes
of memory) and checks it is now one clear line with exit code 2 in bounded
time, or a finite answer. The limits themselves are documented in
docs/robustness.md.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from fuzz_strategies import touchstone_text

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, CableError, DesignError

ROOT = Path(__file__).resolve().parent.parent
TRIM = ["--cable", "RG-213", "--termination", "open", "--target-mhz", "146"]


def one_error_line(capsys, argv: list[str], *words: str) -> str:
    rc = main(argv)
    out, err = capsys.readouterr()
    assert rc == EXIT_BAD_INPUT, (out, err)
    lines = err.splitlines()
    assert len(lines) == 1 and "Traceback" not in err and out == "", err
    for w in words:
        assert w in lines[0], (w, lines[0])
    return lines[0]


@pytest.fixture()
def stub_s2p(tmp_path) -> Path:
    """A quarter-wave open RG-213 stub at 146 MHz through a tee (Pozar, sec. 6.3: L = c VF / 4f)."""
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-213")
    length = C0 * cable.velocity_factor / (4 * 146e6)
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    path = tmp_path / "stub.s2p"
    path.write_text(touchstone_text(f, s), encoding="utf-8")
    return path


# ---------------------------------------------------------------------------
# files that are not regular files, or too large
# ---------------------------------------------------------------------------


def _run(argv: list[str], timeout: float = 60) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "notchkit", *argv], capture_output=True, text=True,
                          timeout=timeout, cwd=ROOT)


@pytest.mark.parametrize("what", ["site", "measurement", "plan"])
def test_a_fifo_as_an_input_is_refused_at_once(tmp_path, stub_s2p, what):
    """A FIFO with no writer used to hang the command (a blocking open); a real process, with a
    timeout, so a regression fails instead of hanging the suite."""
    fifo = tmp_path / {"site": "site.yaml", "measurement": "m.s1p", "plan": "plan.json"}[what]
    os.mkfifo(fifo)
    argv = {"site": ["check", str(fifo)],
            "measurement": ["trim", str(fifo), *TRIM],
            "plan": ["trim", str(stub_s2p), "--cable", "RG-213", "--plan", str(fifo),
                     "--stub", "F1-S1"]}[what]
    r = _run(argv)
    assert r.returncode == EXIT_BAD_INPUT, r.stderr
    assert len(r.stderr.splitlines()) == 1 and "FIFO" in r.stderr and "Traceback" not in r.stderr


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
@pytest.mark.parametrize("name", ["zero.s1p", "zero.s2p"])
def test_a_measurement_linked_to_dev_zero_is_refused(tmp_path, capsys, name):
    """Once a MemoryError: /dev/zero never ends."""
    link = tmp_path / name
    link.symlink_to("/dev/zero")
    one_error_line(capsys, ["trim", str(link), *TRIM], "character device", "not a regular file")


def test_a_plan_json_linked_to_dev_zero_is_refused(tmp_path, capsys, stub_s2p):
    link = tmp_path / "plan.json"
    link.symlink_to("/dev/zero")
    one_error_line(capsys, ["trim", str(stub_s2p), "--cable", "RG-213", "--plan", str(link),
                            "--stub", "F1-S1"], "character device")


def test_a_measurement_over_the_byte_cap_is_refused_before_reading(tmp_path, capsys):
    from notchkit.bounded import MAX_MEASUREMENT_BYTES

    big = tmp_path / "big.s1p"
    with open(big, "wb") as fh:  # sparse: no disk used
        fh.truncate(MAX_MEASUREMENT_BYTES + 1)
    t0 = time.perf_counter()
    one_error_line(capsys, ["trim", str(big), *TRIM], "byte limit")
    assert time.perf_counter() - t0 < 5


def test_a_sweep_over_the_point_cap_is_refused(tmp_path, capsys):
    """A 10-million-point sweep used 3.7 GB; one point over the cap is refused by count."""
    from notchkit.bounded import MAX_SWEEP_POINTS

    n = MAX_SWEEP_POINTS + 1
    f = np.linspace(100.0, 200.0, n)
    body = "\n".join(f"{x:.7f} 0.5 0.1" for x in f)
    path = tmp_path / "long.s1p"
    path.write_text("# MHZ S RI R 50\n" + body + "\n", encoding="utf-8")
    one_error_line(capsys, ["trim", str(path), *TRIM], f"at most {MAX_SWEEP_POINTS}", "points")


def test_the_bounded_reader_never_reads_past_its_cap(tmp_path):
    from notchkit.bounded import ReadRefused, read_regular

    p = tmp_path / "f"
    p.write_bytes(b"x" * 1000)
    assert read_regular(p, 1000) == b"x" * 1000
    with pytest.raises(ReadRefused) as exc:
        read_regular(p, 999)
    assert exc.value.kind == "too_big"


# ---------------------------------------------------------------------------
# plan JSON for trim --plan: nesting and numbers
# ---------------------------------------------------------------------------

PLANS = {
    # 100 000 nested brackets: once a RecursionError
    "deep": ("[" * 100_000 + "]" * 100_000, "1:65", "nested deeper than 64"),
    "huge-float": ('{"filters": [{"elements": [{"kind": "stub", "id": "F1-S1", "cut_length_m": 1e999}]}]}',
                   "1:76", "beyond a float's range"),
    "huge-int": ('{"filters": [{"elements": [{"kind": "stub", "id": "F1-S1", "cut_length_m": '
                 + "9" * 5000 + "}]}]}", "1:76", "a number of 5000 characters"),
    "nan": ('{"filters": [{"elements": [{"kind": "stub", "id": "F1-S1", "cut_length_m": NaN}]}]}',
            "1:76", "NaN is not a JSON number"),
    "infinity": ('{"filters": [{"elements": [{"kind": "stub", "id": "F1-S1", "cut_length_m": -Infinity}]}]}',
                 "1:76", "finite numbers only"),
}


@pytest.mark.parametrize("kind", sorted(PLANS))
def test_a_hostile_plan_json_is_one_line_with_its_position(tmp_path, capsys, stub_s2p, kind):
    text, where, words = PLANS[kind]
    plan = tmp_path / "plan.json"
    plan.write_text(text, encoding="utf-8")
    line = one_error_line(capsys, ["trim", str(stub_s2p), "--cable", "RG-213", "--plan", str(plan),
                                   "--stub", "F1-S1"], words)
    assert line.startswith(f"error: {plan}:{where}: "), line


def test_json_caps_accept_what_notchkit_writes():
    from notchkit.bounded import MAX_JSON_DEPTH, load_json

    doc = {"a": [[[[{"b": 1.5e-300, "c": -12345678901234567890, "d": 1.7976931348623157e308}]]]]}
    assert load_json(json.dumps(doc)) == doc  # the largest double (IEEE 754) is finite
    nested = "[" * MAX_JSON_DEPTH + "]" * MAX_JSON_DEPTH
    assert load_json(nested) is not None


# ---------------------------------------------------------------------------
# trim numbers: huge lengths, non-finite JSON
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("value", ["1e308", "1e300", "1e5", "inf", "nan", "-1", "0"])
def test_trim_refuses_absurd_lengths(capsys, stub_s2p, value):
    """--length-m 1e308 was an OverflowError; 1e300 with --json printed Infinity."""
    one_error_line(capsys, ["trim", str(stub_s2p), *TRIM, "--length-m", value, "--json"], "--length-m")


def test_trim_json_is_always_finite_json(capsys, stub_s2p):
    from notchkit.cables import get_cable
    from notchkit.lines import C0

    length = C0 * get_cable("RG-213").velocity_factor / (4 * 146e6)  # the stub measured (Pozar 6.3)
    rc = main(["trim", str(stub_s2p), *TRIM, "--length-m", repr(length * 1.01), "--json"])
    out, err = capsys.readouterr()
    assert rc == EXIT_OK, err

    def refuse(name):
        raise AssertionError(f"{name} in the JSON output")

    doc = json.loads(out, parse_constant=refuse)
    assert math.isfinite(doc["cut_mm"])


def test_library_trim_refuses_a_huge_plan_length(tmp_path, stub_s2p):
    """A real plan JSON (written by ``plan --outdir``) whose stub claims 1e300 m: one clear
    refusal, not an overflow."""
    from notchkit.errors import NotchkitError
    from notchkit.trimming import trim

    site = tmp_path / "flat.yaml"
    site.write_text("site: Fictional Flat\ntransmitters:\n"
                    "  - {name: TX2M, freq_mhz: 146.52, power_w: 50,"
                    " antenna: {x_m: 0, y_m: 0, height_m: 10}}\n"
                    "receivers:\n"
                    "  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}\n",
                    encoding="utf-8")
    assert main(["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--outdir", str(tmp_path / "o")]) in (0, 1)
    doc = json.loads((tmp_path / "o" / "plan.json").read_text(encoding="utf-8"))
    stub = next(e for e in doc["filters"][0]["elements"] if e["kind"] == "stub")
    for key in ("length_m", "cut_length_m", "first_cut_m"):
        stub[key] = 1e300
    plan = tmp_path / "huge.json"
    plan.write_text(json.dumps(doc), encoding="utf-8")
    with pytest.raises(NotchkitError) as exc:
        trim(stub_s2p, cable="RG-213", target_mhz=146.0, plan_path=plan, stub_id=stub["id"])
    assert "\n" not in str(exc.value) and ("longer than any stub" in str(exc.value)
                                           or "not allowed" in str(exc.value))


# ---------------------------------------------------------------------------
# the loader's caps on work: radios and intermodulation combinations
# ---------------------------------------------------------------------------


def _transceivers(n: int) -> str:
    rows = [f"  - {{name: r{i}, freq_mhz: {30 + 0.5 * i:.1f}, tx: {{power_w: 50}}, "
            f"rx: {{sensitivity_dbm: -110}}, antenna: {{x_m: {i}, y_m: 0, height_m: 10}}}}" for i in range(n)]
    return "site: Fictional Sprawl\ncable: RG-213\ntransceivers:\n" + "\n".join(rows) + "\n"


def test_200_transceivers_are_allowed(tmp_path):
    from notchkit.site import load_site

    p = tmp_path / "s.yaml"
    p.write_text(_transceivers(200), encoding="utf-8")
    assert len(load_site(p).radios) == 200


def test_500_radios_are_one_clear_refusal_in_bounded_time(tmp_path):
    """500 radios died on a 5.6 GiB allocation; now the loader refuses them before any survey."""
    p = tmp_path / "s.yaml"
    p.write_text(_transceivers(500), encoding="utf-8")
    t0 = time.perf_counter()
    r = _run(["survey", str(p)])
    assert time.perf_counter() - t0 < 30
    assert r.returncode == EXIT_BAD_INPUT and "Traceback" not in r.stderr
    assert "more than 256 radios" in r.stderr and "three-transmitter intermodulation" in r.stderr


def test_cap_constants_agree():
    """C(n, 3) = n (n-1) (n-2) / 6 three-transmitter combinations (textbook binomial coefficient)."""
    from notchkit.site.loader import MAX_IM_TRIPLES, MAX_RADIOS, MAX_TRANSMITTERS

    assert math.comb(MAX_TRANSMITTERS, 3) <= MAX_IM_TRIPLES < math.comb(MAX_TRANSMITTERS + 1, 3)
    assert MAX_TRANSMITTERS >= 200 and MAX_RADIOS >= 200


# ---------------------------------------------------------------------------
# 8. what check accepts, design accepts
# ---------------------------------------------------------------------------


def test_loader_total_cable_floor_is_the_solvers_shortest_cut():
    from notchkit.site.loader import SECTIONS
    from notchkit.solver import MIN_CUT_M

    num = SECTIONS["limits"]["max_total_cable_m"].num
    assert num.lo == MIN_CUT_M and num.lo_open


@pytest.mark.parametrize(("vf", "ok"), [(0.02, True), (0.0199, False), (0.66, True)])
def test_loader_and_tolerance_agree_on_the_vf_spread(tmp_path, vf, ok):
    """A custom cable with the default spread 0.01: the loader accepts exactly what the
    tolerance run accepts (spread <= VF / 2)."""
    from notchkit.buildyield import DEFAULT_VF_SPREAD, tolerance
    from notchkit.cables import Cable
    from notchkit.errors import SiteError
    from notchkit.filters import Filter, Stub
    from notchkit.requirements import NotchSpec
    from notchkit.site import load_site

    site = tmp_path / "s.yaml"
    site.write_text(f"""\
site: Fictional Slow Line
cable: slow
cables:
  - {{name: slow, z0_ohm: 50, velocity_factor: {vf}, loss_table: [[10, 1.0], [100, 3.0]]}}
transmitters:
  - {{name: a, freq_mhz: 146.52, power_w: 50, antenna: {{x_m: 0, y_m: 0, height_m: 10}}}}
receivers:
  - {{name: b, freq_mhz: 155.34, antenna: {{x_m: 5, y_m: 0, height_m: 10}}}}
""", encoding="utf-8")
    cable = Cable.from_table(name="slow", z0_ohm=50.0, velocity_factor=vf, loss_table=((10, 1.0), (100, 3.0)))
    filt = Filter(elements=(Stub(termination="open", length_m=0.01),), cable=cable)
    notch = NotchSpec(lo_mhz=146.0, hi_mhz=147.0, required_db=20.0)
    if ok:
        load_site(site)
        tolerance(filt, [notch], vf_spread=DEFAULT_VF_SPREAD, samples=4)
    else:
        with pytest.raises(SiteError, match="velocity_factor"):
            load_site(site)
        with pytest.raises(DesignError, match="vf_spread"):
            tolerance(filt, [notch], vf_spread=DEFAULT_VF_SPREAD, samples=4)


# ---------------------------------------------------------------------------
# 10. library corners
# ---------------------------------------------------------------------------


def test_power_check_on_an_80_km_stub_is_a_clear_error():
    """Once 'internal: non-finite value nan': cosh(gamma l) overflows a double past
    about 710 nepers (ln of the largest IEEE 754 double, 1.8e308)."""
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub
    from notchkit.power import power_check

    cable = get_cable("RG-213")
    with pytest.raises(DesignError, match="too much to model"):
        power_check(Filter(elements=(Stub(termination="open", length_m=80_000.0),), cable=cable),
                    power_w=100.0, freq_mhz=146.0)
    ok = power_check(Filter(elements=(Stub(termination="open", length_m=800.0),), cable=cable),
                     power_w=100.0, freq_mhz=146.0)
    json.dumps(ok.to_json(), allow_nan=False)


def test_cable_loss_at_a_negative_frequency_is_an_error():
    from notchkit.cables import get_cable

    cable = get_cable("RG-213")
    for bad in ([-1.0], [float("nan")], [float("inf")], -0.5):
        with pytest.raises(CableError, match="MHz"):
            cable.loss_db_per_100m(bad)
    # a sqrt(f) + b f is 0 at 0 MHz (the fitted loss model itself)
    assert cable.loss_db_per_100m([0.0])[0] == 0.0


def test_numbers_too_long_to_read_are_refused_with_their_position(tmp_path):
    from notchkit.errors import SiteError
    from notchkit.site import load_site

    p = tmp_path / "s.yaml"
    p.write_text("site: X\ntransmitters:\n  - {name: a, freq_mhz: 1" + "0" * 400
                 + ", power_w: 5, antenna: {x_m: 0, y_m: 0, height_m: 1}}\n", encoding="utf-8")
    with pytest.raises(SiteError) as exc:
        load_site(p)
    assert exc.value.problems[0].line == 3 and "400" not in exc.value.problems[0].field
    assert "too long for a number" in exc.value.problems[0].message


# ---------------------------------------------------------------------------
# command-line options that set the amount of work
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("value", ["21", "100000000", "-3", "x", "1e3"])
def test_survey_max_harmonic_is_bounded_like_the_site_file(capsys, value):
    """``--max-harmonic 100000000`` ran without end; the site file allows 2-20 (1: none)."""
    one_error_line(capsys, ["survey", str(ROOT / "sites" / "ridge-eoc.yaml"), f"--max-harmonic={value}"],
                   "max")


def test_library_survey_max_harmonic_is_bounded():
    from notchkit.errors import UsageError
    from notchkit.site import load_site
    from notchkit.threats import survey

    with pytest.raises(UsageError, match="1 to 20"):
        survey(load_site(ROOT / "sites" / "ridge-eoc.yaml"), max_harmonic=10**8)


def test_design_band_counts_are_bounded(capsys):
    from notchkit.cli.design import MAX_BANDS

    notches = [f"--notch={400 + k}-{400.5 + k}" for k in range(MAX_BANDS + 1)]
    one_error_line(capsys, ["design", "--pass=144-148", *notches], f"at most {MAX_BANDS}")


def test_a_site_built_in_python_is_held_to_the_same_caps(tmp_path):
    import dataclasses

    from notchkit.errors import SiteError
    from notchkit.site import load_site
    from notchkit.threats import survey

    p = tmp_path / "s.yaml"
    p.write_text(_transceivers(200), encoding="utf-8")
    site = load_site(p)
    more = tuple(dataclasses.replace(r, name=f"{r.name}b") for r in site.radios[:57])
    with pytest.raises(SiteError, match="more than 256"):
        survey(dataclasses.replace(site, radios=site.radios + more))
