"""Hypothesis strategies for the robustness suite: site documents, ad-hoc design
requests and Touchstone measurements, valid and broken.

The valid site documents are built from the documented format: the keys and the
numeric ranges come from the published JSON Schema (``docs/site-schema.json``,
or the loader's :func:`~notchkit.site.loader.site_schema` before the file
exists), so a range that changes in the documentation changes here too. The
rules the schema cannot state (unique names, ``lo < hi``, exactly one of
``freq_mhz``/``band_mhz``, known cable names) are kept by hand, as
docs/site-format.md describes them.

The broken ones start from a valid document and change one thing: a key
dropped, a value replaced by a wrong type, NaN, infinity, a negative or a huge
number, random text, or an unknown key added; or the whole file replaced by
random text.
"""

from __future__ import annotations

import copy
import importlib
import inspect
import json
import math
import string
from functools import lru_cache
from pathlib import Path
from typing import Any

import yaml
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parent.parent

LENGTH_UNITS_M = {"m": 1.0, "cm": 0.01, "mm": 0.001, "ft": 0.3048, "in": 0.0254}
"""The length units a site file accepts (docs/site-format.md); ft and in exact by definition."""


@lru_cache(maxsize=1)
def schema() -> dict[str, Any]:
    """The published site-file JSON Schema (the file when present, else the loader's builder)."""
    path = ROOT / "docs" / "site-schema.json"
    if path.is_file():
        return json.loads(path.read_text(encoding="utf-8"))
    from notchkit.site.loader import site_schema

    return site_schema()


def section(name: str) -> dict[str, Any]:
    """The schema of one section (``"site"`` is the top level)."""
    s = schema()
    return s if name == "site" else s["$defs"][name]


def keys(name: str) -> tuple[str, ...]:
    """The keys a section accepts, as documented."""
    return tuple(section(name)["properties"])


def _numeric(prop: dict[str, Any]) -> dict[str, Any]:
    if "oneOf" in prop:
        for branch in prop["oneOf"]:
            if branch.get("type") in ("number", "integer"):
                return branch
    return prop


def number(sec: str, key: str, *, lo: float | None = None, hi: float | None = None) -> st.SearchStrategy:
    """A valid value of a numeric key: inside the documented range, optionally narrowed.

    Lengths are sometimes written as text with a unit (``"12.5 ft"``), which the
    format allows.
    """
    prop = section(sec)["properties"][key]
    num = _numeric(prop)
    excl = "exclusiveMinimum" in num
    vmin = float(num.get("exclusiveMinimum", num.get("minimum", -1e9)))
    vmax = float(num.get("maximum", 1e9))
    if lo is not None and lo > vmin:
        vmin, excl = lo, False
    if hi is not None and hi < vmax:
        vmax = hi
    if num.get("type") == "integer":
        return st.integers(int(math.floor(vmin)) + (1 if excl else 0), int(vmax))
    plain = st.floats(vmin, vmax, exclude_min=excl, allow_nan=False, allow_infinity=False)
    if "oneOf" not in prop:
        return plain
    # a length as text: the value in metres written in a unit of the format
    def as_text(v: float, unit: str) -> str | float:
        if unit == "m":
            return f"{v:.6g} m"
        return f"{v / LENGTH_UNITS_M[unit]:.9g} {unit}"

    inner = st.floats(vmin, vmax, exclude_min=True, allow_nan=False) if excl else plain
    units = st.sampled_from(list(LENGTH_UNITS_M))
    text = st.builds(as_text, inner.filter(lambda v: v > 0 or not excl), units)
    return st.one_of(plain, plain, text)


def _valid_length_text(value: Any, sec: str, key: str) -> bool:
    """Whether a length written as text still lies in range after the round trip through the unit."""
    if not isinstance(value, str):
        return True
    num = _numeric(section(sec)["properties"][key])
    v, unit = value.split()
    metres = float(v) * LENGTH_UNITS_M[unit]
    lo = num.get("exclusiveMinimum", num.get("minimum"))
    ok_lo = metres > lo if "exclusiveMinimum" in num else metres >= lo
    return ok_lo and metres <= num["maximum"]


