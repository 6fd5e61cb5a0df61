"""What the solver refuses outright and what it advises when no design meets.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from notchkit.errors import DesignError
from notchkit.filters import Medium
from notchkit.requirements import FilterRequirement
from notchkit.site.model import (
    Allowances,
    Limits,
)
from notchkit.solver.problem import _Problem
from notchkit.solver.ranking import _Verified
from notchkit.solver.results import Shortfall

# ---------------------------------------------------------------- advice


def _shortfalls(v: _Verified, p: _Problem) -> tuple[Shortfall, ...]:
    out = []
    for r in v.passes:
        if r.worst_insertion_loss_db > r.max_insertion_loss_db:
            out.append(Shortfall(band="pass", lo_mhz=r.lo_mhz, hi_mhz=r.hi_mhz, quantity="insertion_loss",
                                 required=r.max_insertion_loss_db, achieved=r.worst_insertion_loss_db,
                                 missing_db=r.worst_insertion_loss_db - r.max_insertion_loss_db))
        if r.worst_swr > r.max_swr:
            rl = -20.0 * math.log10((r.worst_swr - 1.0) / (r.worst_swr + 1.0))
            out.append(Shortfall(band="pass", lo_mhz=r.lo_mhz, hi_mhz=r.hi_mhz, quantity="swr",
                                 required=r.max_swr, achieved=r.worst_swr, missing_db=p.rl_req - rl))
    for n in v.notches:
        if not n.meets:
            out.append(Shortfall(band="notch", lo_mhz=n.lo_mhz, hi_mhz=n.hi_mhz, quantity="attenuation",
                                 required=n.required_db, achieved=n.worst_attenuation_db,
                                 missing_db=-n.margin_db))
    return tuple(out)


def _lower_loss_cable(cable: Medium, freq_hz: float) -> tuple[str, float, float] | None:
    """The library cable of the same impedance with the lowest loss at ``freq_hz``, if lower."""
    from notchkit.cables import library

    own = float(np.asarray(cable.alpha_np_per_m(np.array([freq_hz])))[0])
    best = None
    for c in library():
        if abs(c.z0_ohm - cable.z0_ohm) > 0.05 * cable.z0_ohm or c.lossless:
            continue
        a = float(c.alpha_np_per_m(np.array([freq_hz]))[0])
        if a < 0.95 * own and (best is None or a < best[1]):
            best = (c.name, a)
    if best is None:
        return None
    to_db100 = 100.0 * 20.0 / math.log(10.0)
    return best[0], best[1] * to_db100, own * to_db100


STUB_CEILING_DB = (30.0, 45.0)
"""What one stub notches at most in practice on real cable, dB (common practice): a
notch deeper than this, or a shortfall of :data:`LARGE_SHORTFALL_DB`, calls for
another class of remedy."""
LARGE_SHORTFALL_DB = 10.0


def remedy_class_advice(short: Sequence[tuple[str, float, float]]) -> str:
    """The advice when stubs cannot do it: the classes of remedy and the stubs' ceiling.

    ``short`` holds ``(band, missing_db, required_db)`` for each notch too far short.
    """
    lo, hi = STUB_CEILING_DB
    where = "; ".join(f"{band} {miss:.1f} dB short of {req:.1f} dB" for band, miss, req in short)
    return (f"more than stubs can close ({where}): one stub notches about {lo:.0f}-{hi:.0f} dB in practice, "
            f"and each further stub adds less while the pass band pays; use another class of remedy: a "
            f"band-pass filter or a cavity filter at the radio, more antenna spacing (vertical separation "
            f"isolates best), or time-sharing (the two radios never on the air at once)")


def _advice(v: _Verified, p: _Problem, stubs_tried: int) -> tuple[str, ...]:
    if v.meets:
        return ()
    out = []
    beyond = [r for r in v.notches if not r.meets and (
        -r.margin_db >= LARGE_SHORTFALL_DB or r.required_db > STUB_CEILING_DB[1] * max(1, len(v.filt.stubs)))]
    if beyond:
        out.append(remedy_class_advice([(f"notch {r.lo_mhz:g}-{r.hi_mhz:g} MHz", -r.margin_db, r.required_db)
                                        for r in beyond]))
    n_stubs = len(v.filt.stubs)
    if stubs_tried >= p.limits.max_stubs:
        out.append(f"allow another stub: no design with up to {p.limits.max_stubs} stub(s) meets every "
                   f"requirement (raise max_stubs to {p.limits.max_stubs + 1})")
    if v.filt.total_cable_m > 0.9 * p.cable_cap:
        out.append(f"allow more cable: the design uses {v.filt.total_cable_m:.2f} m of the "
                   f"{p.cable_cap:.2f} m allowed (max_total_cable_m)")
    for r in v.notches:
        if r.meets:
            continue
        f = 0.5e6 * (r.lo_mhz + r.hi_mhz)
        name = getattr(p.cable, "name", "this cable")
        alt = _lower_loss_cable(p.cable, f)
        if alt is not None:
            out.append(f"use a lower-loss cable for the stubs: {alt[0]} has {alt[1]:.1f} dB/100 m at "
                       f"{f / 1e6:g} MHz against {alt[2]:.1f} for {name} (a deeper notch)")
        if r.hi_mhz > r.lo_mhz:
            if r.met_lo_mhz is not None:
                out.append(f"narrow the notch {r.lo_mhz:g}-{r.hi_mhz:g} MHz: {r.required_db:.1f} dB is "
                           f"reached only over {r.met_lo_mhz:.3f}-{r.met_hi_mhz:.3f} MHz")
            else:
                out.append(f"narrow the notch {r.lo_mhz:g}-{r.hi_mhz:g} MHz or relax its requirement: "
                           f"the best reaches {r.worst_attenuation_db:.1f} dB of the {r.required_db:.1f} dB "
                           f"asked")
        else:
            out.append(f"relax the notch at {r.lo_mhz:g} MHz to {max(r.worst_attenuation_db, 0):.0f} dB or "
                       f"add isolation elsewhere (antenna spacing, a cavity filter)")
    for pb in v.passes:
        if not pb.meets:
            out.append(f"pass band {pb.lo_mhz:g}-{pb.hi_mhz:g} MHz: insertion loss "
                       f"{pb.worst_insertion_loss_db:.2f} dB, SWR {pb.worst_swr:.2f}; widen the gap to the "
                       f"notches or allow another stub")
    if n_stubs < stubs_tried and not out:
        out.append("allow another stub")
    return tuple(dict.fromkeys(out))



# ---------------------------------------------------------------- entry point


def _mhz(x: float) -> str:
    """A frequency in MHz with at least one decimal: 14.0, 14.35, 146.52."""
    text = f"{x:.6f}".rstrip("0")
    return text + "0" if text.endswith(".") else text


def check_requirement(req: FilterRequirement) -> None:
    """Refuse a request that no filter can satisfy by construction.

    Raises
    ------
    DesignError
        Bad band edges, no notch, or a pass band overlapping a notch.
    """
    where = f"filter for {req.radio}" if req.radio else "design request"
    if not req.notches:
        raise DesignError(f"{where}: nothing to notch (give at least one notch band)")
    if not req.pass_bands:
        raise DesignError(f"{where}: no pass band (give at least one band the filter must let through)")
    for kind, lo, hi in ([("pass", b.lo_mhz, b.hi_mhz) for b in req.pass_bands]
                         + [("notch", n.lo_mhz, n.hi_mhz) for n in req.notches]):
        if not (math.isfinite(lo) and math.isfinite(hi) and lo > 0 and hi >= lo):
            raise DesignError(f"{where}: {kind} band {lo:g}-{hi:g} MHz must have 0 < lo <= hi")
    for n in req.notches:
        if not (math.isfinite(n.required_db) and n.required_db > 0):
            raise DesignError(f"{where}: notch {n.lo_mhz:g}-{n.hi_mhz:g} MHz required_db "
                              f"{n.required_db!r} must be > 0 dB")
    for b in req.pass_bands:
        for n in req.notches:
            if b.overlaps(n.band):
                raise DesignError(f"cannot pass and notch the same frequency: pass {_mhz(b.lo_mhz)}-"
                                  f"{_mhz(b.hi_mhz)} overlaps notch {_mhz(n.lo_mhz)}-{_mhz(n.hi_mhz)} MHz")


def _check_build_settings(limits: Limits, allowances: Allowances | None) -> None:
    """Refuse a yield target, margin goal or build rule no design could be ranked by."""
    checks = [("yield_target_pct", getattr(limits, "yield_target_pct", 90.0), 0.0, 100.0),
              ("margin_goal_db", getattr(limits, "margin_goal_db", 15.0), 0.0, 200.0)]
    if allowances is not None:
        for name, hi in (("min_stub_cut_m", 100.0), ("min_line_m", 100.0), ("barrel_m", 10.0),
                         ("trim_step_mm", 1000.0), ("trim_freq_error_pct", 50.0), ("drift_pct", 50.0),
                         ("cut_tolerance_mm", 1000.0)):
            checks.append((name, getattr(allowances, name), 0.0, hi))
        lo, hi = allowances.analyser_lo_mhz, allowances.analyser_hi_mhz
        if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
            raise DesignError(f"analyser range {lo!r}-{hi!r} MHz must have 0 < analyser_lo_mhz < "
                              f"analyser_hi_mhz")
    for name, value, lo, hi in checks:
        if not (isinstance(value, int | float) and math.isfinite(value) and lo <= value <= hi):
            raise DesignError(f"{name} {value!r} must be a number from {lo:g} to {hi:g}")
