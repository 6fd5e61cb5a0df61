"""What to cut: per-stub lengths, first cut with trim margin, trim rate, end making.

:func:`cut_list` turns a designed :class:`notchkit.filters.Filter` into one
:class:`StubCut` per stub, in element order (radio side first). Every length
is given in metres, in millimetres and in inches to the nearest 1/16 in, so a
person with either tape can cut it. The tolerance run lives in
:mod:`notchkit.buildyield`, the voltage/current/heat check in
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

import numpy as np

# How lengths and cut lists read lives in notchkit.cuttext; the names stay notchkit.cutlist's.
from notchkit.cuttext import MM_PER_INCH as MM_PER_INCH
from notchkit.cuttext import UNITS as UNITS
from notchkit.cuttext import format_cut_list as format_cut_list
from notchkit.cuttext import format_inches as format_inches
from notchkit.cuttext import format_length as format_length
from notchkit.cuttext import inches_16ths as inches_16ths
from notchkit.cuttext import resonance_text as resonance_text
from notchkit.elements import OPEN, SHORT, element_ids, kind_of
from notchkit.errors import DesignError
from notchkit.filters import Filter, Stub
from notchkit.hardware import reference_plane
from notchkit.jsonvalues import finite
from notchkit.lines import C0
from notchkit.site.model import DEFAULT_ANALYSER_MHZ

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
    """The resonance the stub is trimmed to, ``n c VF / (4 l)``: the series resonance
    (input looks like a short; n odd open, even shorted) nearest the notch the stub
    exists for, or, for a stub that notches nothing by itself, its lowest; always
    inside the analyser's range when one exists (see :func:`trim_resonance`)."""
    quarter_waves: int
    """``n`` above: how many quarter waves long the stub is at ``resonance_mhz``."""
    serves_notch_mhz: float | None
    """The notch centre the stub exists for; ``None`` when it notches no band by itself."""
    trim_rate_mm_per_mhz: float
    """Millimetres to cut off to raise ``resonance_mhz`` by 1 MHz (``l / f``)."""
    end: str
    dc_note: str
    resonance_kind: str = "series"
    """Always ``"series"``: an impedance minimum, a notch through the tee."""
    trimmable: bool = True
    """The trim resonance lies inside the analyser's range (else: cut to length)."""
    reference_plane: str = ""
    """Where ``cut_length_m`` is measured from (notchkit.hardware.reference_plane)."""

    @property
    def dc_path_to_ground(self) -> bool:
        return self.termination == "short"

    @property
    def trimmed_alone(self) -> bool:
        """With connection hardware the trim resonance is the stub's alone, swept at its
        plug's mating face (the model's figure: plug and short included, the tee's side arm
        not); on the ideal-tee model it is also where the notch sits through the tee."""
        return self.tee_allowance_m == 0 and "plug" in self.reference_plane

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
            "resonance_kind": self.resonance_kind,
            "trimmable": self.trimmable,
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


ANALYSER_MHZ = DEFAULT_ANALYSER_MHZ
"""Default analyser range (site key ``allowances.analyser_lo_mhz``/``analyser_hi_mhz``)."""
SERVES_MIN_DB = 3.0
"""A stub that alone attenuates a notch's centre by at least this much, with a series
resonance within :data:`SERVES_RATIO` of it, exists for that notch (the one it
attenuates most); otherwise it is a matching or pass stub."""
SERVES_RATIO = 1.25


def _order_near(f1: float, target: float, parity: int, n_lo: int, n_hi: int) -> int | None:
    """The order ``n`` of the given parity (1 odd, 0 even), ``n_lo <= n <= n_hi``,
    whose ``n f1`` is nearest ``target`` by frequency ratio; ``None`` if none."""
    lo = n_lo + ((parity - n_lo) % 2)
    hi = n_hi - ((n_hi - parity) % 2)
    if lo > hi:
        return None
    k = target / f1
    best = None
    for n in {lo, hi, *(int(math.floor(k)) + d for d in (-2, -1, 0, 1, 2))}:
        if lo <= n <= hi and n % 2 == parity % 2:
            score = abs(math.log(n * f1 / target))
            if best is None or score < best[0]:
                best = (score, n)
    return None if best is None else best[1]


