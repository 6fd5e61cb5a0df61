"""What to cut: per-stub lengths, first cut with trim margin, trim rate, end making.

:func:`cut_list` turns a designed :class:`notchkit.filters.Filter` into one
:class:`StubCut` per stub, in element order (radio side first). Every length
is given in metres, in millimetres and in inches to the nearest 1/16 in, so a
person with either tape can cut it. The tolerance run lives in
:mod:`notchkit.tolerance`, the voltage/current/heat check in
:mod:`notchkit.power`.

Lengths
-------
``length_m``
    The stub's full electrical path, from the tee's reference plane to the
    end, tee allowance included (exactly ``Stub.length_m``).
``cut_length_m``
    ``length_m`` less the filter's tee allowance: the cable to cut, connector
    to end.
``first_cut_m``
    ``cut_length_m`` plus the trim margin (default 3 %, common practice), and
    never less than 10 mm extra: cut long, then trim on an analyser.

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 2.3:
       a line ``l`` long is ``beta l = 2 pi f l / (c VF)`` radians; an open
       line a quarter wave long (or an odd multiple) and a shorted line a half
       wave long (or any multiple) present a short circuit at their input.
.. [2] NIST SP 811 (2008), appendix B.8: 1 in = 25.4 mm exactly.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from notchkit.elements import OPEN, SHORT, element_ids, kind_of
from notchkit.errors import DesignError
from notchkit.filters import Filter, Stub
from notchkit.hardware import reference_plane
from notchkit.jsonvalues import finite
from notchkit.lines import C0

MM_PER_INCH = 25.4
"""Millimetres per inch, exact (NIST SP 811)."""
DEFAULT_TRIM_MARGIN_PCT = 3.0
"""First-cut margin, percent of the cut length (common practice)."""
MIN_TRIM_EXTRA_M = 0.010
"""The first cut is never less than this much longer than the cut length."""

END_SHORT, END_OPEN = SHORT.end_text, OPEN.end_text  # the kinds own their coax end texts
END_SHORT_BALANCED = (
    "shorted end (balanced line): bridge the two wires with a short, straight strap of heavy "
    "copper wire or strip soldered across both (as short as the spacing allows: its length adds "
    "to the stub), clear of metal; the tee end connects through a 1:1 current balun, never "
    "straight to coax"
)
END_OPEN_BALANCED = (
    "open end (balanced line): cut both wires square at the same length, keep them apart and "
    "clear of metal, ground and people, and support the end on an insulator (the open end "
    "carries the highest voltage of the stub); the tee end connects through a 1:1 current "
    "balun, never straight to coax"
)
DC_SHORT, DC_OPEN = SHORT.dc_text, OPEN.dc_text

UNITS = ("metric", "imperial", "both")


@dataclass(frozen=True, slots=True, kw_only=True)
class ElectricalLength:
    """A stub's electrical length at one frequency."""

    freq_mhz: float
    degrees: float
    role: str
    """``"notch"`` or ``"pass"``: which band centre the frequency is."""

    def to_json(self) -> dict[str, Any]:
        return {"freq_mhz": _f(self.freq_mhz), "degrees": _f(self.degrees), "role": self.role}


