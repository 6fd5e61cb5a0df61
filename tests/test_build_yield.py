"""Build yield, the solver's ranking for it, and buildable parts.

The build yield every design reports comes from :mod:`notchkit.buildyield`. Here
it is checked by an independent Monte Carlo written from the documented model
(docs/design.md, "Build yield") without that module: each simulated build is a
scikit-rf network (``skrf.media.DefinedGammaZ0`` with the cable's loss and the
build's own velocity factor; ``shunt_delay_open`` / ``shunt_delay_short`` /
``line`` cascaded with ``**``; with connector hardware the tee arms, plugs and the
short's inductance as scikit-rf lines, tests/hw_bench.py), and its worst attenuation, insertion loss and
SWR across each band are read from scikit-rf's S-parameters.

The model, as the plan's trimming steps tell the crew to build:
- a stub is trimmed to its resonance on an analyser, so its electrical length is
  the design's, read within +-0.1 % (one point of a 101-point sweep over +-5 %,
  common practice) and left long by up to the last 1 mm trim step (common practice);
- a line section is cut to length within +-2 mm on a reel whose velocity factor is
  the nominal +- the cable's published tolerance (else 0.01).
Resonance of a line: ``f_n = n c VF / (4 l)`` (Pozar, *Microwave Engineering*,
4th ed., sec. 2.3); SWR ``(1 + |S11|) / (1 - |S11|)``.
"""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest
import skrf
from hw_bench import filter_network

from notchkit.cables import get_cable
from notchkit.cutlist import buildability, cut_list, hardware_notes, line_cuts
from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Stub
from notchkit.hardware import stub_plug_m
from notchkit.site import load_site
from notchkit.site.model import Allowances
from notchkit.solver import STUB_CEILING_DB
from notchkit.synthesis import design, design_request

C0 = 299_792_458.0  # m/s, SI definition
SITES = ("sites/ridge-eoc.yaml", "sites/hilltop-repeaters.yaml", "sites/field-day-hf.yaml")


# ---------------------------------------------------------------- the independent Monte Carlo


def _skrf_s(kinds, lengths_m, cable, vf, freq_hz):
    """S-parameters of one build from scikit-rf media only (the cable's loss per metre,
    this build's velocity factor); with connector hardware, its tee arms, plugs and the
    short's inductance as scikit-rf lines and inductors (tests/hw_bench.py)."""
    hw = getattr(cable, "hardware", None)
    bare = getattr(cable, "cable", cable)  # the bare cable inside a model
    if hw is not None:
        fj = {"elements": [{"kind": "line"} if k == "line" else {"kind": "stub", "termination": str(k)}
                           for k in kinds],
              "cable": {"type": bare.name, "z0_ohm": bare.z0_ohm, "velocity_factor": vf},
              "model": {"hardware": hw.to_json(), "line_model": "classic"}}
        for e, length in zip(fj["elements"], lengths_m, strict=True):
            e["length_m"] = length
        return filter_network(fj, freq_hz, cable=bare).s
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    gam = bare.alpha_np_per_m(freq_hz) + 1j * 2 * np.pi * freq_hz / (C0 * vf)
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=bare.z0_ohm, gamma=gam)
    net = None
    for kind, length in zip(kinds, lengths_m, strict=True):
        part = {"open": media.shunt_delay_open, "short": media.shunt_delay_short,
                "line": media.line}[kind](length, unit="m")
        net = part if net is None else net ** part
    return net.s


def _plain(cable) -> bool:
    """A cable model that is the bare cable and the depth ceiling only (no connector
    hardware, load or RLGC line)."""
    return all(getattr(cable, k, None) in (None, False) for k in ("hardware", "load", "source", "rlgc"))


def _skrf_builds(cable) -> bool:
    """A cable model scikit-rf's media build completely: the cable (classic line), its connector
    hardware if any, and the depth ceiling (no antenna load, no RLGC line)."""
    return all(getattr(cable, k, None) in (None, False) for k in ("load", "source", "rlgc"))


