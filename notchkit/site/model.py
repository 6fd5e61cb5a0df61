"""The site model: immutable value objects that the loader builds from a site file.

Nothing downstream of the loader sees raw YAML dicts. All frequencies are in MHz,
lengths in metres, powers in watts, levels in dB/dBm/dBc as the names say.
Defaults are stated here once; docs/site-format.md repeats them for users and a
test keeps the two in step.
"""

from __future__ import annotations

from dataclasses import dataclass, field

# Defaults (the loader uses these; documented in docs/site-format.md).
DEFAULT_MAX_INSERTION_LOSS_DB = 0.5
DEFAULT_MAX_SWR = 1.5
DEFAULT_REJECTION_MARGIN_DB = 6.0
DEFAULT_TEE_ALLOWANCE_M = 0.030
"""Electrical length (in metres of the stub's cable) added to each stub's path by
its tee and connectors: common practice for a UHF/N tee and a PL-259 or N plug,
roughly 25-40 mm of line; users should measure their own hardware."""
DEFAULT_TRIM_MARGIN_PCT = 3.0
"""Cut the first piece this much long and trim on an analyser (common practice)."""
DEFAULT_CHANNEL_BANDWIDTH_KHZ = 16.0
"""Channel bandwidth when none is given: a 16 kHz FM voice channel (common practice)."""
DEFAULT_NOISE_FIGURE_DB = 8.0
DEFAULT_ANTENNA_HEIGHT_M = 10.0
DEFAULT_MAX_HARMONIC = 5
RECEIVER_CLASSES = ("hf", "base", "mobile", "scanner")
"""Receiver classes: ``hf`` an HF transceiver with switched band-pass filters,
``base`` / ``mobile`` a VHF/UHF FM land-mobile radio, ``scanner`` a scanner or SDR
dongle with no front-end filter; their selectivity defaults and sources are
notchkit.threats.limits.SELECTIVITY_BY_CLASS, and their default intercept points
notchkit.threats.levels.RECEIVER_CLASSES (docs/survey.md)."""
DEFAULT_MAX_IM_ORDER = 5
DEFAULT_RECEIVER_CLASS = "mobile"
"""Class whose intercept points apply when a receiver gives none (its blocking
level stays the flat default unless a class or table is given)."""
DEFAULT_MAX_STUBS = 3
DEFAULT_CUT_TOLERANCE_MM = 2.0
DEFAULT_YIELD_TARGET_PCT = 90.0
"""Share of simulated builds a filter must meet its requirements in (docs/design.md)."""
DEFAULT_MARGIN_GOAL_DB = 15.0
"""Notch margin the solver prefers among designs that reach the yield target, dB (a
design choice: margin for what the build model leaves out, such as tee and connector
parasitics, weather and ageing; a notch measured on the bench is often 10-20 dB
shallower than a model's, common practice, from memory)."""
DEFAULT_TRIM_STEP_MM = 1.0
"""Last trim step near the target: a trimmed stub stays long by up to this (common practice)."""
DEFAULT_TRIM_FREQ_ERROR_PCT = 0.1
"""How closely the analyser reads a resonance, +-percent: one point of a 101-point
sweep over a +-5 % span (common practice)."""
DEFAULT_DRIFT_PCT = 0.0
"""Drift of every electrical length after building, +-percent; 0: not modelled."""
DEFAULT_MIN_STUB_CUT_M = 0.070
"""Shortest stub cable that can be made: a plug body (about 40 mm for a PL-259 or
N plug, from memory) plus 30 mm to finish the end and trim (common practice)."""
DEFAULT_MIN_LINE_M = 0.100
"""Shortest line section: a piece of cable with a plug at each end, two plug
bodies plus 20 mm of cable (common practice); anything shorter is a barrel."""
DEFAULT_BARREL_M = 0.050
"""Electrical length between two tees joined by a barrel adapter (female-female):
the barrel, about 25-40 mm for UHF or N, plus the tees' through halves (from
memory); 0: the solver never uses one."""
DEFAULT_ANALYSER_MHZ = (0.1, 900.0)
"""Range of the analyser stubs are trimmed on: that of the common low-cost hobby
vector network analysers (common practice, from memory)."""
DEFAULT_MAX_STUB_REJECTION_DB = 40.0
"""Notch depth one coax stub plausibly gives at a site, dB (common practice: 30-45 dB,
less with lossy cable or a wide notch band)."""
DEFAULT_CABLE = "RG-213"
DEFAULT_HARDWARE_FAMILY = "uhf"
"""Connection hardware of a site's filters when the file has no ``hardware:`` block: UHF
(PL-259 plugs, SO-239 tees and barrels), the connector of most amateur HF-VHF radios,
amplifiers, tuners and coax switches (common practice); docs/hardware.md."""
IDEAL_HARDWARE = "ideal"
"""``hardware: {family: ideal}``: ideal junctions with the tee allowance (the classic model,
kept for comparison and for checks against textbook line formulas)."""
"""Stub cable when a site file names none: a common 50-ohm solid-PE cable."""