@dataclass(frozen=True, slots=True, kw_only=True)
class StubCut:
    """Everything a person needs to cut and finish one stub."""

    stub_id: str
    element_index: int
    """Position of the stub among the filter's elements (0 = radio side)."""
    tee: int
    """Which tee the stub hangs on, 1 = radio side (stubs at one tee share it)."""
    termination: str
    velocity_factor: float
    length_m: float
    tee_allowance_m: float
    cut_length_m: float
    first_cut_m: float
    trim_margin_pct: float
    electrical: tuple[ElectricalLength, ...]
    resonance_mhz: float
    """The stub's own series resonance (input looks like a short) nearest a
    notch: ``n c VF / (4 l)`` with n odd for an open stub, even for a shorted one."""
    quarter_waves: int
    """``n`` above: how many quarter waves long the stub is at ``resonance_mhz``."""
    serves_notch_mhz: float | None
    """The notch centre that resonance is nearest to; ``None`` without notches."""
    trim_rate_mm_per_mhz: float
    """Millimetres to cut off to raise ``resonance_mhz`` by 1 MHz (``l / f``)."""
    end: str
    dc_note: str
    reference_plane: str = ""
    """Where ``cut_length_m`` is measured from (notchkit.hardware.reference_plane)."""

    @property
    def dc_path_to_ground(self) -> bool:
        return self.termination == "short"

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.stub_id,
            "element_index": self.element_index,
            "tee": self.tee,
            "termination": self.termination,
            "velocity_factor": _f(self.velocity_factor),
            "length_m": _f(self.length_m),
            "tee_allowance_m": _f(self.tee_allowance_m),
            "cut_length_m": _f(self.cut_length_m),
            "cut_length_mm": _f(self.cut_length_m * 1000.0),
            "cut_length_in": _f(self.cut_length_m * 1000.0 / MM_PER_INCH),
            "cut_length_text": format_length(self.cut_length_m),
            "first_cut_m": _f(self.first_cut_m),
            "first_cut_mm": _f(self.first_cut_m * 1000.0),
            "first_cut_in": _f(self.first_cut_m * 1000.0 / MM_PER_INCH),
            "first_cut_text": format_length(self.first_cut_m),
            "trim_margin_pct": _f(self.trim_margin_pct),
            "electrical": [e.to_json() for e in self.electrical],
            "resonance_mhz": _f(self.resonance_mhz),
            "quarter_waves": self.quarter_waves,
            "serves_notch_mhz": None if self.serves_notch_mhz is None else _f(self.serves_notch_mhz),
            "trim_rate_mm_per_mhz": _f(self.trim_rate_mm_per_mhz),
            "dc_path_to_ground": self.dc_path_to_ground,
            "end": self.end,
            "dc_note": self.dc_note,
            "reference_plane": self.reference_plane,
        }


def _f(x: float) -> float:
    """A finite float for JSON (the values here are finite by construction)."""
    return finite(x, "a cut list")


def _positive_freqs(values: Sequence[float], what: str) -> tuple[float, ...]:
    out = []
    for v in values:
        fv = float(v)
        if not (math.isfinite(fv) and fv > 0):
            raise DesignError(f"{what}: {v!r} MHz must be a finite frequency > 0")
        out.append(fv)
    return tuple(out)


def electrical_degrees(length_m: float, freq_mhz: float, velocity_factor: float) -> float:
    """Electrical length in degrees: ``360 l f / (c VF)`` [1]_."""
    return 360.0 * length_m * freq_mhz * 1e6 / (C0 * velocity_factor)


def quarter_wave_m(freq_mhz: float, velocity_factor: float) -> float:
    """Physical length of a quarter wave on a cable: ``c VF / (4 f)`` [1]_."""
    return C0 * velocity_factor / (4.0 * freq_mhz * 1e6)


def stub_resonance_mhz(
    termination: str, length_m: float, velocity_factor: float, near_mhz: Sequence[float] = ()
) -> tuple[float, int, float | None]:
    """The stub's own series resonance nearest any of ``near_mhz``.

    Returns ``(resonance_mhz, n, nearest)`` where the resonance is
    ``n c VF / (4 l)``, ``n`` odd (1, 3, 5, ...) for an open stub and even
    (2, 4, ...) for a shorted one, chosen nearest (by frequency ratio) to one
    of ``near_mhz``; the lowest one when ``near_mhz`` is empty.
    """
    if not (math.isfinite(length_m) and length_m > 0):
        raise DesignError(f"stub length_m {length_m!r} must be > 0 to have a resonance")
    f1 = C0 * velocity_factor / (4.0 * length_m) / 1e6  # quarter-wave frequency, MHz
    first = kind_of(termination).first_order
    if not near_mhz:
        return first * f1, first, None
    best: tuple[float, int, float] = (math.inf, first, float(near_mhz[0]))
    for target in near_mhz:
        k = max(0, round((target / f1 - first) / 2.0))
        for n in {first + 2 * max(0, k - 1), first + 2 * k, first + 2 * (k + 1)}:
            score = abs(math.log(n * f1 / target))
            if score < best[0]:
                best = (score, n, target)
    _, n, target = best
    return n * f1, n, target


