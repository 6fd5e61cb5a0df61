"""The plan JSON as one typed format: the writer and the reader share these types.

``notchkit plan --outdir`` writes ``plan.json`` and ``notchkit design --json``
prints the same ``filters``; ``notchkit trim --plan`` and ``notchkit verify
--plan`` read them back. Every key that a reader uses is written by a
``to_json`` below and read by the matching ``from_json``, so writer and reader
cannot disagree (a round-trip test runs on a real plan). Parts no reader uses
(the survey, the tolerance run, the power check, the cut list) are carried as
plain data in ``extra``.

Reading is bounded and validated (:func:`read_plan`): at most
:data:`MAX_PLAN_BYTES` of a regular file, nesting at most 64 levels (:mod:`notchkit.bounded`), finite
numbers only, and every problem is one line
``FILE:LINE:COL: filters[0].elements[1].quarter_waves: what is wrong (what is allowed)``
raised as :class:`PlanFileError` (exit code 2).

Stub lengths
------------
``length_m`` is the stub's full electrical path from the tee's reference plane
(tee allowance included), ``cut_length_m`` the cable connector to end,
``first_cut_m`` the cable cut long for trimming. ``resonance_mhz`` is the
resonance the stub is trimmed to, at the tee (``quarter_waves`` quarter waves of
the full path), and ``resonance_alone_mhz`` the same resonance of the stub
alone measured at its connector: the same cable without the tee's path
resonates higher by ``length_m / cut_length_m`` (``f_n = n c VF / (4 L)``,
Pozar, *Microwave Engineering*, 4th ed., sec. 2.3).
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

from notchkit.jsonread import JsonFileError, parse_json, read_text_bounded
from notchkit.jsonread import Reader as _BaseReader

MAX_PLAN_BYTES = 64 * 1024 * 1024
"""Largest plan JSON read, bytes (a plan of the largest example is under 100 kB)."""
MAX_FILTERS = 1000
MAX_ELEMENTS = 64

Termination = Literal["open", "short"]


class PlanFileError(JsonFileError):
    """A plan JSON that cannot be used: unreadable, too large, not JSON, or a bad value."""


class _Reader(_BaseReader):
    """Typed look-ups of the plan JSON; problems are :class:`PlanFileError`."""

    def __init__(self, path: str, text: str | None) -> None:
        super().__init__(path, text, PlanFileError)


# ------------------------------------------------------------------ records


def stub_alone_mhz(resonance_mhz: float, length_m: float, cut_length_m: float) -> float:
    """The resonance of a stub alone at its connector, from its resonance at the tee.

    The same cable without the tee allowance is shorter and resonates higher:
    ``f_alone = f_tee * length_m / cut_length_m`` (``f_n = n c VF / (4 L)``).
    """
    return resonance_mhz * length_m / cut_length_m


@dataclass(frozen=True, slots=True, kw_only=True)
class CableRecord:
    """The cable a filter is built from (``filters[i].cable``)."""

    type: str
    z0_ohm: float
    velocity_factor: float
    calibration: Mapping[str, Any] | None = None
    """Set when the lengths were computed with a measured cable spool (see
    :mod:`notchkit.calibration`): spool name, measured VF and how many pieces."""

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"type": self.type, "z0_ohm": self.z0_ohm,
                               "velocity_factor": self.velocity_factor}
        if self.calibration is not None:
            out["calibration"] = dict(self.calibration)
        return out

    @classmethod
    def from_json(cls, r: _Reader, node: Any, where: str) -> CableRecord:
        obj = r.obj(node, where)
        cal = obj.get("calibration")
        if cal is not None:
            cal = dict(r.obj(cal, f"{where}.calibration"))
        return cls(type=r.text(obj, "type", where), z0_ohm=r.num(obj, "z0_ohm", where),
                   velocity_factor=r.num(obj, "velocity_factor", where, hi=1.0), calibration=cal)


@dataclass(frozen=True, slots=True, kw_only=True)
class StubRecord:
    """One stub of a filter (``filters[i].elements[j]`` with ``kind: stub``)."""

    id: str
    tee: int
    termination: Termination
    length_m: float
    cut_length_m: float
    first_cut_m: float | None = None
    trim_rate_mm_per_mhz: float | None = None
    resonance_mhz: float | None = None
    quarter_waves: int | None = None
    tee_allowance_m: float | None = None

    kind: Literal["stub"] = field(default="stub", init=False)

    @property
    def allowance_m(self) -> float:
        """The tee allowance: ``tee_allowance_m``, else ``length_m - cut_length_m``."""
        if self.tee_allowance_m is not None:
            return self.tee_allowance_m
        return max(self.length_m - self.cut_length_m, 0.0)

    @property
    def resonance_alone_mhz(self) -> float | None:
        """The trim resonance of the stub alone at its connector (see the module notes)."""
        if self.resonance_mhz is None:
            return None
        return stub_alone_mhz(self.resonance_mhz, self.length_m, self.cut_length_m)

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"kind": "stub", "id": self.id, "tee": self.tee,
                               "termination": self.termination, "length_m": self.length_m,
                               "cut_length_m": self.cut_length_m}
        for key in ("first_cut_m", "trim_rate_mm_per_mhz", "resonance_mhz", "quarter_waves",
                    "tee_allowance_m"):
            v = getattr(self, key)
            if v is not None:
                out[key] = v
        alone = self.resonance_alone_mhz
        if alone is not None:
            out["resonance_alone_mhz"] = alone
        return out

    @classmethod
    def from_json(cls, r: _Reader, obj: Mapping[str, Any], where: str,
                  cut_list: Mapping[str, Mapping[str, Any]]) -> StubRecord:
        sid = r.text(obj, "id", where)
        length = r.num(obj, "length_m", where)
        cut = r.num(obj, "cut_length_m", where)
        if cut > length:
            r.fail(f"{where}.cut_length_m", f"{cut!r} m is longer than length_m {length!r} m "
                   "(the cut cable is the path less the tee allowance)", (*r.path_of(where), "cut_length_m"))
        qw = r.integer(obj, "quarter_waves", where, optional=True)
        if qw is None:
            # plans written before the key moved here carried it only in the cut list
            old = cut_list.get(sid)
            if old is not None:
                qw = r.integer(old, "quarter_waves", f"cut_list[{sid}]", optional=True)
        term = r.choice(obj, "termination", where, ("open", "short"))
        res = r.num(obj, "resonance_mhz", where, optional=True)
        if qw is not None and qw % 2 != (1 if term == "open" else 0):
            r.fail(f"{where}.quarter_waves",
                   f"{qw} quarter waves is not a notch of a{'n open' if term == 'open' else ' shorted'} stub "
                   f"({'odd' if term == 'open' else 'even'} numbers)", (*r.path_of(where), "quarter_waves"))
        return cls(id=sid, tee=r.integer(obj, "tee", where), termination=term, length_m=length,
                   cut_length_m=cut, first_cut_m=r.num(obj, "first_cut_m", where, optional=True),
                   trim_rate_mm_per_mhz=r.num(obj, "trim_rate_mm_per_mhz", where, optional=True),
                   resonance_mhz=res, quarter_waves=qw,
                   tee_allowance_m=r.num(obj, "tee_allowance_m", where, optional=True, zero=True))


@dataclass(frozen=True, slots=True, kw_only=True)
class LineRecord:
    """A line section between two tees (``kind: line``)."""

    id: str
    length_m: float

    kind: Literal["line"] = field(default="line", init=False)

    def to_json(self) -> dict[str, Any]:
        return {"kind": "line", "id": self.id, "length_m": self.length_m}

    @classmethod
    def from_json(cls, r: _Reader, obj: Mapping[str, Any], where: str) -> LineRecord:
        return cls(id=r.text(obj, "id", where), length_m=r.num(obj, "length_m", where, zero=True))


Element = StubRecord | LineRecord


@dataclass(frozen=True, slots=True, kw_only=True)
class PassRecord:
    """A pass band and what the design achieves there (``filters[i].pass[k]``)."""

    lo_mhz: float
    hi_mhz: float
    worst_insertion_loss_db: float
    worst_swr: float
    max_insertion_loss_db: float
    max_swr: float
    meets: bool

    def to_json(self) -> dict[str, Any]:
        return {"lo_mhz": self.lo_mhz, "hi_mhz": self.hi_mhz,
                "worst_insertion_loss_db": self.worst_insertion_loss_db, "worst_swr": self.worst_swr,
                "max_insertion_loss_db": self.max_insertion_loss_db, "max_swr": self.max_swr,
                "meets": self.meets}

    @classmethod
    def from_json(cls, r: _Reader, node: Any, where: str) -> PassRecord:
        obj = r.obj(node, where)
        lo, hi = r.band(obj, where)
        return cls(lo_mhz=lo, hi_mhz=hi,
                   worst_insertion_loss_db=r.num(obj, "worst_insertion_loss_db", where, zero=True),
                   worst_swr=r.num(obj, "worst_swr", where, lo=1.0),
                   max_insertion_loss_db=r.num(obj, "max_insertion_loss_db", where),
                   max_swr=r.num(obj, "max_swr", where, lo=1.0), meets=r.flag(obj, "meets", where))


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchRecord:
    """A notch band and what the design achieves there (``filters[i].notch[k]``)."""

    lo_mhz: float
    hi_mhz: float
    required_db: float
    worst_attenuation_db: float
    margin_db: float
    worst_mhz: float
    meets: bool

    def to_json(self) -> dict[str, Any]:
        return {"lo_mhz": self.lo_mhz, "hi_mhz": self.hi_mhz, "required_db": self.required_db,
                "worst_attenuation_db": self.worst_attenuation_db, "margin_db": self.margin_db,
                "worst_mhz": self.worst_mhz, "meets": self.meets}

    @classmethod
    def from_json(cls, r: _Reader, node: Any, where: str) -> NotchRecord:
        obj = r.obj(node, where)
        lo, hi = r.band(obj, where)
        return cls(lo_mhz=lo, hi_mhz=hi, required_db=r.num(obj, "required_db", where),
                   worst_attenuation_db=r.num(obj, "worst_attenuation_db", where, signed=True),
                   margin_db=r.num(obj, "margin_db", where, signed=True),
                   worst_mhz=r.num(obj, "worst_mhz", where), meets=r.flag(obj, "meets", where))


@dataclass(frozen=True, slots=True, kw_only=True)
class FilterRecord:
    """One designed filter (``filters[i]``)."""

    id: str
    side: str | None
    cable: CableRecord
    arrangement: str
    elements: tuple[Element, ...]
    passes: tuple[PassRecord, ...]
    notches: tuple[NotchRecord, ...]
    meets: bool
    radio: str | None = None
    extra: Mapping[str, Any] = field(default_factory=dict)
    """Keys no reader uses (margin, shortfall, advice, cut list, tolerance, power), as written."""

    @property
    def stubs(self) -> tuple[StubRecord, ...]:
        return tuple(e for e in self.elements if isinstance(e, StubRecord))

    def stub(self, stub_id: str) -> StubRecord | None:
        return next((s for s in self.stubs if s.id == stub_id), None)

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"id": self.id}
        if self.radio is not None:
            out["radio"] = self.radio
        out["side"] = self.side
        out["cable"] = self.cable.to_json()
        out["arrangement"] = self.arrangement
        out["elements"] = [e.to_json() for e in self.elements]
        out["pass"] = [p.to_json() for p in self.passes]
        out["notch"] = [n.to_json() for n in self.notches]
        out["meets"] = self.meets
        for k, v in self.extra.items():
            out.setdefault(k, v)
        return out

    @classmethod
    def from_json(cls, r: _Reader, node: Any, where: str) -> FilterRecord:
        obj = r.obj(node, where)
        known = {"id", "radio", "side", "cable", "arrangement", "elements", "pass", "notch", "meets"}
        cut_list: dict[str, Mapping[str, Any]] = {}
        raw_cuts = obj.get("cut_list")
        if isinstance(raw_cuts, list):
            cut_list = {str(c.get("id")): c for c in raw_cuts if isinstance(c, dict)}
        elements: list[Element] = []
        for j, el in enumerate(r.items(obj, "elements", where, MAX_ELEMENTS)):
            w = f"{where}.elements[{j}]"
            e = r.obj(el, w)
            kind = r.choice(e, "kind", w, ("stub", "line"))
            elements.append(StubRecord.from_json(r, e, w, cut_list) if kind == "stub"
                            else LineRecord.from_json(r, e, w))
        if not any(isinstance(e, StubRecord) for e in elements):
            r.fail(f"{where}.elements", "has no stub (a filter has at least one)",
                   (*r.path_of(where), "elements"))
        side = obj.get("side")
        radio = obj.get("radio")
        for key, v in (("side", side), ("radio", radio)):
            if v is not None and not isinstance(v, str):
                r.fail(f"{where}.{key}", f"{v!r} must be text or null", (*r.path_of(where), key))
        return cls(
            id=r.text(obj, "id", where), radio=radio, side=side,
            cable=CableRecord.from_json(r, r.need(obj, "cable", where), f"{where}.cable"),
            arrangement=str(obj.get("arrangement", "")),
            elements=tuple(elements),
            passes=tuple(PassRecord.from_json(r, p, f"{where}.pass[{k}]")
                         for k, p in enumerate(r.items(obj, "pass", where, 1000))),
            notches=tuple(NotchRecord.from_json(r, n, f"{where}.notch[{k}]")
                          for k, n in enumerate(r.items(obj, "notch", where, 1000))),
            meets=r.flag(obj, "meets", where),
            extra={k: v for k, v in obj.items() if k not in known},
        )


@dataclass(frozen=True, slots=True, kw_only=True)
class PlanDocument:
    """A plan JSON (``notchkit plan --outdir``) or design JSON (``notchkit design --json``).

    The design JSON has only ``site``, ``meets`` and ``filters``; the plan adds
    the site file, the date, the version, the units and the survey.
    """

    site: str | None
    meets: bool
    filters: tuple[FilterRecord, ...]
    site_file: str | None = None
    date: str | None = None
    notchkit_version: str | None = None
    units: str | None = None
    survey: Mapping[str, Any] | None = None
    extra: Mapping[str, Any] = field(default_factory=dict)
    """Top-level keys no reader uses, as written."""
    path: str | None = field(default=None, compare=False)
    """The file it was read from (not written)."""

    def filter(self, filter_id: str) -> FilterRecord:
        """The filter with this id; :class:`PlanFileError` naming the ids there are."""
        for f in self.filters:
            if f.id == filter_id:
                return f
        known = ", ".join(f.id for f in self.filters[:20]) or "none"
        raise PlanFileError(f"{self.path or 'plan'}: filter {filter_id!r} is not in this plan "
                            f"(filters: {known})")

    def stub(self, stub_id: str) -> tuple[FilterRecord, StubRecord]:
        """The stub with this id and its filter; :class:`PlanFileError` when there is none."""
        ids = []
        for f in self.filters:
            for s in f.stubs:
                if s.id == stub_id:
                    return f, s
                ids.append(s.id)
        known = ", ".join(ids[:12]) + (", ..." if len(ids) > 12 else "") if ids else "none"
        raise PlanFileError(f"{self.path or 'plan'}: stub {stub_id!r} is not a stub id in this plan "
                            f"(stubs: {known})")

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"site": self.site}
        for key in ("site_file", "date", "notchkit_version", "units"):
            v = getattr(self, key)
            if v is not None:
                out[key] = v
        out["meets"] = self.meets
        out["filters"] = [f.to_json() for f in self.filters]
        for k, v in self.extra.items():
            out.setdefault(k, v)
        if self.survey is not None:
            out["survey"] = self.survey
        return out

    @classmethod
    def from_json(cls, doc: Any, *, path: str = "plan", text: str | None = None) -> PlanDocument:
        """Validate a parsed plan JSON; ``text`` (the file's text) gives line and column."""
        r = _Reader(path, text)
        obj = r.obj(doc, "")
        filters = tuple(FilterRecord.from_json(r, f, f"filters[{i}]")
                        for i, f in enumerate(r.items(obj, "filters", "", MAX_FILTERS)))
        meta = {}
        for key in ("site", "site_file", "date", "notchkit_version", "units"):
            v = obj.get(key)
            if v is not None and not isinstance(v, str):
                r.fail(key, f"{v!r} must be text or null", (key,))
            meta[key] = v
        survey = obj.get("survey")
        if survey is not None and not isinstance(survey, dict):
            r.fail("survey", "must be an object", ("survey",))
        known = {"filters", "meets", "survey", *meta}
        return cls(filters=filters, meets=r.flag(obj, "meets", ""), survey=survey, path=path,
                   extra={k: v for k, v in obj.items() if k not in known}, **meta)


# ------------------------------------------------------------------ the writer side


def filter_record(d: Any, *, extra: Mapping[str, Any] | None = None) -> FilterRecord:
    """The record of a :class:`notchkit.synthesis.Design` (``extra``: the keys no reader uses)."""
    from notchkit.elements import element_ids
    from notchkit.filters import Line
    from notchkit.jsonvalues import finite
    from notchkit.solver import describe

    def num(x: float) -> float:
        return finite(x, "a design result", clip_inf=True)

    r, s, filt = d.requirement, d.solution, d.filter
    cuts = {c.element_index: c for c in d.cuts}
    tee_of = {i: t for t, idx in enumerate(filt.tees(), start=1) for i in idx}
    ids = element_ids(filt, d.id)  # numbered in one place (notchkit.elements)
    elements: list[Element] = []
    for i, e in enumerate(filt.elements):
        if isinstance(e, Line):
            elements.append(LineRecord(id=ids[i], length_m=num(e.length_m)))
            continue
        c = cuts.get(i)
        elements.append(StubRecord(
            id=ids[i], tee=tee_of[i], termination=e.termination,
            length_m=num(e.length_m), cut_length_m=num(filt.cut_length_m(e)),
            first_cut_m=None if c is None else num(c.first_cut_m),
            trim_rate_mm_per_mhz=None if c is None else num(c.trim_rate_mm_per_mhz),
            resonance_mhz=None if c is None else num(c.resonance_mhz),
            quarter_waves=None if c is None else int(c.quarter_waves),
            tee_allowance_m=None if c is None else num(c.tee_allowance_m),
        ))
    cab = d.cable
    return FilterRecord(
        id=d.id, radio=r.radio, side=r.side,
        cable=CableRecord(type=str(getattr(cab, "name", r.cable)), z0_ohm=num(cab.z0_ohm),
                          velocity_factor=num(cab.velocity_factor),
                          calibration=_calibration_note(cab)),
        arrangement=describe(filt), elements=tuple(elements),
        passes=tuple(PassRecord(
            lo_mhz=num(p.lo_mhz), hi_mhz=num(p.hi_mhz),
            worst_insertion_loss_db=num(p.worst_insertion_loss_db), worst_swr=num(p.worst_swr),
            max_insertion_loss_db=num(p.max_insertion_loss_db), max_swr=num(p.max_swr),
            meets=bool(p.meets)) for p in s.passes),
        notches=tuple(NotchRecord(
            lo_mhz=num(n.lo_mhz), hi_mhz=num(n.hi_mhz), required_db=num(n.required_db),
            worst_attenuation_db=num(n.worst_attenuation_db), margin_db=num(n.margin_db),
            worst_mhz=num(n.worst_mhz), meets=bool(n.meets)) for n in s.notches),
        meets=bool(s.meets), extra=dict(extra or {}),
    )


def _calibration_note(cable: Any) -> Mapping[str, Any] | None:
    from notchkit.calibration import note_of

    return note_of(cable)


# ------------------------------------------------------------------ the reader side


def read_plan(path: str | os.PathLike[str], *, what: str = "plan") -> PlanDocument:
    """Read and validate a plan (or design) JSON file.

    Raises
    ------
    PlanFileError
        Missing, a directory, unreadable, larger than :data:`MAX_PLAN_BYTES`,
        not UTF-8, not JSON, nested too deeply, or a value the readers need that
        is missing or wrong (one line naming the key).
    """
    p = Path(path)
    text = read_text_bounded(p, what, MAX_PLAN_BYTES, PlanFileError)
    doc = parse_json(text, p, PlanFileError)
    return PlanDocument.from_json(doc, path=str(p), text=text)


__all__ = [
    "PlanDocument",
    "FilterRecord",
    "StubRecord",
    "LineRecord",
    "PassRecord",
    "NotchRecord",
    "CableRecord",
    "PlanFileError",
    "read_plan",
    "filter_record",
    "stub_alone_mhz",
]
