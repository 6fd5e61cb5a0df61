"""Trim a stub against a measurement: resonance, effective velocity factor, length to cut.

A stub is cut a little long, measured with an analyser, and trimmed. This
module reads the Touchstone sweep, finds the stub's resonance with sub-sample
accuracy, back-computes the cable's effective velocity factor from the present
length and says how much to cut off to move the resonance to the target.

Two kinds of measurement are understood:

``.s1p``, the stub alone measured at its input
    The resonance is where the input reactance (series resonance, impedance
    minimum) or susceptance (parallel resonance, impedance maximum) crosses
    zero going up. An open stub of an odd number of quarter waves and a
    shorted stub of an even number are series resonant; the others parallel.

``.s2p``, through the tee with the stub in place
    The resonance is the deepest ``S21`` notch: the stub's input impedance is
    at a series resonance, i.e. a short across the line. For an open stub
    that is the quarter wave (order 1); a shorted stub is transparent at its
    quarter wave and notches at its half wave (order 2).

``order`` is always the number of quarter waves of the resonance that is
measured, and ``target_mhz`` is always where that same resonance should be.

The numbers follow the textbook quarter-wave relation for a line of length
``L``, velocity factor ``VF``, resonating at its ``n``-th quarter wave,

.. math:: f_n = \\frac{n\\,c\\,VF}{4 L}, \\qquad VF = \\frac{4 L f_n}{n c},
          \\qquad L_{target} = L\\,\\frac{f_{meas}}{f_{target}}.

References
----------
D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, section 6.3
(transmission-line resonators; ``Q = beta / (2 alpha)``).
"""

from __future__ import annotations

import io
import math
import os
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from notchkit.errors import InputError, MeasurementError, UsageError
from notchkit.fileio import write_bytes_atomic
from notchkit.lines import C0

Termination = Literal["open", "short"]

MIN_DEPTH_DB = 6.0
"""Smallest contrast (dB) that counts as a clear resonance (see :func:`find_resonance`)."""
FIT_SPAN = 0.025
"""Half-width of the fit window around the resonance, as a fraction of its frequency."""
MIN_SIDE_POINTS = 2
"""Fewest samples the fit needs on each side of the resonance."""
MIN_POINTS = 7
"""Fewest frequency points a sweep must have."""
NOISE_SIGMAS = 3.0
"""A resonance depth within this many standard errors of the noise marks Q as a lower bound."""
ON_TARGET_MM = 0.5
"""A computed cut smaller than this (mm) counts as on target."""
VF_WARN = 0.03
"""Deviation of the effective from the nominal VF that earns a warning when the
cable publishes no tolerance (absolute)."""
SAFETY = (
    "Safety: trim with the transmitter off; never trim a stub connected to a transmitter. "
    "Open stub ends carry high voltage at power."
)
MAX_LENGTH_M = 10_000.0
"""Longest present stub length (and tee allowance) trim works with, m: far beyond any
stub, small enough that every figure stays finite."""
INCH_M = 0.0254
"""Metres per inch (exact by definition)."""


# ------------------------------------------------------------------ results


@dataclass(frozen=True, slots=True, kw_only=True)
class Resonance:
    """A resonance found in a measured sweep.

    Attributes
    ----------
    freq_hz : float
        Resonant frequency, Hz (interpolated between samples).
    kind : {"series", "parallel"}
        Series: impedance minimum (a notch across a line); parallel: maximum.
    ports : int
        1 for an ``.s1p`` of the stub alone, 2 for an ``.s2p`` through the tee.
    depth_db : float
        ``.s2p``: the notch depth, ``-20 log10 |S21|`` at the resonance.
        ``.s1p``: the impedance contrast against the port impedance,
        ``20 log10 (z_system / |Z|)`` (series) or ``20 log10 (|Z| / z_system)``
        (parallel).
    q : float or None
        Unloaded quality factor ``f0 / BW`` of the stub, BW the 3 dB width of the
        resonance (where ``|X| = R`` for series, ``|B| = G`` for parallel; for a
        deep ``.s2p`` notch, 3 dB above its bottom). ``None`` when the loss is
        below what the measurement resolves.
    bandwidth_hz : float or None
        That 3 dB width, Hz.
    q_noise_limited : bool
        The resonance's resistive part (its depth) is within ``NOISE_SIGMAS``
        standard errors of zero: the measurement's noise sets the depth, and
        ``q`` is then a lower bound.
    """

    freq_hz: float
    kind: Literal["series", "parallel"]
    ports: int
    depth_db: float
    q: float | None
    bandwidth_hz: float | None
    q_noise_limited: bool = False

    @property
    def freq_mhz(self) -> float:
        """Resonant frequency, MHz."""
        return self.freq_hz / 1e6