def cut_list(
    filt: Filter,
    *,
    notch_mhz: Sequence[float],
    pass_mhz: Sequence[float],
    trim_margin_pct: float = DEFAULT_TRIM_MARGIN_PCT,
    filter_id: str = "F1",
) -> tuple[StubCut, ...]:
    """The cut list of a filter: one :class:`StubCut` per stub, radio side first.

    Parameters
    ----------
    filt : Filter
        The designed filter (stub lengths are full electrical paths).
    notch_mhz, pass_mhz : sequence of float
        Notch and pass band centre frequencies, MHz: the electrical length is
        given at each, and the stub's resonance is the one nearest a notch.
    trim_margin_pct : float
        First-cut margin, percent of the cut length (default 3 %, common
        practice); the extra is at least 10 mm.
    filter_id : str
        Prefix of the stub ids, ``f"{filter_id}-S{n}"`` with n from 1.

    Returns
    -------
    tuple of StubCut

    Raises
    ------
    DesignError
        A stub whose length does not exceed the tee allowance (nothing left to
        cut), a bad frequency, or a bad trim margin.

    Notes
    -----
    Electrical length ``360 l f / (c VF)`` degrees; resonance
    ``f_n = n c VF / (4 l)`` (``n`` odd open, even shorted) [1]_; trim rate
    from ``l = n c VF / (4 f)``: ``dl/df = -l/f``, so removing ``l/f``
    metres raises the resonance by 1 Hz, i.e. ``1000 l / f_MHz`` mm per MHz.
    """
    if not (math.isfinite(trim_margin_pct) and 0.0 <= trim_margin_pct <= 50.0):
        raise DesignError(f"trim_margin_pct {trim_margin_pct!r} must be between 0 and 50 percent")
    notches = _positive_freqs(notch_mhz, "notch_mhz")
    passes = _positive_freqs(pass_mhz, "pass_mhz")
    vf = float(filt.cable.velocity_factor)
    allowance = float(filt.tee_allowance_m)
    tee_of: dict[int, int] = {}
    for t, idx in enumerate(filt.tees(), start=1):
        for i in idx:
            tee_of[i] = t
    cuts = []
    ids = element_ids(filt, filter_id)
    for i, e in enumerate(filt.elements):
        if not isinstance(e, Stub):
            continue
        sid = ids[i]
        cut_m = filt.cut_length_m(e)
        if not cut_m > 0:
            raise DesignError(
                f"{sid}: stub length_m {e.length_m:.4f} m must exceed the tee allowance "
                f"{allowance:.4f} m (nothing left to cut)"
            )
        extra = max(cut_m * trim_margin_pct / 100.0, MIN_TRIM_EXTRA_M)
        res, q, served = stub_resonance_mhz(e.termination, e.length_m, vf, notches)
        if hasattr(filt.cable, "stub_resonance_mhz"):  # hardware / RLGC model: refine on the model
            res = filt.cable.stub_resonance_mhz(e.kind, e.length_m, res)
        elec = tuple(
            ElectricalLength(freq_mhz=f, degrees=electrical_degrees(e.length_m, f, vf), role=role)
            for role, fs in (("notch", notches), ("pass", passes))
            for f in fs
        )
        cuts.append(
            StubCut(
                stub_id=sid,
                element_index=i,
                tee=tee_of[i],
                termination=e.termination,
                velocity_factor=vf,
                length_m=float(e.length_m),
                tee_allowance_m=allowance,
                cut_length_m=float(cut_m),
                first_cut_m=float(cut_m + extra),
                trim_margin_pct=float(trim_margin_pct),
                electrical=elec,
                resonance_mhz=res,
                quarter_waves=q,
                serves_notch_mhz=served,
                trim_rate_mm_per_mhz=1000.0 * e.length_m / res,
                end=_end_note(e.termination, filt.cable),
                dc_note=e.kind.dc_text,
                reference_plane=reference_plane(filt),
            )
        )
    return tuple(cuts)


