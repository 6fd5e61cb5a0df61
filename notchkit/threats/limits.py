"""Default figures the survey uses when a radio does not give its own.

Each default names where it comes from; the survey marks every threat that
rests on one.
"""

from __future__ import annotations

import math

K_BOLTZMANN_J_PER_K = 1.380649e-23
"""Boltzmann constant, J/K (exact in the 2019 SI)."""
T0_K = 290.0
"""Standard noise temperature, K (IEEE / ITU-R reference)."""
KTB_DBM_PER_HZ = 10.0 * math.log10(K_BOLTZMANN_J_PER_K * T0_K * 1000.0)
"""Thermal noise power density kT at 290 K in dBm/Hz: -173.98 (often quoted as -174)."""

DEFAULT_BLOCKING_DBM = -30.0
"""Off-channel carrier level at a receiver input taken to start desensitising it,
when ``Receive.blocking_dbm`` is not given. From memory: land-mobile receiver
blocking requirements of about 84 dBuV e.m.f. (ETSI EN 300 086), i.e. about -29 dBm
available power into 50 ohm, rounded to -30 dBm. A rough figure: give the
radio's own blocking figure where known."""

DEFAULT_IM_CONVERSION_DB = 10.0
"""Loss from a signal entering a transmitter's output stage to the 3rd-order
product it radiates ("turnaround loss"), when ``Transmit.im_conversion_db`` is
not given. Common practice quotes 5-20 dB for solid-state output stages; 10 dB
is the conservative side."""

IM_EXTRA_PER_ORDER_DB = 10.0
"""Extra conversion loss for each order above 3 per two orders (5th order =
3rd + 10 dB). Common practice, rough."""

SPURIOUS_RULES = (
    "47 CFR 97.307(d): below 30 MHz, transmitters installed after 2003-01-01: 43 dB",
    "47 CFR 97.307(e): 30-225 MHz: 60 dB; at 25 W or less: spurious <= 25 uW and >= 40 dB "
    "below the fundamental, need not be below 10 uW",
    "ITU-R SM.329 Category A, amateur services at 30 MHz and above (from memory): "
    "43 + 10 log10 P(W) or 70 dBc, whichever is less stringent",
)


def spurious_suppression_dbc(freq_mhz: float, power_w: float) -> tuple[float, str]:
    """Published spurious-emission limit for an amateur transmitter, as suppression in dB.

    Parameters
    ----------
    freq_mhz : float
        The transmitter's fundamental frequency, MHz.
    power_w : float
        Mean transmitter power, W (> 0).

    Returns
    -------
    suppression_db : float
        How far (dB, >= 0) the limit puts a spurious emission below the carrier.
    source : str
        The rule it comes from.

    Notes
    -----
    Below 30 MHz: 43 dB (47 CFR 97.307(d), transmitters installed after
    1 January 2003). 30-225 MHz: 60 dB; for 25 W or less the spurious power
    must not exceed 25 uW and be at least 40 dB down, but need not be below
    10 uW (47 CFR 97.307(e)), so the allowed level is
    max(min(25 uW, P/10^4), 10 uW). At 225 MHz and above Part 97 gives no
    figure; ITU-R SM.329 Category A for amateur services is used: the less
    stringent of 43 + 10 log10 P and 70 dBc (from memory).

    References
    ----------
    47 CFR 97.307(d), (e) (US amateur service emission standards);
    Recommendation ITU-R SM.329, Table of Category A limits.
    """
    if freq_mhz < 30.0:
        return 43.0, "default: 47 CFR 97.307(d), 43 dB below 30 MHz"
    if freq_mhz < 225.0:
        if power_w > 25.0:
            return 60.0, "default: 47 CFR 97.307(e), 60 dB for 30-225 MHz above 25 W"
        allowed_w = max(min(25e-6, power_w * 1e-4), 10e-6)
        supp = max(0.0, 10.0 * math.log10(power_w / allowed_w))
        return supp, "default: 47 CFR 97.307(e), 25 W or less: 25 uW / 40 dB / 10 uW"
    supp = min(43.0 + 10.0 * math.log10(power_w), 70.0)
    return max(0.0, supp), (
        "default: ITU-R SM.329 Cat. A amateur >= 30 MHz, min(43 + 10log P, 70 dBc) (from memory)"
    )