@dataclass(frozen=True, slots=True, kw_only=True)
class TrimResult:
    """Everything ``notchkit trim`` says about one measurement.

    Lengths are physical cable lengths in metres unless named ``electrical``.
    ``cut_m`` is what to cut off (negative: the stub is already too short).
    Fields that need the present length are ``None`` without one.
    """

    measurement: str
    cable: str
    termination: Termination
    order: int
    target_mhz: float
    target_source: str
    sweep_mhz: tuple[float, float]
    z_system_ohm: float
    resonance: Resonance
    present_length_m: float | None
    length_source: str | None
    allowance_m: float
    nominal_velocity_factor: float
    velocity_factor: float | None
    target_length_m: float | None
    cut_m: float | None
    q_expected: float | None
    advice: str
    warnings: tuple[str, ...] = field(default=())

    @property
    def ratio(self) -> float:
        """Measured over target frequency, ``f_res / f_target``."""
        return self.resonance.freq_mhz / self.target_mhz

    @property
    def shorten_pct(self) -> float:
        """How much to shorten the electrical length, percent (negative: lengthen)."""
        return (1.0 - self.ratio) * 100.0

    @property
    def cut_mm(self) -> float | None:
        """What to cut off, mm (negative: the stub is that much too short)."""
        return None if self.cut_m is None else self.cut_m * 1000.0

    @property
    def too_short(self) -> bool:
        """True when the target needs more cable than is there."""
        return self.cut_m is not None and self.cut_m * 1000.0 < -ON_TARGET_MM

    @property
    def cut_in(self) -> float | None:
        """:attr:`cut_m` in inches to 1/16 in, rounded toward the smaller cut."""
        return None if self.cut_m is None else inches_16ths(self.cut_m)[0]

    def to_json(self) -> dict[str, Any]:
        """A JSON-ready dict; the keys ``resonance_mhz``, ``q``, ``velocity_factor``,
        ``target_length_m`` and ``cut_mm`` are fixed."""
        r = self.resonance
        cut_in = None if self.cut_m is None else inches_16ths(self.cut_m)
        return {
            "measurement": self.measurement,
            "ports": r.ports,
            "cable": self.cable,
            "termination": self.termination,
            "order": self.order,
            "target_mhz": self.target_mhz,
            "target_source": self.target_source,
            "sweep_mhz": list(self.sweep_mhz),
            "resonance_mhz": r.freq_mhz,
            "resonance_kind": r.kind,
            "depth_db": r.depth_db,
            "q": r.q,
            "bandwidth_mhz": None if r.bandwidth_hz is None else r.bandwidth_hz / 1e6,
            "q_lower_bound": r.q_noise_limited,
            "q_expected": self.q_expected,
            "ratio": self.ratio,
            "shorten_pct": self.shorten_pct,
            "present_length_m": self.present_length_m,
            "length_source": self.length_source,
            "allowance_m": self.allowance_m,
            "nominal_velocity_factor": self.nominal_velocity_factor,
            "velocity_factor": self.velocity_factor,
            "target_length_m": self.target_length_m,
            "cut_mm": self.cut_mm,
            "cut_in": None if cut_in is None else cut_in[0],
            "cut_in_text": None if cut_in is None else cut_in[1],
            "too_short": self.too_short,
            "advice": self.advice,
            "warnings": list(self.warnings),
            "safety": SAFETY,
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class PlanStub:
    """A stub as a plan JSON (``notchkit plan --outdir``) describes it."""

    id: str
    termination: Termination | None
    length_m: float | None
    cut_length_m: float | None
    first_cut_m: float | None
    tee_allowance_m: float | None = None
    resonance_mhz: float | None = None
    quarter_waves: int | None = None

    @property
    def allowance_m(self) -> float | None:
        """The tee allowance: ``tee_allowance_m``, else ``length_m - cut_length_m``."""
        if self.tee_allowance_m is not None:
            return self.tee_allowance_m
        if self.length_m is not None and self.cut_length_m is not None:
            return max(self.length_m - self.cut_length_m, 0.0)
        return None


# ------------------------------------------------------------------ helpers


def inches_16ths(length_m: float) -> tuple[float, str]:
    """A length in inches to 1/16 in, rounded toward zero (the smaller cut).

    Returns the value in inches and a text such as ``"1 3/8 in"``; a negative
    length keeps its sign. Rounding toward zero because cable can be cut again
    but not added back.
    """
    sixteenths = int(math.floor(abs(length_m) / INCH_M * 16.0 + 1e-9))
    value = math.copysign(sixteenths / 16.0, length_m) if sixteenths else 0.0
    whole, frac = divmod(sixteenths, 16)
    if frac:
        g = math.gcd(frac, 16)
        frac_text = f"{frac // g}/{16 // g}"
        text = f"{whole} {frac_text}" if whole else frac_text
    else:
        text = f"{whole}"
    sign = "-" if length_m < 0 and sixteenths else ""
    return value, f"{sign}{text} in"


def _finite_positive(x: Any) -> bool:
    try:
        return math.isfinite(float(x)) and float(x) > 0.0
    except (TypeError, ValueError):
        return False


def read_measurement(path: str | os.PathLike[str]):
    """Read a one- or two-port Touchstone file into a :class:`skrf.Network`.

    The text is read here and handed to scikit-rf as a string, so the file is
    never unpickled nor opened for writing.

    Raises
    ------
    MeasurementError
        Missing, unreadable, empty, not Touchstone, not 1 or 2 ports, too few
        or non-increasing frequencies, non-finite values.
    """
    import skrf

    p = Path(path)
    suffix = p.suffix.lower()
    if suffix not in (".s1p", ".s2p"):
        raise MeasurementError(
            f"{p}: extension {p.suffix or '(none)'!r} is not a one- or two-port Touchstone "
            f"file (use .s1p for the stub alone, .s2p through the tee)"
        )
    from notchkit.bounded import read_measurement_bytes

    data = read_measurement_bytes(p)
    if not data.strip():
        raise MeasurementError(f"{p}: is empty (expected a Touchstone {suffix} sweep)")
    if b"\0" in data:
        raise MeasurementError(f"{p}: is a binary file, not a Touchstone text file")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        text = data.decode("latin-1")
    buf = io.StringIO(text)
    buf.name = p.name  # scikit-rf takes the port count from the extension
    try:
        # scikit-rf warns about sweeps and values that the checks below refuse with our
        # own one-line errors; its warnings would only add library paths to stderr.
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            ntwk = skrf.Network(buf)
    except Exception as exc:  # scikit-rf raises many types for bad files
        detail = str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__
        raise MeasurementError(f"{p}: not a readable Touchstone file ({detail})") from None
    if ntwk.nports not in (1, 2):
        raise MeasurementError(f"{p}: has {ntwk.nports} ports; trim reads 1 (.s1p) or 2 (.s2p)")
    f = np.asarray(ntwk.f, dtype=float)
    from notchkit.bounded import MAX_SWEEP_POINTS

    if f.size > MAX_SWEEP_POINTS:
        raise MeasurementError(f"{p}: has {f.size} frequency points; at most {MAX_SWEEP_POINTS} "
                               f"are read (sweep fewer points)")
    if f.size < MIN_POINTS:
        raise MeasurementError(
            f"{p}: has {f.size} frequency points; need at least {MIN_POINTS} (a sweep)"
        )
    if not (np.all(np.isfinite(f)) and np.all(np.diff(f) > 0) and f[0] > 0):
        raise MeasurementError(f"{p}: frequencies must be positive and strictly increasing")
    if not np.all(np.isfinite(ntwk.s)):
        raise MeasurementError(f"{p}: contains non-finite S-parameters")
    z0 = np.asarray(ntwk.z0)
    if not (np.all(np.isfinite(z0)) and np.all(z0.real > 0) and np.allclose(z0.imag, 0.0)):
        raise MeasurementError(f"{p}: port reference impedance must be real and > 0")
    return ntwk


def _default_order(ports: int, termination: str) -> int:
    return 2 if (ports == 2 and termination == "short") else 1


def _kind(termination: str, order: int) -> Literal["series", "parallel"]:
    # open: odd quarter waves series-resonant; short: even quarter waves series-resonant
    return "series" if (termination == "open") == (order % 2 == 1) else "parallel"


def _regions(mask: NDArray[np.bool_]) -> list[tuple[int, int]]:
    """Contiguous runs of True as (start, stop) index pairs, stop exclusive."""
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask.astype(np.int8), [0]))))
    return [(int(a), int(b)) for a, b in zip(edges[0::2], edges[1::2], strict=True)]