def _model_s(kinds, lengths_m, cable, vf, freq_hz):
    """S-parameters of one build on a hardware model, by the model's own two-port
    (``Model.evaluate_batch``, the ABCD path of notchkit.hardware; not notchkit.buildyield)."""
    medium = cable.with_velocity_factor(vf)
    s21, s11 = medium.evaluate_batch(tuple(kinds), np.array([lengths_m]), freq_hz)
    s = np.zeros((freq_hz.size, 2, 2), dtype=complex)
    s[:, 1, 0], s[:, 0, 0] = s21[0], s11[0]
    return s


def independent_yield(d, samples: int, seed: int = 7, allowances: Allowances | None = None) -> float:
    """Share of simulated builds meeting every band, by the model above.

    On the classic line without an antenna load (with or without connector hardware) each
    build is a scikit-rf network, with the depth ceiling added as a leakage path in
    power, ``|S21|^2 + 10^(-ceiling/10)`` (docs/hardware.md). With a load or the RLGC
    line, each build is recomputed by the hardware model's own two-port: the draws
    and the verdicts are still written here, apart from notchkit.buildyield.
    """
    allowances = allowances or Allowances()
    filt = d.filter
    cable = filt.cable
    respond = _skrf_s if _skrf_builds(cable) else _model_s
    ceiling = getattr(cable, "depth_ceiling_db", None) if _skrf_builds(cable) else None
    floor2 = 0.0 if ceiling is None else 10 ** (-ceiling / 10)
    kinds = [e.kind for e in filt.elements]
    nominal = [e.length_m for e in filt.elements]
    trimmed = {c.element_index for c in d.cuts if c.trimmable}
    vf0 = cable.velocity_factor
    spread = allowances.vf_spread
    if spread is None:
        spread = getattr(cable, "vf_tolerance", None) or 0.01
    req = d.requirement
    bands = [(n.lo_mhz, n.hi_mhz) for n in req.notches] + [(b.lo_mhz, b.hi_mhz) for b in req.pass_bands]
    grids = [np.linspace(lo, hi, 7) * 1e6 for lo, hi in bands]
    freq_hz = np.concatenate(grids)
    f_unique, back = np.unique(freq_hz, return_inverse=True)  # scikit-rf wants rising frequencies
    limits = d.solution.passes[0] if d.solution.passes else None
    rng = np.random.default_rng(seed)
    ok = 0
    for _ in range(samples):
        vf = vf0 + rng.uniform(-spread, spread)
        built = []
        for i, length in enumerate(nominal):
            if i in trimmed:
                # with hardware the plug (fixed) is inside the length; the trim sets the cable's part
                plug = stub_plug_m(cable)
                err = rng.uniform(-1, 1) * allowances.trim_freq_error_pct / 100
                electrical = (length - plug) * (1 + err) + rng.uniform(0, allowances.trim_step_mm * 1e-3)
                built.append(plug + electrical * vf / vf0)  # the physical length with that electrical length
            else:
                built.append(length + rng.uniform(-1, 1) * allowances.cut_tolerance_mm * 1e-3)
        s = respond(kinds, built, cable, vf, f_unique)[back]
        s21, s11 = np.sqrt(np.abs(s[:, 1, 0]) ** 2 + floor2), np.abs(s[:, 0, 0])
        good = True
        start = 0
        for k, g in enumerate(grids):
            sl = slice(start, start + g.size)
            start += g.size
            if k < len(req.notches):
                good &= bool(np.min(-20 * np.log10(s21[sl])) >= req.notches[k].required_db)
            else:
                il = np.max(-20 * np.log10(s21[sl]))
                swr = np.max((1 + s11[sl]) / (1 - s11[sl]))
                good &= bool(il <= limits.max_insertion_loss_db and swr <= limits.max_swr)
        ok += good
    return ok / samples


@pytest.fixture(scope="module")
def site_designs():
    """Every example site's filters as the site gives them (with its connector hardware),
    and again with the hardware and antenna loads taken out (a plain cable model)."""
    import dataclasses

    out = []
    for path in SITES:
        site = load_site(path)
        out += [(path, site, d) for d in design(site, workers=1).designs]
        bare = dataclasses.replace(site, hardware=None,
                                   radios=tuple(dataclasses.replace(r, load=None) for r in site.radios))
        out += [(path + " (no hardware)", bare, d) for d in design(bare, workers=1).designs]
    return out