def _end_note(termination: str, cable: object) -> str:
    """How to make a stub's far end: coax, or a balanced line (``cable.balanced``)."""
    if getattr(cable, "balanced", False):
        return END_SHORT_BALANCED if termination == "short" else END_OPEN_BALANCED
    return END_SHORT if termination == "short" else END_OPEN


def inches_16ths(m: float) -> tuple[int, int]:
    """A length in whole inches and sixteenths, rounded to the nearest 1/16 in.

    Returns ``(whole, sixteenths)`` with ``0 <= sixteenths < 16`` (halves round
    up, away from zero for negative lengths; the sign is carried on ``whole``,
    or on ``sixteenths`` when ``whole`` is 0). 1 in = 25.4 mm exactly [2]_.
    """
    if not math.isfinite(m):
        raise DesignError(f"length {m!r} m must be finite")
    total = math.floor(abs(m) * 1000.0 / MM_PER_INCH * 16.0 + 0.5)
    whole, six = divmod(total, 16)
    if m < 0:
        return (-whole, six) if whole else (0, -six)
    return whole, six


def format_inches(m: float) -> str:
    """``48 9/16 in``: nearest 1/16 in, fraction reduced (8/16 -> 1/2)."""
    whole, six = inches_16ths(m)
    sign = "-" if (whole < 0 or six < 0) else ""
    whole, six = abs(whole), abs(six)
    if six == 0:
        return f"{sign}{whole} in"
    g = math.gcd(six, 16)
    frac = f"{six // g}/{16 // g}"
    return f"{sign}{whole} {frac} in" if whole else f"{sign}{frac} in"


def format_length(m: float, units: str = "both") -> str:
    """A length as a person cuts it: ``"1234 mm (48 9/16 in)"``.

    Parameters
    ----------
    m : float
        Length, metres.
    units : {"metric", "imperial", "both"}
        Millimetres (nearest mm), inches (nearest 1/16 in), or both.
    """
    if units not in UNITS:
        raise DesignError(f"units {units!r} must be one of {', '.join(UNITS)}")
    if not math.isfinite(m):
        raise DesignError(f"length {m!r} m must be finite")
    mm = f"{math.floor(m * 1000.0 + 0.5):d} mm"
    if units == "metric":
        return mm
    inch = format_inches(m)
    if units == "imperial":
        return inch
    return f"{mm} ({inch})"


def format_cut_list(cuts: Sequence[StubCut], units: str = "both") -> str:
    """A plain-text cut list, one block per stub."""
    lines = []
    for c in cuts:
        lines.append(
            f"{c.stub_id}  {c.termination} stub at tee {c.tee}: cut {format_length(c.cut_length_m, units)}"
            f" (first cut {format_length(c.first_cut_m, units)}, +{c.trim_margin_pct:g} %)"
        )
        if c.tee_allowance_m == 0 and "plug" in c.reference_plane:  # hardware model: no allowance
            lines.append(f"    assembled length {format_length(c.length_m, units)} (plug included), "
                         f"VF {c.velocity_factor:g}")
        else:
            lines.append(
                f"    electrical path {format_length(c.length_m, units)} incl. tee allowance "
                f"{format_length(c.tee_allowance_m, 'metric')}, VF {c.velocity_factor:g}"
            )
        if c.reference_plane:
            lines.append(f"    cut length measured {c.reference_plane}")
        lines.append(
            f"    resonance {c.resonance_mhz:.4f} MHz ({c.quarter_waves} x quarter wave); "
            f"trim {c.trim_rate_mm_per_mhz:.1f} mm per MHz to raise it"
        )
        if c.electrical:
            degs = ", ".join(f"{e.degrees:.1f} deg at {e.freq_mhz:g} MHz ({e.role})" for e in c.electrical)
            lines.append(f"    {degs}")
        lines.append(f"    {c.end}")
        lines.append(f"    {c.dc_note}")
    return "\n".join(lines)
