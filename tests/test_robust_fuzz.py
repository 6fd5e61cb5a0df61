"""Property-based fuzzing: nothing but notchkit's own error escapes, and every
valid input gives finite numbers.

Properties (hypothesis, derandomized so a run is repeatable; the strategies are
in tests/fuzz_strategies.py):

* a valid site document (built from the documented keys and ranges) loads, and
  ``survey``/``design``/``plan`` give JSON with no NaN or infinity anywhere
  (``json.dumps(..., allow_nan=False)`` succeeds and a walk finds only finite
  floats), and their text has no ``nan``/``inf``;
* a mutated document, or random text, either loads or raises
  :class:`~notchkit.errors.SiteError`; the command line answers 0/1/2;
* an ad-hoc design request gives finite JSON or a :class:`NotchkitError`
  (overlapping pass and notch bands must be refused);
* a synthetic stub measurement (from notchkit's own line model, Touchstone
  text per the Touchstone 1.1 specification) gives finite trim figures, and a
  damaged or garbage file raises :class:`MeasurementError` (or another
  NotchkitError) and the CLI answers 2.

Warnings: numpy's RuntimeWarning (overflow, invalid value) must never appear;
only notchkit's own warnings (NotchkitWarning) are allowed.
"""

from __future__ import annotations

import json
import math
import re
import tempfile
import warnings
from contextlib import contextmanager, redirect_stderr, redirect_stdout
from io import StringIO
from pathlib import Path

import fuzz_strategies as fs
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, EXIT_UNMET, NotchkitError, NotchkitWarning, SiteError
from notchkit.site.loader import load_site

FUZZ = settings(
    derandomize=True,
    deadline=None,
    database=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much],
)

NON_FINITE_TEXT = re.compile(r"(?<![A-Za-z])(nan|inf|infinity)(?![A-Za-z])", re.IGNORECASE)


def walk_finite(obj, where: str = "$") -> None:
    """Every number in a JSON document is finite (and the document dumps with allow_nan=False)."""
    if isinstance(obj, bool) or obj is None or isinstance(obj, str):
        return
    if isinstance(obj, int | float):
        assert math.isfinite(obj), f"{where} = {obj!r}"
    elif isinstance(obj, dict):
        for k, v in obj.items():
            walk_finite(v, f"{where}.{k}")
    elif isinstance(obj, list | tuple):
        for i, v in enumerate(obj):
            walk_finite(v, f"{where}[{i}]")
    else:
        raise AssertionError(f"{where}: {type(obj).__name__} is not a JSON value")


def assert_finite_json(doc) -> None:
    json.dumps(doc, allow_nan=False)
    walk_finite(doc)


def _no_constants(name: str):
    raise AssertionError(f"the JSON output contains {name}")


def parse_json_output(text: str):
    """Parse a command's JSON output, refusing NaN/Infinity tokens (json.loads accepts them)."""
    return json.loads(text, parse_constant=_no_constants)


