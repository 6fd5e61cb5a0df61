"""Read a site file (YAML) into a :class:`~notchkit.site.model.Site`.

The file is parsed with PyYAML's safe loader only as far as the node tree
(``yaml.compose``); this module then walks the nodes itself, so every problem
carries the line and column where it sits and nothing but plain scalars, lists
and mappings is ever built. Every problem found is reported in one run (up to
:data:`MAX_PROBLEMS`), each as one line::

    FILE:LINE:COL: field.path: what is wrong (what is allowed)

The accepted keys, their types and ranges are declared once, in
:data:`SECTIONS`; :func:`site_schema` turns the same declaration into the JSON
Schema published as ``docs/site-schema.json`` (a test keeps the two equal).

Safety limits: a file over :data:`MAX_FILE_BYTES` is refused before it is
parsed; nesting deeper than :data:`MAX_DEPTH` and more than :data:`MAX_NODES`
values visited (counting every repeat through an alias) are refused, so an
alias bomb or a self-referring alias cannot use unbounded time or memory.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import os
import re
from dataclasses import dataclass
from typing import Any

import numpy as np
import yaml

from notchkit.errors import Problem, SiteError
from notchkit.site import model as m
from notchkit.textsafe import describe_char, unsafe_char

MAX_FILE_BYTES = 2 * 1024 * 1024
"""Largest site file read, in bytes (2 MiB); a real site file is a few kB."""
MAX_PROBLEMS = 50
"""Problems listed in one run; the rest are counted in a last line."""
MAX_DEPTH = 32
"""Deepest nesting of lists and mappings accepted (a site file needs 5)."""
MAX_NODES = 20_000
"""Most values visited, counting each repeat through an alias."""

_YAML = "tag:yaml.org,2002:"
_STR, _INT, _FLOAT, _BOOL, _NULL = (_YAML + t for t in ("str", "int", "float", "bool", "null"))
_MAP, _SEQ = _YAML + "map", _YAML + "seq"
_PLAIN_TAGS = frozenset({_STR, _INT, _FLOAT, _BOOL, _NULL, _MAP, _SEQ})

_LENGTH_UNITS_M = {"m": 1.0, "cm": 0.01, "mm": 0.001, "ft": 0.3048, "in": 0.0254}
"""Metres per unit; the foot and inch are exact by definition (international yard, 1959)."""
_NUMBER_TEXT = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
_FRACTION_TEXT = r"(?:\d+\s+)?\d+/\d+"
LENGTH_PATTERN = rf"^\s*(?:{_NUMBER_TEXT}|{_FRACTION_TEXT})\s*(?:m|cm|mm|ft|in)\s*$"
"""The text form of a length (also the JSON Schema pattern): a number and a unit,
e.g. ``"12 ft"``, ``"3.5 m"``, ``"1/16 in"``, ``"3 1/2 in"``."""
MAX_RADIOS = 256
"""Most radios (transmitters, receivers and transceivers together) in one site file."""
MAX_TRANSMITTERS = 229
"""Most transmitting radios: C(229, 3) = 1 975 354 three-transmitter combinations, the
largest count within :data:`MAX_IM_TRIPLES`."""
MAX_IM_TRIPLES = 2_000_000
"""Most three-transmitter intermodulation combinations the survey enumerates; checked
here, before any enumeration, so a huge site is one clear line, not a huge allocation."""
MAX_NUMBER_CHARS = 40
"""Longest text of one number (a float's repr is at most 24 characters); longer is refused
before it is converted (Python's int() of thousands of digits is slow or refused)."""
_LENGTH_RE = re.compile(rf"^\s*({_NUMBER_TEXT}|{_FRACTION_TEXT})\s*(m|cm|mm|ft|in)\s*$")
_NAME_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$")
NAME_PATTERN = r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$"
_NAME_ALLOWED = "1-40 letters, digits, '-', '_' or '.', starting with a letter or digit"


# ---------------------------------------------------------------------------
# The declaration of every key
# ---------------------------------------------------------------------------


@dataclass(frozen=True, slots=True, kw_only=True)
class Num:
    """A number's range and unit.

    ``length_unit_m`` is set for lengths, which may also be written as text with
    a unit (``"12 ft"``): it is the size of the field's unit in metres.
    """

    lo: float
    hi: float
    unit: str = ""
    lo_open: bool = False
    integer: bool = False
    length_unit_m: float | None = None

    def allowed(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        kind = "a whole number" if self.integer else "a number"
        if self.lo_open:
            return f"{kind} greater than {self.lo:g} and at most {self.hi:g}{unit}"
        return f"{kind} from {self.lo:g} to {self.hi:g}{unit}"

    def contains(self, v: float) -> bool:
        low_ok = v > self.lo if self.lo_open else v >= self.lo
        return low_ok and v <= self.hi


@dataclass(frozen=True, slots=True, kw_only=True)
class Field:
    """One key of a section.

    ``kind`` is one of ``number``, ``text``, ``name``, ``cable``, ``band``,
    ``section`` (a nested mapping named by ``section``), ``list`` (a list of
    such mappings), ``pair`` (two radio names), ``table`` (rows of two numbers,
    rising in the first), ``freqs`` (a frequency or a list of channels),
    ``bands`` (a band or a list of bands), ``names`` (a list of radio names) or
    ``choice`` (one of ``choices``).
    ``default`` is for documentation only; the value objects in
    :mod:`notchkit.site.model` hold the defaults the program uses.
    """

    kind: str
    doc: str
    required: bool = False
    num: Num | None = None
    section: str = ""
    default: Any = None
    cols: tuple[tuple[str, Num], tuple[str, Num]] | None = None
    """The two columns of a ``table`` (name, range); ``None``: the cable loss table's."""
    choices: tuple[str, ...] = ()
    """The words a ``choice`` field accepts."""


_FREQ = Num(lo=m.MIN_FREQ_MHZ, hi=m.MAX_FREQ_MHZ, unit="MHz")
_POWER = Num(lo=0.0, hi=100_000.0, unit="W", lo_open=True)
_BW = Num(lo=0.0, hi=50_000.0, unit="kHz", lo_open=True)
_XY = Num(lo=-10_000.0, hi=10_000.0, unit="m", length_unit_m=1.0)
_HEIGHT = Num(lo=0.0, hi=1_000.0, unit="m", length_unit_m=1.0)
_FEED_LEN = Num(lo=0.0, hi=2_000.0, unit="m", lo_open=True, length_unit_m=1.0)
_TABLE_FREQ = Num(lo=0.001, hi=100_000.0, unit="MHz")
_TABLE_LOSS = Num(lo=0.0, hi=1_000.0, unit="dB/100 m", lo_open=True)


def _d(cls: type, name: str) -> Any:
    """The default of a model field, for the documentation and schema."""
    for f in dataclasses.fields(cls):
        if f.name == name:
            return None if f.default is dataclasses.MISSING else f.default
    raise KeyError(name)


_FREQ_FIELDS = {
    "freq_mhz": Field(
        kind="freqs",
        num=_FREQ,
        doc="Channel frequency in MHz, or a list of channels worked one at a time.",
    ),
    "band_mhz": Field(
        kind="bands",
        num=_FREQ,
        doc="[lo, hi] in MHz for a radio that tunes across a band (instead of freq_mhz), "
        "or a list of such bands worked one at a time.",
    ),
}
_OFFSET = Num(lo=0.0001, hi=10_000.0, unit="MHz")
_REJ_DB = Num(lo=0.0, hi=200.0, unit="dB")

_TX_FIELDS = {
    "power_w": Field(kind="number", num=_POWER, required=True, doc="Carrier power in watts."),
    "bandwidth_khz": Field(
        kind="number",
        num=_BW,
        default=_d(m.Transmit, "bandwidth_khz"),
        doc="Occupied channel bandwidth in kHz.",
    ),
    "harmonic_suppression_dbc": Field(
        kind="number",
        num=Num(lo=0.0, hi=150.0, unit="dB", lo_open=True),
        default=None,
        doc="Harmonic and spurious suppression below the carrier in dB (positive); "
        "default: the published amateur spurious-emission limit.",
    ),
    "noise_dbc_hz": Field(
        kind="number",
        num=Num(lo=-200.0, hi=-50.0, unit="dBc/Hz"),
        default=None,
        doc="Broadband transmitter noise away from the carrier in dBc/Hz (negative); "
        "default: not evaluated.",
    ),
    "im_conversion_db": Field(
        kind="number",
        num=Num(lo=0.0, hi=60.0, unit="dB"),
        default=None,
        doc="Conversion loss of the output stage for intermodulation in dB; "
        "default: the survey's documented value.",
    ),
    "im_order_step_db": Field(
        kind="number",
        num=Num(lo=0.0, hi=30.0, unit="dB"),
        default=None,
        doc="Extra conversion loss per order away from 3rd in dB; default: the survey's value.",
    ),
}
_RX_FIELDS = {
    "bandwidth_khz": Field(
        kind="number",
        num=_BW,
        default=_d(m.Receive, "bandwidth_khz"),
        doc="Receiver channel bandwidth in kHz.",
    ),
    "sensitivity_dbm": Field(
        kind="number",
        num=Num(lo=-170.0, hi=0.0, unit="dBm"),
        default=None,
        doc="Level an interfering product must stay below, in dBm; "
        "default: kTB + noise figure over the bandwidth.",
    ),
    "blocking_dbm": Field(
        kind="number",
        num=Num(lo=-120.0, hi=30.0, unit="dBm"),
        default=None,
        doc="Off-channel level that desensitises the receiver, in dBm; default: the survey's value.",
    ),
    "noise_figure_db": Field(
        kind="number",
        num=Num(lo=0.0, hi=30.0, unit="dB"),
        default=_d(m.Receive, "noise_figure_db"),
        doc="Receiver noise figure in dB.",
    ),
    "iip2_dbm": Field(
        kind="number",
        num=Num(lo=-60.0, hi=120.0, unit="dBm"),
        default=None,
        doc="Input 2nd-order intercept point in dBm; default: from receiver_class.",
    ),
    "iip3_dbm": Field(
        kind="number",
        num=Num(lo=-60.0, hi=80.0, unit="dBm"),
        default=None,
        doc="Input 3rd-order intercept point in dBm; default: from receiver_class.",
    ),
    "receiver_class": Field(
        kind="choice",
        choices=m.RECEIVER_CLASSES,
        default=None,
        doc="Receiver class: hf (HF transceiver with band filters), base or mobile (VHF/UHF FM), "
        "scanner (no front-end filter); gives documented blocking by offset and intercept points; "
        f"default: none (the flat blocking level; intercept points of {m.DEFAULT_RECEIVER_CLASS}).",
    ),
    "selectivity": Field(
        kind="table",
        cols=(("offset_mhz", _OFFSET), ("blocking_dbm", Num(lo=-150.0, hi=40.0, unit="dBm"))),
        default=(),
        doc="Blocking level by offset from the band edge as [offset_mhz, blocking_dbm] rows, "
        "rising offset; default: the class's table, else the flat blocking level.",
    ),
    "band_noise_dbm": Field(
        kind="number",
        num=Num(lo=-200.0, hi=0.0, unit="dBm"),
        default=None,
        doc="Band noise at the receiver input in its bandwidth, in dBm; the floor for noise "
        "threats when above kTB + NF; default: none.",
    ),
}
_RADIO_COMMON = {
    "antenna": Field(kind="section", section="antenna", doc="Where the radio's antenna is."),
    "feedline": Field(
        kind="section", section="feedline", doc="Cable from the radio to its antenna."
    ),
    "stub_cable": Field(
        kind="cable",
        default=None,
        doc="Cable for this radio's stubs; default: the site's cable.",
    ),
    "installed": Field(
        kind="list",
        section="installed",
        doc="Filters already in line at this radio (band-pass, duplexer, cavity, ...).",
    ),
    "load": Field(kind="section", section="load", doc="The antenna's impedance (docs/hardware.md)."),
}
_NAME = Field(
    kind="name",
    required=True,
    doc="Unique name of the radio across transmitters, receivers and transceivers.",
)

SECTIONS: dict[str, dict[str, Field]] = {
    "site": {
        "site": Field(kind="text", required=True, doc="Name of the site."),
        "cable": Field(
            kind="cable",
            default=m.DEFAULT_CABLE,
            doc="Default cable for stubs and feedlines (library name or one under cables:).",
        ),
        "transmitters": Field(kind="list", section="transmitter", doc="Radios that transmit only."),
        "receivers": Field(kind="list", section="receiver", doc="Radios that receive only."),
        "transceivers": Field(
            kind="list",
            section="transceiver",
            doc="Radios that transmit and receive (tx and rx may differ, as on a repeater).",
        ),
        "couplings": Field(
            kind="list",
            section="coupling",
            doc="Measured antenna-to-antenna isolation between named radios.",
        ),
        "limits": Field(kind="section", section="limits", doc="What every filter must achieve."),
        "allowances": Field(
            kind="section", section="allowances", doc="Hardware allowances for cutting."
        ),
        "cables": Field(kind="list", section="cable", doc="Cable types defined in this file."),
        "max_harmonic": Field(
            kind="number",
            num=Num(lo=2, hi=20, integer=True),
            default=m.DEFAULT_MAX_HARMONIC,
            doc="Highest harmonic order the survey considers.",
        ),
        "max_im_order": Field(
            kind="number",
            num=Num(lo=2, hi=9, integer=True),
            default=m.DEFAULT_MAX_IM_ORDER,
            doc="Highest intermodulation order the survey enumerates (2 to 9).",
        ),
        "scenarios": Field(
            kind="list",
            section="scenario",
            doc="Which radios can be active at the same time; default: all at once.",
        ),
        "near_field_isolation_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=100.0, unit="dB"),
            default=m.DEFAULT_NEAR_FIELD_ISOLATION_DB,
            doc="Isolation taken between antennas closer than lambda/(2 pi) where no coupling "
            "was measured, in dB (no formula is used there).",
        ),
        "hardware": Field(kind="section", section="hardware",
                          doc="Connectors, tees and the short of the filters (docs/hardware.md); "
                          "default: ideal tees with the tee allowance."),
        "depth_ceiling_db": Field(
            kind="number", num=Num(lo=20.0, hi=150.0, unit="dB"), default=None,
            doc="Deepest notch the design may claim, dB (leakage, analyser range; docs/hardware.md); "
            "the survey asks no deeper notch of stubs (more is not a stub job); default: 60 dB.",
        ),
    },
    "transmitter": {"name": _NAME, **_FREQ_FIELDS, **_TX_FIELDS, **_RADIO_COMMON},
    "receiver": {"name": _NAME, **_FREQ_FIELDS, **_RX_FIELDS, **_RADIO_COMMON},
    "transceiver": {
        "name": _NAME,
        "freq_mhz": Field(
            kind="freqs",
            num=_FREQ,
            doc="Frequency in MHz (or a list of channels) shared by tx and rx unless they give one.",
        ),
        "band_mhz": Field(
            kind="bands",
            num=_FREQ,
            doc="[lo, hi] in MHz (or a list of bands) shared by tx and rx unless they give one.",
        ),
        "bandwidth_khz": Field(
            kind="number",
            num=_BW,
            default=m.DEFAULT_CHANNEL_BANDWIDTH_KHZ,
            doc="Channel bandwidth in kHz shared by tx and rx unless they give one.",
        ),
        "tx": Field(kind="section", section="tx", required=True, doc="The transmit part."),
        "rx": Field(
            kind="section",
            section="rx",
            doc="The receive part; default: receives on the shared frequency.",
        ),
        **_RADIO_COMMON,
    },
    "tx": {**_FREQ_FIELDS, **_TX_FIELDS},
    "rx": {**_FREQ_FIELDS, **_RX_FIELDS},
    "antenna": {
        "x_m": Field(kind="number", num=_XY, default=_d(m.Antenna, "x_m"), doc="East, in metres."),
        "y_m": Field(kind="number", num=_XY, default=_d(m.Antenna, "y_m"), doc="North, in metres."),
        "height_m": Field(
            kind="number",
            num=_HEIGHT,
            default=m.DEFAULT_ANTENNA_HEIGHT_M,
            doc="Height of the antenna's centre above ground, in metres.",
        ),
        "gain_dbi": Field(
            kind="number",
            num=Num(lo=-30.0, hi=40.0, unit="dBi"),
            default=_d(m.Antenna, "gain_dbi"),
            doc="Gain toward the other antennas, in dBi, inside the antenna's band.",
        ),
        "band_mhz": Field(
            kind="band",
            num=_FREQ,
            default=None,
            doc="[lo, hi] in MHz the antenna is built for; outside it the gain is at most 0 dBi; "
            "default: the radio's bands widened by 10 %.",
        ),
        "gain_table": Field(
            kind="table",
            cols=(("freq_mhz", _TABLE_FREQ), ("gain_dbi", Num(lo=-60.0, hi=40.0, unit="dBi"))),
            default=(),
            doc="Gain toward the other antennas as [freq_mhz, gain_dbi] rows, rising frequency "
            "(replaces gain_dbi and band_mhz); default: none.",
        ),
        "out_of_band_loss_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=60.0, unit="dB"),
            default=m.DEFAULT_OUT_OF_BAND_LOSS_DB,
            doc="Mismatch loss credited outside the antenna's band, in dB.",
        ),
    },
    "installed": {
        "name": Field(kind="text", required=True, doc="What the filter is."),
        "port": Field(
            kind="choice",
            choices=m.INSTALLED_PORTS,
            default=_d(m.InstalledFilter, "port"),
            doc="Where it sits: tx (transmit path), rx (receive path) or antenna (shared port).",
        ),
        "kind": Field(
            kind="choice",
            choices=m.INSTALLED_KINDS,
            default=_d(m.InstalledFilter, "kind"),
            doc="What sort of filter it is (for the plan's list).",
        ),
        "rejection": Field(
            kind="table",
            cols=(("freq_mhz", _TABLE_FREQ), ("rejection_db", _REJ_DB)),
            default=(),
            doc="Rejection as [freq_mhz, rejection_db] rows, rising frequency, interpolated in dB "
            "against log frequency; none credited outside (give this or touchstone).",
        ),
        "touchstone": Field(
            kind="text",
            default=None,
            doc="A measured two-port .s2p file (path from the site file's folder); rejection "
            "-20 log10 |S21| (give this or rejection).",
        ),
        "for_band_mhz": Field(
            kind="band",
            num=_FREQ,
            default=None,
            doc="[lo, hi] in MHz: in line only while the radio works a band overlapping this; "
            "default: always in line.",
        ),
    },
    "scenario": {
        "name": Field(kind="text", required=True, doc="Name of the scenario, unique in the file."),
        "radios": Field(
            kind="names", required=True, doc="The radios that can be active together in it."
        ),
    },
    "feedline": {
        "cable": Field(kind="cable", default="the site's cable", doc="Feedline cable type."),
        "length_m": Field(
            kind="number", num=_FEED_LEN, required=True, doc="Feedline length in metres."
        ),
    },
    "coupling": {
        "between": Field(kind="pair", required=True, doc="The two radios' names."),
        "isolation_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=200.0, unit="dB", lo_open=True),
            required=True,
            doc="Measured loss from one antenna port to the other, in dB (positive).",
        ),
        "freq_mhz": Field(
            kind="number",
            num=_FREQ,
            default=None,
            doc="Frequency of the measurement in MHz; a pair measured at several frequencies "
            "gives one entry each, interpolated in dB against log frequency.",
        ),
    },
    "limits": {
        "max_insertion_loss_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=10.0, unit="dB", lo_open=True),
            default=m.DEFAULT_MAX_INSERTION_LOSS_DB,
            doc="Largest pass-band insertion loss of a filter, in dB.",
        ),
        "max_swr": Field(
            kind="number",
            num=Num(lo=1.0, hi=10.0, lo_open=True),
            default=m.DEFAULT_MAX_SWR,
            doc="Largest pass-band SWR of a filter.",
        ),
        "rejection_margin_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=40.0, unit="dB"),
            default=m.DEFAULT_REJECTION_MARGIN_DB,
            doc="Extra rejection beyond what a threat needs, in dB.",
        ),
        "max_stubs": Field(
            kind="number",
            num=Num(lo=1, hi=8, integer=True),
            default=m.DEFAULT_MAX_STUBS,
            doc="Most stubs in one filter.",
        ),
        "max_total_cable_m": Field(
            kind="number",
            # lo: the solver's shortest cut (notchkit.solver.MIN_CUT_M, checked by a test)
            num=Num(lo=m.DEFAULT_MIN_STUB_CUT_M, hi=1_000.0, unit="m", lo_open=True, length_unit_m=1.0),
            default=None,
            doc=f"Most cable in one filter, in metres (more than the {m.DEFAULT_MIN_STUB_CUT_M:g} m "
            "shortest stub cut); "
            "default: no limit.",
        ),
        "max_stub_rejection_db": Field(
            kind="number",
            num=Num(lo=1.0, hi=200.0, unit="dB"),
            default=m.DEFAULT_MAX_STUB_REJECTION_DB,
            doc="Notch depth one stub plausibly gives, in dB.",
        ),
        "yield_target_pct": Field(
            kind="number",
            num=Num(lo=0.0, hi=100.0, unit="%"),
            default=m.DEFAULT_YIELD_TARGET_PCT,
            doc="Share of simulated builds (the build model of docs/design.md) a filter must meet "
            "its requirements in, in percent.",
        ),
        "margin_goal_db": Field(
            kind="number",
            num=Num(lo=0.0, hi=60.0, unit="dB"),
            default=m.DEFAULT_MARGIN_GOAL_DB,
            doc="Notch margin the solver prefers (before less cable) among designs at the yield "
            "target, in dB.",
        ),
    },
    "allowances": {
        "tee_allowance_m": Field(
            kind="number",
            num=Num(lo=0.0, hi=0.5, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_TEE_ALLOWANCE_M,
            doc="Electrical length of a tee and its connectors, in metres of stub cable.",
        ),
        "trim_margin_pct": Field(
            kind="number",
            num=Num(lo=0.0, hi=25.0, unit="%"),
            default=m.DEFAULT_TRIM_MARGIN_PCT,
            doc="Cut the first piece this much long, in percent, then trim.",
        ),
        "cut_tolerance_mm": Field(
            kind="number",
            num=Num(lo=0.0, hi=50.0, unit="mm", lo_open=True, length_unit_m=0.001),
            default=m.DEFAULT_CUT_TOLERANCE_MM,
            doc="How close to a mark you cut, in millimetres.",
        ),
        "vf_spread": Field(
            kind="number",
            num=Num(lo=0.0, hi=0.2),
            default=None,
            doc="Velocity-factor spread for tolerance runs; default: the cable's published "
            "tolerance, else 0.01.",
        ),
        "trim_step_mm": Field(
            kind="number",
            num=Num(lo=0.0, hi=50.0, unit="mm", length_unit_m=0.001),
            default=m.DEFAULT_TRIM_STEP_MM,
            doc="Last trim step near a stub's target resonance, in millimetres.",
        ),
        "trim_freq_error_pct": Field(
            kind="number",
            num=Num(lo=0.0, hi=10.0, unit="%"),
            default=m.DEFAULT_TRIM_FREQ_ERROR_PCT,
            doc="How closely the analyser reads a stub's resonance, in percent (+-).",
        ),
        "drift_pct": Field(
            kind="number",
            num=Num(lo=0.0, hi=10.0, unit="%"),
            default=m.DEFAULT_DRIFT_PCT,
            doc="Drift of every electrical length after building (temperature, age), in percent (+-).",
        ),
        "min_stub_cut_m": Field(
            kind="number",
            num=Num(lo=0.0, hi=2.0, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_MIN_STUB_CUT_M,
            doc="Shortest stub cable that can be made (plug body plus cable to finish and trim), in metres.",
        ),
        "min_line_m": Field(
            kind="number",
            num=Num(lo=0.0, hi=2.0, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_MIN_LINE_M,
            doc="Shortest line section of cable between two tees (a plug at each end), in metres.",
        ),
        "barrel_m": Field(
            kind="number",
            num=Num(lo=0.0, hi=0.5, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_BARREL_M,
            doc="Electrical length between two tees joined by a barrel adapter, in metres; 0: never "
            "use one.",
        ),
        "analyser_lo_mhz": Field(
            kind="number",
            num=_FREQ,
            default=m.DEFAULT_ANALYSER_MHZ[0],
            doc="Lowest frequency of the analyser stubs are trimmed on, in MHz.",
        ),
        "analyser_hi_mhz": Field(
            kind="number",
            num=_FREQ,
            default=m.DEFAULT_ANALYSER_MHZ[1],
            doc="Highest frequency of the analyser stubs are trimmed on, in MHz.",
        ),
    },
    "hardware": {
        "family": Field(kind="text", default="uhf", doc="Connector family: uhf, n or bnc."),
        "z_pair_ohm": Field(kind="number", num=Num(lo=10.0, hi=150.0, unit="ohm"), default=None,
                            doc="Impedance of a mated connector pair and the tee body; "
                            "default: the family's."),
        "plug_mm": Field(kind="number", num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                         doc="Plug length from its mating face; default: the family's."),
        "tee_through_mm": Field(kind="number", num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                                doc="Tee through arm, port face to junction; default: the family's."),
        "tee_side_mm": Field(kind="number", num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                             doc="Tee side arm, port face to junction; default: the family's."),
        "short_nh": Field(kind="number", num=Num(lo=0.0, hi=100.0, unit="nH"), default=None,
                          doc="Inductance of a stub's short, nH; default: 3 nH."),
        "barrels_per_port": Field(kind="number", num=Num(lo=0, hi=4, integer=True), default=0,
                                  doc="Barrels at each filter port."),
        "line_model": Field(kind="text", default="classic",
                            doc="classic (lossless-VF line) or rlgc (internal inductance, complex Z0)."),
    },
    "load": {
        "file": Field(kind="text", default=None,
                      doc="Measured .s1p or R+jX table (freq_mhz r_ohm x_ohm), relative to the site file; "
                      "read with the site (a bad file is a problem of the site)."),
        "swr": Field(kind="number", num=Num(lo=1.0, hi=100.0), default=None,
                     doc="SWR bound of the antenna out of its band (where no file covers it); "
                     "default: 6 (docs/hardware.md)."),
        "radio_ohm": Field(kind="number", num=Num(lo=1.0, hi=1000.0, unit="ohm"), default=None,
                           doc="The radio's port resistance; default: 50 ohm."),
    },
    "cable": {
        "name": Field(kind="text", required=True, doc="Cable type name, unique in the file."),
        "z0_ohm": Field(
            kind="number",
            num=Num(lo=10.0, hi=600.0, unit="ohm"),
            required=True,
            doc="Characteristic impedance in ohms.",
        ),
        "velocity_factor": Field(
            kind="number",
            num=Num(lo=0.0, hi=1.0, lo_open=True),
            required=True,
            doc="Velocity factor (0 to 1).",
        ),
        "loss_table": Field(
            kind="table",
            default=(),
            doc="Matched loss as [freq_mhz, loss_db_per_100m] pairs, rising frequency; "
            "default: none (lossless, with a warning).",
        ),
        "max_voltage_v": Field(
            kind="number",
            num=Num(lo=0.0, hi=1e6, unit="V", lo_open=True),
            default=None,
            doc="Largest RMS voltage the cable is rated for, in volts.",
        ),
        "outer_diameter_mm": Field(
            kind="number",
            num=Num(lo=0.0, hi=200.0, unit="mm", lo_open=True, length_unit_m=0.001),
            default=None,
            doc="Outer diameter in millimetres.",
        ),
        "dielectric": Field(kind="text", default="", doc="Dielectric, e.g. solid PE or foam PE."),
    },
}
"""Every section of a site file and the keys it accepts, in documentation order."""

_ALLOWED_KEYS_TEXT = {name: ", ".join(fields) for name, fields in SECTIONS.items()}

_MOVED: dict[tuple[str, str], str] = {
    **{("transceiver", k): "put it under tx:" for k in SECTIONS["tx"] if k not in SECTIONS["transceiver"]},
    **{("transceiver", k): "put it under rx:" for k in SECTIONS["rx"] if k not in SECTIONS["transceiver"]},
    **{("tx", k): "put it under rx:" for k in SECTIONS["rx"] if k not in SECTIONS["tx"]},
    **{("rx", k): "put it under tx:" for k in SECTIONS["tx"] if k not in SECTIONS["rx"]},
    **{
        ("receiver", k): "a receiver does not transmit; list a radio that does both under transceivers:"
        for k in SECTIONS["tx"]
        if k not in SECTIONS["receiver"]
    },
    **{
        ("transmitter", k): "a transmitter does not receive; list a radio that does both under "
        "transceivers:"
        for k in SECTIONS["rx"]
        if k not in SECTIONS["transmitter"]
    },
    **{("site", k): f"put it inside {sec}:" for sec in ("limits", "allowances") for k in SECTIONS[sec]},
}
"""Keys given in the wrong place, and where they belong."""


# ---------------------------------------------------------------------------
# Reading the file
# ---------------------------------------------------------------------------


class _Limit(Exception):
    """The file passes a safety limit at ``mark``: too deep or too many values."""

    def __init__(self, mark: yaml.Mark, message: str):
        self.mark = mark
        self.message = message


_TOO_DEEP = f"nested deeper than {MAX_DEPTH} levels (a site file nests at most 6)"
_TOO_MANY = f"more than {MAX_NODES} values in the file (a site file has a few hundred)"


class _Loader(yaml.SafeLoader):
    """The safe loader, refusing deep nesting (compose recurses) and too many values."""

    def __init__(self, stream: str):
        super().__init__(stream)
        self._depth = 0
        self._nodes = 0

    def compose_node(self, parent, index):  # noqa: ANN001 - PyYAML's signature
        self._depth += 1
        self._nodes += 1
        try:
            if self._depth > MAX_DEPTH:
                raise _Limit(self.peek_event().start_mark, _TOO_DEEP)
            if self._nodes > MAX_NODES:
                raise _Limit(self.peek_event().start_mark, _TOO_MANY)
            return super().compose_node(parent, index)
        finally:
            self._depth -= 1


def _line_col(text: str, index: int) -> tuple[int, int]:
    """1-based line and column of a character index in ``text``."""
    line = text.count("\n", 0, index) + 1
    col = index - (text.rfind("\n", 0, index) + 1) + 1
    return line, col


def _read_text(path: str) -> str:
    def fail(line: int, col: int, msg: str) -> SiteError:
        return SiteError([Problem(path, line, col, "", msg)])

    from notchkit.bounded import ReadRefused, read_regular

    try:
        data = read_regular(path, MAX_FILE_BYTES)
    except ReadRefused as exc:
        msg = {
            "missing": "no such file (give the path of an existing .yaml site file)",
            "directory": "is a directory, not a site file (give the path of a .yaml file)",
            "special": f"{exc.reason} (give the path of a .yaml site file)",
            "too_big": _too_big(exc.size),
            "denied": "permission denied (the site file must be readable)",
        }.get(exc.kind, f"{exc.reason} (give a readable site file)")
        raise fail(0, 0, msg) from None
    if len(data) > MAX_FILE_BYTES:
        raise fail(0, 0, _too_big(len(data)))
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        head = data[: exc.start]
        line = head.count(b"\n") + 1
        line_start = head.rfind(b"\n") + 1
        col = len(head[line_start:].decode("utf-8", errors="replace")) + 1
        byte = data[exc.start]
        raise fail(
            line,
            col,
            f"byte 0x{byte:02x} at offset {exc.start} is not UTF-8 text "
            "(save the file as UTF-8)",
        ) from None


def _too_big(size: int) -> str:
    return (
        f"file is {size} bytes, larger than the {MAX_FILE_BYTES} byte limit "
        "(a site file is a few kB; is this the right file?)"
    )


def _compose(path: str, text: str) -> yaml.Node | None:
    """The node tree, with libyaml's speed where it is installed.

    libyaml's composer recurses in C, so its event stream (which does not) is
    first checked for depth and size. A syntax problem on that path goes to
    PyYAML's own loader, whose positions and wording every problem line uses.
    """
    if getattr(yaml, "__with_libyaml__", False):
        try:
            _check_events(text)
            return yaml.compose(text, Loader=yaml.CSafeLoader)
        except yaml.YAMLError:
            pass
        except _Limit as exc:
            raise _limit_error(path, exc) from None
    return _compose_slow(path, text)


def _check_events(text: str) -> None:
    """Count nodes and nesting in libyaml's event stream, as :class:`_Loader` does."""
    depth = nodes = 0
    for event in yaml.parse(text, Loader=yaml.CSafeLoader):
        if isinstance(event, yaml.CollectionEndEvent):
            depth -= 1
            continue
        if not isinstance(event, yaml.NodeEvent):
            continue
        nodes += 1
        if depth + 1 > MAX_DEPTH:
            raise _Limit(event.start_mark, _TOO_DEEP)
        if nodes > MAX_NODES:
            raise _Limit(event.start_mark, _TOO_MANY)
        if isinstance(event, yaml.CollectionStartEvent):
            depth += 1


def _limit_error(path: str, exc: _Limit) -> SiteError:
    return SiteError([Problem(path, exc.mark.line + 1, exc.mark.column + 1, "", exc.message)])


def _compose_slow(path: str, text: str) -> yaml.Node | None:
    try:
        return yaml.compose(text, Loader=_Loader)
    except _Limit as exc:
        raise _limit_error(path, exc) from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (0, 0)
        what = exc.problem or "cannot be parsed"
        context = ""
        if exc.context:
            context = exc.context
            if exc.context_mark is not None and exc.context_mark.line != getattr(mark, "line", None):
                context += f" from line {exc.context_mark.line + 1}"
            context += "; "
        hint = "check the indentation, quotes and brackets"
        if "'\\t'" in what:
            hint = "indent with spaces, never tabs"
        elif "expected a single document" in context:
            what, context = "a second document starts here", ""
            hint = "one site per file; split the file at the '---'"
        raise SiteError([Problem(path, line, col, "", f"YAML syntax: {what} ({context}{hint})")]) from None
    except yaml.reader.ReaderError as exc:
        line, col = _line_col(text, exc.position)
        raise SiteError(
            [
                Problem(
                    path,
                    line,
                    col,
                    "",
                    f"control character U+{exc.character:04X} is not allowed in YAML "
                    "(remove it; only printable text, tabs and newlines)",
                )
            ]
        ) from None
    except yaml.YAMLError as exc:  # pragma: no cover - any other PyYAML complaint
        raise SiteError([Problem(path, 0, 0, "", f"YAML: {exc} (check the file)")]) from None


# ---------------------------------------------------------------------------
# Walking the nodes
# ---------------------------------------------------------------------------

_BAD = object()


class _Stop(Exception):
    pass


def _fold(name: str) -> str:
    """A cable name for lookup, folded as the cable library does (case, spaces, '-', '_', '/U')."""
    return re.sub(r"/U$", "", re.sub(r"[\s\-_]", "", name.upper()))


def _join(path: str, key: str) -> str:
    return f"{path}.{key}" if path else key


def _count(node: yaml.Node) -> str:
    """What a node holds, for 'expected two values, got ...'."""
    if isinstance(node, yaml.SequenceNode):
        n = len(node.value)
        return f"{n} value" if n == 1 else f"{n} values"
    return _kind(node)


def _kind(node: yaml.Node) -> str:
    if isinstance(node, yaml.MappingNode):
        return "a mapping"
    if isinstance(node, yaml.SequenceNode):
        return "a list"
    return {
        _STR: "text",
        _INT: "a number",
        _FLOAT: "a number",
        _BOOL: "a boolean",
        _NULL: "nothing",
    }.get(node.tag, f"a {_show_tag(node.tag)} value")


def _show_tag(tag: str) -> str:
    return "!!" + tag[len(_YAML) :] if tag.startswith(_YAML) else tag


def _shown(node: yaml.ScalarNode) -> str:
    """A scalar as written: text quoted, numbers and plain words like 1e12 as they are."""
    text = node.value if len(node.value) <= 40 else node.value[:37] + "..."
    if node.tag != _STR:
        return text
    if not node.style and _looks_numeric(node.value):
        return text
    return repr(text)


def _length_number(text: str) -> float | None:
    """The number in a length's text: ``12``, ``3.5``, ``1/16`` or ``3 1/2``; ``None`` for x/0."""
    if "/" not in text:
        return float(text)
    whole, _, frac = text.strip().rpartition(" ")
    num, den = frac.split("/")
    if int(den) == 0:
        return None
    return (int(whole) if whole.strip() else 0) + int(num) / int(den)


def _looks_numeric(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


class _Reader:
    """Walks a composed node tree against :data:`SECTIONS`, collecting problems."""

    def __init__(self, path: str):
        self.path = path
        self.problems: list[Problem] = []
        self.bad_nodes: set[int] = set()
        self.cable_refs: list[tuple[str, yaml.Node, str]] = []

    def add(self, node: yaml.Node | None, field: str, message: str) -> None:
        line, col = (node.start_mark.line + 1, node.start_mark.column + 1) if node else (0, 0)
        self.problems.append(Problem(self.path, line, col, field, message))

    # -- whole-tree checks ------------------------------------------------

    def prepass(self, root: yaml.Node) -> None:
        """Refuse alias bombs and self-referring aliases before the walk."""
        visits = 0
        stack: list[tuple[yaml.Node, int]] = [(root, 1)]
        while stack:
            node, depth = stack.pop()
            visits += 1
            if visits > MAX_NODES:
                self.add(
                    node,
                    "",
                    f"more than {MAX_NODES} values, counting each repeat through an alias "
                    "(a site file has a few hundred; use fewer or no aliases)",
                )
                raise _Stop
            if depth > MAX_DEPTH:
                self.add(
                    node,
                    "",
                    f"nested deeper than {MAX_DEPTH} levels counting through aliases "
                    "(an alias may refer to itself; a site file nests at most 6)",
                )
                raise _Stop
            if isinstance(node, yaml.MappingNode):
                for k, v in node.value:
                    stack.append((k, depth + 1))
                    stack.append((v, depth + 1))
            elif isinstance(node, yaml.SequenceNode):
                stack.extend((item, depth + 1) for item in node.value)

    def tag_bad(self, node: yaml.Node, path: str) -> bool:
        """True (and reported once) when a node carries a tag other than plain YAML's."""
        if node.tag in _PLAIN_TAGS:
            return False
        if id(node) not in self.bad_nodes:
            self.bad_nodes.add(id(node))
            self.add(
                node,
                path,
                f"tag {_show_tag(node.tag)} is not allowed "
                "(plain YAML only: text, numbers, lists and mappings)",
            )
        return True

    # -- sections ---------------------------------------------------------

    def section(self, node: yaml.Node, name: str, path: str) -> dict[str, tuple[Any, yaml.Node]] | None:
        if self.tag_bad(node, path):
            return None
        spec = SECTIONS[name]
        if not isinstance(node, yaml.MappingNode):
            what = f"{_kind(node)} {_shown(node)}" if isinstance(node, yaml.ScalarNode) else _kind(node)
            where = "must be" if path else "the file must be"
            self.add(
                node,
                path,
                f"{where} a mapping of keys, got {what} (allowed keys: {_ALLOWED_KEYS_TEXT[name]})",
            )
            return None
        out: dict[str, tuple[Any, yaml.Node]] = {}
        first: dict[str, yaml.Node] = {}
        for knode, vnode in node.value:
            if knode.tag == _YAML + "merge":
                self.add(knode, path, "merge keys '<<' are not supported (write the keys out in full)")
                continue
            if self.tag_bad(knode, path):
                continue
            if not isinstance(knode, yaml.ScalarNode) or knode.tag not in (_STR, _INT, _FLOAT, _BOOL):
                self.add(knode, path, f"a key must be a plain word, got {_kind(knode)}")
                continue
            key = knode.value
            fpath = _join(path, key)
            if key in first:
                self.add(
                    knode,
                    fpath,
                    f"duplicate key (first given at line {first[key].start_mark.line + 1}; "
                    "give each key once)",
                )
                continue
            first[key] = knode
            fld = spec.get(key)
            if fld is None:
                self.add(knode, fpath, "unknown key " + self._suggest(key, spec, name))
                continue
            value = self.value(vnode, fld, fpath)
            if value is not _BAD:
                out[key] = (value, vnode)
        for key, fld in spec.items():
            if fld.required and key not in first:
                self.add(node, _join(path, key), f"missing (required: {fld.doc[:1].lower()}{fld.doc[1:-1]})")
        return out

    @staticmethod
    def _suggest(key: str, spec: dict[str, Field], name: str) -> str:
        moved = _MOVED.get((name, key))
        if moved:
            return f"({moved})"
        close = difflib.get_close_matches(key.lower(), list(spec), n=1, cutoff=0.6)
        if close:
            return f"(did you mean '{close[0]}'?)"
        return f"(allowed: {_ALLOWED_KEYS_TEXT[name]})"

    def value(self, node: yaml.Node, fld: Field, path: str) -> Any:
        if self.tag_bad(node, path):
            return _BAD
        if fld.kind == "number":
            return self.number(node, fld.num, path)
        if fld.kind in ("text", "name", "cable"):
            text = self.text(node, path, name=fld.kind == "name")
            if fld.kind == "cable" and text is not _BAD:
                self.cable_refs.append((text, node, path))
            return text
        if fld.kind == "band":
            return self.band(node, path)
        if fld.kind == "section":
            got = self.section(node, fld.section, path)
            return _BAD if got is None else got
        if fld.kind == "list":
            return self.items(node, fld.section, path)
        if fld.kind == "pair":
            return self.pair(node, path)
        if fld.kind == "table":
            return self.table(node, path, fld.cols)
        if fld.kind == "freqs":
            return self.freqs(node, path)
        if fld.kind == "bands":
            return self.bands(node, path)
        if fld.kind == "names":
            return self.name_list(node, path)
        if fld.kind == "choice":
            return self.choice(node, path, fld.choices)
        raise ValueError(f"unknown field kind {fld.kind!r}")  # pragma: no cover - programming error

    def items(self, node: yaml.Node, section: str, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode):
            what = "nothing" if getattr(node, "tag", "") == _NULL else _kind(node)
            self.add(
                node,
                path,
                f"expected a list of entries (each starting with '- '), got {what} "
                "(remove the key if there are none)",
            )
            return _BAD
        out = []
        for i, item in enumerate(node.value):
            got = self.section(item, section, f"{path}[{i}]")
            if got is not None:
                out.append((got, item, f"{path}[{i}]"))
        return out

    # -- scalars ----------------------------------------------------------

    def number(self, node: yaml.Node, num: Num | None, path: str) -> Any:
        if num is None:  # pragma: no cover - a number field declared without its range
            raise TypeError(f"{path}: number field declared without a Num")
        if self.tag_bad(node, path):
            return _BAD
        allowed = num.allowed()
        if num.length_unit_m is not None:
            allowed += " or text with a unit, e.g. '12 ft', '3 1/2 in' (m, cm, mm, ft, in)"
        if not isinstance(node, yaml.ScalarNode):
            self.add(node, path, f"expected a number, got {_kind(node)} (allowed: {allowed})")
            return _BAD
        shown = _shown(node)
        if node.tag == _BOOL:
            self.add(
                node,
                path,
                f"{shown} is a boolean, not a number (allowed: {allowed}; YAML reads "
                "yes/no/on/off/true/false as booleans)",
            )
            return _BAD
        if node.tag == _NULL:
            self.add(node, path, f"no value given (allowed: {allowed}; remove the key for the default)")
            return _BAD
        value: float | None = None
        if node.tag in (_INT, _FLOAT, _STR) and len(node.value.strip()) > MAX_NUMBER_CHARS:
            self.add(node, path, f"{shown} is {len(node.value.strip())} characters long, too long for "
                     f"a number (allowed: {allowed}, written in at most {MAX_NUMBER_CHARS} characters)")
            return _BAD
        if node.tag == _INT:
            value = float(_CON.construct_yaml_int(node))
        elif node.tag == _FLOAT:
            value = _CON.construct_yaml_float(node)
        elif node.tag == _STR:
            match = _LENGTH_RE.match(node.value) if num.length_unit_m is not None else None
            if match:
                value = _length_number(match.group(1))
                if value is not None and num.length_unit_m is not None:
                    value *= _LENGTH_UNITS_M[match.group(2)] / num.length_unit_m
            elif not node.style:
                try:  # plain 1e12 or nan: YAML 1.1 reads these as text; read them as numbers
                    value = float(node.value)
                except ValueError:
                    value = None
            if value is None:
                self.add(node, path, f"{shown} is text, not a number (allowed: {allowed})")
                return _BAD
        if value is None:  # pragma: no cover - every tag handled above
            return _BAD
        if not math.isfinite(value):
            self.add(node, path, f"{shown} is not a finite number (allowed: {allowed})")
            return _BAD
        if num.integer and value != int(value):
            self.add(node, path, f"{shown} is not a whole number (allowed: {allowed})")
            return _BAD
        if not num.contains(value):
            if value <= 0 < num.lo or (value <= 0 and num.lo == 0 and num.lo_open):
                what = f"{shown} must be greater than 0"
            elif value < num.lo or (value == num.lo and num.lo_open):
                what = f"{shown} is too low"
            else:
                what = f"{shown} is too high"
            hint = ""
            if num.unit == "MHz" and value > num.hi and num.contains(value / 1e6):
                hint = f"; {shown} looks like Hz: give MHz, e.g. {value / 1e6:g}"
            elif num.unit == "MHz" and value > num.hi and num.contains(value / 1e3):
                hint = f"; {shown} looks like kHz: give MHz, e.g. {value / 1e3:g}"
            self.add(node, path, f"{what} (allowed: {allowed}{hint})")
            return _BAD
        return int(value) if num.integer else value

    def text(self, node: yaml.Node, path: str, *, name: bool) -> Any:
        if self.tag_bad(node, path):
            return _BAD
        if not isinstance(node, yaml.ScalarNode):
            self.add(node, path, f"expected text, got {_kind(node)}")
            return _BAD
        if node.tag == _NULL:
            self.add(node, path, "no value given (allowed: text)")
            return _BAD
        if node.tag != _STR:
            self.add(
                node,
                path,
                f"{node.value} is {_kind(node)}, not text (put it in quotes: '{node.value}')",
            )
            return _BAD
        value = node.value.strip()
        bad = unsafe_char(value)
        if bad is not None and not name:
            self.add(node, path, f"{describe_char(bad)} is not allowed in text (remove it; a YAML "
                     "escape such as \\e or \\u202e in double quotes makes one; allowed: printable text)")
            return _BAD
        if name and not _NAME_RE.match(value):
            self.add(node, path, f"{_shown(node)} is not a valid name (allowed: {_NAME_ALLOWED})")
            return _BAD
        if not value:
            self.add(node, path, "empty text (allowed: non-empty text)")
            return _BAD
        if len(value) > 200:
            self.add(node, path, f"text is {len(value)} characters long (allowed: at most 200)")
            return _BAD
        return value

    def band(self, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode) or len(node.value) != 2:
            self.add(
                node,
                path,
                f"expected [lo, hi] in MHz, got {_count(node)} "
                "(allowed: two frequencies, e.g. [144.0, 148.0])",
            )
            return _BAD
        lo = self.number(node.value[0], _FREQ, f"{path}[0]")
        hi = self.number(node.value[1], _FREQ, f"{path}[1]")
        if lo is _BAD or hi is _BAD:
            return _BAD
        if lo >= hi:
            self.add(
                node,
                path,
                f"[{lo:g}, {hi:g}]: the low edge must be below the high edge "
                "(allowed: [lo, hi] with lo < hi; one channel: use freq_mhz)",
            )
            return _BAD
        return m.Band(lo_mhz=lo, hi_mhz=hi)

    def pair(self, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode) or len(node.value) != 2:
            self.add(
                node, path, f"expected two radio names, got {_count(node)} (allowed: [name-a, name-b])"
            )
            return _BAD
        a = self.text(node.value[0], f"{path}[0]", name=True)
        b = self.text(node.value[1], f"{path}[1]", name=True)
        if a is _BAD or b is _BAD:
            return _BAD
        return ((a, node.value[0]), (b, node.value[1]))

    def table(self, node: yaml.Node, path: str, cols=None) -> Any:
        if cols is not None:
            return self.rows(node, path, cols)
        if not isinstance(node, yaml.SequenceNode):
            self.add(
                node,
                path,
                f"expected a list of [freq_mhz, loss_db_per_100m] pairs, got {_kind(node)} "
                "(allowed: e.g. [[10, 2.0], [100, 6.6]])",
            )
            return _BAD
        out: list[tuple[float, float]] = []
        ok = True
        last: float | None = None
        for i, row in enumerate(node.value):
            rpath = f"{path}[{i}]"
            if not isinstance(row, yaml.SequenceNode) or len(row.value) != 2:
                self.add(
                    row,
                    rpath,
                    f"expected [freq_mhz, loss_db_per_100m], got {_count(row)} "
                    "(allowed: e.g. [100, 6.6])",
                )
                ok = False
                continue
            f = self.number(row.value[0], _TABLE_FREQ, f"{rpath}[0]")
            loss = self.number(row.value[1], _TABLE_LOSS, f"{rpath}[1]")
            if f is _BAD or loss is _BAD:
                ok = False
                continue
            if last is not None and f <= last:
                self.add(
                    row,
                    rpath,
                    f"frequency {f:g} MHz does not rise above {last:g} MHz "
                    "(allowed: rows in rising frequency, each once)",
                )
                ok = False
            last = f
            out.append((f, loss))
        return tuple(out) if ok else _BAD


    # -- the keys of how a site operates (bands worked one at a time, scenarios,
    #    installed filters, selectivity and gain tables) ----------------------

    def rows(self, node: yaml.Node, path: str, cols) -> Any:
        """A table of [x, y] rows with x rising (each column's range in ``cols``)."""
        (xn, xnum), (yn, ynum) = cols
        form = f"[{xn}, {yn}]"
        if not isinstance(node, yaml.SequenceNode) or not node.value:
            self.add(node, path, f"expected a list of {form} rows, got {_count(node)} "
                     f"(allowed: at least one row, e.g. [[{xnum.lo:g}, 0]])")  # fmt: skip
            return _BAD
        out: list[tuple[float, float]] = []
        ok = True
        last: float | None = None
        for i, row in enumerate(node.value):
            rpath = f"{path}[{i}]"
            if not isinstance(row, yaml.SequenceNode) or len(row.value) != 2:
                self.add(row, rpath, f"expected {form}, got {_count(row)} (allowed: two numbers)")
                ok = False
                continue
            x = self.number(row.value[0], xnum, f"{rpath}[0]")
            y = self.number(row.value[1], ynum, f"{rpath}[1]")
            if x is _BAD or y is _BAD:
                ok = False
                continue
            if last is not None and x <= last:
                self.add(row, rpath, f"{xn} {x:g} does not rise above {last:g} "
                         "(allowed: rows in rising order, each once)")  # fmt: skip
                ok = False
            last = x
            out.append((x, y))
        return tuple(out) if ok else _BAD

    def freqs(self, node: yaml.Node, path: str) -> Any:
        """One frequency, or a list of channels worked one at a time: a tuple of Bands."""
        if isinstance(node, yaml.SequenceNode):
            if not node.value:
                self.add(node, path, "an empty list (allowed: a frequency, or a list of channels "
                         "in MHz, e.g. [146.52, 147.0])")  # fmt: skip
                return _BAD
            got = [self.number(v, _FREQ, f"{path}[{i}]") for i, v in enumerate(node.value)]
            if any(g is _BAD for g in got):
                return _BAD
            if len(set(got)) != len(got):
                self.add(node, path, "a channel is listed twice (allowed: each channel once)")
                return _BAD
            return tuple(m.Band(lo_mhz=f, hi_mhz=f) for f in got)
        f = self.number(node, _FREQ, path)
        return _BAD if f is _BAD else (m.Band(lo_mhz=f, hi_mhz=f),)

    def bands(self, node: yaml.Node, path: str) -> Any:
        """[lo, hi], or a list of such bands worked one at a time: a tuple of Bands."""
        if (
            isinstance(node, yaml.SequenceNode) and node.value
            and all(isinstance(v, yaml.SequenceNode) for v in node.value)
        ):  # fmt: skip
            got = [self.band(v, f"{path}[{i}]") for i, v in enumerate(node.value)]
            if any(g is _BAD for g in got):
                return _BAD
            for i, a in enumerate(got):
                for b in got[:i]:
                    if a.overlaps(b):
                        self.add(node.value[i], f"{path}[{i}]", f"[{a.lo_mhz:g}, {a.hi_mhz:g}] "
                                 f"overlaps [{b.lo_mhz:g}, {b.hi_mhz:g}] (allowed: separate bands; "
                                 "join overlapping ones into one)")  # fmt: skip
                        return _BAD
            return tuple(got)
        b = self.band(node, path)
        return _BAD if b is _BAD else (b,)

    def name_list(self, node: yaml.Node, path: str) -> Any:
        if not isinstance(node, yaml.SequenceNode) or not node.value:
            self.add(node, path, f"expected a list of radio names, got {_count(node)} "
                     "(allowed: e.g. [run-a, mult-b])")  # fmt: skip
            return _BAD
        got = [self.text(v, f"{path}[{i}]", name=True) for i, v in enumerate(node.value)]
        if any(g is _BAD for g in got):
            return _BAD
        return tuple(zip(got, node.value, strict=True))

    def choice(self, node: yaml.Node, path: str, choices: tuple[str, ...]) -> Any:
        text = self.text(node, path, name=False)
        if text is _BAD:
            return _BAD
        if text not in choices:
            close = difflib.get_close_matches(text, list(choices), n=1, cutoff=0.6)
            hint = f"did you mean {close[0]!r}?; " if close else ""
            self.add(node, path, f"{text!r} is not known ({hint}allowed: {', '.join(choices)})")
            return _BAD
        return text


_CON = yaml.constructor.SafeConstructor()


# ---------------------------------------------------------------------------
# Building the value objects
# ---------------------------------------------------------------------------


def _val(d: dict[str, tuple[Any, yaml.Node]], key: str, default: Any = None) -> Any:
    got = d.get(key)
    return default if got is None else got[0]


def _opt(d: dict[str, tuple[Any, yaml.Node]], keys: tuple[str, ...]) -> dict[str, Any]:
    return {k: d[k][0] for k in keys if k in d}


_TX_KEYS = ("bandwidth_khz", "harmonic_suppression_dbc", "noise_dbc_hz", "im_conversion_db",
            "im_order_step_db")  # fmt: skip
_RX_KEYS = (
    "bandwidth_khz", "sensitivity_dbm", "blocking_dbm", "noise_figure_db", "iip2_dbm", "iip3_dbm",
    "receiver_class", "selectivity", "band_noise_dbm",
)  # fmt: skip


class _Builder:
    """Turns the walked sections into value objects and checks what crosses sections
    (unique radio names, known cables, couplings between existing radios)."""

    def __init__(self, reader: _Reader):
        self.r = reader
        self.names: dict[str, yaml.Node] = {}
        self.known: dict[str, str] = {}

    def freq(self, d: dict, node: yaml.Node, path: str) -> tuple[tuple[m.Band, ...] | None, bool]:
        """The bands (one per operating choice) from freq_mhz / band_mhz and whether
        either key was given.

        The bands are ``None`` when neither is given or the value was bad (reported).
        """
        has_f, has_b = "freq_mhz" in d, "band_mhz" in d
        if has_f and has_b:
            self.r.add(
                d["band_mhz"][1], _join(path, "band_mhz"), "give freq_mhz or band_mhz, not both"
            )
            return None, True
        if has_f:
            return d["freq_mhz"][0], True
        if has_b:
            return d["band_mhz"][0], True
        return None, self._bad_key(node, ("freq_mhz", "band_mhz"))

    def analyser_range(self, top: dict) -> None:
        """The analyser's range must be a range: ``analyser_lo_mhz < analyser_hi_mhz``."""
        if "allowances" not in top or not isinstance(top["allowances"][0], dict):
            return
        a = top["allowances"][0]
        lo = _val(a, "analyser_lo_mhz", m.DEFAULT_ANALYSER_MHZ[0])
        hi = _val(a, "analyser_hi_mhz", m.DEFAULT_ANALYSER_MHZ[1])
        if isinstance(lo, int | float) and isinstance(hi, int | float) and not lo < hi:
            key = "analyser_hi_mhz" if "analyser_hi_mhz" in a else "analyser_lo_mhz"
            self.r.add(a[key][1], _join("allowances", key),
                       f"analyser range {lo:g}-{hi:g} MHz is empty (allowed: analyser_lo_mhz below "
                       f"analyser_hi_mhz)")

    def missing_freq(self, node: yaml.Node, path: str, where: str = "") -> None:
        self.r.add(
            node,
            _join(path, "freq_mhz"),
            "missing (required: freq_mhz in MHz, or band_mhz: [lo, hi] for a radio that "
            f"tunes across a band{where})",
        )

    @staticmethod
    def _bad_key(node: yaml.Node, keys: tuple[str, ...]) -> bool:
        """True when one of ``keys`` is present but its value was bad (already reported)."""
        if not isinstance(node, yaml.MappingNode):
            return False
        return any(isinstance(k, yaml.ScalarNode) and k.value in keys for k, _ in node.value)

    def name(self, d: dict, path: str) -> str | None:
        if "name" not in d:
            return None
        name, node = d["name"]
        key = name.lower()
        if key in self.names:
            first = self.names[key]
            self.r.add(
                node,
                _join(path, "name"),
                f"duplicate radio name {name!r} (first at line {first.start_mark.line + 1}; "
                "names must differ, ignoring case, across transmitters, receivers and transceivers)",
            )
            return None
        self.names[key] = node
        return name

    def common(self, d: dict, site_cable: str, path: str = "") -> dict[str, Any]:
        out: dict[str, Any] = {}
        if "antenna" in d:
            out["antenna"] = m.Antenna(**_opt(d["antenna"][0], tuple(SECTIONS["antenna"])))
        if "installed" in d:
            out["installed"] = self.installed(d["installed"][0])
        if "feedline" in d:
            fd = d["feedline"][0]
            if "length_m" in fd:
                out["feedline"] = m.Feedline(
                    cable=_val(fd, "cable", site_cable), length_m=fd["length_m"][0]
                )
        if "stub_cable" in d:
            out["stub_cable"] = d["stub_cable"][0]
        if "load" in d and isinstance(d["load"][0], dict):
            out["load"] = self.load(d["load"][0], _join(path, "load"))
        return out

    def load(self, d: dict, path: str) -> m.RadioLoad:
        """A radio's ``load:``; its file is read here (notchkit.loads), so a file ``check``
        accepts is never refused later by ``design`` or ``plan``."""
        opts = _opt(d, ("file", "swr", "radio_ohm"))
        if isinstance(opts.get("file"), str):
            from notchkit.errors import InputError
            from notchkit.loads import read_load

            opts["file"] = os.path.join(os.path.dirname(self.r.path), opts["file"])
            try:
                read_load(opts["file"])
            except InputError as exc:
                self.r.add(d["file"][1], _join(path, "file"), str(exc).replace(": load: ", ": ", 1))
        return m.RadioLoad(**opts)

    def transmit(self, d: dict, bands, shared_bw: float | None) -> m.Transmit | None:
        if bands is None or "power_w" not in d:
            return None
        extra = _opt(d, _TX_KEYS)
        if shared_bw is not None:
            extra.setdefault("bandwidth_khz", shared_bw)
        more = {"bands": bands} if len(bands) > 1 else {}
        return m.Transmit(band=bands[0], power_w=d["power_w"][0], **more, **extra)

    def receive(self, d: dict, bands, shared_bw: float | None, path: str = "") -> m.Receive | None:
        if bands is None:
            return None
        extra = _opt(d, _RX_KEYS)
        if shared_bw is not None:
            extra.setdefault("bandwidth_khz", shared_bw)
        more = {"bands": bands} if len(bands) > 1 else {}
        return m.Receive(band=bands[0], **more, **extra)

    def check_rx(self, d: dict, path: str) -> None:
        """A flat blocking level and a blocking-by-offset table are not given together (a
        class's table gives way to a stated blocking_dbm)."""
        for other in ("selectivity",):
            if other in d and "blocking_dbm" in d:
                self.r.add(
                    d["blocking_dbm"][1], _join(path, "blocking_dbm"),
                    f"give {other} or blocking_dbm, not both (allowed: one; {other} gives the "
                    "blocking level by offset)",
                )  # fmt: skip

    def check_choices(self, tx: m.Transmit | None, rx: m.Receive | None, node, path: str) -> bool:
        """tx and rx lists of bands or channels pair up by position: same length, or one has one."""
        if tx is None or rx is None:
            return True
        nt, nr = len(tx.choices), len(rx.choices)
        if nt > 1 and nr > 1 and nt != nr:
            self.r.add(
                node, path,
                f"tx works {nt} bands or channels and rx {nr} (allowed: the same number, paired "
                "in order, or one of them a single band)",
            )  # fmt: skip
            return False
        return True

    def radio(self, kind: str, d: dict, node: yaml.Node, path: str, site_cable: str) -> m.Radio | None:
        name = self.name(d, path)
        tx = rx = None
        if kind == "receivers":
            self.check_rx(d, path)
        elif kind == "transceivers" and "rx" in d:
            self.check_rx(d["rx"][0], _join(path, "rx"))
        if kind != "transceivers":
            band, given = self.freq(d, node, path)
            if not given:
                self.missing_freq(node, path)
            if kind == "transmitters":
                tx = self.transmit(d, band, None)
                ok = tx is not None
            else:
                rx = self.receive(d, band, None, path)
                ok = rx is not None
        else:
            shared, shared_given = self.freq(d, node, path)
            shared_bw = _val(d, "bandwidth_khz")
            where = " here or on the transceiver"
            parts: dict[str, tuple[m.Band, ...] | None] = {}
            for part in ("tx", "rx"):
                ppath = _join(path, part)
                if part in d:
                    pd, pnode = d[part]
                    band, given = self.freq(pd, pnode, ppath)
                    if not given:
                        if shared_given:
                            band = shared
                        else:
                            self.missing_freq(pnode, ppath, where)
                    parts[part] = band
                elif part == "rx" and not self._bad_key(node, ("rx",)):
                    if shared_given:
                        parts["rx"] = shared
                    else:
                        self.r.add(
                            node,
                            ppath,
                            "missing (required: an rx part with freq_mhz or band_mhz, or "
                            "freq_mhz on the transceiver shared by tx and rx)",
                        )
            if "tx" in d:
                tx = self.transmit(d["tx"][0], parts.get("tx"), shared_bw)
            rx_d = d["rx"][0] if "rx" in d else {}
            rx = self.receive(rx_d, parts.get("rx"), shared_bw, _join(path, "rx"))
            ok = tx is not None and rx is not None and self.check_choices(tx, rx, node, path)
        if name is None or not ok:
            return None
        return m.Radio(name=name, tx=tx, rx=rx, **self.common(d, site_cable, path))

    def build(self, root: yaml.Node) -> m.Site | None:
        r = self.r
        top = r.section(root, "site", "")
        if top is None:
            return None
        site_cable = _val(top, "cable", m.DEFAULT_CABLE)
        radios: list[m.Radio] = []
        n_entries = 0
        n_tx = 0
        too_many_tx = False
        lists_ok = True
        for knode, _ in root.value:
            key = getattr(knode, "value", None)
            if key not in ("transmitters", "receivers", "transceivers"):
                continue
            if key not in top:
                lists_ok = False
                continue
            for d, node, path in top[key][0]:
                n_entries += 1
                if n_entries == MAX_RADIOS + 1:
                    r.add(node, path, f"more than {MAX_RADIOS} radios in one site (allowed: at most "
                          f"{MAX_RADIOS} transmitters, receivers and transceivers together; split the "
                          "site into groups that share no antenna space)")
                radio = self.radio(key, d, node, path, site_cable)
                if radio is not None:
                    radios.append(radio)
                    if radio.tx is not None:
                        n_tx += len(radio.tx.choices)  # each band worked is enumerated on its own
                        if n_tx >= 3 and n_tx * (n_tx - 1) * (n_tx - 2) // 6 > MAX_IM_TRIPLES \
                                and not too_many_tx:
                            too_many_tx = True
                            r.add(node, path, f"{n_tx} transmitters make "
                                  f"{n_tx * (n_tx - 1) * (n_tx - 2) // 6} three-transmitter "
                                  f"intermodulation combinations (allowed: at most {MAX_IM_TRIPLES}, "
                                  f"{MAX_TRANSMITTERS} transmitters)")
        if n_entries == 0 and lists_ok:
            r.add(
                root,
                "",
                "no radios (allowed: at least one entry under transmitters, receivers or "
                "transceivers)",
            )
        cables = self.cables(top)
        self.resolve_cables()
        couplings = self.couplings(top)
        self.analyser_range(top)
        self.derived(top, radios, site_cable)
        scenarios = self.scenarios(top)
        hardware = self.hardware(top)
        if r.problems or "site" not in top:
            return None
        return m.Site(
            name=top["site"][0],
            cable=self.canon(site_cable),
            radios=tuple(self.canon_radio(x) for x in radios),
            couplings=couplings,
            cables=cables,
            path=r.path,
            scenarios=scenarios,
            **_opt(top, ("near_field_isolation_db",)),
            **self.site_options(top),
            **hardware,
        )

    @staticmethod
    def site_options(top: dict) -> dict[str, Any]:
        """The optional top-level sections the file gives (the model's defaults otherwise)."""
        out: dict[str, Any] = {}
        if "limits" in top:
            out["limits"] = m.Limits(**_opt(top["limits"][0], tuple(SECTIONS["limits"])))
        if "allowances" in top:
            out["allowances"] = m.Allowances(**_opt(top["allowances"][0], tuple(SECTIONS["allowances"])))
        for key in ("max_harmonic", "max_im_order"):
            if key in top:
                out[key] = top[key][0]
        return out

    # -- installed filters and scenarios -----------------------------------

    def installed(self, entries) -> tuple[m.InstalledFilter, ...]:
        out = []
        for fd, fnode, fpath in entries:
            has_t, has_r = "touchstone" in fd, "rejection" in fd
            if has_t == has_r:
                self.r.add(fnode, _join(fpath, "rejection"), "give rejection or touchstone, "
                           + ("not both" if has_t else "one of them") + " (allowed: a table of "
                           "[freq_mhz, rejection_db] rows, or a measured .s2p file)")  # fmt: skip
                continue
            if "name" not in fd:
                continue
            if has_r:
                table = fd["rejection"][0]
            else:
                ts_name, ts_node = fd["touchstone"]
                table = self.touchstone(ts_name, ts_node, _join(fpath, "touchstone"))
            if table is None:
                continue
            out.append(
                m.InstalledFilter(
                    name=fd["name"][0], rejection=table,
                    touchstone=_val(fd, "touchstone"),
                    for_band=_val(fd, "for_band_mhz"),
                    **_opt(fd, ("port", "kind")),
                )
            )  # fmt: skip
        return tuple(out)

    def touchstone(self, name: str, node: yaml.Node, path: str) -> tuple[tuple[float, float], ...] | None:
        """A measured two-port's rejection -20 log10 |S21| as (freq_mhz, dB) rows.

        Read like every measurement (:func:`notchkit.bounded.read_measurement_bytes`: a
        regular file within the byte and point caps), then parsed by scikit-rf.
        """
        import io
        import warnings

        from notchkit.bounded import read_measurement_bytes
        from notchkit.errors import MeasurementError

        full = os.path.join(os.path.dirname(self.r.path), name)
        if not name.lower().endswith(".s2p"):
            self.r.add(node, path, f"{name!r} is not a .s2p file (allowed: a two-port Touchstone "
                       "file measured on the filter)")  # fmt: skip
            return None
        if not os.path.isfile(full):
            self.r.add(node, path, f"no file {full!r} (allowed: a .s2p path from the site file's folder)")
            return None
        try:
            data = read_measurement_bytes(full)
        except MeasurementError as exc:
            self.r.add(node, path, f"{str(exc).split(': ', 1)[-1]} (allowed: a measured two-port .s2p)")
            return None
        text = data.decode("utf-8", errors="replace")
        buf = io.StringIO(text)
        buf.name = os.path.basename(full)  # scikit-rf takes the port count from the extension
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")  # the reader's own warnings: our one line says it
            try:
                import skrf

                ntw = skrf.Network(buf)
                f_mhz = ntw.f / 1e6
                mag = np.abs(ntw.s[:, 1, 0])
            except Exception as exc:  # noqa: BLE001 - any reader failure is the file's problem
                first = str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__
                self.r.add(node, path, f"{name!r} could not be read as Touchstone ({first}) "
                           "(allowed: a two-port .s2p file)")  # fmt: skip
                return None
        ok = (f_mhz > 0) & np.isfinite(mag) & (mag > 0)
        if ok.sum() < 2 or np.any(np.diff(f_mhz[ok]) <= 0):
            self.r.add(node, path, f"{name!r} has fewer than two usable rising frequency points "
                       "(allowed: a measured sweep)")  # fmt: skip
            return None
        rej = np.maximum(-20.0 * np.log10(mag[ok]), 0.0)
        return tuple(zip(f_mhz[ok].tolist(), rej.tolist(), strict=True))

    def scenarios(self, top: dict) -> tuple[m.Scenario, ...]:
        out: list[m.Scenario] = []
        names = {k: n.value.strip() for k, n in self.names.items()}
        seen: dict[str, yaml.Node] = {}
        for d, _node, path in _val(top, "scenarios", []):
            if "name" not in d or "radios" not in d:
                continue
            sname, snode = d["name"]
            if sname.lower() in seen:
                line = seen[sname.lower()].start_mark.line + 1
                self.r.add(snode, _join(path, "name"), f"scenario {sname!r} is already defined at "
                           f"line {line} (allowed: each name once)")  # fmt: skip
                continue
            seen[sname.lower()] = snode
            got: list[str] = []
            for i, (x, xnode) in enumerate(d["radios"][0]):
                if x.lower() not in names:
                    close = difflib.get_close_matches(x.lower(), list(names), n=1, cutoff=0.6)
                    hint = f"did you mean {names[close[0]]!r}?; " if close else ""
                    self.r.add(xnode, f"{path}.radios[{i}]", f"no radio named {x!r} ({hint}allowed: "
                               "a name given under transmitters, receivers or transceivers)")  # fmt: skip
                    continue
                if names[x.lower()] in got:
                    self.r.add(xnode, f"{path}.radios[{i}]",
                               f"{x!r} is listed twice (allowed: each radio once)")  # fmt: skip
                    continue
                got.append(names[x.lower()])
            out.append(m.Scenario(name=sname, radios=tuple(got)))
        return tuple(out)

    def hardware(self, top: dict) -> dict[str, Any]:
        """``hardware:`` and ``depth_ceiling_db`` (notchkit.hardware), checked here."""
        out: dict[str, Any] = {}
        if "depth_ceiling_db" in top:
            out["depth_ceiling_db"] = top["depth_ceiling_db"][0]
        if "hardware" in top and isinstance(top["hardware"][0], dict):
            from notchkit.hardware import FAMILIES

            d = top["hardware"][0]
            opts = _opt(d, tuple(SECTIONS["hardware"]))
            for key, allowed in (("family", tuple(FAMILIES)), ("line_model", ("classic", "rlgc"))):
                if key in opts:
                    opts[key] = str(opts[key]).lower()
                    if opts[key] not in allowed:
                        self.r.add(d[key][1], f"hardware.{key}",
                                   f"{opts[key]!r} is not known (allowed: {', '.join(allowed)})")
            out["hardware"] = m.HardwareSettings(**opts)
        return out

    # -- cables -----------------------------------------------------------

    def cables(self, top: dict) -> tuple[m.CableDef, ...]:
        """The site's own cable types; they take precedence over library types of the same name."""
        from notchkit.cables import library, site_library
        from notchkit.errors import CableError

        out: list[m.CableDef] = []
        seen: dict[str, yaml.Node] = {}
        self.cable_nodes: dict[str, tuple[dict, str]] = {}
        self.known = {_fold(c.name): c.name for c in library()}
        for c in library():
            self.known.update({_fold(a): c.name for a in c.aliases})
        try:  # a cable library kept next to the site file (notchkit-cables.yaml)
            beside: tuple[Any, ...] = site_library(self.r.path) if self.r.path else ()
        except CableError as exc:
            self.r.add(None, "cables", str(exc))
            beside = ()
        self.known.update({_fold(c.name): c.name for c in beside})
        for d, _node, path in _val(top, "cables", []):
            if not all(k in d for k in ("name", "z0_ohm", "velocity_factor")):
                continue
            name, nnode = d["name"]
            key = _fold(name)
            if key in seen:
                self.r.add(
                    nnode,
                    _join(path, "name"),
                    f"cable {name!r} is already defined at line {seen[key].start_mark.line + 1} "
                    "(allowed: each cable name once)",
                )
                continue
            seen[key] = nnode
            self.cable_nodes[key] = (d, path)
            extra = _opt(d, ("max_voltage_v", "outer_diameter_mm", "dielectric", "loss_table"))
            out.append(
                m.CableDef(
                    name=name, z0_ohm=d["z0_ohm"][0], velocity_factor=d["velocity_factor"][0], **extra
                )
            )
        for d in out:
            self.known[_fold(d.name)] = d.name
        own = {_fold(d.name) for d in out}
        return tuple(c for c in beside if _fold(c.name) not in own) + tuple(out)

    def derived(self, top: dict, radios: list[m.Radio], site_cable: str) -> None:
        """Checks of values that are each in range but do not go together.

        Every value the design derives from the file is checked here, with the
        position of the value the user wrote, so ``check`` and ``design`` agree:
        the tolerance run draws each stub cable's velocity factor within
        ``+-vf_spread`` (``allowances.vf_spread``, else the cable's published
        tolerance, else :data:`notchkit.tolerance.DEFAULT_VF_SPREAD`), which
        must stay at most half the velocity factor
        (:func:`notchkit.tolerance.tolerance` refuses more).
        """
        from notchkit.cables import library
        from notchkit.tolerance import DEFAULT_VF_SPREAD

        allow = top.get("allowances", ({}, None))[0]
        explicit = allow.get("vf_spread")
        lib = {_fold(c.name): c for c in library()}
        used = {_fold(site_cable)} | {_fold(x.stub_cable) for x in radios if x.stub_cable}
        for key in sorted(used):
            if key in self.cable_nodes:
                d, cpath = self.cable_nodes[key]
                vf, vf_node = d["velocity_factor"]
                tol = _val(d, "vf_tolerance")
                name = d["name"][0]
            elif key in lib:
                c = lib[key]
                vf, vf_node, cpath, tol, name = c.velocity_factor, None, "", c.vf_tolerance, c.name
            else:
                continue
            if explicit is not None:
                spread, snode = explicit
                if spread > 0.5 * vf:
                    self.r.add(snode, "allowances.vf_spread",
                               f"{spread:g} is more than half the velocity factor {vf:g} of stub cable "
                               f"{name!r} (allowed: at most {0.5 * vf:g} for that cable)")
                continue
            spread = DEFAULT_VF_SPREAD if tol is None else float(tol)
            if spread > 0.5 * vf:
                src = "its vf_tolerance" if tol is not None else "the default velocity-factor spread"
                self.r.add(vf_node, _join(cpath, "velocity_factor"),
                           f"{vf:g} is less than twice {src} {spread:g} that the tolerance run uses "
                           f"(allowed: at least {2 * spread:g}, or set allowances.vf_spread)")

    def resolve_cables(self) -> None:
        """Report every cable name that is neither in the library nor defined in the file."""
        for name, node, path in self.r.cable_refs:
            if _fold(name) in self.known:
                continue
            from notchkit.cables import generic_hint

            generic = generic_hint(name)
            # the closest name; a tie goes to the one listed first (the library's order)
            close = difflib.get_close_matches(_fold(name), list(self.known), n=3, cutoff=0.6)
            if close:
                score = {k: difflib.SequenceMatcher(None, _fold(name), k).ratio() for k in close}
                best = max(score.values())
                close = [next(k for k in self.known if k in score and score[k] == best)]
            hint = (f"trade names are not used: the generic type of that size is {generic!r}; "
                    if generic else f"did you mean {self.known[close[0]]!r}?; " if close else "")
            self.r.add(
                node,
                path,
                f"unknown cable {name!r} ({hint}allowed: a cable from 'notchkit cables' "
                "or one defined under cables:)",
            )

    def canon(self, name: str) -> str:
        return self.known.get(_fold(name), name)

    def canon_radio(self, radio: m.Radio) -> m.Radio:
        changes: dict[str, Any] = {}
        if radio.stub_cable is not None:
            changes["stub_cable"] = self.canon(radio.stub_cable)
        if radio.feedline is not None:
            changes["feedline"] = dataclasses.replace(
                radio.feedline, cable=self.canon(radio.feedline.cable)
            )
        return dataclasses.replace(radio, **changes) if changes else radio

    # -- couplings --------------------------------------------------------

    def couplings(self, top: dict) -> tuple[m.Coupling, ...]:
        out: list[m.Coupling] = []
        pairs: dict[frozenset[str], tuple[yaml.Node, list]] = {}
        names = {k: n.value.strip() for k, n in self.names.items()}
        for d, _node, path in _val(top, "couplings", []):
            if "between" not in d or "isolation_db" not in d:
                continue
            ((a, anode), (b, bnode)), pnode = d["between"]
            ok = True
            for i, (x, xnode) in enumerate(((a, anode), (b, bnode))):
                if x.lower() not in names:
                    close = difflib.get_close_matches(x.lower(), list(names), n=1, cutoff=0.6)
                    hint = f"did you mean {names[close[0]]!r}?; " if close else ""
                    self.r.add(
                        xnode,
                        f"{path}.between[{i}]",
                        f"no radio named {x!r} ({hint}allowed: a name given under "
                        "transmitters, receivers or transceivers)",
                    )
                    ok = False
            if not ok:
                continue
            a, b = names[a.lower()], names[b.lower()]
            if a == b:
                self.r.add(
                    pnode,
                    _join(path, "between"),
                    f"a coupling needs two different radios, got {a!r} twice",
                )
                continue
            freq = _val(d, "freq_mhz")
            key = frozenset((a, b))
            if key in pairs:
                first, first_f = pairs[key]
                if freq is None or None in first_f or freq in first_f:
                    self.r.add(
                        pnode,
                        _join(path, "between"),
                        f"coupling between {a!r} and {b!r} given twice "
                        + ("at the same frequency " if freq is not None and freq in first_f else "")
                        + f"(first at line {first.start_mark.line + 1}; several measurements of "
                        "a pair each need their own freq_mhz)",
                    )  # fmt: skip
                    continue
                first_f.append(freq)
            else:
                pairs[key] = (pnode, [freq])
            out.append(
                m.Coupling(a=a, b=b, isolation_db=d["isolation_db"][0], freq_mhz=_val(d, "freq_mhz"))
            )
        return tuple(out)


def _finish(path: str, problems: list[Problem]) -> SiteError:
    problems = sorted(problems, key=lambda p: (p.line, p.col, p.field))
    if len(problems) > MAX_PROBLEMS:
        more = len(problems) - MAX_PROBLEMS
        problems = problems[:MAX_PROBLEMS] + [
            Problem(path, 0, 0, "", f"{more} more problems not shown (fix these and run again)")
        ]
    return SiteError(problems)


def load_site(path: str | os.PathLike[str]) -> m.Site:
    """Read and validate a site file.

    Parameters
    ----------
    path : str or path-like
        The YAML site file; problems name it exactly as given.

    Returns
    -------
    Site
        Immutable value objects; cable names are spelt as in the library.

    Raises
    ------
    SiteError
        Every problem found (up to :data:`MAX_PROBLEMS`), each
        ``FILE:LINE:COL: field.path: what is wrong (what is allowed)``.
    """
    spath = os.fspath(path)
    text = _read_text(spath)
    root = _compose(spath, text)
    if root is None:
        raise SiteError(
            [
                Problem(
                    spath,
                    0,
                    0,
                    "",
                    "the file is empty (allowed: a mapping with site:, cable: and "
                    "transmitters:/receivers:/transceivers: lists)",
                )
            ]
        )
    reader = _Reader(spath)
    site = None
    try:
        reader.prepass(root)
        site = _Builder(reader).build(root)
    except _Stop:
        pass
    if reader.problems or site is None:
        raise _finish(spath, reader.problems)
    return site


def check(path: str | os.PathLike[str]) -> m.Site:
    """Check a site file: the library side of ``notchkit check`` (same as :func:`load_site`)."""
    return load_site(path)


# ---------------------------------------------------------------------------
# JSON Schema
# ---------------------------------------------------------------------------


def _num_schema(num: Num) -> dict[str, Any]:
    s: dict[str, Any] = {"type": "integer" if num.integer else "number"}
    s["exclusiveMinimum" if num.lo_open else "minimum"] = num.lo
    s["maximum"] = num.hi
    if num.length_unit_m is None:
        return s
    return {"oneOf": [s, {"type": "string", "pattern": LENGTH_PATTERN}]}


def _field_schema(fld: Field) -> dict[str, Any]:
    if fld.kind == "number":
        s = _num_schema(fld.num)  # type: ignore[arg-type]
    elif fld.kind == "name":
        s = {"type": "string", "pattern": NAME_PATTERN}
    elif fld.kind in ("text", "cable"):
        s = {"type": "string", "minLength": 1, "maxLength": 200}
    elif fld.kind == "band":
        item = _num_schema(_FREQ)
        s = {"type": "array", "items": item, "minItems": 2, "maxItems": 2}
    elif fld.kind == "section":
        s = {"$ref": f"#/$defs/{fld.section}"}
    elif fld.kind == "list":
        s = {"type": "array", "items": {"$ref": f"#/$defs/{fld.section}"}}
    elif fld.kind == "pair":
        s = {
            "type": "array",
            "items": {"type": "string", "pattern": NAME_PATTERN},
            "minItems": 2,
            "maxItems": 2,
        }
    elif fld.kind == "table":
        xnum, ynum = (_TABLE_FREQ, _TABLE_LOSS) if fld.cols is None else (fld.cols[0][1], fld.cols[1][1])
        row = {
            "type": "array",
            "prefixItems": [_num_schema(xnum), _num_schema(ynum)],
            "minItems": 2,
            "maxItems": 2,
        }
        s = {"type": "array", "items": row}
        if fld.cols is not None:
            s["minItems"] = 1
    elif fld.kind == "freqs":
        item = _num_schema(_FREQ)
        s = {"oneOf": [item, {"type": "array", "items": item, "minItems": 1}]}
    elif fld.kind == "bands":
        pair = {"type": "array", "items": _num_schema(_FREQ), "minItems": 2, "maxItems": 2}
        s = {"oneOf": [pair, {"type": "array", "items": pair, "minItems": 1}]}
    elif fld.kind == "names":
        s = {"type": "array", "items": {"type": "string", "pattern": NAME_PATTERN}, "minItems": 1}
    elif fld.kind == "choice":
        s = {"type": "string", "enum": list(fld.choices)}
    else:  # pragma: no cover - programming error
        raise ValueError(fld.kind)
    out = {"description": fld.doc, **s}
    if fld.default is not None and not isinstance(fld.default, tuple) and fld.kind != "cable":
        out["default"] = fld.default
    elif fld.kind == "cable" and fld.default == m.DEFAULT_CABLE:
        out["default"] = fld.default
    return out


def _section_schema(name: str) -> dict[str, Any]:
    spec = SECTIONS[name]
    s: dict[str, Any] = {
        "type": "object",
        "properties": {k: _field_schema(f) for k, f in spec.items()},
        "additionalProperties": False,
    }
    required = [k for k, f in spec.items() if f.required]
    if required:
        s["required"] = required
    return s


def site_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of a site file, built from :data:`SECTIONS`.

    ``docs/site-schema.json`` is this, written with ``json.dumps(..., indent=2)``;
    regenerate it with::

        python -c "import json, notchkit.site as s; print(json.dumps(s.site_schema(), indent=2))" \\
            > docs/site-schema.json

    The schema cannot say everything the loader checks (unique names, known
    cables, lo < hi, exactly one of freq_mhz / band_mhz).
    """
    root = _section_schema("site")
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://notchkit.invalid/site-schema.json",
        "title": "notchkit site file",
        "description": "A radio site: transmitters, receivers and transceivers sharing one place.",
        **root,
        "$defs": {name: _section_schema(name) for name in SECTIONS if name != "site"},
    }