def _merge_close(f, regions):
    """Join regions whose gap is under FIT_SPAN of the frequency (noise splitting one)."""
    merged: list[tuple[int, int]] = []
    for a, b in regions:
        if merged and f[a] - f[merged[-1][1] - 1] <= FIT_SPAN * f[a]:
            merged[-1] = (merged[-1][0], b)
        else:
            merged.append((a, b))
    return merged


def _window(f: NDArray[np.float64], center_hz: float) -> tuple[int, int] | None:
    """Sample window of +/- FIT_SPAN around ``center_hz``, >= MIN_SIDE_POINTS a side."""
    k = int(np.searchsorted(f, center_hz))  # f[k-1] < center <= f[k]
    lo = int(np.searchsorted(f, center_hz * (1.0 - FIT_SPAN), side="left"))
    hi = int(np.searchsorted(f, center_hz * (1.0 + FIT_SPAN), side="right"))
    lo = min(lo, k - MIN_SIDE_POINTS)
    hi = max(hi, k + MIN_SIDE_POINTS)
    if lo < 0 or hi > f.size:
        return None
    return lo, hi


class _NoResonance(Exception):
    """Internal: a candidate region without a usable resonance."""


def _recentre(f, center_hz, fit):
    """Re-centre a fitting window on the fitted point until it settles (at most 3 passes).

    ``fit(lo, hi, t)`` fits the window ``f[lo:hi]`` (``t`` is the frequency offset
    relative to the window's centre) and returns ``(t0, state)``. Returns the
    settled centre, the last window and the last ``state``.
    """
    for _ in range(3):
        win = _window(f, center_hz)
        if win is None:
            raise _NoResonance("edge")
        lo, hi = win
        t = (f[lo:hi] - center_hz) / center_hz
        t0, state = fit(lo, hi, t)
        if not (t[0] <= t0 <= t[-1]):
            raise _NoResonance("crossing")
        f0 = center_hz * (1.0 + t0)
        moved = abs(f0 - center_hz)
        center_hz = f0
        if moved < 0.25 * np.min(np.diff(f[lo:hi])):
            break
    return center_hz, (lo, hi), state


