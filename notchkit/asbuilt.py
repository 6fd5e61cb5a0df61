"""The site's threats checked again with the filters as built (measured) in place of the designed ones.

The plan JSON holds the survey's threats: for each, its band, its excess over
the victim's limit, the attenuation it needs (excess + the site's rejection
margin) and the filter location(s) it feeds a notch to. :func:`recheck` gives
each threat the attenuation of the filters at those locations over the threat's
band -- the measured ``|S21|`` (at the sweep's own points in the band) where a
sweep of that filter is given, else the designed filter's (the design's lossy
model at 41 points across the band) -- and says which threats the built
filters still hold off. Attenuations of several filters in one path add in dB.

A threat no stub can help (no filter location) is listed as it was.
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from notchkit.errors import MeasurementError, UsageError
from notchkit.report.summary import summary_html, summary_repr
from notchkit.resonance import named

BAND_POINTS = 41
"""Points across a threat's band for a designed filter."""

Paths = str | os.PathLike[str] | Sequence[str | os.PathLike[str]]


@dataclass(frozen=True, slots=True, kw_only=True)
class ThreatCheck:
    """One threat with the filters in its path."""

    source: str
    victim: str
    mechanism: str
    lo_mhz: float
    hi_mhz: float
    excess_db: float
    required_db: float
    filters: tuple[str, ...]
    """Ids of the filters in its path (empty: no stub helps)."""
    designed_db: float | None
    as_built_db: float | None
    measured: tuple[str, ...]
    """Which of ``filters`` were measured (the rest count as designed)."""

    @property
    def meets(self) -> bool | None:
        """True when the filters give what the threat needs; None where no filter applies."""
        if not self.filters:
            return None if self.excess_db > 0 else True
        return bool(self.as_built_db is not None and self.as_built_db >= self.required_db)

    @property
    def remaining_db(self) -> float:
        """Excess over the victim's limit left with the filters as built (negative: clear)."""
        return self.excess_db - (self.as_built_db or 0.0)

    def to_json(self) -> dict[str, Any]:
        return {"source": self.source, "victim": self.victim, "mechanism": self.mechanism,
                "lo_mhz": self.lo_mhz, "hi_mhz": self.hi_mhz, "excess_db": self.excess_db,
                "required_db": self.required_db, "filters": list(self.filters),
                "designed_db": self.designed_db, "as_built_db": self.as_built_db,
                "measured": list(self.measured), "remaining_db": self.remaining_db, "meets": self.meets}


@dataclass(frozen=True, slots=True, kw_only=True)
class RecheckResult:
    __repr__ = summary_repr
    _repr_html_ = summary_html

    plan: str
    measured: Mapping[str, str]
    threats: tuple[ThreatCheck, ...]

    @property
    def meets(self) -> bool:
        """Every threat a filter was designed against is held off by the filters as built."""
        return all(t.meets is not False for t in self.threats)

    def to_json(self) -> dict[str, Any]:
        return {"plan": self.plan, "measured": dict(self.measured), "meets": self.meets,
                "threats": [t.to_json() for t in self.threats]}


def _worst_db(f_hz: np.ndarray, s21: np.ndarray, lo: float, hi: float) -> float | None:
    inside = (f_hz >= lo * 1e6) & (f_hz <= hi * 1e6)
    if not inside.any():
        return None
    return float(np.min(-20.0 * np.log10(np.maximum(np.abs(s21[inside]), 1e-15))))


def _designed_db(record: Any, lo: float, hi: float) -> float:
    import dataclasses

    from notchkit.cables import get_cable
    from notchkit.diagnose import plan_hardware
    from notchkit.filters import Filter, Line, Stub, evaluate

    cable: Any = dataclasses.replace(get_cable(record.cable.type),
                                     velocity_factor=record.cable.velocity_factor)
    elements = tuple(Line(length_m=e.length_m) if e.kind == "line"
                     else Stub(termination=e.termination, length_m=e.length_m) for e in record.elements)
    f = np.linspace(lo, hi, BAND_POINTS) * 1e6
    hw = plan_hardware(record)
    if hw is not None:  # the plan's tees, plugs and short, as designed (notchkit.hardware)
        from notchkit.hardware import Model

        cable = Model(cable=cable, hardware=hw, depth_ceiling_db=None)
    s = evaluate(Filter(elements=elements, cable=cable), f)
    return float(np.min(-20.0 * np.log10(np.maximum(np.abs(s[:, 1, 0]), 1e-15))))