@pytest.fixture(scope="module")
def issue_cases():
    """The two cases the robust-design requirement quotes."""
    hf = design_request([(14.0, 14.35)], [(7.0, 7.3, 30.0), (21.0, 21.45, 30.0)], cable="RG-213")
    site = load_site("sites/ridge-eoc.yaml")
    ridge = design(site, workers=1)
    return hf.designs[0], ridge.designs[0]


def test_every_filter_reported_as_meeting_reaches_its_yield_by_an_independent_monte_carlo(site_designs):
    n = 160
    checked = 0
    for path, site, d in site_designs:
        if not d.meets:
            continue
        assert d.build_yield >= d.yield_target
        y = independent_yield(d, n, allowances=site.allowances)
        sigma = math.sqrt(max(d.yield_target * (1 - d.yield_target), 0.01) / n)
        assert y >= d.yield_target - 3 * sigma, (path, d.id, y, d.build_yield)
        assert abs(y - d.build_yield) <= 4 * sigma + 0.02, (path, d.id, y, d.build_yield)
        checked += 1
    assert checked >= 5


def test_the_quoted_cases_get_designs_at_least_as_robust(issue_cases):
    hf, ridge_f1 = issue_cases
    # 20 m pass, 40 m and 15 m notches: the design quoted as robust has a 2.49 m line,
    # 42.9 dB worst notch (12.9 dB margin) and about 100 % yield.
    assert hf.meets and hf.solution.margin_db >= 12.9
    assert hf.build_yield >= 0.99
    assert independent_yield(hf, 120) >= 0.97
    # ridge-eoc F1: a 2.70 m shorted stub, +15.8 dB margin -- quoted on the earlier RG-213 loss
    # fit and without the 60 dB depth ceiling (docs/hardware.md). The quoted stub is judged on the
    # model the site's filters are designed on now (the refit cable loss, the leakage floor added
    # in power, its UHF tee and plug and the short's inductance) by scikit-rf (tests/hw_bench.py),
    # and the chosen design must do at least as well.
    cable = ridge_f1.filter.cable
    assert _skrf_builds(cable) and cable.hardware.family.name == "uhf"  # ridge-eoc: UHF, classic line
    ceiling = getattr(cable, "depth_ceiling_db", None)
    floor2 = 0.0 if ceiling is None else 10 ** (-ceiling / 10)
    quoted = []
    for n in ridge_f1.requirement.notches:
        f = np.linspace(n.lo_mhz, n.hi_mhz, 41) * 1e6
        s21 = np.abs(_skrf_s(["short"], [2.70], cable, cable.velocity_factor, f)[:, 1, 0])
        quoted.append(float(np.min(-10 * np.log10(s21 ** 2 + floor2))) - n.required_db)
    assert ridge_f1.meets and ridge_f1.solution.margin_db >= min(quoted) - 0.1
    assert ridge_f1.build_yield >= 0.99
    # and it is such a stub: a shorted stub several half waves long, trimmed at its series
    # resonance on the notch (Pozar sec. 2.3: a shorted line n lambda/2 long is a short at its
    # input); the site's connector hardware adds its own length, so n is not fixed here
    (stub,) = ridge_f1.filter.stubs
    (cut,) = ridge_f1.cuts
    assert stub.termination == "short" and cut.quarter_waves >= 4 and cut.quarter_waves % 2 == 0
    assert cut.serves_notch_mhz == pytest.approx(146.52, abs=0.01)
    assert abs(cut.resonance_mhz / 146.52 - 1) < 0.02


def test_alternatives_are_reported_with_stubs_cable_margin_and_yield(issue_cases):
    hf, _ = issue_cases
    alts = hf.solution.alternatives
    assert 1 <= len(alts) <= 4
    for a in alts:
        assert a.n_stubs >= 1 and a.total_cable_m > 0 and math.isfinite(a.margin_db)
        assert (a.build_yield is None) == (not a.meets)
    data = hf.to_json()
    assert {"stubs", "total_cable_m", "margin_db", "build_yield"} <= set(data["alternatives"][0])
    assert data["build_yield"] == pytest.approx(hf.build_yield) and data["meets"] is True