def trim_resonance(
    termination: str,
    length_m: float,
    velocity_factor: float,
    *,
    serves_mhz: float | None,
    analyser_mhz: tuple[float, float] = ANALYSER_MHZ,
) -> tuple[float, int, str, bool]:
    """The resonance a stub is trimmed to: ``(resonance_mhz, n, kind, in_range)``.

    Always a series resonance (``n`` odd for an open stub, even for a shorted one):
    the stub's input looks like a short, a notch through the tee, which is what the
    trimming steps measure. The stub exists for the notch at ``serves_mhz``: the
    order nearest that notch; a stub that notches nothing by itself (``serves_mhz``
    ``None``: it matches or passes) is trimmed at its lowest series resonance. Only
    orders inside ``analyser_mhz`` are taken; with none in range, the lowest series
    resonance is returned with ``in_range`` false (the stub is cut to length).
    ``f_n = n c VF / (4 l)`` (Pozar sec. 2.3); ``kind`` is ``"series"``.
    """
    if not (math.isfinite(length_m) and length_m > 0):
        raise DesignError(f"stub length_m {length_m!r} must be > 0 to have a resonance")
    f1 = C0 * velocity_factor / (4.0 * length_m) / 1e6
    lo, hi = analyser_mhz
    n_lo, n_hi = max(1, int(math.ceil(lo / f1 - 1e-9))), int(math.floor(hi / f1 + 1e-9))
    parity = 1 if termination == "open" else 0
    first = 1 if termination == "open" else 2
    n = None
    if serves_mhz is not None:
        n = _order_near(f1, float(serves_mhz), parity, n_lo, n_hi)
    if n is None:
        n = _order_near(f1, max(lo, first * f1), parity, n_lo, n_hi)  # the lowest in range
    if n is not None:
        return n * f1, n, "series", True
    return first * f1, first, "series", False


@dataclass(frozen=True, slots=True, kw_only=True)
class LineCut:
    """A line section between two tees: cable with a plug at each end."""

    line_id: str
    element_index: int
    between_tees: tuple[int, int]
    """The tees it joins, radio side first; 0 for the radio port (first) or antenna port (second)."""
    length_m: float
    velocity_factor: float
    degrees_at_mhz: tuple[tuple[float, float], ...]
    barrel: bool = False
    """A barrel adapter (female-female) joining the two tees: no cable to cut."""

    @property
    def name(self) -> str:
        if self.barrel:
            return "barrel (female-female adapter, no cable)"
        return "line section (cable, a plug at each end)"

    @property
    def where(self) -> str:
        a, b = self.between_tees
        return (f"between {'the radio port' if a == 0 else f'tee {a}'} and "
                f"{'the antenna port' if b == 0 else f'tee {b}'}")

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.line_id, "element_index": self.element_index, "kind": "line", "barrel": self.barrel,
            "name": self.name, "between_tees": list(self.between_tees),
            "length_m": _f(self.length_m), "length_mm": _f(self.length_m * 1000.0),
            "length_in": _f(self.length_m * 1000.0 / MM_PER_INCH),
            "length_text": format_length(self.length_m),
            "velocity_factor": _f(self.velocity_factor),
            "electrical": [{"freq_mhz": _f(f), "degrees": _f(d)} for f, d in self.degrees_at_mhz],
        }


def _tee_numbers(filt: Filter) -> dict[int, int]:
    """Element index -> the number (from 1, radio side first) of the tee it hangs on or joins."""
    return {i: t for t, idx in enumerate(filt.tees(), start=1) for i in idx}


def line_cuts(filt: Filter, *, freq_mhz: Sequence[float] = (), filter_id: str = "F1",
              barrel_m: float = 0.0) -> tuple[LineCut, ...]:
    """Every line section of ``filt``, radio side first, with the tees it joins; one
    ``barrel_m`` long (within 0.1 mm) is a barrel adapter."""
    vf = float(filt.cable.velocity_factor)
    tee_of = _tee_numbers(filt)
    out = []
    ids = element_ids(filt, filter_id)
    for i, e in enumerate(filt.elements):
        if isinstance(e, Stub):
            continue
        before = max((tee_of[j] for j in tee_of if j < i), default=0)
        after = before + 1 if any(j > i for j in tee_of) else 0
        out.append(LineCut(line_id=ids[i], element_index=i, between_tees=(before, after),
                           length_m=float(e.length_m), velocity_factor=vf,
                           degrees_at_mhz=tuple((float(f), electrical_degrees(e.length_m, f, vf))
                                                for f in freq_mhz),
                           barrel=barrel_m > 0 and abs(e.length_m - barrel_m) < 1e-4))
    return tuple(out)