@contextmanager
def only_notchkit_warnings(allow: tuple[str, ...] = ()):
    """Record warnings (the test config turns them into errors) and allow only notchkit's own
    (and the named categories in ``allow``)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        yield
    bad = [w for w in caught
           if not issubclass(w.category, NotchkitWarning) and w.category.__name__ not in allow]
    assert not bad, [f"{w.category.__name__}: {w.message}" for w in bad]


def run_cli(argv: list[str]) -> tuple[int, str, str]:
    """Run the CLI in-process; any exception other than its own handling escapes the test."""
    out, err = StringIO(), StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main(argv)
    return rc, out.getvalue(), err.getvalue()


def write(folder: str, name: str, text: str | bytes) -> Path:
    p = Path(folder) / name
    if isinstance(text, bytes):
        p.write_bytes(text)
    else:
        p.write_text(text, encoding="utf-8")
    return p


def assert_clean_refusal(rc: int, out: str, err: str) -> None:
    """Exit 2 with one-line messages on stderr, no traceback."""
    assert rc == EXIT_BAD_INPUT
    assert "Traceback" not in err
    assert err.strip()


# ---------------------------------------------------------------------------
# The strategies themselves follow the documentation
# ---------------------------------------------------------------------------


def test_strategy_keys_are_the_documented_keys():
    """Every key the generator writes is a documented key of its section (docs/site-schema.json)."""
    keysets = {name: set(fs.keys(name)) for name in ("site", "transmitter", "receiver", "transceiver",
                                                     "antenna", "feedline", "tx", "rx", "limits",
                                                     "allowances", "cable", "coupling")}

    @settings(FUZZ, max_examples=30)
    @given(fs.site_documents())
    def check(doc):
        assert set(doc) <= keysets["site"]
        for kind, sec in (("transmitters", "transmitter"), ("receivers", "receiver"),
                          ("transceivers", "transceiver")):
            for radio in doc.get(kind, []):
                assert set(radio) <= keysets[sec], (sec, set(radio) - keysets[sec])
                for sub in ("antenna", "feedline", "tx", "rx"):
                    if sub in radio:
                        assert set(radio[sub]) <= keysets[sub], sub
        for sub in ("limits", "allowances"):
            assert set(doc.get(sub, {})) <= keysets[sub]

    check()


# ---------------------------------------------------------------------------
# Site documents
# ---------------------------------------------------------------------------


@settings(FUZZ, max_examples=25)
@given(fs.site_documents(), st.sampled_from(["plain", "bom", "crlf", "comments"]))
def test_valid_documents_load_and_survey_to_finite_numbers(doc, style):
    text = fs.to_yaml(doc)
    if style == "bom":  # a UTF-8 byte order mark, as some editors write (Unicode sec. 23.8)
        text = "\ufeff" + text
    elif style == "crlf":  # Windows line ends
        text = text.replace("\n", "\r\n")
    elif style == "comments":
        text = "# a fictional site\n" + text.replace("\n", "  # note\n", 1)
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", text)
        with only_notchkit_warnings():
            site = load_site(path)  # a valid document must load: any SiteError here is a failure
            assert len(site.radios) == sum(len(doc.get(k, [])) for k in
                                           ("transmitters", "receivers", "transceivers"))
            rc, out, err = run_cli(["survey", str(path), "--json"])
            assert rc == EXIT_OK, err
            assert_finite_json(parse_json_output(out))
            rc, out, err = run_cli(["survey", str(path)])
            assert rc == EXIT_OK, err
            assert not NON_FINITE_TEXT.search(out), NON_FINITE_TEXT.search(out)


@pytest.mark.skipif(not fs.built("design"), reason="notchkit design is not built yet")
@settings(FUZZ, max_examples=10)
@given(fs.threat_sites())
def test_valid_documents_design_to_finite_numbers(doc):
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", fs.to_yaml(doc))
        with only_notchkit_warnings():
            rc, out, err = run_cli(["design", str(path), "--json"])
        assert "Traceback" not in err
        if rc == EXIT_BAD_INPUT:
            # a valid file may still ask for something no filter can do (a receiver on a
            # transmitter's frequency): a one-line refusal, never a loader problem
            assert err.startswith("error: "), err
            assert out == ""
            return
        assert rc in (EXIT_OK, EXIT_UNMET), err
        doc_out = parse_json_output(out)
        assert_finite_json(doc_out)
        assert doc_out["meets"] is (rc == EXIT_OK)


@pytest.mark.skipif(not fs.built("plan"), reason="notchkit plan is not built yet")
@settings(FUZZ, max_examples=2)
@given(fs.threat_sites(extra_radios=1))
def test_valid_documents_plan_to_finite_numbers(doc):
    """The plan's JSON (``--outdir``) is finite too, and every file it writes is whole."""
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", fs.to_yaml(doc))
        out = Path(tmp) / "out"
        with only_notchkit_warnings():
            rc, _, err = run_cli(["plan", str(path), "-o", str(Path(tmp) / "x.pdf"), "--outdir", str(out)])
        assert "Traceback" not in err
        if rc == EXIT_BAD_INPUT:
            assert err.startswith("error: ") and not (Path(tmp) / "x.pdf").exists()
            return
        assert rc in (EXIT_OK, EXIT_UNMET), err
        plan = json.loads((out / "plan.json").read_text(encoding="utf-8"), parse_constant=_no_constants)
        assert_finite_json(plan)
        assert (Path(tmp) / "x.pdf").read_bytes().rstrip().endswith(b"%%EOF")


