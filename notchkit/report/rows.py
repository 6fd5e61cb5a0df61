"""The pieces every printed row is made of: the :class:`Table`, the words and the numbers.

The terminal, the PDF and the HTML print :class:`Table` rows built once
(:mod:`notchkit.report.text` and the modules it gathers); every state word,
"no value" mark and number format comes from here, so one thing is spelled
one way everywhere. Nothing here computes physics.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import TYPE_CHECKING

from notchkit.cutlist import format_length
from notchkit.report.summary import state_word

if TYPE_CHECKING:
    from notchkit.filters import Filter
    from notchkit.requirements import FilterRequirement
    from notchkit.synthesis import Design
    from notchkit.threats import Threat

NOT_MET = state_word(False, loud=True)
"""``DOES NOT MEET``: the printed failure word (:func:`notchkit.report.summary.state_word`)."""
MET = state_word(True)
"""``meets``: the printed success word."""
DASH = "-"
"""The mark for "no value" in every table."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Table:
    """A table to print: header, rows of strings, alignment and relative widths per column."""

    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    align: tuple[str, ...]
    """``"left"`` or ``"right"`` per column."""
    widths: tuple[float, ...]
    """Relative column widths (the PDF scales them to the text width)."""
    note: str = ""

    def __post_init__(self) -> None:
        n = len(self.header)
        if len(self.align) != n or len(self.widths) != n or any(len(r) != n for r in self.rows):
            raise ValueError(f"table {self.title!r}: every row needs {n} cells")

    def chunk(self, start: int, stop: int, title: str | None = None) -> Table:
        return Table(title=self.title if title is None else title, header=self.header,
                     rows=self.rows[start:stop], align=self.align, widths=self.widths, note=self.note)



# ---------------------------------------------------------------- numbers


def shown_path(path: object) -> str:
    """A file name as the plan prints it: control, bidi and undecodable characters as escapes."""
    from notchkit.textsafe import clean

    return clean(str(path or ""), one_line=True)


MM_PER_IN = 25.4
"""Millimetres in an inch (exact, by the 1959 international yard)."""


_MM = re.compile(r"(?<![\w.])(\d+(?:\.\d+)?) mm\b")


def lengths_in_units(text: str, units: str) -> str:
    """A sentence written in millimetres (``30 mm``) for an inches-only plan: each length to
    1/16 in (:func:`notchkit.cutlist.format_length`); unchanged for ``metric`` and ``both``."""
    if units != "imperial":
        return text
    return _MM.sub(lambda m: format_length(float(m.group(1)) / 1000.0, "imperial"), text)


def rate_text(m_per_mhz: float, units: str = "both") -> str:
    """A trim rate: ``4.2 mm/MHz``, or ``0.165 in/MHz`` when the plan is in inches only."""
    if units == "imperial":
        return f"{1000.0 * m_per_mhz / MM_PER_IN:.3f} in/MHz"
    return f"{1000.0 * m_per_mhz:.1f} mm/MHz"


def order_text(threat: Threat) -> str:
    """A threat's order for the tables: the harmonic or product order, ``-`` where there is none
    (transmitter noise, blocking: ``order`` 0)."""
    order = int(getattr(threat, "order", 0) or 0)
    return str(order) if order > 0 else DASH


def mhz(x: float) -> str:
    """A frequency in MHz to 1 Hz resolution, trailing zeros dropped (``146.52``, ``155.475``)."""
    s = f"{float(x):.6f}".rstrip("0").rstrip(".")
    return s if s not in ("", "-0") else "0"


def mhz4(x: float) -> str:
    """A frequency in MHz to 100 Hz, trailing zeros dropped (a threat's centre frequency)."""
    s = f"{float(x):.4f}".rstrip("0").rstrip(".")
    return s if s not in ("", "-0") else "0"


def band_text(lo: float, hi: float) -> str:
    return f"{mhz(lo)}-{mhz(hi)} MHz" if abs(hi - lo) > 1e-9 else f"{mhz(lo)} MHz"


def db(x: float | None, digits: int = 1) -> str:
    return DASH if x is None else f"{float(x):.{digits}f}"


def pct(p: float) -> str:
    return f"{100.0 * float(p):.1f} %"


def volts(v: float) -> str:
    return f"{v / 1000.0:.2f} kV" if abs(v) >= 1000.0 else f"{v:.0f} V"


# ---------------------------------------------------------------- designs (read, never computed)


def design_id(d: Design) -> str:
    return str(getattr(d, "id", None) or getattr(d, "filter_id", "F?"))


def design_filter(d: Design) -> Filter:
    """The designed filter (its solution's)."""
    return d.solution.filter


def design_meets(d: Design) -> bool:
    """The verdict: meets as designed, buildable, and the build yield reaches its target."""
    return bool(d.meets)


def design_cable_name(d: Design) -> str:
    cab = getattr(d, "cable", None)
    if cab is None:
        filt = design_filter(d)
        cab = getattr(filt, "cable", None)
    return str(getattr(cab, "name", cab) or getattr(d.requirement, "cable", ""))


def _side_text(req: FilterRequirement) -> str:
    """The port a filter sits at: ``receiver input``, ``transmitter output`` or ``radio port``
    (a transceiver's one feedline, whichever side it guards)."""
    if req.side == "tx" and getattr(req, "protects", None) in ("receiver", "both"):
        return "radio port"
    return {"rx": "receiver input", "tx": "transmitter output"}.get(str(req.side), str(req.side))


def location_text(req: FilterRequirement) -> str:
    """Where a filter goes: ``wx-alert (receiver input)``, ``net-2m (radio port, in its receive
    path)``; ``ad-hoc design`` without a radio."""
    if getattr(req, "radio", None):
        side = _side_text(req)
        if side == "radio port":
            side += ", " + ("in its receive path" if req.protects == "receiver"
                            else "in its receive and transmit paths")
        return f"{req.radio}{_on_band(req)} ({side})"
    return "ad-hoc design"


def short_location(req: FilterRequirement) -> str:
    """:func:`location_text` without the detail: ``net-2m (radio port)``."""
    if not getattr(req, "radio", None):
        return "ad-hoc design"
    return f"{req.radio}{_on_band(req)} ({_side_text(req)})"


def _on_band(req: FilterRequirement) -> str:
    """`` on 40m`` for a band-switched filter (in line on that band only), else nothing."""
    band = getattr(req, "switched_band", None)
    return f" on {band}" if band else ""


def design_title(d: Design) -> str:
    req = d.requirement
    if getattr(req, "radio", None):
        return f"{design_id(d)}: {getattr(req, 'label', f'{req.side} filter at {req.radio}')}"
    return f"{design_id(d)}: filter"

