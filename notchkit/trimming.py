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
    that is the quarter wave (1 quarter wave); a shorted stub is transparent
    at its quarter wave and notches at its half wave (2 quarter waves).

``quarter_waves`` is always the number of quarter waves of the resonance that
is measured, and ``target_mhz`` is always where that same resonance should be.
With a plan, both come from the plan stub: the resonance the stub is trimmed
to, at the tee for an ``.s2p`` and of the stub alone for an ``.s1p``.

The work is done by small pure steps -- :func:`read_measurement`,
:func:`plan_target`, :func:`find_resonance`, :func:`effective_vf` and
:func:`check_vf`, :func:`cut_for_target`, :func:`advice` -- that :func:`trim`
puts in order. Errors name the library's parameters (``length_m``,
``quarter_waves``); the command line shows its flags instead.

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

import math
import os
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, Literal

import numpy as np

from notchkit.errors import MeasurementError, UsageError
from notchkit.lines import C0
from notchkit.planfile import StubRecord, read_plan, stub_alone_mhz
from notchkit.report.summary import summary_html, summary_repr
from notchkit.resonance import (  # noqa: F401  (re-exported: the measuring step of trim)
    FIT_SPAN,
    MAX_QUARTER_WAVES,
    MIN_DEPTH_DB,
    MIN_SIDE_POINTS,
    NOISE_SIGMAS,
    HardwareStub,
    Resonance,
    _default_quarter_waves,
    find_resonance,
    named,
)

Termination = Literal["open", "short"]

MIN_POINTS = 7
"""Fewest frequency points a sweep must have."""
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
MIN_VF = 0.30
"""Smallest effective velocity factor accepted (common practice: solid-dielectric coax is
about 0.66, PTFE 0.70, foam 0.78-0.88; 0.30 would take a dielectric constant of 11). Below
it, or above 1, the length, the number of quarter waves or the stub is wrong."""

# ------------------------------------------------------------------ results


@dataclass(frozen=True, slots=True, kw_only=True)
class TrimResult:
    """Everything ``notchkit trim`` says about one measurement.

    Lengths are physical cable lengths in metres unless named ``electrical``.
    ``cut_m`` is what to cut off (negative: the stub is already too short).
    Fields that need the present length are ``None`` without one.
    """

    __repr__ = summary_repr
    _repr_html_ = summary_html

    measurement: str
    cable: str
    termination: Termination
    quarter_waves: int
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
    velocity_factor_at_mhz: float | None = None
    """Where :attr:`velocity_factor` holds: the measured resonance. The effective VF is the
    cable's **phase velocity** over c at that frequency, ``omega / (beta c)`` (at HF below the
    published VF, which is the high-frequency limit: the conductor's internal inductance slows
    the wave, docs/hardware.md)."""
    line_model: str = "classic"
    """The plan's line model (``classic`` or ``rlgc``; ``classic`` without a plan)."""
    expected_velocity_factor: float | None = None
    """The phase velocity factor the plan's line model gives the cable at the measured
    resonance: the nominal VF on the classic line, the RLGC line's (lower at HF) with ``rlgc``."""

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
            "quarter_waves": self.quarter_waves,
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
            "velocity_factor_at_mhz": self.velocity_factor_at_mhz,
            "velocity_factor_is": "phase velocity over c at the measured resonance",
            "expected_velocity_factor": self.expected_velocity_factor,
            "line_model": self.line_model,
            "target_length_m": self.target_length_m,
            "cut_mm": self.cut_mm,
            "cut_in": None if cut_in is None else cut_in[0],
            "cut_in_text": None if cut_in is None else cut_in[1],
            "too_short": self.too_short,
            "advice": self.advice,
            "warnings": list(self.warnings),
            "safety": SAFETY,
        }


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

    p = Path(path)
    suffix = p.suffix.lower()
    if suffix not in (".s1p", ".s2p"):
        raise MeasurementError(
            f"{p}: extension {p.suffix or '(none)'!r} is not a one- or two-port Touchstone "
            f"file (use .s1p for the stub alone, .s2p through the tee)"
        )
    from notchkit.bounded import MAX_SWEEP_POINTS, TouchstoneRefused, parse_touchstone, read_measurement_bytes

    data = read_measurement_bytes(p)  # a regular file within the byte and point caps
    if not data.strip():
        raise MeasurementError(f"{p}: is empty (expected a Touchstone {suffix} sweep)")
    if b"\0" in data:
        raise MeasurementError(f"{p}: is a binary file, not a Touchstone text file")
    try:
        ntwk = parse_touchstone(data, p.name)
    except TouchstoneRefused as exc:
        raise MeasurementError(f"{p}: not a readable Touchstone file ({exc.detail})") from None
    if ntwk.nports not in (1, 2):
        raise MeasurementError(f"{p}: has {ntwk.nports} ports; notchkit reads 1 (.s1p) or 2 (.s2p)")
    f = np.asarray(ntwk.f, dtype=float)
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



