"""A stub's resonance in a measured sweep: where it is, how deep, its Q.

:func:`find_resonance` is the measuring step of :func:`notchkit.trimming.trim`
(and usable alone): a one-port sweep of the stub alone, or a two-port sweep
through the tee with the stub in place. The methods are in its Notes.

References
----------
D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sections 6.1-6.3
(series and parallel resonators; transmission-line resonators,
``Q = beta / (2 alpha)``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from notchkit.errors import MeasurementError, NotchkitError, UsageError
from notchkit.lines import C0

Termination = Literal["open", "short"]

MIN_DEPTH_DB = 6.0
"""Smallest contrast (dB) that counts as a clear resonance (see :func:`find_resonance`)."""
FIT_SPAN = 0.025
"""Half-width of the fit window around the resonance, as a fraction of its frequency."""
MIN_SIDE_POINTS = 2
"""Fewest samples the fit needs on each side of the resonance."""
NOISE_SIGMAS = 3.0
"""A resonance depth within this many standard errors of the noise marks Q as a lower bound."""
MAX_QUARTER_WAVES = 400
"""Most quarter waves a measured resonance may be."""

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



def _default_quarter_waves(ports: int, termination: str) -> int:
    return 2 if (ports == 2 and termination == "short") else 1


def _kind(termination: str, quarter_waves: int) -> Literal["series", "parallel"]:
    # open: odd quarter waves series-resonant; short: even quarter waves series-resonant
    return "series" if (termination == "open") == (quarter_waves % 2 == 1) else "parallel"


def named(exc: NotchkitError, *params: str) -> NotchkitError:
    """``exc`` marked with the library parameters its message names (the command line
    shows them as its flags, see :func:`notchkit.cli.flags.with_flags`)."""
    exc.params = params  # type: ignore[attr-defined]
    return exc


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
    window as a floor (never below 1e-6, -120 dB). Returns (f0, u_min, curvature_per_hz2, u_min_std).
    """

    def fit(lo, hi, t):
        uw = u[lo:hi]
        mag = np.sqrt(uw / (1.0 + uw))
        # floor at |S21| = 1e-6 (-120 dB, below any analyser's noise): a simulated lossless
        # notch reaches exactly zero, which would give an infinite weight
        weight = 1.0 / ((mag + max(float(mag.min()), 1e-6)) * (1.0 + uw) ** 2)
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
    quarter_waves: int | None = None,
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
    quarter_waves : int, optional
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
        Bad ``termination`` or ``quarter_waves``, or a resonance that a tee cannot show.

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
    ports = int(network.nports)
    kind = _check_request(ports, termination, quarter_waves)
    f = np.asarray(network.f, dtype=float)
    w, contrast = _curve(network, ports, kind)
    strongest = int(np.argmax(contrast))
    regions = _merge_close(f, _regions(contrast >= MIN_DEPTH_DB))
    what = "notch" if ports == 2 else f"{kind} resonance"
    if not regions:
        raise named(MeasurementError(
            f"no clear {what}: the strongest contrast is {contrast[strongest]:.1f} dB at "
            f"{f[strongest] / 1e6:.4g} MHz (need >= {MIN_DEPTH_DB:g} dB; check termination "
            f"and quarter_waves)"
        ), "termination", "quarter_waves")
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
            return _fit_candidate(f, w, contrast, i, ports, kind)
        except _NoResonance as exc:
            problems.append((str(exc), i))
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
    raise named(MeasurementError(f"no clear {what}: {quantity} near {at} (check termination and "
                                  f"quarter_waves)"), "termination", "quarter_waves")


def _check_request(ports: int, termination: str, quarter_waves: int | None) -> Literal["series", "parallel"]:
    """The kind of resonance asked for, or a refusal naming the parameter."""
    if termination not in ("open", "short"):
        raise named(UsageError(f"termination: {termination!r} must be 'open' or 'short'"), "termination")
    if ports not in (1, 2):
        raise MeasurementError(f"has {ports} ports; notchkit reads 1 (.s1p) or 2 (.s2p)")
    n = _default_quarter_waves(ports, termination) if quarter_waves is None else quarter_waves
    if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= MAX_QUARTER_WAVES:
        raise named(UsageError(f"quarter_waves: {n!r} must be a whole number from 1 to "
                                f"{MAX_QUARTER_WAVES}"), "quarter_waves")
    kind = _kind(termination, n)
    if ports == 2 and kind != "series":
        need = "odd (1, 3, ...)" if termination == "open" else "even (2, 4, ...)"
        raise named(UsageError(
            f"quarter_waves: {n} quarter waves of a{'n open' if termination == 'open' else ' shorted'}"
            f" stub is transparent through a tee (no notch); use an {need} number for a .s2p"
        ), "quarter_waves")
    return kind