@settings(FUZZ, max_examples=50)
@given(fs.mutated_documents())
def test_mutated_documents_load_or_raise_site_error(doc):
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", fs.to_yaml(doc))
        with only_notchkit_warnings():
            try:
                load_site(path)
            except SiteError as exc:
                lines = exc.lines()
                assert lines
                for line in lines:
                    assert line.startswith(f"{path}:") and "\n" not in line, line
                # the same lines from the command line, exit 2
                rc, out, err = run_cli(["check", str(path)])
                assert_clean_refusal(rc, out, err)
                assert err.splitlines() == lines
                return
            rc, out, err = run_cli(["survey", str(path), "--json"])
        assert rc in (EXIT_OK, EXIT_BAD_INPUT), err
        if rc == EXIT_OK:
            assert_finite_json(parse_json_output(out))


@settings(FUZZ, max_examples=40)
@given(fs.numeric_field_broken())
def test_an_impossible_number_is_reported_at_its_field(case):
    """NaN, infinity, text, a boolean, a list or an absurd magnitude in any numeric field: the
    loader names that field (FILE:LINE:COL: field.path: ...), and check exits 2."""
    doc, field = case
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", fs.to_yaml(doc))
        with only_notchkit_warnings():
            with pytest.raises(SiteError) as info:
                load_site(path)
        lines = info.value.lines()
        assert any(f": {field}: " in line for line in lines), (field, lines)
        rc, out, err = run_cli(["check", str(path)])
        assert_clean_refusal(rc, out, err)


@settings(FUZZ, max_examples=80)
@given(fs.random_text())
def test_random_text_loads_or_raises_site_error(text):
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", text)
        with only_notchkit_warnings():
            try:
                load_site(path)
            except SiteError as exc:
                assert all(line.startswith(f"{path}:") for line in exc.lines())


@settings(FUZZ, max_examples=40)
@given(st.binary(max_size=300))
def test_random_bytes_load_or_raise_site_error(data):
    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "site.yaml", data)
        with only_notchkit_warnings():
            try:
                load_site(path)
            except SiteError as exc:
                assert all(line.startswith(f"{path}:") for line in exc.lines())


# ---------------------------------------------------------------------------
# Ad-hoc design requests
# ---------------------------------------------------------------------------


def _overlaps(req) -> bool:
    return any(p_lo <= n[1] and n[0] <= p_hi for p_lo, p_hi in req["passes"] for n in req["notches"])


@pytest.mark.skipif(not fs.built("design"), reason="notchkit design is not built yet")
@settings(FUZZ, max_examples=25)
@given(fs.design_requests())
def test_design_requests_give_finite_numbers_or_a_clear_refusal(req):
    from notchkit.synthesis import design_request

    with only_notchkit_warnings():
        try:
            report = design_request(req["passes"], req["notches"], cable=req["cable"],
                                    max_stubs=req["max_stubs"])
        except NotchkitError as exc:
            assert str(exc) and "\n" not in str(exc)
            rc, out, err = run_cli(["design", *fs.design_argv(req), "--json"])
            assert_clean_refusal(rc, out, err)
            assert out == ""
            return
    assert not _overlaps(req), "a pass band overlapping a notch must be refused"
    assert_finite_json(report.to_json())