def hardware_notes(filt: Filter) -> tuple[str, ...]:
    """What joins the parts: one line per tee that carries more than one stub."""
    out = []
    modelled = getattr(filt.cable, "hardware", None) is not None  # connection hardware in the model
    each = ("each on its own side arm, as modelled" if modelled else "each with the same tee allowance")
    for t, idx in enumerate(filt.tees(), start=1):
        if len(idx) == 2:
            out.append(f"tee {t} carries 2 stubs at one point: a cross (4-way adapter), or a second tee "
                       f"screwed straight onto the first tee's branch; no cable between them (the "
                       f"design assumes both stubs at one point, {each})")
        elif len(idx) > 2:
            out.append(f"tee {t} carries {len(idx)} stubs at one point: tees screwed straight onto each "
                       f"other's branches, no cable between them (the design assumes one point)")
    return tuple(out)


def buildability(filt: Filter, cuts: Sequence[StubCut], *, min_stub_cut_m: float,
                 min_line_m: float, barrel_m: float = 0.0) -> tuple[str, ...]:
    """Every part of the filter that breaks a buildability rule, one line each (empty: none).

    Rules (docs/cutting.md): a stub's cable is at least ``min_stub_cut_m`` (a plug body
    plus cable to finish and trim; with connector hardware the cable beyond the plug,
    :func:`notchkit.hardware.stub_plug_m`); its trim resonance lies in the analyser's range; a
    line section is at least ``min_line_m`` (cable with a plug at each end), or is a
    barrel adapter (``barrel_m`` long).
    """
    from notchkit.hardware import stub_plug_m

    plug = stub_plug_m(filt.cable)  # a hardware model's cut length includes the plug
    out = []
    for c in cuts:
        if c.cut_length_m - plug < min_stub_cut_m - 1e-6:
            out.append(f"{c.stub_id}: {format_length(c.cut_length_m - plug, 'metric')} of cable is shorter "
                       f"than the {format_length(min_stub_cut_m, 'metric')} a stub needs (plug body and "
                       f"cable to trim)" + (f"; its {format_length(c.cut_length_m, 'metric')} includes "
                                            f"the plug's {plug * 1000:g} mm" if plug else ""))
        if not c.trimmable:
            out.append(f"{c.stub_id}: no resonance inside the analyser's range to trim it to")
    for line in line_cuts(filt, barrel_m=barrel_m):
        if line.length_m < min_line_m - 1e-6 and not line.barrel:
            out.append(f"{line.line_id}: {format_length(line.length_m, 'metric')} line section is "
                       f"shorter than a barrel and than "
                       f"{format_length(min_line_m, 'metric')} (cable with a plug at each end)")
    return tuple(out)


def _serves(filt: Filter, e: Stub, notches: Sequence[float]) -> float | None:
    """The notch centre the stub alone attenuates most (if at least SERVES_MIN_DB)."""
    if not notches:
        return None
    from notchkit.filters import evaluate_batch
    from notchkit.lines import db20

    f = np.asarray(notches, dtype=float) * 1e6
    s21, _ = evaluate_batch((e.termination,), np.array([[e.length_m]]), filt.cable, f)
    att = -db20(s21[0])
    f1 = C0 * float(filt.cable.velocity_factor) / (4.0 * e.length_m) / 1e6
    parity = 1 if e.termination == "open" else 0
    for k in np.argsort(-att, kind="stable"):
        if att[k] < SERVES_MIN_DB:
            break
        n = _order_near(f1, float(notches[k]), parity, 1, 1 << 20)
        if n is not None and abs(math.log(n * f1 / float(notches[k]))) <= math.log(SERVES_RATIO):
            return float(notches[k])
    return None


def cut_list(
    filt: Filter,
    *,
    notch_mhz: Sequence[float],
    pass_mhz: Sequence[float],
    trim_margin_pct: float = DEFAULT_TRIM_MARGIN_PCT,
    filter_id: str = "F1",
    analyser_mhz: tuple[float, float] = ANALYSER_MHZ,
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
    analyser_mhz : (lo, hi)
        The analyser's range: the trim resonance is chosen inside it
        (:func:`trim_resonance`).

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
    tee_of = _tee_numbers(filt)
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
        served = _serves(filt, e, notches)
        res, q, kind, in_range = trim_resonance(e.termination, e.length_m, vf, serves_mhz=served,
                                                analyser_mhz=analyser_mhz)
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
                resonance_kind=kind,
                trimmable=in_range,
                reference_plane=reference_plane(filt),
            )
        )
    return tuple(cuts)


def _end_note(termination: str, cable: object) -> str:
    """How to make a stub's far end: coax, or a balanced line (``cable.balanced``)."""
    if getattr(cable, "balanced", False):
        return END_SHORT_BALANCED if termination == "short" else END_OPEN_BALANCED
    return END_SHORT if termination == "short" else END_OPEN
