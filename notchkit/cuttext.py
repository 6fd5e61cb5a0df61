"""Lengths and cut lists as a person reads them: millimetres and inches to 1/16 in.

References
----------
.. [1] NIST SP 811 (2008), appendix B.8: 1 in = 25.4 mm exactly.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

from notchkit.errors import DesignError

if TYPE_CHECKING:
    from notchkit.cutlist import LineCut, StubCut

MM_PER_INCH = 25.4
"""Millimetres per inch, exact (NIST SP 811)."""

UNITS = ("metric", "imperial", "both")


def inches_16ths(m: float) -> tuple[int, int]:
    """A length in whole inches and sixteenths, rounded to the nearest 1/16 in.

    Returns ``(whole, sixteenths)`` with ``0 <= sixteenths < 16`` (halves round
    up, away from zero for negative lengths; the sign is carried on ``whole``,
    or on ``sixteenths`` when ``whole`` is 0). 1 in = 25.4 mm exactly [1]_.
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


def resonance_text(c: StubCut) -> str:
    """``438.0000 MHz (1 x quarter wave, a notch through the tee)``: the trim target (with
    connection hardware: ``(..., the stub alone at its plug)``, see ``StubCut.trimmed_alone``)."""
    where = "the stub alone at its plug" if c.trimmed_alone else "a notch through the tee"
    return f"{c.resonance_mhz:.4f} MHz ({c.quarter_waves} x quarter wave, {where})"


def format_cut_list(cuts: Sequence[StubCut], units: str = "both",
                    lines: Sequence[LineCut] = (), hardware: Sequence[str] = ()) -> str:
    """A plain-text cut list: one block per stub (first cut first), then the line sections
    and the hardware for several stubs at one point."""
    out = []
    for c in cuts:
        out.append(
            f"{c.stub_id}  {c.termination} stub at tee {c.tee}: "
            f"FIRST CUT {format_length(c.first_cut_m, units)}"
            f" (+{c.trim_margin_pct:g} %), then trim to the resonance below; about "
            f"{format_length(c.cut_length_m, units)} when done"
        )
        if c.trimmable:
            out.append(f"    trim to {resonance_text(c)}; {c.trim_rate_mm_per_mhz:.1f} mm per MHz raises it")
        else:
            out.append(f"    no resonance inside the analyser's range: cut to "
                       f"{format_length(c.cut_length_m, units)}"
                       f" and do not trim (nearest resonance {c.resonance_mhz:.4f} MHz)")
        if c.trimmed_alone:  # hardware model: no allowance, lengths from the plug
            out.append(f"    assembled length {format_length(c.length_m, units)} (plug included), "
                       f"VF {c.velocity_factor:g}")
        else:
            out.append(
                f"    electrical path {format_length(c.length_m, units)} incl. tee allowance "
                f"{format_length(c.tee_allowance_m, 'metric')}, VF {c.velocity_factor:g}"
            )
        if c.reference_plane:
            out.append(f"    cut length measured {c.reference_plane}")
        if c.electrical:
            degs = ", ".join(f"{e.degrees:.1f} deg at {e.freq_mhz:g} MHz ({e.role})" for e in c.electrical)
            out.append(f"    {degs}")
        out.append(f"    {c.end}")
        out.append(f"    {c.dc_note}")
    for x in lines:
        out.append(f"{x.line_id}  {x.name} {x.where}: "
                   + ("no cable to cut" if x.barrel else
                      f"CUT {format_length(x.length_m, units)} (cut to length, not trimmed)"))
    for h in hardware:
        out.append(f"hardware: {h}")
    return "\n".join(out)
