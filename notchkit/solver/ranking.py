"""Verification on the dense sweep, build yield and the ranking of verified designs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from notchkit.filters import Filter, Line, Stub, evaluate_batch
from notchkit.lines import db20, swr_from_s11
from notchkit.requirements import FilterRequirement
from notchkit.solver.problem import (
    _PASS_SLOPE,
    _THROUGH,
    ALTERNATIVES,
    CABLE_TIE_FRACTION,
    CABLE_TIE_M,
    IL_WEIGHT,
    MARGIN_GOAL_SLACK_DB,
    PASS_CUSHION_DB,
    VERIFY_POINTS,
    YIELD_SAMPLES,
    _band_points,
    _Cand,
    _model_kinds,
    _Problem,
)
from notchkit.solver.results import Alternative, NotchResult, PassResult

# ---------------------------------------------------------------- verification


def _filter_of(p: _Problem, kinds: tuple[str, ...], lengths: np.ndarray) -> Filter:
    elements = tuple(Line(length_m=float(x)) if k in _THROUGH else
                     Stub(termination="open" if k == "open" else "short", length_m=float(x))
                     for k, x in zip(kinds, lengths, strict=True))
    return Filter(elements=elements, cable=p.cable, tee_allowance_m=p.tee)


def verify_sweep_hz(req: FilterRequirement) -> tuple[np.ndarray, list[slice]]:
    """The dense verification sweep: every pass band, then every notch, edge to edge.

    Returns the frequencies (Hz) and one slice per band into them.
    """
    freqs, slices, n = [], [], 0
    bands = [(b.lo_mhz, b.hi_mhz) for b in req.pass_bands] + [(s.lo_mhz, s.hi_mhz) for s in req.notches]
    for lo, hi in bands:
        pts = _band_points(lo, hi, VERIFY_POINTS, 0.0005, 2001)
        freqs.append(pts)
        slices.append(slice(n, n + pts.size))
        n += pts.size
    return np.concatenate(freqs), slices


def _widest_met(f_mhz: np.ndarray, ok: np.ndarray) -> tuple[float | None, float | None]:
    if not ok.any():
        return None, None
    best, best_len, start = (0, 0), -1, None
    for i, v in enumerate(np.r_[ok, False]):
        if v and start is None:
            start = i
        elif not v and start is not None:
            if i - 1 - start > best_len:
                best, best_len = (start, i - 1), i - 1 - start
            start = None
    return float(f_mhz[best[0]]), float(f_mhz[best[1]])


@dataclass(slots=True)
class _Verified:
    cand: _Cand
    filt: Filter
    passes: tuple[PassResult, ...]
    notches: tuple[NotchResult, ...]
    meets: bool
    viol: float
    score: float  # smallest normalised margin
    freq: np.ndarray
    s21: np.ndarray
    s11: np.ndarray
    build_yield: float | None = None
    """Share of simulated builds meeting every requirement (:func:`_add_yields`)."""


def _pass_score(m: float) -> float:
    """A pass-band margin as the search weighs it (see :meth:`_Problem.margins`)."""
    return m + (_PASS_SLOPE - 1.0) * max(m - PASS_CUSHION_DB, 0.0)


def _verify(p: _Problem, cand: _Cand, sweep: np.ndarray, slices: list[slice]) -> _Verified:
    filt = _filter_of(p, cand.kinds, cand.lengths)
    s21, s11 = evaluate_batch(_model_kinds(cand.kinds), cand.lengths[None, :], p.cable, sweep, p.z_system)
    s21, s11 = s21[0], s11[0]
    att = -db20(s21)
    swr = swr_from_s11(s11)
    f_mhz = sweep * 1e-6
    passes, notches = [], []
    viol, scores = 0.0, []
    for b, sl in zip(p.passes, slices[: len(p.passes)], strict=True):
        il = att[sl]
        i_il, i_swr = int(np.argmax(il)), int(np.argmax(swr[sl]))
        ok = bool(il[i_il] <= p.il_max and swr[sl][i_swr] <= p.swr_max)
        rl = float(np.min(-db20(s11[sl])))
        m_il, m_rl = IL_WEIGHT * (p.il_max - float(il[i_il])), rl - p.rl_req
        viol += max(0.0, -m_il) + max(0.0, -m_rl)
        scores += [_pass_score(m_il), _pass_score(m_rl)]
        passes.append(PassResult(lo_mhz=b.lo_mhz, hi_mhz=b.hi_mhz,
                                 worst_insertion_loss_db=float(il[i_il]),
                                 worst_insertion_loss_mhz=float(f_mhz[sl][i_il]),
                                 worst_swr=float(swr[sl][i_swr]), worst_swr_mhz=float(f_mhz[sl][i_swr]),
                                 max_insertion_loss_db=p.il_max, max_swr=p.swr_max, meets=ok))
    for n, sl in zip(p.notches, slices[len(p.passes):], strict=True):
        a = att[sl]
        i = int(np.argmin(a))
        margin = float(a[i]) - float(n.required_db)
        lo, hi = _widest_met(f_mhz[sl], a >= n.required_db)
        viol += max(0.0, -margin)
        scores.append(margin)
        notches.append(NotchResult(lo_mhz=n.lo_mhz, hi_mhz=n.hi_mhz, required_db=float(n.required_db),
                                   worst_attenuation_db=float(a[i]), worst_mhz=float(f_mhz[sl][i]),
                                   margin_db=margin, met_lo_mhz=lo, met_hi_mhz=hi, meets=margin >= 0.0))
    over = filt.total_cable_m - p.cable_cap
    viol += max(0.0, over)
    meets = all(r.meets for r in passes) and all(r.meets for r in notches) and over <= 1e-9
    return _Verified(cand=cand, filt=filt, passes=tuple(passes), notches=tuple(notches), meets=meets,
                     viol=viol, score=min(scores) if scores else 0.0, freq=sweep, s21=s21, s11=s11)


def _yield(p: _Problem, filt: Filter, samples: int = YIELD_SAMPLES) -> float:
    """Build yield of one filter under the site's build model (:mod:`notchkit.buildyield`):
    every stub trimmed to resonance, line sections cut to length."""
    from notchkit.buildyield import tolerance

    a = p.allowances
    t = tolerance(filt, p.notches, cut_tolerance_mm=a.cut_tolerance_mm, vf_spread=a.vf_spread,
                  samples=samples, seed=0, z_system=p.z_system, pass_bands=p.passes,
                  max_insertion_loss_db=p.il_max, max_swr=p.swr_max,
                  trimmed=[k != "line" for k in filt.kinds], trim_step_mm=a.trim_step_mm,
                  trim_freq_error_pct=a.trim_freq_error_pct, drift_pct=a.drift_pct, sensitivity=False)
    return t.build_yield


def _add_yields(p: _Problem, found: list[_Verified]) -> None:
    """Give every verified design that meets nominally its build yield (once)."""
    for v in found:
        if v.meets and v.build_yield is None:
            v.build_yield = _yield(p, v.filt)


def _robust(v: _Verified, target: float) -> bool:
    return v.meets and v.build_yield is not None and v.build_yield >= target


def _notch_margin(v: _Verified) -> float:
    return min((r.margin_db for r in v.notches), default=math.inf)


def _rank_key(v: _Verified, target: float, pick: dict[int, tuple[float, float]]):
    """Sort key, best first: robust designs (meet as designed, and build yield at the
    target), then fewest stubs, then those with the margin goal (or the most margin any
    robust design of as many stubs has, if less), then cable (within
    :data:`CABLE_TIE_FRACTION` of the shortest such design counts as equal), then
    margin; then designs that meet only as designed, by build yield; then the rest by
    violation."""
    n = len(v.filt.stubs)
    cable = v.filt.total_cable_m
    if _robust(v, target):
        goal, shortest = pick[n]
        has_goal = _notch_margin(v) >= goal - MARGIN_GOAL_SLACK_DB
        near = has_goal and cable <= max(shortest * (1 + CABLE_TIE_FRACTION), shortest + CABLE_TIE_M) + 1e-6
        return (0, n, 0 if has_goal else 1, 0 if near else 1, 0.0 if near else cable, -v.score, cable)
    if v.meets:
        return (1, -round(v.build_yield or 0.0, 2), n, 0, cable, -v.score, 0.0)
    return (2, round(v.viol, 9), n, 0, cable, 0.0, 0.0)


def _ranked(found: list[_Verified], target: float, margin_goal_db: float = 0.0) -> list[_Verified]:
    groups: dict[int, list[_Verified]] = {}
    for v in found:
        if _robust(v, target):
            groups.setdefault(len(v.filt.stubs), []).append(v)
    pick: dict[int, tuple[float, float]] = {}
    for n, group in groups.items():
        goal = min(margin_goal_db, max(_notch_margin(v) for v in group))
        pick[n] = (goal, min(v.filt.total_cable_m for v in group
                             if _notch_margin(v) >= goal - MARGIN_GOAL_SLACK_DB))
    return sorted(found, key=lambda v: _rank_key(v, target, pick))


def _best(found: list[_Verified], target: float = 0.0, margin_goal_db: float = 0.0) -> _Verified:
    return _ranked(found, target, margin_goal_db)[0]



def _alternatives(found: list[_Verified], best: _Verified, target: float,
                  margin_goal_db: float) -> tuple[Alternative, ...]:
    """The best few other distinct designs, in rank order."""
    out: list[Alternative] = []
    seen = [(best.cand.kinds, best.cand.lengths)]
    for v in _ranked(found, target, margin_goal_db):
        if any(k == v.cand.kinds and np.max(np.abs(x - v.cand.lengths)) < 0.005 for k, x in seen):
            continue
        seen.append((v.cand.kinds, v.cand.lengths))
        out.append(Alternative(arrangement=describe(v.filt), n_stubs=len(v.filt.stubs),
                               total_cable_m=v.filt.total_cable_m,
                               margin_db=min((r.margin_db for r in v.notches), default=math.inf),
                               meets=v.meets, build_yield=v.build_yield))
        if len(out) >= ALTERNATIVES:
            break
    return tuple(out)



def describe(filt: Filter) -> str:
    """One-line arrangement from the radio side to the antenna side."""
    parts = ["radio"]
    for group_start, e in enumerate(filt.elements):
        if isinstance(e, Line):
            parts.append(f"line {e.length_m:.3f} m")
        else:
            prev = filt.elements[group_start - 1] if group_start else None
            text = f"{e.termination} stub {e.length_m:.3f} m"
            if isinstance(prev, Stub):
                parts[-1] = parts[-1][:-1] + f" + {text}]"
            else:
                parts.append(f"tee[{text}]")
    parts.append("antenna")
    return " -> ".join(parts)