def _fit_crossing(f, w, center_hz):
    """Linear fits of Im(w) and Re(w) around ``center_hz``; zero of Im(w).

    ``w`` is the normalised impedance (series) or admittance (parallel).
    Returns (f0, slope_per_hz, r_at_f0).
    """

    def fit(lo, hi, t):
        slope, icept = np.polyfit(t, w[lo:hi].imag, 1)
        if not slope > 0:
            raise _NoResonance("slope")
        return -icept / slope, slope

    center_hz, (lo, hi), slope = _recentre(f, center_hz, fit)
    lo, hi = _window(f, center_hz) or (lo, hi)
    t = (f[lo:hi] - center_hz) / center_hz
    coef, cov = _polyfit_cov(t, w[lo:hi].real, 1)
    r0 = float(coef[1])  # value at t = 0, the root
    r0_std = math.sqrt(max(cov[1, 1], 0.0)) if cov is not None else 0.0
    return center_hz, slope / center_hz, r0, r0_std


def _fit_notch(f, u, center_hz):
    """Weighted parabola through ``u = |S21|^2 / (1 - |S21|^2)`` around ``center_hz``.

    The weights follow the noise of ``u`` for a constant noise on ``S21``:
    ``sigma_u ~ 2 |S21| sigma (1 + u)^2``, with the smallest ``|S21|`` of the
    window as a floor. Returns (f0, u_min, curvature_per_hz2, u_min_std).
    """

    def fit(lo, hi, t):
        uw = u[lo:hi]
        mag = np.sqrt(uw / (1.0 + uw))
        weight = 1.0 / ((mag + mag.min()) * (1.0 + uw) ** 2)
        (a2, a1, a0), cov = _polyfit_cov(t, uw, 2, weight)
        if not a2 > 0:
            raise _NoResonance("curvature")
        return -a1 / (2.0 * a2), (a2, a1, a0, cov)

    center_hz, _, (a2, a1, a0, cov) = _recentre(f, center_hz, fit)
    u_min = a0 - a1 * a1 / (4.0 * a2)
    # standard error of the vertex value (first-order propagation of the fit covariance)
    u_std = 0.0
    if cov is not None:
        jac = np.array([a1 * a1 / (4.0 * a2 * a2), -a1 / (2.0 * a2), 1.0])
        u_std = math.sqrt(max(float(jac @ cov @ jac), 0.0))
    # a2 is per (t = df / f_centre)^2 of the last window; the final re-centring is sub-sample
    return center_hz, float(u_min), float(a2) / (center_hz * center_hz), u_std


def _polyfit_cov(t, y, deg, weight=None):
    """np.polyfit with the coefficient covariance when there are enough points."""
    if t.size > deg + 2:
        coef, cov = np.polyfit(t, y, deg, w=weight, cov=True)
        return coef, cov
    return np.polyfit(t, y, deg, w=weight), None


# ------------------------------------------------------------------ the work