# ---------------------------------------------------------------------------
# Valid site documents
# ---------------------------------------------------------------------------

NAME_ALPHABET = string.ascii_letters + string.digits
CABLES = ("RG-58", "RG-213", "RG-8X", "RG-59", "RG-174")
"""Library cable names used by generated sites (all in ``notchkit.cables.library()``)."""

# A frequency band spread over the documented range 0.1-6000 MHz, with a bias to
# the VHF/UHF land-mobile and amateur bands where stub filters are common practice.
_F_LO, _F_HI = 0.1, 6000.0


def freq_mhz() -> st.SearchStrategy[float]:
    """A frequency in MHz in the documented range, log-spread, edges included."""
    return st.one_of(
        st.sampled_from([_F_LO, _F_HI, 1.8, 28.5, 50.1, 146.52, 155.34, 162.4, 446.0, 1296.0]),
        st.floats(math.log10(_F_LO), math.log10(_F_HI)).map(lambda e: float(f"{10**e:.5g}")),
    ).map(lambda f: min(max(f, _F_LO), _F_HI))


@st.composite
def band_or_freq(draw) -> dict[str, Any]:
    f = draw(freq_mhz())
    if draw(st.booleans()):
        return {"freq_mhz": f}
    width = draw(st.floats(0.001, 0.2)) * f
    lo, hi = f, min(f + max(width, 0.001), _F_HI)
    if hi <= lo:
        lo = hi - 0.01
    return {"band_mhz": [round(lo, 4), round(hi, 4)] if round(lo, 4) < round(hi, 4) else [lo, hi]}


@st.composite
def antenna(draw, *, same_spot: bool) -> dict[str, Any]:
    if same_spot:  # antennas on one mast at one height: zero distance, a degenerate case
        return {"x_m": 0, "y_m": 0, "height_m": 10}
    out: dict[str, Any] = {}
    for k in keys("antenna"):
        if _numeric(section("antenna")["properties"][k]).get("type") not in ("number", "integer"):
            continue  # band_mhz, gain_table: not numbers
        if draw(st.booleans()):
            v = draw(number("antenna", k))
            if _valid_length_text(v, "antenna", k):
                out[k] = v
    return out


@st.composite
def common(draw, *, same_spot: bool) -> dict[str, Any]:
    out: dict[str, Any] = {}
    if draw(st.booleans()):
        out["antenna"] = draw(antenna(same_spot=same_spot))
    if draw(st.booleans()):
        v = draw(number("feedline", "length_m", hi=200.0))
        if _valid_length_text(v, "feedline", "length_m"):
            fl: dict[str, Any] = {"length_m": v}
            if draw(st.booleans()):
                fl["cable"] = draw(st.sampled_from(CABLES))
            out["feedline"] = fl
    if draw(st.booleans()):
        out["stub_cable"] = draw(st.sampled_from(CABLES))
    return out


def _optional(draw, sec: str, names: tuple[str, ...]) -> dict[str, Any]:
    out = {}
    for k in names:
        if draw(st.integers(0, 3)) == 0:
            out[k] = draw(number(sec, k))
    return out


TX_OPTIONAL = ("bandwidth_khz", "harmonic_suppression_dbc", "noise_dbc_hz", "im_conversion_db")
RX_OPTIONAL = ("bandwidth_khz", "sensitivity_dbm", "blocking_dbm", "noise_figure_db")


@st.composite
def transmitter(draw, name: str, same_spot: bool) -> dict[str, Any]:
    d = {"name": name, **draw(band_or_freq())}
    d["power_w"] = draw(st.one_of(st.sampled_from([1, 5, 25, 50, 100, 1000, 10_000]),
                                  number("transmitter", "power_w", hi=10_000.0)))
    d.update(_optional(draw, "transmitter", TX_OPTIONAL))
    d.update(draw(common(same_spot=same_spot)))
    return d


@st.composite
def receiver(draw, name: str, same_spot: bool) -> dict[str, Any]:
    d = {"name": name, **draw(band_or_freq())}
    d.update(_optional(draw, "receiver", RX_OPTIONAL))
    d.update(draw(common(same_spot=same_spot)))
    return d