DEFAULT_NEAR_FIELD_ISOLATION_DB = 0.0
"""Isolation taken between two antennas closer than lambda/(2 pi) at the frequency
crossing the path when no coupling was measured there: the passive limit (a
passive antenna pair cannot deliver more power than is fed to it), the
conservative bound; no free-space or separation formula is used inside the
near field. Settable as ``near_field_isolation_db``."""
DEFAULT_OUT_OF_BAND_LOSS_DB = 0.0
"""Mismatch loss credited to an antenna used outside its band, on top of taking
its gain as at most 0 dBi there (common practice: a resonant antenna far from
resonance has neither its in-band gain nor a good match; 0 dB credits none)."""

MIN_FREQ_MHZ = 0.1
"""Lowest frequency a site file may give (the loader refuses anything below)."""
MAX_FREQ_MHZ = 6000.0
"""Highest frequency a site file may give (the loader refuses anything above)."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Band:
    """A frequency range in MHz; a single channel has ``lo_mhz == hi_mhz``."""

    lo_mhz: float
    hi_mhz: float

    @property
    def centre_mhz(self) -> float:
        return 0.5 * (self.lo_mhz + self.hi_mhz)

    @property
    def width_mhz(self) -> float:
        return self.hi_mhz - self.lo_mhz

    def widened(self, bandwidth_khz: float) -> Band:
        """The band widened by half a channel bandwidth at each edge."""
        half = 0.5e-3 * bandwidth_khz
        return Band(lo_mhz=self.lo_mhz - half, hi_mhz=self.hi_mhz + half)

    def overlaps(self, other: Band) -> bool:
        return self.lo_mhz <= other.hi_mhz and other.lo_mhz <= self.hi_mhz


@dataclass(frozen=True, slots=True, kw_only=True)
class Antenna:
    """Where a radio's antenna stands and what gain it has toward the others."""

    x_m: float = 0.0
    y_m: float = 0.0
    height_m: float = DEFAULT_ANTENNA_HEIGHT_M
    gain_dbi: float = 0.0
    band_mhz: Band | None = None
    """The band the antenna is built for; outside it the gain is taken as at most
    0 dBi less ``out_of_band_loss_db``. ``None``: the radio's own bands, +-10 %."""
    gain_table: tuple[tuple[float, float], ...] = ()
    """(freq_mhz, gain_dbi) rows toward the other antennas, interpolated against
    log frequency, held beyond the ends; given: replaces gain_dbi and band_mhz."""
    out_of_band_loss_db: float = DEFAULT_OUT_OF_BAND_LOSS_DB
    """Mismatch loss credited outside ``band_mhz``, dB."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Feedline:
    """The cable from a radio to its antenna."""

    cable: str
    length_m: float


@dataclass(frozen=True, slots=True, kw_only=True)
class Transmit:
    """What a radio transmits."""

    band: Band
    power_w: float
    bandwidth_khz: float = DEFAULT_CHANNEL_BANDWIDTH_KHZ
    harmonic_suppression_dbc: float | None = None
    """Suppression of harmonics and spurious emissions below the carrier, in dB
    (positive). ``None``: use the published amateur spurious-emission limit."""
    noise_dbc_hz: float | None = None
    """Broadband transmitter noise in dBc/Hz (negative) away from the carrier;
    ``None``: the noise mechanism is not evaluated for this transmitter."""
    im_conversion_db: float | None = None
    """Loss of a signal entering the output stage when converted to an
    intermodulation product, in dB; ``None``: the survey's documented default."""
    bands: tuple[Band, ...] = ()
    """Every band or channel the radio works, one at a time (``band`` is the first);
    empty: ``band`` only."""

    @property
    def choices(self) -> tuple[Band, ...]:
        return self.bands or (self.band,)
    im_order_step_db: float | None = None
    """Extra conversion loss per order away from 3rd, in dB; ``None``: survey default."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Receive:
    """What a radio receives."""

    band: Band
    bandwidth_khz: float = DEFAULT_CHANNEL_BANDWIDTH_KHZ
    sensitivity_dbm: float | None = None
    """Level a product must stay below; ``None``: kTB + noise figure + bandwidth."""
    blocking_dbm: float | None = None
    """Off-channel level that desensitises the receiver; ``None``: survey default."""
    noise_figure_db: float = DEFAULT_NOISE_FIGURE_DB
    bands: tuple[Band, ...] = ()
    """Every band or channel the radio receives, one at a time (``band`` is the
    first); empty: ``band`` only."""
    iip2_dbm: float | None = None
    """Input 2nd-order intercept point, dBm; ``None``: from ``receiver_class``."""
    iip3_dbm: float | None = None
    """Input 3rd-order intercept point, dBm; ``None``: from ``receiver_class``."""
    receiver_class: str | None = None
    """Receiver class (:data:`RECEIVER_CLASSES`): its documented selectivity table and
    intercept points apply; ``None``: the flat blocking level and the intercept points
    of :data:`DEFAULT_RECEIVER_CLASS`."""
    selectivity: tuple[tuple[float, float], ...] = ()
    """(offset_mhz, blocking_dbm) rows: the off-channel level that starts to
    desensitise the receiver at that offset from its band edge; empty: the class's
    table, else the flat blocking level."""
    band_noise_dbm: float | None = None
    """Band (atmospheric, man-made) noise at the receiver input in its channel
    bandwidth, dBm; the floor for noise threats when above kTB + NF."""

    @property
    def choices(self) -> tuple[Band, ...]:
        return self.bands or (self.band,)


INSTALLED_PORTS = ("tx", "rx", "antenna")
"""Where an installed filter sits: the transmit path, the receive path, or the
antenna port shared by both."""
INSTALLED_KINDS = ("band-pass", "low-pass", "high-pass", "notch", "duplexer", "cavity", "preselector")


@dataclass(frozen=True, slots=True, kw_only=True)
class InstalledFilter:
    """A filter already in line at a radio (band-pass, duplexer, cavity, ...).

    Its rejection is a table of (freq_mhz, rejection_db) interpolated in dB against
    log frequency, or a measured two-port Touchstone file (-20 log10 |S21|).
    Outside the table or the measured range no rejection is credited.
    """

    name: str
    port: str = "antenna"
    kind: str = "band-pass"
    rejection: tuple[tuple[float, float], ...] = ()
    touchstone: str | None = None
    """Path of a measured .s2p (relative paths: from the site file's folder)."""
    for_band: Band | None = None
    """In line only while the radio works a band overlapping this one; ``None``: always."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Scenario:
    """Radios that can be active at the same time."""

    name: str
    radios: tuple[str, ...]


@dataclass(frozen=True, slots=True, kw_only=True)
class Radio:
    """One radio. A radio that transmits and receives has both ``tx`` and ``rx``."""

    name: str
    tx: Transmit | None = None
    rx: Receive | None = None
    antenna: Antenna = field(default_factory=Antenna)
    feedline: Feedline | None = None
    stub_cable: str | None = None
    """Cable for this radio's stubs; ``None``: the site's default ``cable``."""
    installed: tuple[InstalledFilter, ...] = ()
    """Filters already in line at this radio."""
    load: RadioLoad | None = None
    """The antenna's impedance as its filter sees it (notchkit.loads); ``None``: not given."""

    @property
    def n_choices(self) -> int:
        """How many operating choices (bands or channels worked one at a time)."""
        return max(len(p.choices) for p in (self.tx, self.rx) if p is not None)


@dataclass(frozen=True, slots=True, kw_only=True)
class RadioLoad:
    """A radio's antenna load: a measured file (``.s1p`` or R+jX table) and/or an SWR bound."""

    file: str | None = None
    """Path of the file (relative paths are taken from the site file's folder)."""
    swr: float | None = None
    """SWR bound of the antenna out of its band; ``None``: notchkit.hardware.DEFAULT_OUT_OF_BAND_SWR."""
    radio_ohm: float | None = None
    """The radio's own port resistance; ``None``: the system impedance."""


@dataclass(frozen=True, slots=True, kw_only=True)
class HardwareSettings:
    """The connection hardware of the site's filters (notchkit.hardware; docs/hardware.md).

    A site without ``hardware:`` gets these defaults: UHF tees and plugs
    (:data:`DEFAULT_HARDWARE_FAMILY`). ``family: ideal`` (:data:`IDEAL_HARDWARE`) keeps the
    classic model for comparison: ideal junctions with the tee allowance.
    """

    family: str = DEFAULT_HARDWARE_FAMILY
    """``uhf``, ``n``, ``bnc`` (notchkit.hardware.FAMILIES) or ``ideal``."""
    z_pair_ohm: float | None = None
    plug_mm: float | None = None
    tee_through_mm: float | None = None
    tee_side_mm: float | None = None
    short_nh: float | None = None
    barrels_per_port: int = 0
    connector_peak_v: float | None = None
    """Working voltage of the connectors, V peak; ``None``: the family's (notchkit.power)."""
    line_model: str = "classic"
    """``classic`` (lossless-VF line with the cable's loss) or ``rlgc`` (notchkit.rlgc)."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Coupling:
    """Measured antenna-to-antenna coupling between two radios' antennas.

    ``isolation_db`` is positive: the loss from one antenna port to the other.
    """

    a: str
    b: str
    isolation_db: float
    freq_mhz: float | None = None
    """Frequency the isolation was measured at, in MHz; ``None``: not stated."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Limits:
    """What every designed filter must achieve."""

    max_insertion_loss_db: float = DEFAULT_MAX_INSERTION_LOSS_DB
    max_swr: float = DEFAULT_MAX_SWR
    rejection_margin_db: float = DEFAULT_REJECTION_MARGIN_DB
    max_stubs: int = DEFAULT_MAX_STUBS
    max_total_cable_m: float | None = None
    yield_target_pct: float = DEFAULT_YIELD_TARGET_PCT
    """A filter meets only when this share of simulated builds meets (docs/design.md)."""
    margin_goal_db: float = DEFAULT_MARGIN_GOAL_DB
    """Notch margin preferred among designs at the yield target (before less cable)."""
    max_stub_rejection_db: float = DEFAULT_MAX_STUB_REJECTION_DB


@dataclass(frozen=True, slots=True, kw_only=True)
class Allowances:
    """Hardware allowances that turn electrical lengths into cut lengths."""

    tee_allowance_m: float = DEFAULT_TEE_ALLOWANCE_M
    trim_margin_pct: float = DEFAULT_TRIM_MARGIN_PCT
    cut_tolerance_mm: float = DEFAULT_CUT_TOLERANCE_MM
    vf_spread: float | None = None
    """Velocity-factor spread for tolerance runs; ``None``: the cable's published
    tolerance, else 0.01."""
    trim_step_mm: float = DEFAULT_TRIM_STEP_MM
    trim_freq_error_pct: float = DEFAULT_TRIM_FREQ_ERROR_PCT
    drift_pct: float = DEFAULT_DRIFT_PCT
    min_stub_cut_m: float = DEFAULT_MIN_STUB_CUT_M
    min_line_m: float = DEFAULT_MIN_LINE_M
    barrel_m: float = DEFAULT_BARREL_M
    analyser_lo_mhz: float = DEFAULT_ANALYSER_MHZ[0]
    analyser_hi_mhz: float = DEFAULT_ANALYSER_MHZ[1]


@dataclass(frozen=True, slots=True, kw_only=True)
class CableDef:
    """A cable type defined in the site file (the cable library builds a Cable from it)."""

    name: str
    z0_ohm: float
    velocity_factor: float
    loss_table: tuple[tuple[float, float], ...] = ()
    """(freq_mhz, loss_db_per_100m) pairs; empty: lossless with a warning."""
    max_voltage_v: float | None = None
    outer_diameter_mm: float | None = None
    dielectric: str = ""


@dataclass(frozen=True, slots=True, kw_only=True)
class Site:
    """A whole site file."""

    name: str
    cable: str
    radios: tuple[Radio, ...]
    couplings: tuple[Coupling, ...] = ()
    limits: Limits = field(default_factory=Limits)
    allowances: Allowances = field(default_factory=Allowances)
    cables: tuple[CableDef, ...] = ()
    max_harmonic: int = DEFAULT_MAX_HARMONIC
    max_im_order: int = DEFAULT_MAX_IM_ORDER
    path: str = ""
    scenarios: tuple[Scenario, ...] = ()
    """Which radios can be active at once; empty: all of them at once."""
    near_field_isolation_db: float = DEFAULT_NEAR_FIELD_ISOLATION_DB
    hardware: HardwareSettings | None = field(default_factory=lambda: HardwareSettings())
    """Default: UHF hardware (``HardwareSettings()``); ``family: ideal`` or ``None``: ideal tees with
    the tee allowance (the classic model)."""
    depth_ceiling_db: float | None = None
    """Cap on claimed notch depth, dB; ``None``: notchkit.hardware.DEFAULT_DEPTH_CEILING_DB."""

    @classmethod
    def from_yaml(cls, path: str) -> Site:
        """Read a site file; the same as :func:`notchkit.site.load_site`."""
        from notchkit.site.loader import load_site

        return load_site(path)

    @property
    def transmitters(self) -> tuple[Radio, ...]:
        return tuple(r for r in self.radios if r.tx is not None)

    @property
    def receivers(self) -> tuple[Radio, ...]:
        return tuple(r for r in self.radios if r.rx is not None)

    def radio(self, name: str) -> Radio:
        for r in self.radios:
            if r.name == name:
                return r
        raise KeyError(name)

    def coupling(self, a: str, b: str) -> float | None:
        """Measured isolation between two radios' antennas, in dB, or ``None``."""
        for c in self.couplings:
            if {c.a, c.b} == {a, b}:
                return c.isolation_db
        return None

    def couplings_between(self, a: str, b: str) -> tuple[Coupling, ...]:
        """Every measured coupling between two radios' antennas, in file order."""
        return tuple(c for c in self.couplings if {c.a, c.b} == {a, b})