def load_plan_stub(plan_path: str | os.PathLike[str], stub_id: str) -> StubRecord:
    """Read one stub from a plan JSON (:func:`notchkit.planfile.read_plan`).

    Raises
    ------
    PlanFileError
        Missing or unreadable file, not a plan, no such stub, a bad value.
    """
    return read_plan(plan_path).stub(stub_id)[1]


# ------------------------------------------------------------------ pure steps


@dataclass(frozen=True, slots=True, kw_only=True)
class TrimTarget:
    """What a measurement is compared with: from the arguments, a plan stub, or both."""

    termination: Termination
    target_mhz: float
    target_source: str
    quarter_waves: int | None
    allowance_m: float
    present_length_m: float | None
    length_source: str | None


def plan_target(
    stub: StubRecord | None,
    *,
    ports: int,
    termination: Termination | None = None,
    target_mhz: float | None = None,
    quarter_waves: int | None = None,
    length_m: float | None = None,
    plan_length: str = "cut",
    allowance_m: float | None = None,
) -> TrimTarget:
    """Combine the arguments with a plan stub (the arguments win) into a :class:`TrimTarget`.

    The target is the resonance the stub is trimmed to (its ``quarter_waves``):
    ``resonance_mhz`` at the tee for a two-port sweep through the tee, and
    ``resonance_alone_mhz`` for a one-port sweep of the stub alone at its
    connector. The allowance (fixed electrical length inside the measurement)
    is the plan's tee allowance through the tee, 0 for the stub alone.

    Raises
    ------
    UsageError
        A missing or contradictory value (the message names the parameter).
    """
    sid = None if stub is None else stub.id
    if stub is not None and termination is not None and termination != stub.termination:
        raise named(UsageError(f"termination: {termination} disagrees with plan stub {sid} "
                                f"({stub.termination})"), "termination")
    term = termination if termination is not None else (stub.termination if stub else None)
    if term not in ("open", "short"):
        raise named(UsageError(f"termination: {term!r} must be 'open' or 'short' (or come from a "
                                "plan stub)"), "termination")
    if quarter_waves is None and stub is not None:
        quarter_waves = stub.quarter_waves
    source = "target_mhz"
    if target_mhz is None:
        if stub is None or stub.resonance_mhz is None:
            raise named(UsageError("target_mhz: required (no plan stub gives its resonance)"),
                         "target_mhz")
        if ports == 2:
            target_mhz, source = stub.resonance_mhz, f"plan {sid} resonance at the tee"
        else:
            alone = stub_alone_mhz(stub.resonance_mhz, stub.length_m, stub.cut_length_m)
            target_mhz, source = alone, f"plan {sid} resonance of the stub alone"
    if allowance_m is None:
        allowance_m = stub.allowance_m if (stub is not None and ports == 2) else 0.0
    present, length_source = length_m, ("length_m" if length_m is not None else None)
    if present is None and stub is not None:
        key = "cut_length_m" if plan_length == "cut" else "first_cut_m"
        present = getattr(stub, key)
        if present is None:
            raise named(UsageError(f"plan_length: plan stub {sid} has no {key} (give the other "
                                    "plan_length, or length_m)"), "plan_length", "length_m")
        length_source = f"plan {sid} {key}"
    return TrimTarget(termination=term, target_mhz=float(target_mhz), target_source=source,
                      quarter_waves=quarter_waves, allowance_m=float(allowance_m),
                      present_length_m=present, length_source=length_source)


def effective_vf(electrical_length_m: float, resonance_hz: float, quarter_waves: int) -> float:
    """The velocity factor that puts ``quarter_waves`` quarter waves of a line of this
    electrical length at ``resonance_hz``: ``VF = 4 L f / (n c)``."""
    return 4.0 * electrical_length_m * resonance_hz / (quarter_waves * C0)