@pytest.mark.skipif(not fs.built("design"), reason="notchkit design is not built yet")
@settings(FUZZ, max_examples=15)
@given(fs.design_requests())
def test_design_command_answers_0_1_or_2(req):
    with only_notchkit_warnings():
        rc, out, err = run_cli(["design", *fs.design_argv(req)])
    assert "Traceback" not in err
    assert rc in (EXIT_OK, EXIT_UNMET, EXIT_BAD_INPUT)
    if rc == EXIT_BAD_INPUT:
        assert err.startswith("error: ") and out == ""
    else:
        assert not NON_FINITE_TEXT.search(out), NON_FINITE_TEXT.search(out)
    if _overlaps(req):
        assert rc == EXIT_BAD_INPUT


@pytest.mark.skipif(not fs.built("design"), reason="notchkit design is not built yet")
@settings(FUZZ, max_examples=40)
@given(st.lists(st.sampled_from(["--pass", "--notch", "--cable", "--max-stubs", "--json",
                                 "146-148", "430-440:40", "-5-3", "nan-inf", "0-0", "1e9-2e9",
                                 "7.0-7.3:0", "7.0-7.3:1e9", "RG-213", "NoSuchCable", "0", "99",
                                 "14.35-14.0", "", ":", "x"]), max_size=8))
def test_design_arguments_fuzz(argv):
    """Random command lines: argparse and design's own checks answer 2 with one line, never a traceback."""
    with only_notchkit_warnings():
        try:
            rc, out, err = run_cli(["design", *argv])
        except SystemExit as exc:  # argparse's own exit for a usage error
            rc, err = exc.code, ""
    assert rc in (EXIT_OK, EXIT_UNMET, EXIT_BAD_INPUT)
    assert "Traceback" not in err


# ---------------------------------------------------------------------------
# Touchstone measurements for trim
# ---------------------------------------------------------------------------


@settings(FUZZ, max_examples=40)
@given(fs.stub_measurements())
def test_trim_on_synthetic_stub_sweeps_gives_finite_figures(m):
    from notchkit.trimming import trim

    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "stub" + m["suffix"], m["text"])
        before = path.read_bytes()
        with only_notchkit_warnings():
            result = trim(path, cable=m["cable"], termination=m["termination"],
                          target_mhz=m["target_mhz"], length_m=m["length_m"])
        doc = result.to_json()
        assert_finite_json(doc)
        # the stub was made from the nominal cable: the effective VF comes back near nominal
        assert result.velocity_factor == pytest.approx(result.nominal_velocity_factor, rel=0.02)
        with only_notchkit_warnings():
            rc, out, err = run_cli(["trim", str(path), "--cable", m["cable"], "--termination",
                                    m["termination"], "--target-mhz", repr(m["target_mhz"]),
                                    "--length-m", repr(m["length_m"]), "--json"])
        assert rc == EXIT_OK, err
        assert_finite_json(parse_json_output(out))
        assert path.read_bytes() == before


@settings(FUZZ, max_examples=60)
@given(fs.broken_touchstone())
def test_trim_on_damaged_files_raises_only_notchkit_errors(m):
    from notchkit.trimming import trim

    with tempfile.TemporaryDirectory() as tmp:
        path = write(tmp, "stub" + m["suffix"], m["text"])
        with only_notchkit_warnings():
            try:
                result = trim(path, cable=m["cable"], termination=m["termination"],
                              target_mhz=m["target_mhz"], length_m=m["length_m"])
            except NotchkitError as exc:
                assert str(exc) and "\n" not in str(exc)
                rc, out, err = run_cli(["trim", str(path), "--cable", m["cable"], "--termination",
                                        m["termination"], "--target-mhz", repr(m["target_mhz"]),
                                        "--length-m", repr(m["length_m"])])
                assert_clean_refusal(rc, out, err)
                return
        assert_finite_json(result.to_json())  # a damage that left a usable sweep


