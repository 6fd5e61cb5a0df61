"""The declaration of every key a site file accepts: :data:`SECTIONS`.

Each key is one field object of :mod:`notchkit.site.fields` (its kind, range,
meaning and documented default). The reader walks a file against this
declaration, :func:`notchkit.site.schema.site_schema` turns it into the JSON
Schema and docs/site-format.md documents it (tests keep the three equal).
"""

from __future__ import annotations

import dataclasses
from typing import Any

from notchkit.site import model as m
from notchkit.site.fields import (
    FREQ,
    TABLE_FREQ,
    BandField,
    BandsField,
    CableField,
    ChoiceField,
    Field,
    FreqsField,
    ListField,
    NameField,
    NamesField,
    Num,
    NumberField,
    PairField,
    SectionField,
    TableField,
    TextField,
)

_FREQ = FREQ
_TABLE_FREQ = TABLE_FREQ
_POWER = Num(lo=0.0, hi=100_000.0, unit="W", lo_open=True)
_BW = Num(lo=0.0, hi=50_000.0, unit="kHz", lo_open=True)
_XY = Num(lo=-10_000.0, hi=10_000.0, unit="m", length_unit_m=1.0)
_HEIGHT = Num(lo=0.0, hi=1_000.0, unit="m", length_unit_m=1.0)
_FEED_LEN = Num(lo=0.0, hi=2_000.0, unit="m", lo_open=True, length_unit_m=1.0)


def _d(cls: type, name: str) -> Any:
    """The default of a model field, for the documentation and schema."""
    for f in dataclasses.fields(cls):
        if f.name == name:
            return None if f.default is dataclasses.MISSING else f.default
    raise KeyError(name)


_FREQ_FIELDS = {
    "freq_mhz": FreqsField(
        num=_FREQ,
        doc="Channel frequency in MHz, or a list of channels worked one at a time.",
    ),
    "band_mhz": BandsField(
        num=_FREQ,
        doc="[lo, hi] in MHz for a radio that tunes across a band (instead of freq_mhz), "
        "or a list of such bands worked one at a time.",
    ),
}
_OFFSET = Num(lo=0.0001, hi=10_000.0, unit="MHz")
_REJ_DB = Num(lo=0.0, hi=200.0, unit="dB")

_TX_FIELDS = {
    "power_w": NumberField(num=_POWER, required=True, doc="Carrier power in watts."),
    "bandwidth_khz": NumberField(
        num=_BW,
        default=_d(m.Transmit, "bandwidth_khz"),
        doc="Occupied channel bandwidth in kHz.",
    ),
    "harmonic_suppression_dbc": NumberField(
        num=Num(lo=0.0, hi=150.0, unit="dB", lo_open=True),
        default=None,
        doc="Harmonic and spurious suppression below the carrier in dB (positive); "
        "default: the published amateur spurious-emission limit.",
    ),
    "noise_dbc_hz": NumberField(
        num=Num(lo=-200.0, hi=-50.0, unit="dBc/Hz"),
        default=None,
        doc="Broadband transmitter noise away from the carrier in dBc/Hz (negative); "
        "default: not evaluated.",
    ),
    "im_conversion_db": NumberField(
        num=Num(lo=0.0, hi=60.0, unit="dB"),
        default=None,
        doc="Conversion loss of the output stage for intermodulation in dB; "
        "default: the survey's documented value.",
    ),
    "im_order_step_db": NumberField(
        num=Num(lo=0.0, hi=30.0, unit="dB"),
        default=None,
        doc="Extra conversion loss per order away from 3rd in dB; default: the survey's value.",
    ),
}
_RX_FIELDS = {
    "bandwidth_khz": NumberField(
        num=_BW,
        default=_d(m.Receive, "bandwidth_khz"),
        doc="Receiver channel bandwidth in kHz.",
    ),
    "sensitivity_dbm": NumberField(
        num=Num(lo=-170.0, hi=0.0, unit="dBm"),
        default=None,
        doc="Level an interfering product must stay below, in dBm; "
        "default: kTB + noise figure over the bandwidth.",
    ),
    "blocking_dbm": NumberField(
        num=Num(lo=-120.0, hi=30.0, unit="dBm"),
        default=None,
        doc="Off-channel level that desensitises the receiver, in dBm; default: the survey's value.",
    ),
    "noise_figure_db": NumberField(
        num=Num(lo=0.0, hi=30.0, unit="dB"),
        default=_d(m.Receive, "noise_figure_db"),
        doc="Receiver noise figure in dB.",
    ),
    "iip2_dbm": NumberField(
        num=Num(lo=-60.0, hi=120.0, unit="dBm"),
        default=None,
        doc="Input 2nd-order intercept point in dBm; default: from receiver_class.",
    ),
    "iip3_dbm": NumberField(
        num=Num(lo=-60.0, hi=80.0, unit="dBm"),
        default=None,
        doc="Input 3rd-order intercept point in dBm; default: from receiver_class.",
    ),
    "receiver_class": ChoiceField(
        choices=m.RECEIVER_CLASSES,
        default=None,
        doc="Receiver class: hf (HF transceiver with band filters), base or mobile (VHF/UHF FM), "
        "scanner (no front-end filter); gives documented blocking by offset and intercept points; "
        f"default: none (the flat blocking level; intercept points of {m.DEFAULT_RECEIVER_CLASS}).",
    ),
    "selectivity": TableField(
        cols=(("offset_mhz", _OFFSET), ("blocking_dbm", Num(lo=-150.0, hi=40.0, unit="dBm"))),
        default=(),
        doc="Blocking level by offset from the band edge as [offset_mhz, blocking_dbm] rows, "
        "rising offset; default: the class's table, else the flat blocking level.",
    ),
    "band_noise_dbm": NumberField(
        num=Num(lo=-200.0, hi=0.0, unit="dBm"),
        default=None,
        doc="Band noise at the receiver input in its bandwidth, in dBm; the floor for noise "
        "threats when above kTB + NF; default: none.",
    ),
}
_RADIO_COMMON = {
    "antenna": SectionField(section="antenna", doc="Where the radio's antenna is."),
    "feedline": SectionField(section="feedline", doc="Cable from the radio to its antenna."
    ),
    "stub_cable": CableField(
        default=None,
        doc="Cable for this radio's stubs; default: the site's cable.",
    ),
    "installed": ListField(
        section="installed",
        doc="Filters already in line at this radio (band-pass, duplexer, cavity, ...).",
    ),
    "load": SectionField(section="load", doc="The antenna's impedance (docs/hardware.md)."),
}
_NAME = NameField(
    required=True,
    doc="Unique name of the radio across transmitters, receivers and transceivers.",
)

