"""Result objects of the survey: threats, the transmitter x receiver matrix, JSON."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from notchkit.report.summary import summary_html, summary_repr
from notchkit.requirements import FilterRequirement

MULTI_SOURCE = ("intermod", "blocking")
"""Mechanisms whose JSON ``source`` is a list of transmitter names."""

MECHANISMS = ("fundamental", "harmonic", "intermod", "noise", "blocking")


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchFeed:
    """One notch that threats ask of one filter location (aggregated over threats).

    ``side`` is ``"tx"`` (at the transmitter's output) or ``"rx"`` (at the
    receiver's input); ``required_db`` = the worst excess + the site's rejection margin.
    """

    radio: str
    side: str
    lo_mhz: float
    hi_mhz: float
    required_db: float
    reason: str
    bands: tuple[str, ...] = ()
    """Operating choices of the radio on which this notch is needed (band-switched radios)."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Threat:
    """One way a transmitter (or a set of them) reaches a receiver.

    Levels in dBm at the receiver's input; ``excess_db = level_dbm -
    threshold_dbm`` (negative: no filter needed); ``required_db`` is the notch
    depth a filter must give, excess + rejection margin.
    """

    sources: tuple[str, ...]
    victim: str
    mechanism: str
    order: int
    product: str
    f_mhz: float
    f_lo_mhz: float
    f_hi_mhz: float
    level_dbm: float
    threshold_dbm: float
    threshold_source: str
    excess_db: float
    required_db: float
    isolation_db: float
    isolation_method: str
    remedy: str
    mixer: str | None = None
    details: tuple[str, ...] = ()
    filters: tuple[tuple[str, str], ...] = ()
    """The filter locations (radio, side) this threat feeds a notch to (positive excess
    only; empty when no stub can help, see ``remedy``)."""
    route: str | None = None
    """For ``intermod``: where the product forms at its worst, ``"transmitter"`` (in
    ``mixer``'s output stage) or ``"receiver"`` (in the victim's front end)."""
    level_model: str | None = None
    """For ``intermod`` and ``blocking``: the level model that gave ``level_dbm``."""
    # -- how the site operates (threats/operating.py, set by threats/core.py) --
    scenario: tuple[str, ...] = ()
    """Scenarios in which the sources and the victim can be active together."""
    operating: tuple[str, ...] = ()
    """Operating choice of each band-switched radio involved, ``"radio: band"``."""
    installed_db: float = 0.0
    """Rejection of installed filters on the final path (source's transmit side and
    victim's receive side), dB, already included in ``level_dbm``."""
    installed: tuple[str, ...] = ()
    remedy_class: str = ""
    """``none``, ``stub``, or not a stub job: ``band-pass filter``, ``cavity``,
    ``spacing``, ``time-sharing``."""

    @property
    def coupling_source(self) -> str:
        """``measured``, ``formula`` or ``bound``: where the antenna isolation came from."""
        if self.isolation_method.startswith("measured"):
            return "measured"
        if self.isolation_method.startswith("bound"):
            return "bound"
        return "formula"

    def to_json(self) -> dict[str, Any]:
        return {
            "source": list(self.sources) if self.mechanism in MULTI_SOURCE else self.sources[0],
            "victim": self.victim,
            "mechanism": self.mechanism,
            "order": self.order,
            "f_mhz": _num(self.f_mhz, 6),
            "excess_db": _num(self.excess_db, 3),
            "product": self.product,
            "f_lo_mhz": _num(self.f_lo_mhz, 6),
            "f_hi_mhz": _num(self.f_hi_mhz, 6),
            "level_dbm": _num(self.level_dbm, 3),
            "threshold_dbm": _num(self.threshold_dbm, 3),
            "threshold_source": self.threshold_source,
            "required_db": _num(self.required_db, 3),
            "isolation_db": _num(self.isolation_db, 3),
            "isolation_method": self.isolation_method,
            "mixer": self.mixer,
            "route": self.route,
            "level_model": self.level_model,
            "remedy": self.remedy,
            "filters": [{"radio": r, "side": s} for r, s in self.filters],
            "details": list(self.details),
            "scenario": list(self.scenario),
            "operating": list(self.operating),
            "installed_rejection_db": _num(self.installed_db, 3),
            "installed": list(self.installed),
            "coupling_source": self.coupling_source,
            "remedy_class": self.remedy_class,
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class SurveyMatrix:
    """Worst excess (dB) of every transmitter against every receiver; ``None``: no threat."""

    transmitters: tuple[str, ...]
    receivers: tuple[str, ...]
    excess_db: tuple[tuple[float | None, ...], ...]

    def worst(self, transmitter: str, receiver: str) -> float | None:
        i = self.transmitters.index(transmitter)
        j = self.receivers.index(receiver)
        return self.excess_db[i][j]

    def to_json(self) -> dict[str, Any]:
        return {
            "transmitters": list(self.transmitters),
            "receivers": list(self.receivers),
            "excess_db": [[None if v is None else _num(v, 3) for v in row] for row in self.excess_db],
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class SurveyResult:
    """What :func:`notchkit.threats.survey` found.

    ``threats`` are sorted by excess, worst first; ``filters`` holds one
    :class:`~notchkit.requirements.FilterRequirement` per filter location that
    has at least one notch; ``notes`` records assumptions (defaults used, pairs
    not evaluated).
    """

    __repr__ = summary_repr
    _repr_html_ = summary_html

    site: str
    transmitters: tuple[str, ...]
    receivers: tuple[str, ...]
    threats: tuple[Threat, ...]
    filters: tuple[FilterRequirement, ...]
    notes: tuple[str, ...] = ()
    max_harmonic: int = 5
    rejection_margin_db: float = 6.0
    max_im_order: int = 5
    left_out: tuple[tuple[str, int, int], ...] = ()
    """(mechanism, above the limit, at or below it): products evaluated but not kept as
    threat objects (only the worst are kept on large sites, see docs/survey.md)."""
    left_out_worst: tuple[tuple[str, str, float], ...] = ()
    """(transmitter, receiver, worst excess dB) over everything evaluated, so the matrix
    stays complete when threats were left out."""

    def beyond_stubs(self) -> tuple[Threat, ...]:
        """Threats over the limit that no stub filter (or no stub alone) removes: same band,
        or deeper than stubs can notch; each one's ``remedy`` says what does."""
        return tuple(t for t in self.threats
                     if t.excess_db > 0 and (not t.filters or t.remedy.startswith("no stub")))

    def matrix(self) -> SurveyMatrix:
        """Transmitter x receiver worst excess; an intermod threat counts for each source."""
        worst: dict[tuple[str, str], float] = {}
        for s, v, e in self.left_out_worst:
            if (s, v) not in worst or e > worst[(s, v)]:
                worst[(s, v)] = e
        for t in self.threats:
            for s in t.sources:
                key = (s, t.victim)
                if key not in worst or t.excess_db > worst[key]:
                    worst[key] = t.excess_db
        rows = tuple(
            tuple(worst.get((tx, rx)) for rx in self.receivers) for tx in self.transmitters
        )
        return SurveyMatrix(transmitters=self.transmitters, receivers=self.receivers, excess_db=rows)

    def to_json(self) -> dict[str, Any]:
        """The survey as JSON-ready data (keys ``threats`` and ``filters`` are fixed)."""
        return {
            "site": self.site,
            "max_harmonic": self.max_harmonic,
            "max_im_order": self.max_im_order,
            "rejection_margin_db": _num(self.rejection_margin_db, 3),
            "threats": [t.to_json() for t in self.threats],
            "filters": [_filter_json(f) for f in self.filters],
            "matrix": self.matrix().to_json(),
            "notes": list(self.notes),
            "left_out": [
                {"mechanism": m, "over_limit": over, "under_limit": under}
                for m, over, under in self.left_out
            ],
        }


def _filter_json(req: FilterRequirement) -> dict[str, Any]:
    return {
        "radio": req.radio,
        "side": req.side,
        "pass": [[_num(b.lo_mhz, 6), _num(b.hi_mhz, 6)] for b in req.pass_bands],
        "notch": [
            {
                "lo_mhz": _num(n.lo_mhz, 6),
                "hi_mhz": _num(n.hi_mhz, 6),
                "required_db": _num(n.required_db, 3),
                "reason": reason,
            }
            for n, reason in zip(req.notches, _pad(req.reasons, len(req.notches)), strict=True)
        ],
        "cable": req.cable,
        "power_w": None if req.power_w is None else _num(req.power_w, 6),
        "power_mhz": None if req.power_mhz is None else _num(req.power_mhz, 6),
        "band_use": [{"band": b, "notches": list(k)} for b, k in req.band_use],
    }


def _pad(items: tuple[str, ...], n: int) -> tuple[str, ...]:
    return tuple(items[:n]) + ("",) * max(0, n - len(items))


def _num(x: float, digits: int) -> float:
    """A finite, rounded float for JSON; a non-finite value here is a bug."""
    v = float(x)
    if not math.isfinite(v):
        raise ValueError(f"non-finite value {v!r} in survey output")
    return round(v, digits)