def noise_floor_dbm(noise_figure_db: float, bandwidth_khz: float) -> float:
    """Receiver noise floor kTB + NF + 10 log10(B) in dBm (B in Hz, T = 290 K)."""
    return KTB_DBM_PER_HZ + noise_figure_db + 10.0 * math.log10(bandwidth_khz * 1e3)


def im_conversion_db(given_db: float | None, order: int) -> tuple[float, str]:
    """Conversion loss for an intermodulation product of ``order`` (3 or 5)."""
    extra = IM_EXTRA_PER_ORDER_DB * (order - 3) / 2.0
    if given_db is not None:
        return given_db + extra, f"radio's im_conversion_db {given_db:g} dB" + (
            f" + {extra:g} dB for order {order} (common practice)" if extra else ""
        )
    return DEFAULT_IM_CONVERSION_DB + extra, (
        f"default turnaround loss {DEFAULT_IM_CONVERSION_DB:g} dB"
        + (f" + {extra:g} dB for order {order}" if extra else "")
        + " (common practice)"
    )


# ---------------------------------------------------------------------------
# Receiver selectivity by offset, receiver classes, band noise
# ---------------------------------------------------------------------------

_HF_TABLE = ((0.002, -30.0), (0.02, -10.0), (0.5, 0.0), (5.0, 10.0))
_HF_SOURCE = (
    "-30 dBm at 2 kHz, -10 dBm at 20 kHz, 0 dBm at 500 kHz, +10 dBm at 5 MHz and beyond; from "
    "memory: published lab blocking dynamic ranges of about 100 dB at 2 kHz and 120-125 dB at "
    "20 kHz spacing above an MDS near -130 dBm; beyond the band the band filter adds rejection, "
    "capped at +10 dBm for the front end's safety (common practice)"
)
_FM_TABLE = ((0.01, -47.0), (1.0, -29.0), (10.0, -29.0), (100.0, -10.0))
_FM_SOURCE = (
    "-47 dBm at 10 kHz from the channel edge (adjacent-channel selectivity 70 dB above a "
    "-117 dBm reference sensitivity), -29 dBm from 1 to 10 MHz (blocking 84 dBuV e.m.f. = "
    "78 dBuV across 50 ohm = -29 dBm), from memory: ETSI EN 300 086 limits; -10 dBm at "
    "100 MHz and beyond (front-end helical filters; from memory)"
)
SELECTIVITY_BY_CLASS: dict[str, tuple[tuple[tuple[float, float], ...], str]] = {
    "hf": (_HF_TABLE, "class hf (HF transceiver with switched band-pass filters): " + _HF_SOURCE),
    "base": (_FM_TABLE, "class base (VHF/UHF FM land-mobile base radio): " + _FM_SOURCE),
    "mobile": (_FM_TABLE, "class mobile (VHF/UHF FM mobile or handheld radio): " + _FM_SOURCE),
    "scanner": (
        ((0.001, -40.0), (1000.0, -40.0)),
        "class scanner (scanner or SDR dongle with no front-end filter): -40 dBm at every "
        "offset, the wideband tuner's overload level (from memory: 8-bit dongles clip near "
        "-40 to -30 dBm of total input at usual gain settings)",
    ),
}
"""Documented selectivity defaults by receiver class (``receiver_class``, the
names of :data:`notchkit.site.model.RECEIVER_CLASSES`): ((offset_mhz,
blocking_dbm), ...) with their source. Offsets count from the edge of the
receiver's band (its tuning range), the conservative reading of "offset from
the tuned frequency"."""


FRONT_END_REF_MHZ = 1.0
"""Offset beyond which a blocking curve's rise is taken as front-end (preselector)
selectivity, protecting the first non-linear stages: carriers reaching a receiver
are reduced by it before products formed in its front end are computed (common
practice reading of a blocking curve, rough; closer in the curve is the IF filters')."""