SECTIONS: dict[str, dict[str, Field]] = {
    "site": {
        "site": TextField(required=True, doc="Name of the site."),
        "cable": CableField(
            default=m.DEFAULT_CABLE,
            doc="Default cable for stubs and feedlines (library name or one under cables:).",
        ),
        "transmitters": ListField(section="transmitter", doc="Radios that transmit only."),
        "receivers": ListField(section="receiver", doc="Radios that receive only."),
        "transceivers": ListField(
            section="transceiver",
            doc="Radios that transmit and receive (tx and rx may differ, as on a repeater).",
        ),
        "couplings": ListField(
            section="coupling",
            doc="Measured antenna-to-antenna isolation between named radios.",
        ),
        "limits": SectionField(section="limits", doc="What every filter must achieve."),
        "allowances": SectionField(section="allowances", doc="Hardware allowances for cutting."
        ),
        "cables": ListField(section="cable", doc="Cable types defined in this file."),
        "max_harmonic": NumberField(
            num=Num(lo=2, hi=20, integer=True),
            default=m.DEFAULT_MAX_HARMONIC,
            doc="Highest harmonic order the survey considers.",
        ),
        "max_im_order": NumberField(
            num=Num(lo=2, hi=9, integer=True),
            default=m.DEFAULT_MAX_IM_ORDER,
            doc="Highest intermodulation order the survey enumerates (2 to 9).",
        ),
        "scenarios": ListField(
            section="scenario",
            doc="Which radios can be active at the same time; default: all at once.",
        ),
        "near_field_isolation_db": NumberField(
            num=Num(lo=0.0, hi=100.0, unit="dB"),
            default=m.DEFAULT_NEAR_FIELD_ISOLATION_DB,
            doc="Isolation taken between antennas closer than lambda/(2 pi) where no coupling "
            "was measured, in dB (no formula is used there).",
        ),
        "hardware": SectionField(section="hardware",
                          doc="Connectors, tees and the short of the filters (docs/hardware.md); "
                          "default (no block): UHF tees and plugs, the classic line."),
        "depth_ceiling_db": NumberField(num=Num(lo=20.0, hi=150.0, unit="dB"), default=None,
            doc="Deepest notch the design may claim, dB (leakage, analyser range; docs/hardware.md); "
            "the survey asks no deeper notch of stubs (more is not a stub job); default: 60 dB.",
        ),
    },
    "transmitter": {"name": _NAME, **_FREQ_FIELDS, **_TX_FIELDS, **_RADIO_COMMON},
    "receiver": {"name": _NAME, **_FREQ_FIELDS, **_RX_FIELDS, **_RADIO_COMMON},
    "transceiver": {
        "name": _NAME,
        "freq_mhz": FreqsField(
            num=_FREQ,
            doc="Frequency in MHz (or a list of channels) shared by tx and rx unless they give one.",
        ),
        "band_mhz": BandsField(
            num=_FREQ,
            doc="[lo, hi] in MHz (or a list of bands) shared by tx and rx unless they give one.",
        ),
        "bandwidth_khz": NumberField(
            num=_BW,
            default=m.DEFAULT_CHANNEL_BANDWIDTH_KHZ,
            doc="Channel bandwidth in kHz shared by tx and rx unless they give one.",
        ),
        "tx": SectionField(section="tx", required=True, doc="The transmit part."),
        "rx": SectionField(
            section="rx",
            doc="The receive part; default: receives on the shared frequency.",
        ),
        **_RADIO_COMMON,
    },
    "tx": {**_FREQ_FIELDS, **_TX_FIELDS},
    "rx": {**_FREQ_FIELDS, **_RX_FIELDS},
    "antenna": {
        "x_m": NumberField(num=_XY, default=_d(m.Antenna, "x_m"), doc="East, in metres."),
        "y_m": NumberField(num=_XY, default=_d(m.Antenna, "y_m"), doc="North, in metres."),
        "height_m": NumberField(
            num=_HEIGHT,
            default=m.DEFAULT_ANTENNA_HEIGHT_M,
            doc="Height of the antenna's centre above ground, in metres.",
        ),
        "gain_dbi": NumberField(
            num=Num(lo=-30.0, hi=40.0, unit="dBi"),
            default=_d(m.Antenna, "gain_dbi"),
            doc="Gain toward the other antennas, in dBi, inside the antenna's band.",
        ),
        "band_mhz": BandField(
            num=_FREQ,
            default=None,
            doc="[lo, hi] in MHz the antenna is built for; outside it the gain is at most 0 dBi; "
            "default: the radio's bands widened by 10 %.",
        ),
        "gain_table": TableField(
            cols=(("freq_mhz", _TABLE_FREQ), ("gain_dbi", Num(lo=-60.0, hi=40.0, unit="dBi"))),
            default=(),
            doc="Gain toward the other antennas as [freq_mhz, gain_dbi] rows, rising frequency "
            "(replaces gain_dbi and band_mhz); default: none.",
        ),
        "out_of_band_loss_db": NumberField(
            num=Num(lo=0.0, hi=60.0, unit="dB"),
            default=m.DEFAULT_OUT_OF_BAND_LOSS_DB,
            doc="Mismatch loss credited outside the antenna's band, in dB.",
        ),
    },
    "installed": {
        "name": TextField(required=True, doc="What the filter is."),
        "port": ChoiceField(
            choices=m.INSTALLED_PORTS,
            default=_d(m.InstalledFilter, "port"),
            doc="Where it sits: tx (transmit path), rx (receive path) or antenna (shared port).",
        ),
        "kind": ChoiceField(
            choices=m.INSTALLED_KINDS,
            default=_d(m.InstalledFilter, "kind"),
            doc="What sort of filter it is (for the plan's list).",
        ),
        "rejection": TableField(
            cols=(("freq_mhz", _TABLE_FREQ), ("rejection_db", _REJ_DB)),
            default=(),
            doc="Rejection as [freq_mhz, rejection_db] rows, rising frequency, interpolated in dB "
            "against log frequency; none credited outside (give this or touchstone).",
        ),
        "touchstone": TextField(
            default=None,
            doc="A measured two-port .s2p file (path from the site file's folder); rejection "
            "-20 log10 |S21| (give this or rejection).",
        ),
        "for_band_mhz": BandField(
            num=_FREQ,
            default=None,
            doc="[lo, hi] in MHz: in line only while the radio works a band overlapping this; "
            "default: always in line.",
        ),
    },
    "scenario": {
        "name": TextField(required=True, doc="Name of the scenario, unique in the file."),
        "radios": NamesField(required=True, doc="The radios that can be active together in it."
        ),
    },
    "feedline": {
        "cable": CableField(default="the site's cable", doc="Feedline cable type."),
        "length_m": NumberField(num=_FEED_LEN, required=True, doc="Feedline length in metres."
        ),
    },
    "coupling": {
        "between": PairField(required=True, doc="The two radios' names."),
        "isolation_db": NumberField(
            num=Num(lo=0.0, hi=200.0, unit="dB", lo_open=True),
            required=True,
            doc="Measured loss from one antenna port to the other, in dB (positive).",
        ),
        "freq_mhz": NumberField(
            num=_FREQ,
            default=None,
            doc="Frequency of the measurement in MHz; a pair measured at several frequencies "
            "gives one entry each, interpolated in dB against log frequency.",
        ),
    },
    "limits": {
        "max_insertion_loss_db": NumberField(
            num=Num(lo=0.0, hi=10.0, unit="dB", lo_open=True),
            default=m.DEFAULT_MAX_INSERTION_LOSS_DB,
            doc="Largest pass-band insertion loss of a filter, in dB.",
        ),
        "max_swr": NumberField(
            num=Num(lo=1.0, hi=10.0, lo_open=True),
            default=m.DEFAULT_MAX_SWR,
            doc="Largest pass-band SWR of a filter.",
        ),
        "rejection_margin_db": NumberField(
            num=Num(lo=0.0, hi=40.0, unit="dB"),
            default=m.DEFAULT_REJECTION_MARGIN_DB,
            doc="Extra rejection beyond what a threat needs, in dB.",
        ),
        "max_stubs": NumberField(
            num=Num(lo=1, hi=8, integer=True),
            default=m.DEFAULT_MAX_STUBS,
            doc="Most stubs in one filter.",
        ),
        "max_total_cable_m": NumberField(
            # lo: the solver's shortest cut (notchkit.solver.MIN_CUT_M, checked by a test)
            num=Num(lo=m.DEFAULT_MIN_STUB_CUT_M, hi=1_000.0, unit="m", lo_open=True, length_unit_m=1.0),
            default=None,
            doc=f"Most cable in one filter, in metres (more than the {m.DEFAULT_MIN_STUB_CUT_M:g} m "
            "shortest stub cut); "
            "default: no limit.",
        ),
        "max_stub_rejection_db": NumberField(
            num=Num(lo=1.0, hi=200.0, unit="dB"),
            default=m.DEFAULT_MAX_STUB_REJECTION_DB,
            doc="Notch depth one stub plausibly gives, in dB.",
        ),
        "yield_target_pct": NumberField(
            num=Num(lo=0.0, hi=100.0, unit="%"),
            default=m.DEFAULT_YIELD_TARGET_PCT,
            doc="Share of simulated builds (the build model of docs/design.md) a filter must meet "
            "its requirements in, in percent.",
        ),
        "margin_goal_db": NumberField(
            num=Num(lo=0.0, hi=60.0, unit="dB"),
            default=m.DEFAULT_MARGIN_GOAL_DB,
            doc="Notch margin the solver prefers (before less cable) among designs at the yield "
            "target, in dB.",
        ),
    },
    "allowances": {
        "tee_allowance_m": NumberField(
            num=Num(lo=0.0, hi=0.5, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_TEE_ALLOWANCE_M,
            doc="Electrical length of a tee and its connectors, in metres of stub cable.",
        ),
        "trim_margin_pct": NumberField(
            num=Num(lo=0.0, hi=25.0, unit="%"),
            default=m.DEFAULT_TRIM_MARGIN_PCT,
            doc="Cut the first piece this much long, in percent, then trim.",
        ),
        "cut_tolerance_mm": NumberField(
            num=Num(lo=0.0, hi=50.0, unit="mm", lo_open=True, length_unit_m=0.001),
            default=m.DEFAULT_CUT_TOLERANCE_MM,
            doc="How close to a mark you cut, in millimetres.",
        ),
        "vf_spread": NumberField(
            num=Num(lo=0.0, hi=0.2),
            default=None,
            doc="Velocity-factor spread for tolerance runs; default: the cable's published "
            "tolerance, else 0.01.",
        ),
        "trim_step_mm": NumberField(
            num=Num(lo=0.0, hi=50.0, unit="mm", length_unit_m=0.001),
            default=m.DEFAULT_TRIM_STEP_MM,
            doc="Last trim step near a stub's target resonance, in millimetres.",
        ),
        "trim_freq_error_pct": NumberField(
            num=Num(lo=0.0, hi=10.0, unit="%"),
            default=m.DEFAULT_TRIM_FREQ_ERROR_PCT,
            doc="How closely the analyser reads a stub's resonance, in percent (+-).",
        ),
        "drift_pct": NumberField(
            num=Num(lo=0.0, hi=10.0, unit="%"),
            default=m.DEFAULT_DRIFT_PCT,
            doc="Drift of every electrical length after building (temperature, age), in percent (+-).",
        ),
        "min_stub_cut_m": NumberField(
            num=Num(lo=0.0, hi=2.0, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_MIN_STUB_CUT_M,
            doc="Shortest stub cable that can be made (plug body plus cable to finish and trim), in metres.",
        ),
        "min_line_m": NumberField(
            num=Num(lo=0.0, hi=2.0, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_MIN_LINE_M,
            doc="Shortest line section of cable between two tees (a plug at each end), in metres.",
        ),
        "barrel_m": NumberField(
            num=Num(lo=0.0, hi=0.5, unit="m", length_unit_m=1.0),
            default=m.DEFAULT_BARREL_M,
            doc="Electrical length between two tees joined by a barrel adapter, in metres; 0: never "
            "use one.",
        ),
        "analyser_lo_mhz": NumberField(
            num=_FREQ,
            default=m.DEFAULT_ANALYSER_MHZ[0],
            doc="Lowest frequency of the analyser stubs are trimmed on, in MHz.",
        ),
        "analyser_hi_mhz": NumberField(
            num=_FREQ,
            default=m.DEFAULT_ANALYSER_MHZ[1],
            doc="Highest frequency of the analyser stubs are trimmed on, in MHz.",
        ),
    },
    "hardware": {
        "family": TextField(default=m.DEFAULT_HARDWARE_FAMILY,
                            doc="Connector family: uhf, n or bnc; ideal: ideal junctions with the "
                            "tee allowance (the classic model, for comparison)."),
        "z_pair_ohm": NumberField(num=Num(lo=10.0, hi=150.0, unit="ohm"), default=None,
                            doc="Impedance of a mated connector pair and the tee body; "
                            "default: the family's."),
        "plug_mm": NumberField(num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                         doc="Plug length from its mating face; default: the family's."),
        "tee_through_mm": NumberField(num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                                doc="Tee through arm, port face to junction; default: the family's."),
        "tee_side_mm": NumberField(num=Num(lo=0.0, hi=100.0, unit="mm"), default=None,
                             doc="Tee side arm, port face to junction; default: the family's."),
        "short_nh": NumberField(num=Num(lo=0.0, hi=100.0, unit="nH"), default=None,
                          doc="Inductance of a stub's short, nH; default: 3 nH."),
        "barrels_per_port": NumberField(num=Num(lo=0, hi=4, integer=True), default=0,
                                  doc="Barrels at each filter port."),
        "connector_peak_v": NumberField(num=Num(lo=10.0, hi=100_000.0, unit="V"), default=None,
                                  doc="Working voltage of the connectors, tees and barrels, V peak (the "
                                  "power check); default: the family's (uhf 500, n 1000, bnc 500)."),
        "line_model": TextField(default="classic",
                            doc="classic (lossless-VF line) or rlgc (internal inductance, complex Z0)."),
    },
    "load": {
        "file": TextField(default=None,
                      doc="Measured .s1p or R+jX table (freq_mhz r_ohm x_ohm), relative to the site file; "
                      "read with the site (a bad file is a problem of the site)."),
        "swr": NumberField(num=Num(lo=1.0, hi=100.0), default=None,
                     doc="SWR bound of the antenna out of its band (where no file covers it); "
                     "default: 6 (docs/hardware.md)."),
        "radio_ohm": NumberField(num=Num(lo=1.0, hi=1000.0, unit="ohm"), default=None,
                           doc="The radio's port resistance; default: 50 ohm."),
    },
    "cable": {
        "name": TextField(required=True, doc="Cable type name, unique in the file."),
        "z0_ohm": NumberField(
            num=Num(lo=10.0, hi=600.0, unit="ohm"),
            required=True,
            doc="Characteristic impedance in ohms.",
        ),
        "velocity_factor": NumberField(
            num=Num(lo=0.0, hi=1.0, lo_open=True),
            required=True,
            doc="Velocity factor (0 to 1).",
        ),
        "loss_table": TableField(
            default=(),
            doc="Matched loss as [freq_mhz, loss_db_per_100m] pairs, rising frequency; "
            "default: none (lossless, with a warning).",
        ),
        "max_voltage_v": NumberField(
            num=Num(lo=0.0, hi=1e6, unit="V", lo_open=True),
            default=None,
            doc="Largest RMS voltage the cable is rated for, in volts.",
        ),
        "outer_diameter_mm": NumberField(
            num=Num(lo=0.0, hi=200.0, unit="mm", lo_open=True, length_unit_m=0.001),
            default=None,
            doc="Outer diameter in millimetres.",
        ),
        "dielectric": TextField(default="", doc="Dielectric, e.g. solid PE or foam PE."),
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