def test_yield_below_target_is_not_met(issue_cases):
    """A design that meets as designed but whose builds do not is reported NOT met,
    with the yield beside it."""
    hf, _ = issue_cases
    req = hf.requirement
    r = design_request(req.pass_bands, req.notches, cable="RG-213",
                       allowances=Allowances(trim_freq_error_pct=5.0))
    d = r.designs[0]
    assert d.meets_as_designed and d.build_yield < d.yield_target and not d.meets
    assert any("simulated builds" in a for a in d.advice)
    assert r.to_json()["filters"][0]["meets"] is False


# ---------------------------------------------------------------- buildable parts


def _check_buildable(d, allowances: Allowances):
    filt = d.filter
    for c in d.cuts:
        # shortest stub that can be made: plug body plus cable to trim (common practice); with
        # connector hardware the stub's length runs from the plug's mating face, so the cable
        # is what lies beyond the family's plug (docs/hardware.md)
        hw = getattr(filt.cable, "hardware", None)
        plug = hw.family.plug_mm / 1000 if hw is not None else 0.0
        assert c.cut_length_m - plug >= allowances.min_stub_cut_m - 1e-9, c.stub_id
        # the trim resonance is measurable, and it is f_n = n c VF / (4 l) (Pozar sec. 2.3)
        assert allowances.analyser_lo_mhz <= c.resonance_mhz <= allowances.analyser_hi_mhz, c.stub_id
        vf = filt.cable.velocity_factor
        f1 = C0 * vf / (4 * c.length_m) / 1e6  # the cable's quarter-wave frequency
        textbook = c.quarter_waves * f1
        if _plain(filt.cable):
            assert c.resonance_mhz == pytest.approx(textbook)
        # else: refined on the connector hardware (plug, short inductance; notchkit.hardware),
        # measured on the stub alone at its plug: the order is still chosen by the formula
        # a series resonance: n odd for an open stub, even for a shorted one (Pozar sec. 2.3)
        assert (c.quarter_waves % 2 == 1) == (c.termination == "open") and c.resonance_kind == "series"
        if c.serves_notch_mhz is not None:
            # trimmed at the resonance the stub exists for: the series order nearest its notch
            if c.serves_notch_mhz <= allowances.analyser_hi_mhz:
                assert abs(textbook - c.serves_notch_mhz) <= f1 + 1e-6
            else:
                # the notch is beyond the analyser: the highest series order below its top
                assert textbook + 2 * f1 > allowances.analyser_hi_mhz
    for x in d.lines:
        # cable with a plug at each end, or a barrel adapter of the hardware's length
        if x.barrel:
            assert x.length_m == pytest.approx(allowances.barrel_m, abs=1e-4) and "barrel" in x.name
        else:
            assert x.length_m >= allowances.min_line_m - 1e-9
    assert len(d.lines) == sum(1 for e in filt.elements if e.kind == "line")
    assert not d.build_problems


def test_no_example_design_breaks_a_buildability_rule(site_designs):
    for _, site, d in site_designs:
        _check_buildable(d, site.allowances)


def test_new_designs_are_buildable(issue_cases):
    for d in issue_cases:
        _check_buildable(d, Allowances())
    uhf = design_request([(144.0, 148.0)], [(432.0, 444.0, 30.0)], cable="RG-213").designs[0]
    _check_buildable(uhf, Allowances())
    # an analyser that stops at 500 MHz: no stub needs a resonance above it
    a = Allowances(analyser_hi_mhz=500.0)
    low = design_request([(144.0, 148.0)], [(432.0, 444.0, 30.0)], allowances=a).designs[0]
    _check_buildable(low, a)