@st.composite
def transceiver(draw, name: str, same_spot: bool) -> dict[str, Any]:
    d: dict[str, Any] = {"name": name}
    shared = draw(st.booleans())
    if shared:
        d.update(draw(band_or_freq()))
    tx = {} if shared else draw(band_or_freq())
    tx["power_w"] = draw(st.sampled_from([1, 50, 100, 10_000]))
    d["tx"] = tx
    if not shared or draw(st.booleans()):
        d["rx"] = draw(band_or_freq()) if not shared else {}
    d.update(draw(common(same_spot=same_spot)))
    return d


@st.composite
def site_documents(draw, *, max_radios: int = 4) -> dict[str, Any]:
    """A valid site document as Python data (dump it with :func:`to_yaml`)."""
    n = draw(st.integers(1, max_radios))
    raw = draw(st.lists(st.text(NAME_ALPHABET, min_size=1, max_size=8), min_size=n, max_size=n,
                        unique_by=str.lower))
    same_spot = draw(st.integers(0, 4)) == 0
    doc: dict[str, Any] = {"site": draw(st.sampled_from(["Fictional Ridge", "Testmark Hill", "Q"]))}
    if draw(st.booleans()):
        doc["cable"] = draw(st.sampled_from(CABLES))
    lists: dict[str, list] = {"transmitters": [], "receivers": [], "transceivers": []}
    for name in raw:
        kind = draw(st.sampled_from(["transmitters", "receivers", "transceivers"]))
        build = {"transmitters": transmitter, "receivers": receiver, "transceivers": transceiver}[kind]
        lists[kind].append(draw(build(name, same_spot)))
    for k, v in lists.items():
        if v:
            doc[k] = v
    if n >= 2 and draw(st.booleans()):
        a, b = raw[0], raw[1]
        doc["couplings"] = [{"between": [a, b], "isolation_db": draw(number("coupling", "isolation_db"))}]
    if draw(st.booleans()):
        doc["limits"] = _optional(draw, "limits", ("max_insertion_loss_db", "max_swr",
                                                   "rejection_margin_db", "max_stubs"))
    if draw(st.booleans()):
        doc["allowances"] = _optional(draw, "allowances", ("trim_margin_pct",))
    if draw(st.integers(0, 3)) == 0:
        doc["max_harmonic"] = draw(number("site", "max_harmonic", hi=7))
    if draw(st.integers(0, 3)) == 0:
        # a user-defined cable, lossless or with a rising loss table
        cab: dict[str, Any] = {"name": "Userline", "z0_ohm": 50, "velocity_factor": 0.66}
        if draw(st.booleans()):
            cab["loss_table"] = [[10, 1.5], [100, 5.0], [1000, 18.0]]
        doc["cables"] = [cab]
        doc["cable"] = "Userline"
    return doc


@st.composite
def threat_sites(draw, *, extra_radios: int = 1) -> dict[str, Any]:
    """A valid site that needs at least one filter: a transmitter and a receiver a few metres
    apart, a few percent apart in frequency (the receiver is overloaded: common practice, a
    co-sited VHF/UHF pair needs filtering), plus up to ``extra_radios`` random radios."""
    doc = draw(site_documents(max_radios=max(extra_radios, 1)))
    f_tx = draw(st.sampled_from([7.1, 14.2, 50.1, 146.52, 155.34, 446.0, 1296.0]))
    ratio = draw(st.sampled_from([1.03, 1.06, 1.1, 0.94, 0.9]))
    doc.setdefault("transmitters", []).append({
        "name": "pair-tx",
        "freq_mhz": f_tx,
        "power_w": draw(st.sampled_from([1, 50, 100, 1000, 10_000])),
        "antenna": {"x_m": 0, "y_m": 0, "height_m": 10},
    })
    doc.setdefault("receivers", []).append({
        "name": "pair-rx",
        "freq_mhz": round(f_tx * ratio, 4),
        "antenna": {"x_m": draw(st.sampled_from([2, 5, 10, 30])), "y_m": 0, "height_m": 10},
    })
    return doc


def to_yaml(doc: Any) -> str:
    """YAML text of a document (NaN and infinity come out as ``.nan``/``.inf``)."""
    return yaml.safe_dump(doc, sort_keys=False, allow_unicode=True)