def _curve(network: Any, ports: int, kind: str) -> tuple[NDArray[np.complex128], NDArray[np.float64]]:
    """What the fit works on and the contrast (dB) the resonance is looked for in.

    One port: ``w`` the normalised impedance (series) or admittance (parallel).
    Two ports: ``w`` holds ``u = |S21|^2 / (1 - |S21|^2)`` (real).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        if ports == 1:
            s = np.asarray(network.s[:, 0, 0], dtype=complex)
            w = (1.0 + s) / (1.0 - s) if kind == "series" else (1.0 - s) / (1.0 + s)
            contrast = -20.0 * np.log10(np.abs(w))
        else:
            p = np.abs(np.asarray(network.s[:, 1, 0], dtype=complex)) ** 2
            p = np.clip(p, 1e-30, 1.0 - 1e-12)
            w = (p / (1.0 - p)).astype(complex)
            contrast = -10.0 * np.log10(p)
    return (np.asarray(w, dtype=np.complex128),
            np.asarray(np.where(np.isfinite(contrast), contrast, 300.0), dtype=np.float64))


def _fit_candidate(f: NDArray[np.float64], w: NDArray[np.complex128], contrast: NDArray[np.float64], i: int,
                   ports: int, kind: Literal["series", "parallel"]) -> Resonance:
    """The resonance around sample ``i`` (raises :class:`_NoResonance` when there is none)."""
    if ports == 1:
        f0, slope, r0, r_std = _fit_crossing(f, w, float(f[i]))
        limited = r0 <= NOISE_SIGMAS * r_std
        bw = 2.0 * r0 / slope if r0 > 0 else None
        depth = -20.0 * math.log10(r0) if r0 > 0 else float(contrast[i])
    else:
        f0, u_min, curv, u_std = _fit_notch(f, w.real, float(f[i]))
        limited = u_min <= NOISE_SIGMAS * u_std
        bw = 2.0 * math.sqrt(u_min / curv) if u_min > 0 else None
        depth = 10.0 * math.log10((1.0 + u_min) / u_min) if u_min > 0 else float(contrast[i])
    return Resonance(
        freq_hz=float(f0), kind=kind, ports=ports, depth_db=float(depth),
        q=None if bw is None else float(f0 / bw), bandwidth_hz=None if bw is None else float(bw),
        q_noise_limited=bool(limited),
    )


# ------------------------------------------------------------------ a stub with its hardware


@dataclass(frozen=True, slots=True, kw_only=True)
class HardwareStub:
    """A stub with its connection hardware, for the resonance -> length / VF inversion.

    From the far end: the cable (``z0_ohm``) ending open or in the short's
    inductance ``short_nh``; the plug, ``plug_m`` of ``z_pair_ohm`` line at
    ``pair_vf`` (included in the stub's length); measured through the tee,
    the tee's side arm, ``tee_side_m`` of ``tee_z_ohm`` line at ``tee_vf``.
    All lossless: the stub's input reactance through a chain of lines is the
    textbook ``Z_in = Z (Z_L + j Z tan bl) / (Z + j Z_L tan bl)`` (Pozar,
    *Microwave Engineering*, 4th ed., eq. 2.44), carried as an unwrapped angle
    ``psi`` with ``X = Z tan psi`` so the ``n``-th resonance is one root.
    """

    z0_ohm: float
    z_pair_ohm: float
    plug_m: float
    pair_vf: float
    tee_z_ohm: float
    tee_side_m: float
    tee_vf: float
    short_nh: float
    tee_through_m: float = 0.0

    @classmethod
    def from_json(cls, hw: Any, z0_ohm: float) -> HardwareStub:
        """From a plan's ``filters[i].model.hardware`` (or a :class:`notchkit.hardware.Hardware`)."""
        from notchkit.hardware import FAMILIES, Hardware

        if isinstance(hw, Hardware):
            fam = hw.family
            return cls(z0_ohm=z0_ohm, z_pair_ohm=fam.z_pair_ohm, plug_m=fam.plug_mm * 1e-3,
                       pair_vf=fam.pair_vf, tee_z_ohm=fam.tee_z_ohm, tee_side_m=fam.tee_side_mm * 1e-3,
                       tee_vf=fam.tee_vf, short_nh=hw.short_nh, tee_through_m=fam.tee_through_mm * 1e-3)
        fam = FAMILIES.get(str(hw.get("family", "")).lower(), FAMILIES["uhf"])
        return cls(z0_ohm=z0_ohm, z_pair_ohm=float(hw["z_pair_ohm"]), plug_m=float(hw["plug_mm"]) * 1e-3,
                   pair_vf=float(hw.get("pair_vf", fam.pair_vf)), tee_z_ohm=float(hw["tee_z_ohm"]),
                   tee_side_m=float(hw["tee_side_mm"]) * 1e-3, tee_vf=float(hw.get("tee_vf", fam.tee_vf)),
                   short_nh=float(hw["short_nh"]), tee_through_m=float(hw.get("tee_through_mm", 0.0)) * 1e-3)

    def junction_impedance(self, network: Any) -> Any:
        """The stub branch's impedance at the tee's junction from a two-port sweep through the
        tee: the two through arms (lossless lines) are taken off the measured ABCD matrix and
        the shunt left is ``[[1, 0], [1/Z, 1]]`` (Pozar table 4.1). Returned as a one-port
        :class:`skrf.Network` in the sweep's port impedance, so its series resonance is found
        as for a stub alone, free of the notch shape the arms' mismatch gives ``|S21|``."""
        import skrf

        f = np.asarray(network.f, dtype=float)
        a = np.asarray(network.a, dtype=complex)
        bl = 2.0 * np.pi * f * self.tee_through_m / (C0 * self.tee_vf)
        inv = np.empty_like(a)
        inv[:, 0, 0] = inv[:, 1, 1] = np.cos(bl)
        inv[:, 0, 1] = -1j * self.tee_z_ohm * np.sin(bl)
        inv[:, 1, 0] = -1j * np.sin(bl) / self.tee_z_ohm
        shunt = inv @ a @ inv
        z_sys = float(np.real(np.asarray(network.z0)[0, 0]))
        with np.errstate(divide="ignore", invalid="ignore"):
            z = 1.0 / shunt[:, 1, 0]
            s11 = (z - z_sys) / (z + z_sys)
        s11 = np.where(np.isfinite(s11), s11, 1.0)
        return skrf.Network(frequency=network.frequency, s=s11.reshape(-1, 1, 1), z0=z_sys)

    @staticmethod
    def target_angle(termination: str, quarter_waves: int) -> float:
        """``psi`` at the ``quarter_waves``-th series resonance (``X = 0``)."""
        return quarter_waves * math.pi / 2.0 - (math.pi / 2.0 if termination == "open" else 0.0)

    def angle(self, freq_hz: float, cable_angle: float, termination: str, ports: int) -> float:
        """Unwrapped ``psi`` (``X = Z tan psi``) at the plug's mating face (one port) or at the
        tee's junction (two ports), the cable ``cable_angle`` radians long."""
        w = 2.0 * math.pi * freq_hz
        psi = -math.pi / 2.0 if termination == "open" else math.atan(w * self.short_nh * 1e-9 / self.z0_ohm)
        psi += cable_angle
        z = self.z0_ohm
        sections = [(self.z_pair_ohm, self.pair_vf, self.plug_m)]
        if ports == 2:
            sections.append((self.tee_z_ohm, self.tee_vf, self.tee_side_m))
        for zs, vf, length in sections:
            k = math.floor(psi / math.pi + 0.5)
            psi = math.atan(z / zs * math.tan(psi - k * math.pi)) + k * math.pi
            psi += w * length / (C0 * vf)
            z = zs
        return psi

    def cable_angle(self, freq_hz: float, termination: str, quarter_waves: int, ports: int) -> float | None:
        """The cable's electrical length, radians, that resonates at ``freq_hz``; ``None``
        when the hardware alone is already longer."""
        from scipy.optimize import brentq

        goal = self.target_angle(termination, quarter_waves)

        def err(theta: float) -> float:
            return self.angle(freq_hz, theta, termination, ports) - goal

        if err(0.0) >= 0.0:
            return None
        return float(brentq(err, 0.0, goal + 1.5 * math.pi, xtol=1e-13, rtol=1e-13))

    def resonance_hz(self, cable_m: float, vf: float, termination: str, quarter_waves: int, ports: int,
                     guess_hz: float) -> float:
        """The ``quarter_waves``-th series resonance of this stub with ``cable_m`` of cable at ``vf``."""
        from scipy.optimize import brentq

        goal = self.target_angle(termination, quarter_waves)

        def err(f: float) -> float:
            return self.angle(f, 2.0 * math.pi * f * cable_m / (C0 * vf), termination, ports) - goal

        lo, hi = guess_hz * 1e-3, guess_hz
        while err(hi) < 0.0:
            hi *= 2.0
        return float(brentq(err, lo, hi, xtol=1e-6, rtol=1e-13))


__all__ = ["HardwareStub", "Resonance", "find_resonance", "named"]