def find_resonance(
    network,
    termination: Termination,
    *,
    order: int | None = None,
    near_hz: float | None = None,
) -> Resonance:
    """Find the stub's resonance in a measured sweep.

    Parameters
    ----------
    network : skrf.Network
        One port (the stub alone, at its input) or two ports (through the tee,
        ``S21`` used).
    termination : {"open", "short"}
        How the far end of the stub is terminated.
    order : int, optional
        Quarter waves of the resonance to find (default 1; 2 for a shorted stub
        through a tee, whose notch is the half wave).
    near_hz : float, optional
        When the sweep holds several resonances of the right kind, take the one
        nearest this frequency, Hz (default: the strongest).

    Returns
    -------
    Resonance

    Raises
    ------
    MeasurementError
        No clear resonance (contrast under ``MIN_DEPTH_DB``, no zero crossing),
        or the resonance at the edge of the sweep.
    UsageError
        Bad ``termination`` or ``order``, or an order that a tee cannot show.

    Notes
    -----
    *One port.* With ``w = Z / z_system`` for a series and ``w = Y z_system``
    for a parallel resonance, a stub near its ``n``-th quarter wave has
    ``w ~ tanh(alpha l + j delta)``, ``delta`` the phase departure from
    ``n pi / 2``: ``Im w`` is an odd function of ``delta`` (zero curvature at
    the root) and ``Re w`` almost constant. A straight line fitted by least
    squares to ``Im w`` over +/- ``FIT_SPAN`` of the frequency therefore finds
    the zero crossing without model bias and averages the noise of all samples
    in the window, better than interpolating between the two samples that
    bracket it or fitting a parabola to ``|Z|`` (which is not parabolic near a
    sharp resonance). ``Q = f0 (d Im w / df) / (2 Re w)`` (Pozar eq. 6.10
    with ``w`` the normalised reactance), i.e. ``f0 / BW`` with BW between
    the points ``|X| = R``.

    *Two ports.* For a shunt impedance ``Z = R + jX`` across a line of
    ``z_system`` between matched ports,
    ``u = |S21|^2 / (1 - |S21|^2) = 4 (R^2 + X^2) / (z_system^2 + 4 z_system R)``,
    exactly quadratic in ``X`` and independent of the port cable delays: a
    least-squares parabola in ``u`` over the same window gives the notch
    centre (its vertex) and from its bottom and curvature the stub's unloaded
    ``Q`` (``u`` doubles at ``|X| = R``).
    """
    if termination not in ("open", "short"):
        raise UsageError(f"termination: {termination!r} must be 'open' or 'short'")
    ports = int(network.nports)
    if ports not in (1, 2):
        raise MeasurementError(f"has {ports} ports; trim reads 1 (.s1p) or 2 (.s2p)")
    if order is None:
        order = _default_order(ports, termination)
    if isinstance(order, bool) or not isinstance(order, int) or order < 1:
        raise UsageError(f"--order: {order!r} must be a whole number of quarter waves >= 1")
    kind = _kind(termination, order)
    if ports == 2 and kind != "series":
        need = "odd (1, 3, ...)" if termination == "open" else "even (2, 4, ...)"
        raise UsageError(
            f"--order: {order} quarter waves of a{'n open' if termination == 'open' else ' shorted'}"
            f" stub is transparent through a tee (no notch); use an {need} order for a .s2p"
        )
    f = np.asarray(network.f, dtype=float)

    with np.errstate(divide="ignore", invalid="ignore"):
        if ports == 1:
            s = np.asarray(network.s[:, 0, 0], dtype=complex)
            if kind == "series":
                w = (1.0 + s) / (1.0 - s)  # Z / z_system
            else:
                w = (1.0 - s) / (1.0 + s)  # Y * z_system
            contrast = -20.0 * np.log10(np.abs(w))
        else:
            p = np.abs(np.asarray(network.s[:, 1, 0], dtype=complex)) ** 2
            p = np.clip(p, 1e-30, 1.0 - 1e-12)
            u = p / (1.0 - p)
            contrast = -10.0 * np.log10(p)
    contrast = np.where(np.isfinite(contrast), contrast, 300.0)

    strongest = int(np.argmax(contrast))
    regions = _merge_close(f, _regions(contrast >= MIN_DEPTH_DB))
    what = "notch" if ports == 2 else f"{kind} resonance"
    if not regions:
        raise MeasurementError(
            f"no clear {what}: the strongest contrast is {contrast[strongest]:.1f} dB at "
            f"{f[strongest] / 1e6:.4g} MHz (need >= {MIN_DEPTH_DB:g} dB; check --termination "
            f"and --order)"
        )
    centres = [a + int(np.argmax(contrast[a:b])) for a, b in regions]
    if near_hz is not None:
        centres.sort(key=lambda i: abs(math.log(f[i] / near_hz)))
    else:
        centres.sort(key=lambda i: -contrast[i])

    problems = []
    for rank, i in enumerate(centres):
        if i < MIN_SIDE_POINTS or i > f.size - 1 - MIN_SIDE_POINTS:
            problems.append(("edge", i))
            if rank == 0:
                break  # never fall back to another resonance when the wanted one is cut off
            continue
        try:
            if ports == 1:
                f0, slope, r0, r_std = _fit_crossing(f, w, float(f[i]))
                limited = r0 <= NOISE_SIGMAS * r_std
                if r0 > 0:
                    bw = 2.0 * r0 / slope
                    q = f0 / bw
                    depth = -20.0 * math.log10(r0)
                else:
                    bw = q = None
                    depth = float(contrast[i])
            else:
                f0, u_min, curv, u_std = _fit_notch(f, u, float(f[i]))
                limited = u_min <= NOISE_SIGMAS * u_std
                if u_min > 0:
                    bw = 2.0 * math.sqrt(u_min / curv)
                    q = f0 / bw
                    depth = 10.0 * math.log10((1.0 + u_min) / u_min)
                else:
                    bw = q = None
                    depth = float(contrast[i])
        except _NoResonance as exc:
            problems.append((str(exc), i))
            continue
        return Resonance(
            freq_hz=float(f0), kind=kind, ports=ports, depth_db=float(depth),
            q=None if q is None else float(q), bandwidth_hz=None if bw is None else float(bw),
            q_noise_limited=bool(limited),
        )
    why, i = problems[0]
    at = f"{f[i] / 1e6:.4g} MHz"
    if why == "edge":
        raise MeasurementError(
            f"the {what} at {at} is at the edge of the sweep "
            f"({f[0] / 1e6:.4g}-{f[-1] / 1e6:.4g} MHz): sweep wider around it"
        )
    quantity = "|S21| has no minimum" if ports == 2 else (
        "the reactance has no upward zero crossing" if kind == "series"
        else "the susceptance has no upward zero crossing"
    )
    raise MeasurementError(f"no clear {what}: {quantity} near {at} (check --termination/--order)")