# ---------------------------------------------------------------------------
# Mutated (broken) documents
# ---------------------------------------------------------------------------

BAD_VALUES = (
    float("nan"),
    float("inf"),
    float("-inf"),
    -1,
    -146.52,
    0,
    1e308,
    10**40,
    "",
    "lots",
    "12 furlongs",
    True,
    None,
    [],
    {},
    [1, 2, 3],
    {"nested": {"deeper": [1]}},
)


def paths(doc: Any, prefix: tuple = ()) -> list[tuple]:
    """Every path (keys and list indices) into a document, the root excluded."""
    out = []
    if isinstance(doc, dict):
        for k, v in doc.items():
            out.append((*prefix, k))
            out.extend(paths(v, (*prefix, k)))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            out.append((*prefix, i))
            out.extend(paths(v, (*prefix, i)))
    return out


def _parent(doc: Any, path: tuple) -> Any:
    for p in path[:-1]:
        doc = doc[p]
    return doc


@st.composite
def mutated_documents(draw) -> dict[str, Any] | Any:
    """A valid document with one thing broken (the result may still be valid by chance)."""
    doc = copy.deepcopy(draw(site_documents(max_radios=3)))
    where = draw(st.sampled_from(paths(doc)))
    parent = _parent(doc, where)
    action = draw(st.sampled_from(["drop", "replace", "replace", "replace", "text", "unknown_key"]))
    if action == "drop":
        del parent[where[-1]]
    elif action == "replace":
        parent[where[-1]] = draw(st.sampled_from(BAD_VALUES))
    elif action == "text":
        parent[where[-1]] = draw(st.text(max_size=30))
    else:
        target = parent[where[-1]] if isinstance(parent[where[-1]], dict) else doc
        target[draw(st.sampled_from(["frequency", "Power_W", "freq_MHz", "x", "name2"]))] = 1
    return doc


def random_text() -> st.SearchStrategy[str]:
    """Arbitrary text, and text built from YAML's punctuation."""
    return st.one_of(
        st.text(max_size=200),
        st.text(alphabet=":-[]{}&*!|>'\"%@`#,?\n\t 0123456789.e", max_size=200),
        st.lists(st.sampled_from(["site:", " x", "\n", "  - ", "name:", "freq_mhz:", "146.52",
                                  "[", "]", "&a", "*a", "!!str", "!!float", "power_w: ", "1e999",
                                  "transmitters:", "---", "...", "\t", "receivers: "]),
                 max_size=40).map("".join),
    )


# ---------------------------------------------------------------------------
# Ad-hoc design requests
# ---------------------------------------------------------------------------


def _band_text(lo: float, hi: float) -> str:
    return f"{lo!r}-{hi!r}"


@st.composite
def design_requests(draw) -> dict[str, Any]:
    """An ad-hoc request: pass bands, notch bands (MHz, as (lo, hi)) and a cable name.

    Bands (lo < hi, inside 0.1-6000 MHz) may be adjacent, far apart or
    overlapping (the tool must refuse the last with a clear error).
    """
    from notchkit.cables import library

    cable = draw(st.sampled_from([c.name for c in library()]))

    def make(f: float, w: float) -> tuple[float, float]:
        lo = min(f, _F_HI / (1 + w))
        return (lo, min(lo * (1 + w), _F_HI))

    def band():
        return st.builds(make, freq_mhz(), st.sampled_from([0.001, 0.005, 0.01, 0.05]))

    passes = draw(st.lists(band(), min_size=1, max_size=2))
    notches = [
        (lo, hi) if db is None else (lo, hi, db)
        for (lo, hi), db in draw(st.lists(st.tuples(band(), st.sampled_from([None, None, 10, 60, 120, 200])),
                                          min_size=1, max_size=2))
    ]
    max_stubs = draw(st.sampled_from([None, None, 1, 2, 4]))
    return {"passes": passes, "notches": notches, "cable": cable, "max_stubs": max_stubs}