def test_the_shortest_stub_holds_with_connector_hardware():
    """With UHF hardware a stub's length includes its 15 mm plug: a 20 mm stub is 5 mm of
    cable and is refused; the solver's designs keep 70 mm of cable beyond the plug."""
    from notchkit.hardware import Hardware, Model

    model = Model(cable=get_cable("RG-213"), hardware=Hardware.of("uhf"))
    plug = model.hardware.family.plug_mm / 1000
    tiny = Filter(elements=(Stub(termination="open", length_m=0.02), Stub(termination="open", length_m=0.3)),
                  cable=model, tee_allowance_m=0.0)
    cuts = cut_list(tiny, notch_mhz=[430.0], pass_mhz=[146.0], analyser_mhz=(0.1, 4000.0))
    problems = buildability(tiny, cuts, min_stub_cut_m=0.07, min_line_m=0.1)
    assert len(problems) == 1 and "F1-S1" in problems[0] and "plug" in problems[0]
    # 0.07 m of cable beyond the plug is just enough
    ok = Filter(elements=(Stub(termination="open", length_m=plug + 0.07),), cable=model, tee_allowance_m=0.0)
    cuts = cut_list(ok, notch_mhz=[430.0], pass_mhz=[146.0], analyser_mhz=(0.1, 4000.0))
    assert not buildability(ok, cuts, min_stub_cut_m=0.07, min_line_m=0.1)
    # the harbour example (N hardware, UHF notches): every stub keeps its 70 mm of cable
    site = load_site("sites/harbour-ops.yaml")
    for d in design(site, workers=1).designs:
        if getattr(d.filter.cable, "hardware", None) is not None:
            _check_buildable(d, site.allowances)


def test_buildability_names_each_broken_rule():
    cable = get_cable("RG-213")
    filt = Filter(elements=(Stub(termination="short", length_m=0.05), Line(length_m=0.05),
                            Stub(termination="open", length_m=0.5)), cable=cable, tee_allowance_m=0.03)
    cuts = cut_list(filt, notch_mhz=[150.0], pass_mhz=[450.0], analyser_mhz=(0.1, 900.0))
    problems = buildability(filt, cuts, min_stub_cut_m=0.07, min_line_m=0.1)
    text = " ".join(problems)
    assert "F1-S1" in text and "plug body" in text and "F1-L1" in text
    # 0.05 m shorted: first resonance (parallel, n=1) c VF / (4 l) = 989 MHz, beyond 900 MHz
    assert not cuts[0].trimmable and "analyser" in text


def test_line_sections_and_hardware_are_named():
    cable = get_cable("RG-213")
    filt = Filter(elements=(Stub(termination="open", length_m=0.5), Stub(termination="short", length_m=0.7),
                            Line(length_m=0.3), Stub(termination="open", length_m=0.4)), cable=cable)
    (line,) = line_cuts(filt, freq_mhz=[100.0])
    assert line.line_id == "F1-L1" and line.between_tees == (1, 2) and "plug at each end" in line.name
    # 360 l f / (c VF) degrees (Pozar sec. 2.3)
    assert line.degrees_at_mhz[0][1] == pytest.approx(360 * 0.3 * 100e6 / (C0 * 0.66))
    (note,) = hardware_notes(filt)
    assert note.startswith("tee 1 carries 2 stubs") and "cross" in note
    short = Filter(elements=(Stub(termination="open", length_m=0.5), Line(length_m=0.05),
                             Stub(termination="open", length_m=0.4)), cable=cable)
    (barrel,) = line_cuts(short, barrel_m=0.05)
    assert barrel.barrel and barrel.name.startswith("barrel")
    cuts = cut_list(short, notch_mhz=[150.0], pass_mhz=[100.0])
    assert not buildability(short, cuts, min_stub_cut_m=0.07, min_line_m=0.1, barrel_m=0.05)
    assert buildability(short, cuts, min_stub_cut_m=0.07, min_line_m=0.1, barrel_m=0.0)


def test_labels_lead_with_the_first_cut(issue_cases):
    from notchkit.report.text import tags

    hf, _ = issue_cases
    out = tags([hf])
    stubs = [t for t in out if "-S" in t.stub_id]
    assert [t.lines[2].split()[0:2] for t in stubs] == [["FIRST", "CUT"]] * len(stubs)
    lines = [t for t in out if "-L" in t.stub_id]
    assert len(lines) == len(hf.lines) >= 1 and lines[0].lines[2].startswith("CUT ")


# ---------------------------------------------------------------- ad-hoc design and advice


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "notchkit", "design", *args], capture_output=True, text=True,
                          timeout=120)