def load_plan_stub(plan_path: str | os.PathLike[str], stub_id: str) -> PlanStub:
    """Read one stub from a plan JSON (``filters[i].elements[j]`` with ``id``).

    Raises
    ------
    InputError
        Missing or unreadable file, not JSON, no such stub, bad length values.
    """
    from notchkit.bounded import read_json_file

    p = Path(plan_path)
    doc = read_json_file(p, error=InputError, what="plan JSON file")
    filters = doc.get("filters") if isinstance(doc, dict) else None
    if not isinstance(filters, list):
        raise InputError(f"{p}: filters: missing or not a list (expected a notchkit plan JSON)")
    ids = []
    for fi, flt in enumerate(filters):
        elements = flt.get("elements") if isinstance(flt, dict) else None
        if not isinstance(elements, list):
            continue
        for ej, el in enumerate(elements):
            if not isinstance(el, dict) or el.get("kind") != "stub":
                continue
            ids.append(str(el.get("id")))
            if str(el.get("id")) != stub_id:
                continue
            where = f"{p}: filters[{fi}].elements[{ej}]"
            values = {}
            for key in ("length_m", "cut_length_m", "first_cut_m", "resonance_mhz",
                        "tee_allowance_m"):
                v = el.get(key)
                zero_ok = key == "tee_allowance_m" and v == 0
                if v is not None and not zero_ok and not (
                    isinstance(v, int | float) and not isinstance(v, bool) and _finite_positive(v)
                ):
                    unit = "a frequency in MHz" if key == "resonance_mhz" else "a length in metres"
                    raise InputError(f"{where}.{key}: {v!r} must be {unit} > 0")
                values[key] = None if v is None else float(v)
            qw = el.get("quarter_waves")
            if qw is not None and (isinstance(qw, bool) or not isinstance(qw, int) or qw < 1):
                raise InputError(f"{where}.quarter_waves: {qw!r} must be a whole number >= 1")
            values["quarter_waves"] = qw
            term = el.get("termination")
            if term not in (None, "open", "short"):
                raise InputError(f"{where}.termination: {term!r} must be 'open' or 'short'")
            return PlanStub(id=stub_id, termination=term, **values)
    known = ", ".join(ids[:12]) if ids else "none"
    raise InputError(f"{p}: --stub {stub_id!r} is not a stub id in this plan (stubs: {known})")