def design_argv(req: dict[str, Any]) -> list[str]:
    """Command-line arguments for ``notchkit design`` from a request."""
    argv = []
    for lo, hi in req["passes"]:
        argv += ["--pass", _band_text(lo, hi)]
    for notch in req["notches"]:
        argv += ["--notch", _band_text(*notch[:2]) + (f":{notch[2]!r}" if len(notch) == 3 else "")]
    if req.get("max_stubs") is not None:
        argv += ["--max-stubs", str(req["max_stubs"])]
    return [*argv, "--cable", req["cable"]]


# ---------------------------------------------------------------------------
# Touchstone measurements
# ---------------------------------------------------------------------------

FREQ_UNITS = {"HZ": 1.0, "KHZ": 1e3, "MHZ": 1e6, "GHZ": 1e9}


def _fmt_pair(z: complex, fmt: str) -> str:
    if fmt == "RI":
        return f"{z.real:.9g} {z.imag:.9g}"
    mag = abs(z)
    ang = math.degrees(math.atan2(z.imag, z.real))
    if fmt == "MA":
        return f"{mag:.9g} {ang:.9g}"
    db = 20 * math.log10(mag) if mag > 0 else -300.0
    return f"{db:.9g} {ang:.9g}"


def touchstone_text(freq_hz, s, *, unit: str = "MHZ", fmt: str = "RI", z0: float = 50.0) -> str:
    """Touchstone 1.x text of S-parameters ``s`` (n, p, p), p = 1 or 2, at ``freq_hz``.

    Touchstone 1.x: option line ``# <unit> S <RI|MA|DB> R <z0>``; two-port data
    in the order S11 S21 S12 S22 on one line (Touchstone File Format
    Specification 1.1, IBIS Open Forum).
    """
    lines = ["! generated by the notchkit robustness suite", f"# {unit} S {fmt} R {z0:g}"]
    for f, m in zip(freq_hz, s, strict=True):
        fu = f / FREQ_UNITS[unit]
        if m.shape == (1, 1):
            cells = [m[0, 0]]
        else:
            cells = [m[0, 0], m[1, 0], m[0, 1], m[1, 1]]
        lines.append(f"{fu:.12g} " + " ".join(_fmt_pair(complex(c), fmt) for c in cells))
    return "\n".join(lines) + "\n"


@st.composite
def stub_measurements(draw) -> dict[str, Any]:
    """A synthetic analyser sweep of a real stub, from notchkit's own line model.

    Returns the Touchstone text and what trim needs to know: cable, termination,
    present length, a target frequency, and the suffix (.s1p or .s2p).
    """
    import numpy as np

    from notchkit import lines
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable(draw(st.sampled_from(["RG-58", "RG-213", "RG-8X"])))
    term = draw(st.sampled_from(["open", "short"]))
    length = draw(st.floats(0.05, 20.0))
    ports = draw(st.sampled_from([1, 2]))
    order = 1 if (ports == 1 or term == "open") else 2
    f_res = order * C0 * cable.velocity_factor / (4 * length)
    span = draw(st.floats(0.05, 0.6))
    n = draw(st.integers(21, 401))
    f = np.linspace(f_res * (1 - span), f_res * (1 + span), n)
    if ports == 1:
        # the stub alone at its input: Gamma = (Zin - 50)/(Zin + 50) (Pozar, Microwave
        # Engineering, 4th ed., eq. 2.35 and 2.44), Zin from notchkit's line model
        g = lines.gamma(f, cable.alpha_np_per_m(f), cable.velocity_factor)
        zin_fn = lines.zin_open if term == "open" else lines.zin_short
        zin = zin_fn(cable.z0_ohm, g, length)
        s = ((zin - 50.0) / (zin + 50.0)).reshape(-1, 1, 1)
    else:
        s = evaluate(Filter(elements=(Stub(termination=term, length_m=length),), cable=cable), f)
    unit = draw(st.sampled_from(list(FREQ_UNITS)))
    fmt = draw(st.sampled_from(["RI", "MA", "DB"]))
    target = (1 + span * draw(st.floats(-0.5, 0.5))) * f_res / 1e6
    return {
        "text": touchstone_text(f, s, unit=unit, fmt=fmt),
        "suffix": f".s{ports}p",
        "cable": cable.name,
        "termination": term,
        "length_m": length,
        "target_mhz": target,
    }