def check_vf(vf: float, *, quarter_waves: int, electrical_length_m: float, resonance_hz: float,
             nominal: float) -> None:
    """Refuse an effective VF no coaxial cable has (outside ``MIN_VF``-1).

    Such a figure means the length, the number of quarter waves or the stub is
    wrong, and any cut computed from it would be harmful.

    Raises
    ------
    MeasurementError
        Naming ``quarter_waves`` and ``length_m`` (and the count that would give
        the cable's nominal VF).
    """
    if MIN_VF <= vf <= 1.0:
        return
    n_nominal = electrical_length_m * 4.0 * resonance_hz / (nominal * C0)
    hint = ""
    if round(n_nominal) >= 1:
        hint = (f"; {round(n_nominal)} quarter waves would give "
                f"{effective_vf(electrical_length_m, resonance_hz, round(n_nominal)):.3f}")
    raise named(MeasurementError(
        f"effective velocity factor {vf:.3f} (from quarter_waves {quarter_waves}, an electrical length "
        f"of {electrical_length_m:.4f} m and the resonance at {resonance_hz / 1e6:.4f} MHz) is impossible "
        f"(a coaxial cable has {MIN_VF:g} to 1){hint}: check quarter_waves, length_m and that this is "
        "the right stub; no cut is advised"), "quarter_waves", "length_m")


def cut_for_target(present_m: float, allowance_m: float, resonance_mhz: float,
                   target_mhz: float) -> tuple[float, float]:
    """``(target_length_m, cut_m)``: the same line resonates at a frequency inversely
    proportional to its electrical length ``Le = present + allowance``, so the target
    electrical length is ``Le f_res / f_target`` and ``cut = Le (1 - f_res / f_target)``.

    Raises
    ------
    UsageError
        The allowance alone is longer than the target (names ``allowance_m``).
    """
    le = present_m + allowance_m
    target_le = le * resonance_mhz / target_mhz
    target_len = target_le - allowance_m
    if target_len <= 0:
        raise named(UsageError(f"allowance_m: {allowance_m:g} m leaves no cable for the target "
                                f"length {target_le:.4f} m (electrical)"), "allowance_m")
    return target_len, present_m - target_len


def _check_arguments(target_mhz, length_m, allowance_m, plan_length, plan_path, stub_id) -> None:
    if target_mhz is not None and not _finite_positive(target_mhz):
        raise named(UsageError(f"target_mhz: {target_mhz!r} must be a frequency in MHz > 0"),
                     "target_mhz")
    if target_mhz is None and plan_path is None:
        raise named(UsageError("target_mhz: required unless a plan gives the stub's resonance"),
                     "target_mhz")
    if length_m is not None and not (_finite_positive(length_m) and float(length_m) <= MAX_LENGTH_M):
        raise named(UsageError(f"length_m: {length_m!r} must be the present stub length in metres > 0 "
                               f"and at most {MAX_LENGTH_M:g}"), "length_m")
    if allowance_m is not None:
        try:
            ok = math.isfinite(float(allowance_m)) and 0.0 <= float(allowance_m) <= MAX_LENGTH_M
        except (TypeError, ValueError):
            ok = False
        if not ok:
            raise named(UsageError(f"allowance_m: {allowance_m!r} must be a length in metres >= 0"),
                         "allowance_m")
    if plan_length not in ("cut", "first-cut"):
        raise named(UsageError(f"plan_length: {plan_length!r} must be 'cut' or 'first-cut'"),
                     "plan_length")
    if (plan_path is None) != (stub_id is None):
        raise named(UsageError("plan_path and stub_id go together: give both or neither"),
                     "plan_path", "stub_id")


def _cable(cable: Any) -> Any:
    if isinstance(cable, str):
        from notchkit.cables import get_cable

        return get_cable(cable)
    return cable


def expected_q(cable: Any, freq_hz: float) -> float | None:
    """The cable's own resonator Q at ``freq_hz``, ``beta / (2 alpha)`` (Pozar eq. 6.33);
    ``None`` for a lossless cable or one without loss figures."""
    alpha_fn = getattr(cable, "alpha_np_per_m", None)
    if not callable(alpha_fn):
        return None
    alpha = float(np.asarray(alpha_fn(np.array([freq_hz])), dtype=float).ravel()[0])
    if not alpha > 0:
        return None
    beta = 2.0 * math.pi * freq_hz / (C0 * float(cable.velocity_factor))
    return beta / (2.0 * alpha)