def _threats(doc: Any) -> list[dict[str, Any]]:
    from notchkit.jsonread import Reader
    from notchkit.planfile import PlanFileError

    r = Reader(doc.path or "plan", None, PlanFileError)
    if doc.survey is None:
        raise PlanFileError(f"{doc.path}: survey: missing (recheck needs a plan JSON from notchkit plan "
                            "--outdir, which holds the survey)")
    out = []
    for i, node in enumerate(r.items(doc.survey, "threats", "survey", 100_000)):
        w = f"survey.threats[{i}]"
        t = r.obj(node, w)
        src = t.get("source")
        src = " + ".join(map(str, src)) if isinstance(src, list) else str(src)
        locs = []
        for j, loc in enumerate(r.items(t, "filters", w, 16)):
            lw = f"{w}.filters[{j}]"
            loc = r.obj(loc, lw)
            locs.append((r.text(loc, "radio", lw), r.choice(loc, "side", lw, ("tx", "rx"))))
        out.append({"source": src, "victim": str(t.get("victim")), "mechanism": str(t.get("mechanism")),
                    "lo": r.num(t, "f_lo_mhz", w), "hi": r.num(t, "f_hi_mhz", w),
                    "excess": r.num(t, "excess_db", w, signed=True),
                    "required": r.num(t, "required_db", w, signed=True), "locs": locs})
    return out


def recheck(plan_path: str | os.PathLike[str], measured: Mapping[str, Paths]) -> RecheckResult:
    """Check the site's threats again with measured filters in place of designed ones.

    Parameters
    ----------
    plan_path : path
        The plan JSON of ``notchkit plan --outdir`` (it holds the survey).
    measured : mapping of filter id -> path or paths
        Two-port sweeps (``.s2p``) of the built filters; several files of one
        filter are merged (:func:`notchkit.verification.read_sweeps`).

    Raises
    ------
    UsageError
        An unknown filter id or a one-port sweep (names ``measured``).
    MeasurementError
        A sweep with no point in the band of a threat its filter is meant to notch.
    """
    from notchkit.planfile import read_plan
    from notchkit.verification import read_sweeps

    doc = read_plan(plan_path)
    nets = {}
    for fid, paths in measured.items():
        ids = [f.id for f in doc.filters]
        if fid not in ids:
            raise named(UsageError(f"measured: filter {fid!r} is not in the plan "
                                   f"(filters: {', '.join(ids)})"), "measured")
        net = read_sweeps(paths)
        if net.nports != 2:
            raise named(UsageError(f"measured: {fid}: re-checking threats needs S21 (a .s2p sweep)"),
                        "measured")
        nets[fid] = net
    where = {(f.radio, f.side): f for f in doc.filters}
    checks = []
    for t in _threats(doc):
        recs = [where[loc] for loc in t["locs"] if loc in where]
        designed = built = None
        if recs:
            designed = built = 0.0
            for rec in recs:
                d = _designed_db(rec, t["lo"], t["hi"])
                designed += d
                if rec.id in nets:
                    net = nets[rec.id]
                    m = _worst_db(np.asarray(net.f), np.asarray(net.s)[:, 1, 0], t["lo"], t["hi"])
                    if m is None:
                        raise MeasurementError(
                            f"{measured[rec.id]}: the sweep of {rec.id} has no point in "
                            f"{t['lo']:g}-{t['hi']:g} MHz ({t['source']} into {t['victim']}), which it "
                            "notches: sweep across it")
                    built += m
                else:
                    built += d
        checks.append(ThreatCheck(source=t["source"], victim=t["victim"], mechanism=t["mechanism"],
                                  lo_mhz=t["lo"], hi_mhz=t["hi"], excess_db=t["excess"],
                                  required_db=t["required"], filters=tuple(r.id for r in recs),
                                  designed_db=designed, as_built_db=built,
                                  measured=tuple(r.id for r in recs if r.id in nets)))
    return RecheckResult(plan=str(plan_path), measured={k: str(v) for k, v in measured.items()},
                         threats=tuple(checks))


__all__ = ["recheck", "RecheckResult", "ThreatCheck"]