@st.composite
def broken_touchstone(draw) -> dict[str, Any]:
    """A measurement file that is damaged in one way, or plain garbage."""
    good = draw(stub_measurements())
    lines = good["text"].splitlines()
    kind = draw(st.sampled_from(["truncate", "nan", "reverse", "garbage", "bytes", "empty",
                                 "option", "columns", "dup"]))
    if kind == "truncate":
        cut = draw(st.integers(0, len(good["text"])))
        text: str | bytes = good["text"][:cut]
    elif kind == "nan":
        i = draw(st.integers(2, len(lines) - 1))
        parts = lines[i].split()
        parts[draw(st.integers(1, len(parts) - 1))] = draw(st.sampled_from(["nan", "inf", "-inf", "x"]))
        lines[i] = " ".join(parts)
        text = "\n".join(lines) + "\n"
    elif kind == "reverse":
        text = "\n".join(lines[:2] + lines[:1:-1]) + "\n"
    elif kind == "garbage":
        text = draw(random_text())
    elif kind == "bytes":
        text = draw(st.binary(min_size=1, max_size=300))
    elif kind == "empty":
        text = ""
    elif kind == "option":
        lines[1] = draw(st.sampled_from(["# FOO S RI R 50", "# MHZ Y RI R 50", "# MHZ S RI R -50",
                                         "# MHZ S RI R 0", "# MHZ S XX R 50", "#"]))
        text = "\n".join(lines) + "\n"
    elif kind == "dup":
        text = "\n".join(lines[:3] + lines[2:]) + "\n"
    else:
        i = draw(st.integers(2, len(lines) - 1))
        lines[i] = lines[i] + " 1 2 3"
        text = "\n".join(lines) + "\n"
    return {**good, "text": text}


# ---------------------------------------------------------------------------
# trim's options and the plan JSON it reads
# ---------------------------------------------------------------------------

HOSTILE_NUMBER_TEXT = [
    "0", "-0", "1", "-1", "0.5", "1e-320", "5e-324", "1e300", "1e308", "1.7976931348623157e308", "1e309",
    "inf", "-inf", "nan", "NaN", "Infinity", "0x10", "1_000", "1e", "", " ", "x", "9" * 400, "9" * 5000,
    "1" * 40 + "/1", "$\\frac{1}{0}$", "\x1b[2J", "\u202e1",
]
"""Number texts an attack run gave trim's options and plan JSON: extremes of an IEEE 754
double (5e-324 the smallest subnormal, 1.7976931348623157e308 the largest finite), values past
them, spellings Python or JSON read differently, and text meant for a terminal or mathtext."""


@st.composite
def trim_options(draw) -> list[str]:
    """A few of trim's numeric options, each with a hostile or an ordinary value."""
    out: list[str] = []
    options = ["--length-m", "--target-mhz", "--allowance-m",
               "--quarter-waves" if has_option("trim", "--quarter-waves") else "--order"]
    for opt in draw(st.lists(st.sampled_from(options), unique=True, max_size=4)):
        value = draw(st.one_of(st.sampled_from(HOSTILE_NUMBER_TEXT),
                               st.floats(allow_nan=True, allow_infinity=True).map(repr),
                               st.integers(-10**30, 10**30).map(str)))
        out.append(f"{opt}={value}")  # one word: argparse would read "-1e+16" as an option
    return out


_JSON_NUMBER = r'-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][-+]?\d+)?'