def test_ad_hoc_design_takes_power_limits_and_allowances():
    r = _cli("--pass", "144-148", "--notch", "432-444:30", "--power-w", "100", "--max-swr", "1.3",
             "--max-il-db", "0.4", "--yield-target-pct", "95", "--hardware", "ideal",
             "--tee-allowance-mm", "25", "--json")
    assert r.returncode in (0, 1), r.stderr
    import json

    f = json.loads(r.stdout)["filters"][0]
    assert f["power"] is not None and f["power"]["power_w"] == 100
    assert f["power"]["freq_mhz"] == pytest.approx(146.0)
    assert f["pass"][0]["max_swr"] == 1.3 and f["pass"][0]["max_insertion_loss_db"] == 0.4
    assert f["yield_target"] == pytest.approx(0.95)
    assert f["cut_list"][0]["tee_allowance_m"] == pytest.approx(0.025)
    assert f["model"]["hardware"] is None  # ideal: the classic model, the allowance used


def test_ad_hoc_design_defaults_to_uhf_hardware_and_refuses_an_unused_allowance():
    r = _cli("--pass", "144-148", "--notch", "432-444:30", "--hardware", "n", "--json")
    assert r.returncode in (0, 1), r.stderr
    import json

    f = json.loads(r.stdout)["filters"][0]
    assert f["model"]["hardware"]["family"] == "n" and f["cut_list"][0]["tee_allowance_m"] == 0.0
    r = _cli("--pass", "144-148", "--notch", "432-444:30", "--tee-allowance-mm", "25")
    assert r.returncode == 2 and r.stdout == "" and "--hardware ideal" in r.stderr
    with pytest.raises(DesignError, match="allowed: uhf, n, bnc, ideal"):
        design_request([(144.0, 148.0)], [(432.0, 444.0)], hardware="sma")
    (d,) = design_request([(144.0, 148.0)], [(432.0, 444.0)]).designs
    assert d.filter.cable.hardware.family.name == "uhf"  # the documented default (docs/hardware.md)


@pytest.mark.parametrize("args", [("--power-w", "-5"), ("--max-swr", "1"), ("--yield-target-pct", "120"),
                                  ("--power-mhz", "146")])
def test_ad_hoc_bad_options_exit_2_with_one_line(args):
    r = _cli("--pass", "144-148", "--notch", "432-444:30", *args)
    assert r.returncode == 2 and r.stdout == ""
    assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr


def test_advice_names_the_remedy_class_when_stubs_cannot_do_it():
    # 120 dB a few per cent from the pass band: far beyond what stubs give
    # (one stub about 30-45 dB in practice, common practice)
    r = design_request([(146.0, 146.1)], [(150.0, 150.1, 120.0)], cable="RG-213", max_stubs=2)
    d = r.designs[0]
    assert not d.meets
    text = " ".join(d.advice)
    for word in ("band-pass filter", "cavity", "spacing", "time-sharing"):
        assert word in text
    assert f"{STUB_CEILING_DB[0]:.0f}-{STUB_CEILING_DB[1]:.0f} dB" in text


def test_an_empty_analyser_range_is_one_clear_line(tmp_path):
    site = tmp_path / "site.yaml"
    site.write_text("site: Test Knoll\ncable: RG-213\ntransmitters:\n  - name: a\n    freq_mhz: 146.52\n"
                    "    power_w: 50\nallowances:\n  analyser_lo_mhz: 500\n  analyser_hi_mhz: 400\n")
    r = _cli(str(site))
    assert r.returncode == 2 and r.stdout == ""
    assert r.stderr.strip() == (f"{site}:9:20: allowances.analyser_hi_mhz: analyser range 500-400 MHz is "
                                "empty (allowed: analyser_lo_mhz below analyser_hi_mhz)")


@pytest.mark.parametrize("kw", [{"limits": {"yield_target_pct": 150.0}}, {"limits": {"margin_goal_db": -1.0}},
                                {"allowances": {"analyser_lo_mhz": 10.0, "analyser_hi_mhz": 5.0}},
                                {"allowances": {"min_stub_cut_m": float("nan")}}])
def test_library_refuses_unusable_build_settings(kw):
    import dataclasses

    from notchkit.errors import DesignError
    from notchkit.site.model import Limits

    args = {"limits": dataclasses.replace(Limits(), **kw.get("limits", {})),
            "allowances": dataclasses.replace(Allowances(), **kw.get("allowances", {}))}
    with pytest.raises(DesignError):
        design_request([(144.0, 148.0)], [(430.0, 440.0)], **args)