def selectivity_table(rx) -> tuple[tuple[tuple[float, float], ...], str]:
    """The receiver's blocking table and its source text.

    In order: its own ``selectivity`` table, its flat ``blocking_dbm``, its class's
    table, the flat default. Returns ``((), text)`` when a flat level applies.
    """
    if rx.selectivity:
        return tuple(rx.selectivity), (
            "radio's selectivity table (blocking level by offset from the band edge, "
            "interpolated in dB against log offset)"
        )
    if rx.blocking_dbm is not None:
        return (), "blocking_dbm"
    if rx.receiver_class is not None:
        table, src = SELECTIVITY_BY_CLASS[rx.receiver_class]
        return table, "default selectivity " + src
    return (), f"default blocking {DEFAULT_BLOCKING_DBM:g} dBm (documented default)"


def receiver_floor_dbm(
    noise_figure_db: float, bandwidth_khz: float, band_noise_dbm: float | None
) -> tuple[float, str]:
    """The receiver's noise floor: kTB + NF + 10 log B, or the stated band noise when higher.

    A receiver cannot hear below the noise arriving with the signal: a stated band
    noise above the receiver's own floor is the floor (ITU-R P.372 describes
    such external noise; the figure is the user's).
    """
    own = noise_floor_dbm(noise_figure_db, bandwidth_khz)
    text = (
        f"noise floor kTB {KTB_DBM_PER_HZ:.2f} dBm/Hz + NF {noise_figure_db:g} dB + "
        f"10log({bandwidth_khz:g} kHz)"
    )
    if band_noise_dbm is not None and band_noise_dbm > own:
        return float(band_noise_dbm), (
            f"band noise {band_noise_dbm:g} dBm (radio's band_noise_dbm, above its own {text} "
            f"= {own:.1f} dBm)"
        )
    return own, text


# ---------------------------------------------------------------------------
# What stubs can plausibly do
# ---------------------------------------------------------------------------

REMEDY_CLASSES = ("none", "stub", "band-pass filter", "cavity", "spacing", "time-sharing")
"""How a threat is to be removed: nothing needed, coax stubs, or not a stub job."""

FILTER_PLUS_DB = 40.0
"""What a band-pass filter or cavity adds on top of the stubs, dB (common practice:
a few-section band-pass filter or a cavity gives 30-60 dB away from its pass band)."""

SPACING_PLUS_DB = 30.0
"""Further dB beyond filters that antenna spacing can reasonably add (common
practice: separation can buy a few tens of dB; beyond that, time-sharing)."""


def stub_ceiling_db(max_stub_rejection_db: float, depth_ceiling_db: float | None, max_stubs: int) -> float:
    """The deepest notch a stub filter is asked for: min(depth ceiling, per-stub x stubs).

    ``depth_ceiling_db`` is the site's (``depth_ceiling_db``, None: the default of
    :data:`notchkit.hardware.DEFAULT_DEPTH_CEILING_DB`): the same figure caps every notch
    the design claims, so a requirement above it is one no design can reach.
    """
    if depth_ceiling_db is None:
        from notchkit.hardware import DEFAULT_DEPTH_CEILING_DB

        depth_ceiling_db = DEFAULT_DEPTH_CEILING_DB
    return min(float(depth_ceiling_db), float(max_stub_rejection_db) * int(max_stubs))


def remedy_class(required_db: float, ceiling_db: float, freq_mhz: float) -> str:
    """The remedy class for a requirement beyond the stub ceiling.

    Up to ``ceiling + FILTER_PLUS_DB``: a band-pass filter (below 30 MHz) or a
    cavity (30 MHz and up); up to ``+ SPACING_PLUS_DB`` more: antenna spacing;
    beyond: time-sharing (common practice, rough).
    """
    if required_db <= ceiling_db + FILTER_PLUS_DB:
        return "band-pass filter" if freq_mhz < 30.0 else "cavity"
    if required_db <= ceiling_db + FILTER_PLUS_DB + SPACING_PLUS_DB:
        return "spacing"
    return "time-sharing"