DAMAGED = {
    # a sweep written high-to-low: Touchstone 1.1 requires increasing frequencies
    "decreasing": ("# MHZ S RI R 50", [f"{f} 0.5 0.1" for f in range(300, 0, -10)],
                   "strictly increasing"),
    # an infinite angle in MA form: scikit-rf computes mag * exp(j * inf) = nan
    "inf_angle": ("# MHZ S MA R 50", ["10 0.5 inf"] + [f"{f} 0.5 10" for f in range(20, 310, 10)],
                  "non-finite"),
}


@pytest.mark.parametrize("kind", sorted(DAMAGED))
def test_trim_damaged_file_warns_nothing_foreign(tmp_path, kind):
    from notchkit.errors import MeasurementError
    from notchkit.trimming import trim

    option, rows, message = DAMAGED[kind]
    path = write(str(tmp_path), f"{kind}.s1p", "\n".join([option, *rows]) + "\n")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with pytest.raises(MeasurementError, match=message):
            trim(path, cable="RG-58", termination="open", target_mhz=50.0, length_m=1.0)
    assert [w.category.__name__ for w in caught] == []


# ---------------------------------------------------------------------------
# The other inputs: trim's plan JSON, cables' frequency list
# ---------------------------------------------------------------------------

_JSON_VALUES = st.recursive(
    st.none() | st.booleans() | st.floats(allow_nan=False) | st.integers() | st.text(max_size=10),
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(
        st.sampled_from(["filters", "elements", "id", "kind", "termination", "length_m",
                         "cut_length_m", "first_cut_m", "x"]), inner, max_size=5),
    max_leaves=25,
)


@settings(FUZZ, max_examples=40)
@given(st.one_of(
    _JSON_VALUES.map(json.dumps),
    st.builds(lambda v: json.dumps({"filters": [{"id": "F1", "elements": [
        {"kind": "stub", "id": "F1-S1", "termination": "open", "length_m": v,
         "cut_length_m": v, "first_cut_m": v}]}]}),
        st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=5), st.none())),
    fs.random_text(),
))
def test_trim_with_a_damaged_plan_json_answers_0_or_2(plan_text):
    """trim --plan reads a plan JSON: anything there gives a result or one 'error:' line."""
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-58")
    length = C0 * cable.velocity_factor / (4 * 50e6)
    f = np.linspace(40e6, 60e6, 101)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    with tempfile.TemporaryDirectory() as tmp:
        meas = write(tmp, "stub.s2p", fs.touchstone_text(f, s))
        plan = write(tmp, "plan.json", plan_text)
        with only_notchkit_warnings():
            rc, out, err = run_cli(["trim", str(meas), "--cable", "RG-58", "--target-mhz", "50",
                                    "--plan", str(plan), "--stub", "F1-S1", "--json"])
        assert "Traceback" not in err
        if rc == EXIT_OK:
            assert_finite_json(parse_json_output(out))
        else:
            assert_clean_refusal(rc, out, err)
            assert len(err.splitlines()) == 1 and err.startswith("error: ")


@settings(FUZZ, max_examples=30)
@given(st.lists(st.sampled_from(["10", "0.1", "6000", "0", "-5", "nan", "inf", "1e9", "x", "", " ",
                                 "146.52", "1e-3", "6000.001"]), min_size=1, max_size=4).map(",".join))
def test_cables_at_frequencies_answer_0_or_2(at):
    with only_notchkit_warnings():
        rc, out, err = run_cli(["cables", f"--at={at}", "--json"])
    assert "Traceback" not in err
    if rc == EXIT_OK:
        assert_finite_json(parse_json_output(out))
    else:
        assert_clean_refusal(rc, out, err)


# ---------------------------------------------------------------------------
# trim against a real plan: hostile options and a damaged plan JSON
# ---------------------------------------------------------------------------

RAW_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\ud800-\udfff]")