def trim(
    measurement_path: str | os.PathLike[str],
    *,
    cable: Any,
    termination: Termination | None,
    target_mhz: float | None,
    length_m: float | None = None,
    plan_path: str | os.PathLike[str] | None = None,
    stub_id: str | None = None,
    plan_length: Literal["cut", "first-cut"] = "cut",
    order: int | None = None,
    allowance_m: float | None = None,
    png_path: str | os.PathLike[str] | None = None,
) -> TrimResult:
    """Find a stub's measured resonance and say how much to cut to reach the target.

    Parameters
    ----------
    measurement_path : path
        Touchstone ``.s1p`` (stub alone, at its input) or ``.s2p`` (through the
        tee, stub in place). Never opened for writing.
    cable : str or cable object
        Cable type name (see ``notchkit cables``) or an object with
        ``name``, ``velocity_factor``, optional ``vf_tolerance`` and
        ``alpha_np_per_m(freq_hz)``; gives the nominal VF to compare against.
    termination : {"open", "short"} or None
        The stub's far end; ``None`` takes it from the plan.
    target_mhz : float or None
        Where the measured resonance should be, MHz (> 0, inside the sweep).
        ``None`` takes the plan stub's ``resonance_mhz`` (at the tee): as is
        for an ``.s2p``; for an ``.s1p`` of the stub alone, scaled to the path
        without the tee, ``resonance_mhz * length_m / (length_m - allowance)``.
    length_m : float, optional
        Present physical length of the stub, m; overrides the plan.
    plan_path, stub_id : optional
        A plan JSON and a stub id (``"F1-S2"``) to take the present length from.
    plan_length : {"cut", "first-cut"}
        Which plan length is on the bench: ``cut_length_m`` (cut to plan, the
        default) or ``first_cut_m`` (cut long with the trim margin).
    order : int, optional
        Quarter waves of the measured resonance. Default: the plan stub's
        ``quarter_waves``, else 1, or 2 for a shorted stub through a tee.
    allowance_m : float, optional
        Electrical length in series with the stub inside the measurement that
        trimming does not change (the tee allowance), m. Default: for an
        ``.s2p`` with a plan, the plan's ``tee_allowance_m`` (or
        ``length_m - cut_length_m``); else 0.
    png_path : path, optional
        Write a plot of the measurement there (atomically).

    Returns
    -------
    TrimResult

    Raises
    ------
    MeasurementError, UsageError, InputError, CableError

    Notes
    -----
    With electrical length ``Le = L + allowance``, ``VF = 4 Le f_res / (n c)``,
    the target electrical length ``Le f_res / f_target`` (the same line
    resonates at a frequency inversely proportional to its length), and
    ``cut = Le (1 - f_res / f_target)``.
    """
    if target_mhz is not None and not _finite_positive(target_mhz):
        raise UsageError(f"--target-mhz: {target_mhz!r} must be a frequency in MHz > 0")
    if target_mhz is None and plan_path is None:
        raise UsageError("--target-mhz: required unless --plan gives the stub's resonance_mhz")
    if length_m is not None and not (_finite_positive(length_m) and float(length_m) <= MAX_LENGTH_M):
        raise UsageError(f"--length-m: {length_m!r} must be the present stub length in metres > 0 "
                         f"and at most {MAX_LENGTH_M:g}")
    if png_path is not None:  # the plot's file, checked against the inputs before any work
        from notchkit.report.files import plan_outputs

        plan_outputs([(png_path, "--png")], inputs=[(measurement_path, "measurement"),
                                                        (plan_path, "plan JSON")])
    if allowance_m is not None:
        try:
            ok = math.isfinite(float(allowance_m)) and 0.0 <= float(allowance_m) <= MAX_LENGTH_M
        except (TypeError, ValueError):
            ok = False
        if not ok:
            raise UsageError(f"--allowance-m: {allowance_m!r} must be a length in metres >= 0")
    if plan_length not in ("cut", "first-cut"):
        raise UsageError(f"--plan-length: {plan_length!r} must be 'cut' or 'first-cut'")
    if (plan_path is None) != (stub_id is None):
        raise UsageError("--plan and --stub go together: give both or neither")

    if isinstance(cable, str):
        from notchkit.cables import get_cable

        cable_obj = get_cable(cable)
    else:
        cable_obj = cable
    cable_name = str(getattr(cable_obj, "name", cable_obj))
    vf_nominal = float(cable_obj.velocity_factor)

    plan_stub = None
    if plan_path is not None:
        plan_stub = load_plan_stub(plan_path, str(stub_id))
        if termination is None:
            termination = plan_stub.termination
        elif plan_stub.termination is not None and plan_stub.termination != termination:
            raise UsageError(
                f"--termination {termination} disagrees with plan stub {stub_id} "
                f"({plan_stub.termination})"
            )
    if termination not in ("open", "short"):
        raise UsageError(f"--termination: {termination!r} must be 'open' or 'short'")

    ntwk = read_measurement(measurement_path)
    label = str(measurement_path)
    ports = int(ntwk.nports)
    f = np.asarray(ntwk.f, dtype=float)
    sweep = (float(f[0] / 1e6), float(f[-1] / 1e6))

    if order is None and plan_stub is not None and plan_stub.quarter_waves is not None:
        order = plan_stub.quarter_waves
    if allowance_m is None:
        allowance_m = 0.0
        if ports == 2 and plan_stub is not None and plan_stub.allowance_m is not None:
            allowance_m = plan_stub.allowance_m
    allowance_m = float(allowance_m)
    target_source = "--target-mhz"
    if target_mhz is None:
        if plan_stub is None or plan_stub.resonance_mhz is None:
            raise UsageError(f"--target-mhz: required (plan stub {stub_id} has no resonance_mhz)")
        target_mhz = plan_stub.resonance_mhz
        target_source = f"plan {stub_id} resonance_mhz"
        plan_allow = plan_stub.allowance_m
        if ports == 1 and plan_allow and plan_stub.length_m:
            # the stub alone lacks the tee's path: same cable, shorter line, higher resonance
            target_mhz *= plan_stub.length_m / (plan_stub.length_m - plan_allow)
            target_source += " without the tee allowance"
    target_mhz = float(target_mhz)
    if not (f[0] <= target_mhz * 1e6 <= f[-1]):
        raise MeasurementError(
            f"{label}: the sweep {sweep[0]:.4g}-{sweep[1]:.4g} MHz does not cover the target "
            f"{target_mhz:g} MHz (measure across the target)"
        )
    try:
        res = find_resonance(ntwk, termination, order=order, near_hz=target_mhz * 1e6)
    except MeasurementError as exc:
        raise MeasurementError(f"{label}: {exc}") from None
    n = order if order is not None else _default_order(res.ports, termination)

    # the present length
    source = None
    present = None
    if length_m is not None:
        present, source = float(length_m), "--length-m"
    elif plan_stub is not None:
        key = "cut_length_m" if plan_length == "cut" else "first_cut_m"
        present = getattr(plan_stub, key)
        if present is None:
            raise InputError(f"{plan_path}: stub {stub_id} has no {key} (try the other "
                             f"--plan-length, or give --length-m)")
        source = f"plan {stub_id} {key}"

    warnings: list[str] = []
    ratio = res.freq_mhz / target_mhz
    if abs(ratio - 1.0) > 0.2:
        warnings.append(
            f"the resonance is {abs(ratio - 1) * 100:.0f} % from the target: check --order "
            f"({n} quarter waves) and that this is the right stub"
        )
    if res.q_noise_limited:
        warnings.append(
            "the resonance depth is at the measurement's noise floor: Q is a lower bound "
            "(average more sweeps or lower the analyser's IF bandwidth)"
        )
    q_expected = None
    alpha_fn = getattr(cable_obj, "alpha_np_per_m", None)
    if callable(alpha_fn):
        alpha = float(np.asarray(alpha_fn(np.array([res.freq_hz])), dtype=float).ravel()[0])
        if alpha > 0:
            beta = 2.0 * math.pi * res.freq_hz / (C0 * vf_nominal)
            q_expected = beta / (2.0 * alpha)  # Pozar eq. 6.33: Q = beta / (2 alpha)
            if res.q is not None and not res.q_noise_limited and res.q < 0.5 * q_expected:
                warnings.append(
                    f"Q {res.q:.0f} is well below the {q_expected:.0f} expected of {cable_name}: "
                    f"check connectors, the short, water in the cable"
                )

    vf = target_len = cut = None
    if present is not None and not (present + allowance_m <= MAX_LENGTH_M):
        raise UsageError(f"{source}: {present:g} m (+ {allowance_m:g} m allowance) is longer than any "
                         f"stub (allowed: at most {MAX_LENGTH_M:g} m)")
    if present is not None:
        le = present + allowance_m
        vf = 4.0 * le * res.freq_hz / (n * C0)
        target_le = le * ratio
        target_len = target_le - allowance_m
        if target_len <= 0:
            raise UsageError(
                f"--allowance-m: {allowance_m:g} m leaves no cable for the target length "
                f"{target_le:.4f} m (electrical)"
            )
        cut = present - target_len
        tol = getattr(cable_obj, "vf_tolerance", None)
        tol = VF_WARN if tol is None else max(float(tol), 0.005)
        if vf > 1.0:
            warnings.append(
                f"effective VF {vf:.3f} > 1 is impossible: check the length, --order and "
                f"--allowance-m"
            )
        elif abs(vf - vf_nominal) > tol:
            warnings.append(
                f"effective VF {vf:.3f} differs from {cable_name}'s {vf_nominal:.3f} by more "
                f"than {tol:.3f}: check the length, --order, --allowance-m and the cable type"
            )

    advice = _advice(termination, ratio, present, target_len, cut, vf)
    result = TrimResult(
        measurement=label, cable=cable_name, termination=termination, order=n,
        target_mhz=target_mhz, target_source=target_source, sweep_mhz=sweep,
        z_system_ohm=float(np.real(ntwk.z0[0, 0])),
        resonance=res, present_length_m=present, length_source=source,
        allowance_m=allowance_m, nominal_velocity_factor=vf_nominal, velocity_factor=vf,
        target_length_m=target_len, cut_m=cut, q_expected=q_expected, advice=advice,
        warnings=tuple(warnings),
    )
    if png_path is not None:
        plot_measurement(ntwk, result, png_path)
    return result