@st.composite
def mutated_plan_json(draw, text: str) -> str:
    """A real plan JSON (as ``notchkit plan --outdir`` writes it) damaged in one way."""
    import re as _re

    kind = draw(st.sampled_from(["number", "number", "nest", "truncate", "string", "value", "bytes"]))
    if kind == "number":  # one number token replaced by a hostile text
        spans = [m.span() for m in _re.finditer(_JSON_NUMBER, text)]
        a, b = spans[draw(st.integers(0, len(spans) - 1))]
        token = draw(st.sampled_from(["1e999", "-1e999", "NaN", "Infinity", "-Infinity", "1e308", "-1e308",
                                      "9" * draw(st.integers(30, 6000)), "1e-400", "-0", "0", "null",
                                      "true", '"12"', "[]", "{}"]))
        return text[:a] + token + text[b:]
    if kind == "nest":  # the document wrapped in brackets
        k = draw(st.sampled_from([1, 63, 64, 65, 1000, 100_000]))
        return "[" * k + text + "]" * k
    if kind == "truncate":
        return text[: draw(st.integers(0, len(text)))]
    if kind == "string":  # a control or bidi character inside a string, as JSON escapes it
        spans = [m.span() for m in _re.finditer(r'"[^"\\]*"', text)]
        a, b = spans[draw(st.integers(0, len(spans) - 1))]
        esc = draw(st.sampled_from(["\\u001b[2J", "\\u202e", "\\u0000", "\\ud800", "\\n", "$x^$"]))
        return text[: b - 1] + esc + text[b - 1 :]
    if kind == "bytes":
        head = text.encode("utf-8")[: draw(st.integers(0, 200))]
        return head.decode("utf-8", errors="replace") + "\x00\xff"
    doc = json.loads(text)  # one value anywhere replaced by another JSON value
    where = draw(st.sampled_from(paths(doc)))
    parent = _parent(doc, where)
    parent[where[-1]] = draw(st.one_of(st.none(), st.booleans(), st.text(max_size=6),
                                        st.floats(allow_nan=False, allow_infinity=False),
                                        st.integers(-10**25, 10**25), st.just([]), st.just({})))
    return json.dumps(doc)


# ---------------------------------------------------------------------------
# Which commands are built (the placeholders say "not built yet")
# ---------------------------------------------------------------------------


def built(command: str) -> bool:
    """Whether ``notchkit <command>`` is built (its placeholder raises 'not built yet')."""
    mod = importlib.import_module(f"notchkit.cli.{command}")
    return "not built yet" not in inspect.getsource(mod)


def site_commands(*, include_check: bool = True) -> list[str]:
    """The built commands that read a site file."""
    names = ("check", "survey", "design", "plan") if include_check else ("survey", "design", "plan")
    return [c for c in names if built(c)]


def has_option(command: str, option: str) -> bool:
    """Whether the command's parser accepts ``option`` (e.g. ``--touchstone``)."""
    from notchkit.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    return option in sub.choices[command]._option_string_actions


def site_argv(command: str, site, folder) -> list[str]:
    """Arguments to run ``command`` on ``site``; plan's outputs go into ``folder`` (which must
    stay empty when the site is refused)."""
    from pathlib import Path

    folder = Path(folder)
    if command == "plan":
        return ["plan", str(site), "-o", str(folder / "x.pdf"), "--html", str(folder / "x.html"),
                "--outdir", str(folder / "out")]
    if command == "design" and has_option("design", "--touchstone"):
        return ["design", str(site), "--touchstone", str(folder / "ts")]
    return [command, str(site)]


def field_path(path: tuple) -> str:
    """The loader's name for a path into a document: ``transmitters[0].antenna.x_m``."""
    out = ""
    for p in path:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out


BAD_NUMBERS = (float("nan"), float("inf"), float("-inf"), "lots", -1e9, 1e12, True, [1.0], {"v": 1})


@st.composite
def numeric_field_broken(draw) -> tuple[dict[str, Any], str]:
    """A valid document with one numeric value under a key made impossible; and that key's path."""
    doc = copy.deepcopy(draw(site_documents(max_radios=3)))
    leaves = [p for p in paths(doc)
              if isinstance(p[-1], str)
              and isinstance(_parent(doc, p)[p[-1]], int | float)
              and not isinstance(_parent(doc, p)[p[-1]], bool)]
    if not leaves:  # a site of names only: break the first radio's frequency instead
        kind = next(k for k in ("transmitters", "receivers", "transceivers") if k in doc)
        doc[kind][0]["freq_mhz"] = 146.52
        doc[kind][0].pop("band_mhz", None)
        leaves = [(kind, 0, "freq_mhz")]
    where = draw(st.sampled_from(leaves))
    _parent(doc, where)[where[-1]] = draw(st.sampled_from(BAD_NUMBERS))
    return doc, field_path(where)