@pytest.fixture(scope="module")
def real_plan(tmp_path_factory):
    """A plan JSON written by ``notchkit plan --outdir`` for a fictional site, and a measured
    sweep of its first stub (computed with notchkit's line model through a tee)."""
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate

    folder = tmp_path_factory.mktemp("realplan")
    site = write(str(folder), "flat.yaml", "site: Fictional Flat\ntransmitters:\n"
                 "  - {name: TX2M, freq_mhz: 146.52, power_w: 50, antenna: {x_m: 0, y_m: 0, height_m: 10}}\n"
                 "receivers:\n  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}\n")
    rc, _out, err = run_cli(["plan", str(site), "-o", str(folder / "p.pdf"), "--outdir", str(folder / "o")])
    assert rc in (EXIT_OK, EXIT_UNMET), err
    text = (folder / "o" / "plan.json").read_text(encoding="utf-8")
    doc = json.loads(text)
    flt = doc["filters"][0]
    stub = next(e for e in flt["elements"] if e["kind"] == "stub")
    cable = get_cable(flt["cable"]["type"])
    f0 = stub["resonance_mhz"] * 1e6
    f = np.linspace(0.8 * f0, 1.2 * f0, 201)
    s = evaluate(Filter(elements=(Stub(termination=stub["termination"], length_m=stub["length_m"]),),
                        cable=cable), f)
    meas = write(str(folder), "stub.s2p", fs.touchstone_text(f, s))
    return {"text": text, "stub": stub["id"], "cable": cable.name, "meas": meas, "folder": folder}


def _answer_0_or_2(rc: int, out: str, err: str) -> None:
    assert "Traceback" not in err
    assert not RAW_CONTROL.search(out) and not RAW_CONTROL.search(err)
    if rc == EXIT_OK:
        if out.lstrip().startswith("{"):
            assert_finite_json(parse_json_output(out))
    else:
        assert_clean_refusal(rc, out, err)
        assert len(err.splitlines()) == 1 and err.startswith("error: "), err


@settings(FUZZ, max_examples=40)
@given(fs.trim_options(), st.booleans())
def test_trim_options_answer_0_or_2(real_plan, options, use_plan):
    """Hostile numbers for --length-m/--target-mhz/--allowance-m/--order, with and without --plan:
    a finite answer or one 'error:' line (once OverflowError, and Infinity in the JSON)."""
    argv = ["trim", str(real_plan["meas"]), "--cable", real_plan["cable"], "--json", *options]
    if use_plan:
        argv += ["--plan", str(real_plan["folder"] / "o" / "plan.json"), "--stub", real_plan["stub"]]
    else:
        argv += ["--termination", "open"]
        if not any(o.startswith("--target-mhz") for o in options):
            argv += ["--target-mhz", "146"]
    with only_notchkit_warnings():
        try:
            rc, out, err = run_cli(argv)
        except SystemExit as exc:  # argparse's own answer to a malformed option: exit 2
            rc, out, err = exc.code, "", "error: argparse usage"
    _answer_0_or_2(rc, out, err)


@settings(FUZZ, max_examples=60)
@given(st.data())
def test_trim_with_a_damaged_real_plan_answers_0_or_2(real_plan, data):
    """The real plan JSON with one thing damaged (a hostile number, deep nesting, truncation,
    escapes in a string, another value anywhere): a result or one 'error:' line."""
    text = data.draw(fs.mutated_plan_json(real_plan["text"]))
    with tempfile.TemporaryDirectory() as tmp:
        plan = write(tmp, "plan.json", text)
        with only_notchkit_warnings():
            rc, out, err = run_cli(["trim", str(real_plan["meas"]), "--cable", real_plan["cable"],
                                    "--plan", str(plan), "--stub", real_plan["stub"], "--json"])
        _answer_0_or_2(rc, out, err)
        assert plan.read_text(encoding="utf-8") == text or isinstance(text, bytes)