def trim(
    measurement_path: str | os.PathLike[str],
    *,
    cable: Any,
    termination: Termination | None = None,
    target_mhz: float | None = None,
    length_m: float | None = None,
    plan_path: str | os.PathLike[str] | None = None,
    stub_id: str | None = None,
    plan_length: Literal["cut", "first-cut"] = "cut",
    quarter_waves: int | None = None,
    allowance_m: float | None = None,
    png_path: str | os.PathLike[str] | None = None,
    hardware: Any = None,
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
        ``None`` takes it from the plan stub: its ``resonance_mhz`` (at the tee)
        for an ``.s2p``, its ``resonance_alone_mhz`` for an ``.s1p``.
    length_m : float, optional
        Present physical length of the stub, m; overrides the plan.
    plan_path, stub_id : optional
        A plan JSON (``notchkit plan --outdir``) and a stub id (``"F1-S2"``).
    plan_length : {"cut", "first-cut"}
        Which plan length is on the bench: ``cut_length_m`` (cut to plan, the
        default) or ``first_cut_m`` (cut long with the trim margin).
    quarter_waves : int, optional
        Quarter waves of the measured resonance. Default: the plan stub's
        ``quarter_waves``, else 1, or 2 for a shorted stub through a tee.
    allowance_m : float, optional
        Electrical length in series with the stub inside the measurement that
        trimming does not change (the tee allowance), m. Default: the plan's
        tee allowance for an ``.s2p``, else 0.
    png_path : path, optional
        Write a plot of the measurement there (atomically).
    hardware : notchkit.hardware.Hardware or dict, optional
        The stub's connection hardware (plug, tee side arm, the short's
        inductance); default: the plan filter's ``model.hardware``, if any.
        With hardware the length runs from the plug's mating face (plug
        included), the tee allowance is not used, and the inversion is
        :func:`hardware_inversion`.

    Returns
    -------
    TrimResult

    Raises
    ------
    MeasurementError, UsageError, PlanFileError, CableError
        Messages name the parameters above (``length_m``, ``quarter_waves``...);
        an effective VF no cable has is a :class:`MeasurementError`, not advice.

    Notes
    -----
    With electrical length ``Le = L + allowance``, ``VF = 4 Le f_res / (n c)``,
    the target electrical length ``Le f_res / f_target`` (the same line
    resonates at a frequency inversely proportional to its length), and
    ``cut = Le (1 - f_res / f_target)``.
    """
    _check_arguments(target_mhz, length_m, allowance_m, plan_length, plan_path, stub_id)
    if png_path is not None:  # the plot's file, checked against the inputs before any work
        from notchkit.report.files import plan_outputs

        plan_outputs([(png_path, "--png")], inputs=[(measurement_path, "measurement"),
                                                        (plan_path, "plan JSON")])
    cable_obj = _cable(cable)
    stub = filt = None
    if plan_path is not None:
        filt, stub = read_plan(plan_path).stub(str(stub_id))
    hw = _hardware_stub(hardware, filt, cable_obj, allowance_m)
    if stub is None and termination not in ("open", "short"):
        raise named(UsageError(f"termination: {termination!r} must be 'open' or 'short'"), "termination")
    ntwk = read_measurement(measurement_path)
    label = str(measurement_path)
    tgt = plan_target(stub, ports=int(ntwk.nports), termination=termination, target_mhz=target_mhz,
                      quarter_waves=quarter_waves, length_m=length_m, plan_length=plan_length,
                      allowance_m=allowance_m)
    tgt, res = _resonance_step(ntwk, tgt, hw, stub, filt, label, plan_target_given=target_mhz is not None)
    n = tgt.quarter_waves or _default_quarter_waves(res.ports, tgt.termination)
    ratio = res.freq_mhz / tgt.target_mhz
    notes = _resonance_warnings(res, ratio, n, expected_q(cable_obj, res.freq_hz), cable_obj)
    vf, target_len, cut = _length_step(tgt, res, hw, n, cable_obj)
    line_model = str(((filt.extra.get("model") or {}).get("line_model") if filt is not None else None)
                     or "classic")
    expected_vf = expected_phase_vf(cable_obj, res.freq_hz, line_model) if vf is not None else None
    if vf is not None:
        notes += _vf_warnings(vf, cable_obj, expected_vf)
    f = np.asarray(ntwk.f, dtype=float)
    result = TrimResult(
        measurement=label, cable=str(getattr(cable_obj, "name", cable_obj)), termination=tgt.termination,
        quarter_waves=n, target_mhz=tgt.target_mhz, target_source=tgt.target_source,
        sweep_mhz=(float(f[0] / 1e6), float(f[-1] / 1e6)), z_system_ohm=float(np.real(ntwk.z0[0, 0])),
        resonance=res, present_length_m=tgt.present_length_m, length_source=tgt.length_source,
        allowance_m=tgt.allowance_m, nominal_velocity_factor=float(cable_obj.velocity_factor),
        velocity_factor=vf, target_length_m=target_len, cut_m=cut,
        q_expected=expected_q(cable_obj, res.freq_hz),
        advice=advice(tgt.termination, ratio, tgt.present_length_m, target_len, cut, vf),
        warnings=tuple(notes), velocity_factor_at_mhz=None if vf is None else res.freq_mhz,
        line_model=line_model, expected_velocity_factor=expected_vf,
    )
    if png_path is not None:
        plot_measurement(ntwk, result, png_path)
    return result


def _hardware_stub(hardware: Any, filt: Any, cable_obj: Any,
                   allowance_m: float | None) -> HardwareStub | None:
    """The stub's connection hardware: given, else the plan filter's ``model.hardware``, else none."""
    if hardware is None and filt is not None:
        hardware = (filt.extra.get("model") or {}).get("hardware")
    if hardware is None:
        return None
    try:
        hw = HardwareStub.from_json(hardware, _z0(filt, cable_obj))
    except (KeyError, TypeError, ValueError, AttributeError) as exc:
        raise named(UsageError(f"hardware: {hardware!r} is not a connection hardware model ({exc}; "
                               "allowed: a notchkit.hardware.Hardware or a plan's model.hardware)"),
                    "hardware") from None
    if allowance_m:
        raise named(UsageError(f"allowance_m: {allowance_m!r} is not used with connection hardware (the "
                               "tee's side arm is modelled); leave it out"), "allowance_m")
    return hw


def _resonance_step(ntwk: Any, tgt: TrimTarget, hw: HardwareStub | None, stub: Any, filt: Any, label: str,
                    *, plan_target_given: bool) -> tuple[TrimTarget, Resonance]:
    """The measured resonance nearest the target (and the target itself, moved to the tee's
    junction when the plan's stub-alone figure is compared with a through-tee sweep)."""
    ports = int(ntwk.nports)
    n0 = tgt.quarter_waves or _default_quarter_waves(ports, tgt.termination)
    if hw is not None and ports == 2 and not plan_target_given and stub is not None and filt is not None:
        # the plan's trim resonance is the stub's alone at its plug: move it to the tee's junction
        vf_plan = float(filt.cable.velocity_factor)
        f_tee = hw.resonance_hz(stub.cut_length_m - hw.plug_m, vf_plan, tgt.termination, n0, 2,
                                tgt.target_mhz * 1e6)
        tgt = replace(tgt, target_mhz=f_tee / 1e6,
                      target_source=f"plan {stub.id} resonance alone, moved to the tee's junction "
                                    f"({hw.tee_side_m * 1000:g} mm side arm)")
    res = _measure(ntwk, tgt, label)
    if hw is not None and ports == 2:
        # the frequency from the stub branch at the junction (the arms taken off); depth and Q
        # stay those of the notch
        at_junction = _measure(hw.junction_impedance(ntwk), replace(tgt, quarter_waves=n0), label)
        res = replace(res, freq_hz=at_junction.freq_hz)
    return tgt, res


def _length_step(tgt: TrimTarget, res: Resonance, hw: HardwareStub | None, n: int,
                 cable_obj: Any) -> tuple[float | None, float | None, float | None]:
    """``(velocity_factor, target_length_m, cut_m)``; all ``None`` without a present length."""
    if tgt.present_length_m is None:
        return None, None, None
    if not tgt.present_length_m + tgt.allowance_m <= MAX_LENGTH_M:
        raise named(UsageError(f"{tgt.length_source}: {tgt.present_length_m:g} m (+ {tgt.allowance_m:g} m "
                               f"allowance) is longer than any stub (allowed: at most {MAX_LENGTH_M:g} m)"),
                    "length_m")
    if hw is None:
        le = tgt.present_length_m + tgt.allowance_m
        vf = effective_vf(le, res.freq_hz, n)
        check_vf(vf, quarter_waves=n, electrical_length_m=le, resonance_hz=res.freq_hz,
                 nominal=float(cable_obj.velocity_factor))
        target_len, cut = cut_for_target(tgt.present_length_m, tgt.allowance_m, res.freq_mhz, tgt.target_mhz)
        return vf, target_len, cut
    # the cable's own VF and length, the plug, the short and the tee's side arm modelled
    vf, target_len = hardware_inversion(hw, tgt.present_length_m, res.freq_hz, tgt.target_mhz * 1e6,
                                        tgt.termination, n, res.ports)
    check_vf(vf, quarter_waves=n, electrical_length_m=tgt.present_length_m - hw.plug_m,
             resonance_hz=res.freq_hz, nominal=float(cable_obj.velocity_factor))
    return vf, target_len, tgt.present_length_m - target_len


def _z0(filt: Any, cable: Any) -> float:
    """The cable's impedance: the plan's, else the cable's."""
    if filt is not None:
        return float(filt.cable.z0_ohm)
    return float(cable.z0_ohm)


def hardware_inversion(hw: HardwareStub, present_m: float, resonance_hz: float, target_hz: float,
                       termination: str, quarter_waves: int, ports: int) -> tuple[float, float]:
    """``(velocity_factor, target_length_m)`` of a stub with connection hardware.

    ``present_m`` runs from the plug's mating face (plug included). The cable's
    electrical length that makes the hardware stub (plug, short's inductance,
    and through the tee its side arm) resonate at ``resonance_hz`` is solved
    with :func:`scipy.optimize.brentq` on the model's phase
    (:class:`notchkit.resonance.HardwareStub`); the effective VF is that of the
    cable part alone, ``VF = w l_cable / (c theta)``. The target length is the
    plug plus the cable that, at that VF, resonates at ``target_hz`` in the same
    measurement.

    Raises
    ------
    MeasurementError
        The hardware alone resonates below the measurement or the target (names
        ``length_m`` and ``quarter_waves``).
    """
    cable_m = present_m - hw.plug_m
    theta = hw.cable_angle(resonance_hz, termination, quarter_waves, ports)
    if cable_m <= 0 or theta is None or theta <= 0:
        raise named(MeasurementError(
            f"the stub's hardware alone (plug {hw.plug_m * 1000:g} mm"
            f"{f', tee side arm {hw.tee_side_m * 1000:g} mm' if ports == 2 else ''}) leaves no cable for "
            f"{quarter_waves} quarter waves at {resonance_hz / 1e6:.4f} MHz with length_m {present_m:g}: "
            "check quarter_waves, length_m and that this is the right stub; no cut is advised"),
            "quarter_waves", "length_m")
    vf = 2.0 * math.pi * resonance_hz * cable_m / (C0 * theta)
    theta_t = hw.cable_angle(target_hz, termination, quarter_waves, ports)
    if theta_t is None:
        raise named(MeasurementError(
            f"the stub's hardware alone resonates below the target {target_hz / 1e6:.4f} MHz: no cable "
            "length reaches it (check quarter_waves)"), "quarter_waves")
    return vf, hw.plug_m + theta_t * C0 * vf / (2.0 * math.pi * target_hz)


def _measure(ntwk: Any, tgt: TrimTarget, label: str) -> Resonance:
    """The resonance nearest the target, with the file named in any refusal."""
    f = np.asarray(ntwk.f, dtype=float)
    if not (f[0] <= tgt.target_mhz * 1e6 <= f[-1]):
        raise MeasurementError(
            f"{label}: the sweep {f[0] / 1e6:.4g}-{f[-1] / 1e6:.4g} MHz does not cover the target "
            f"{tgt.target_mhz:g} MHz (measure across the target)")
    try:
        return find_resonance(ntwk, tgt.termination, quarter_waves=tgt.quarter_waves,
                              near_hz=tgt.target_mhz * 1e6)
    except MeasurementError as exc:
        raise named(MeasurementError(f"{label}: {exc}"), *getattr(exc, "params", ())) from None


def _resonance_warnings(res: Resonance, ratio: float, n: int, q_expected: float | None,
                        cable: Any) -> list[str]:
    out = []
    if abs(ratio - 1.0) > 0.2:
        out.append(f"the resonance is {abs(ratio - 1) * 100:.0f} % from the target: check quarter_waves "
                   f"({n}) and that this is the right stub")
    if res.q_noise_limited:
        out.append("the resonance depth is at the measurement's noise floor: Q is a lower bound "
                   "(average more sweeps or lower the analyser's IF bandwidth)")
    if (q_expected is not None and res.q is not None and not res.q_noise_limited
            and res.q < 0.5 * q_expected):
        out.append(f"Q {res.q:.0f} is well below the {q_expected:.0f} expected of "
                   f"{getattr(cable, 'name', 'the cable')}: check connectors, the short, water in the cable")
    return out


def expected_phase_vf(cable: Any, freq_hz: float, line_model: str = "classic") -> float:
    """The phase velocity factor ``omega / (beta c)`` the line model gives ``cable`` at ``freq_hz``:
    its published VF on the classic line; on the RLGC line (notchkit.rlgc) lower at HF, where the
    conductor's internal inductance slows the wave."""
    if line_model == "rlgc":
        from notchkit.rlgc import phase_velocity_factor

        try:
            return float(np.asarray(phase_velocity_factor(cable, [freq_hz])).ravel()[0])
        except (ValueError, ZeroDivisionError, FloatingPointError, AttributeError):
            return float(cable.velocity_factor)  # a cable without a loss split
    return float(cable.velocity_factor)


def _vf_warnings(vf: float, cable: Any, expected: float | None = None) -> list[str]:
    nominal = float(cable.velocity_factor) if expected is None else float(expected)
    tol = getattr(cable, "vf_tolerance", None)
    tol = VF_WARN if tol is None else max(float(tol), 0.005)
    if abs(vf - nominal) <= tol:
        return []
    whose = (f"{getattr(cable, 'name', 'the cable')}'s {nominal:.3f}" if expected is None or
             expected == float(cable.velocity_factor) else
             f"the {nominal:.3f} the RLGC line gives {getattr(cable, 'name', 'the cable')} there")
    return [f"effective VF {vf:.3f} differs from {whose} by "
            f"more than {tol:.3f}: check the length, quarter_waves, allowance_m and the cable type"]


def advice(termination: str, ratio: float, present: float | None, target_len: float | None,
           cut: float | None, vf: float | None) -> str:
    """What to do, in one sentence (``ratio`` is measured over target frequency)."""
    end = (
        "the open end" if termination == "open"
        else "the shorted end (remove the short, cut, make the short again)"
    )
    if present is None or cut is None or target_len is None:
        pct = (1.0 - ratio) * 100.0
        if abs(pct) < 0.05:
            return "on target; give length_m to check in millimetres"
        if pct > 0:
            return (f"shorten the electrical length by {pct:.2f} % (give length_m or a plan stub "
                    f"for millimetres), then measure again")
        return (f"the stub is electrically {-pct:.2f} % too short: cable cannot be added back; "
                f"cut a new stub (give length_m for its length)")
    mm = cut * 1000.0
    if abs(mm) <= ON_TARGET_MM:
        return f"on target (within {ON_TARGET_MM:g} mm): no cut needed"
    if mm > 0:
        return (f"cut {mm:.1f} mm ({inches_16ths(cut)[1]}) off {end} to leave "
                f"{target_len:.4f} m ({target_len / INCH_M:.2f} in), then measure again")
    return (f"the stub is already {-mm:.1f} mm ({inches_16ths(-cut)[1]}) too short and cable "
            f"cannot be added back: cut a new stub of {target_len:.4f} m "
            f"({target_len / INCH_M:.2f} in; measured VF {vf:.3f}) plus your usual trim margin, "
            f"and trim it the same way")


# ------------------------------------------------------------------ the plot


def plot_measurement(network: Any, result: TrimResult, path: str | os.PathLike[str]) -> Path:
    """Plot the measurement with the resonance and the target marked
    (:func:`notchkit.report.measurement.plot_measurement`)."""
    from notchkit.report.measurement import plot_measurement as plot

    return plot(network, result, path)