def _advice(termination, ratio, present, target_len, cut, vf) -> str:
    end = (
        "the open end" if termination == "open"
        else "the shorted end (remove the short, cut, make the short again)"
    )
    if present is None:
        pct = (1.0 - ratio) * 100.0
        if abs(pct) < 0.05:
            return "on target; give --length-m to check in millimetres"
        if pct > 0:
            return (f"shorten the electrical length by {pct:.2f} % (give --length-m or --plan "
                    f"for millimetres), then measure again")
        return (f"the stub is electrically {-pct:.2f} % too short: cable cannot be added back; "
                f"cut a new stub (give --length-m for its length)")
    mm = cut * 1000.0
    if abs(mm) <= ON_TARGET_MM:
        return f"on target (within {ON_TARGET_MM:g} mm): no cut needed"
    if mm > 0:
        return (f"cut {mm:.1f} mm ({inches_16ths(cut)[1]}) off {end} to leave "
                f"{target_len:.4f} m, then measure again")
    return (f"the stub is already {-mm:.1f} mm ({inches_16ths(-cut)[1]}) too short and cable "
            f"cannot be added back: cut a new stub of {target_len:.4f} m "
            f"({target_len / INCH_M:.2f} in; measured VF {vf:.3f}) plus your usual trim margin, "
            f"and trim it the same way")


# ------------------------------------------------------------------ the plot


def plot_measurement(network, result: TrimResult, path: str | os.PathLike[str]) -> Path:
    """Plot the measurement with the measured resonance and the target marked.

    ``|Z|`` in ohms (log scale) for a one-port, ``S21`` in dB for a two-port,
    against frequency in MHz. Written atomically (temporary file, then
    ``os.replace``); matplotlib's global state is not touched.

    Raises
    ------
    InputError
        The folder does not exist or the file cannot be written.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    out = Path(path)
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"--png {out}: folder {folder} does not exist")
    if out.is_dir():
        raise InputError(f"--png {out}: is a directory")
    f_mhz = np.asarray(network.f, dtype=float) / 1e6
    fig = Figure(figsize=(8, 4.5), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        if network.nports == 1:
            z = np.abs(np.asarray(network.z[:, 0, 0]))
            ax.semilogy(f_mhz, z, color="tab:blue", lw=1.2, label="|Z| measured")
            ax.set_ylabel("|Z| input impedance (Ω)")
        else:
            s21 = 20.0 * np.log10(np.abs(np.asarray(network.s[:, 1, 0])))
            ax.plot(f_mhz, s21, color="tab:blue", lw=1.2, label="S21 measured")
            ax.set_ylabel("S21 (dB)")
    r = result.resonance
    ax.axvline(r.freq_mhz, color="tab:red", lw=1.0,
               label=f"measured resonance {r.freq_mhz:.4f} MHz")
    ax.axvline(result.target_mhz, color="tab:green", lw=1.0, ls="--",
               label=f"target {result.target_mhz:.4f} MHz")
    ax.set_xlabel("Frequency (MHz)")
    end = "open" if result.termination == "open" else "shorted"
    title = (f"{Path(result.measurement).name}: {end} stub, {result.cable}, "
             f"order {result.order}")
    if result.cut_mm is not None:
        title += (f" - cut {result.cut_mm:.1f} mm" if not result.too_short
                  else f" - {-result.cut_mm:.1f} mm too short")
    ax.set_title(title, fontsize=10, usetex=False, parse_math=False)  # a '$' in a name is a '$'
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    write_bytes_atomic(out, buf.getvalue(), what="--png")
    return out
