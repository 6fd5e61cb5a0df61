"""The stub solver: topology search, seeds from the rules of the trade, refinement, verification.

Given one :class:`~notchkit.requirements.FilterRequirement` and a cable, find
shunt stubs (open or shorted, at one tee or at several tees joined by line
sections) that pass every wanted band and notch every interferer on the real
lossy cable. Pure: no printing, no YAML, no randomness (the same input gives
the same design).

How it searches, simplest topology first:

1. **One stub.** A dense 1-D scan of every length from the shortest stub that
   can be made (tee allowance + ``allowances.min_stub_cut_m``, default
   :data:`MIN_CUT_M`; and a first resonance inside the analyser's range) up to
   :data:`STUB_SCAN_WAVELENGTHS` wavelengths at the lowest band, for an open and for a shorted end, in one
   :func:`~notchkit.filters.evaluate_batch` call each. The quarter- and
   half-wave families (open lambda/4 notches f, 3f, 5f and passes 2f, 4f;
   shorted lambda/4 passes f, 3f and notches 2f, 4f; the longer odd and even
   multiples) are added as explicit seeds; the scan finds them and anything
   between them.
2. **Two or more stubs.** Each promising design with one stub fewer is extended
   on its antenna side by a stub at the same tee or behind a line section.
   The new stub's length comes from the notch resonances found by the scan, a
   coarse grid, and analytic reactance compensation: the susceptance ``B`` that
   the rest of the filter shows at a pass-band centre is cancelled by a stub
   with ``tan(beta l) = -B Z0`` (open) or ``cot(beta l) = B Z0`` (shorted). The
   line sections start from a quarter wave at each notch, a quarter and a half
   wave at each pass band, and a coarse grid. (The classic "triple frequency"
   pair, an open lambda/12 plus a shorted lambda/6 at one tee, which passes f
   and notches 3f, comes out of the compensation step.)
3. **Refinement.** The best distinct candidates of each level are refined by a
   bounded pattern search (:func:`_refine_group`: every trial move of every
   candidate in one batched evaluation) on a smooth penalty of the lossy model
   over a moderate grid: each band's edges plus interior points. The chosen
   design is polished by the same search with finer steps. From two stubs on,
   the best few refined designs have each element re-scanned over its whole
   range with the others held (:func:`_rescan`), and the best new local minima
   are refined too: a child keeps its parent's lengths, and a design whose
   earlier stub must move to another resonance once a stub is added is out of
   a local search's reach.
4. **Verification.** Every refined candidate is evaluated on a dense sweep of
   each band, edge to edge (at least :data:`VERIFY_POINTS` points per band).
   ``meets`` is true only when that sweep meets every requirement.

5. **Build yield.** Every verified design that meets is given the share of
   :data:`YIELD_SAMPLES` simulated builds that still meet (the trim workflow of
   :mod:`notchkit.buildyield`: stubs trimmed to resonance, line sections cut to
   length). When designs meet but none reaches ``limits.yield_target_pct``,
   they are refined once more on the mean penalty over a few simulated builds
   (:func:`_refine_robust`) before another stub is tried.

Ranking (:func:`_rank_key`): robust designs (meet, and build yield at the
target) first; then fewest stubs; then those with ``limits.margin_goal_db`` of
notch margin (or within :data:`MARGIN_GOAL_SLACK_DB` of the most any robust
design of as many stubs has); then least cable (within
:data:`CABLE_TIE_FRACTION` or :data:`CABLE_TIE_M` of the shortest counts as
equal); then most margin. Designs that meet only as designed follow, by build
yield. When none meets, the one with the least violation is returned with
``meets=False``, what is missing per band, and advice (naming the class of
remedy when stubs cannot close the gap). The best few others are
``Solution.alternatives``.

Where it lives
--------------
This package's modules, by concern: ``problem`` (the tuning constants, the grids,
the penalty and the bounds of one requirement: ``_Problem``; the candidates),
``search`` (seeds, the one-stub scan, the children), ``refine`` (the pattern
search, the re-scan, the robust refinement, the polish), ``ranking``
(verification, build yield, ranking, alternatives, ``describe``), ``advice``
(what is refused and what is advised) and ``results`` (the result types);
:func:`solve` here runs them in that order. Every name ``notchkit.solver``
had before the split is still importable from it.

Limits
------
``limits.max_stubs`` caps the number of stubs. ``limits.max_total_cable_m``
caps the cable (stub cut lengths plus line sections); when it is ``None`` the
cap is :data:`DEFAULT_CABLE_WAVELENGTHS` wavelengths in the cable at the lowest
band frequency. Every stub's electrical path is at least the tee allowance
plus ``allowances.min_stub_cut_m``; every line section is at least
``allowances.min_line_m``, or is a barrel adapter (``allowances.barrel_m``, a
fixed length: :data:`BARREL` in the solver's kinds).

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 2.7
       (lossy lines) and sec. 5.2 (single-stub tuning: the stub's susceptance
       cancels the line's).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence

import numpy as np

from notchkit.errors import DesignError
from notchkit.filters import Medium
from notchkit.requirements import FilterRequirement
from notchkit.site.model import Allowances, Limits

# The solver's parts; the names below are notchkit.solver's as before the split.
from notchkit.solver.advice import LARGE_SHORTFALL_DB as LARGE_SHORTFALL_DB
from notchkit.solver.advice import (
    STUB_CEILING_DB,
    _advice,
    _check_build_settings,
    _shortfalls,
    check_requirement,
    remedy_class_advice,
)
from notchkit.solver.problem import (
    _BEAM,
    _REFINE_WINDOW,
    _RESCAN_FROM,
    _RESCAN_KEEP,
    DEFAULT_CABLE_WAVELENGTHS,
    MIN_CUT_M,
    MIN_LINE_M,
    VERIFY_POINTS,
    _Cand,
    _distinct,
    _Problem,
    _same_removed,
)
from notchkit.solver.problem import ALTERNATIVES as ALTERNATIVES
from notchkit.solver.problem import BARREL as BARREL
from notchkit.solver.problem import CABLE_TIE_FRACTION as CABLE_TIE_FRACTION
from notchkit.solver.problem import CABLE_TIE_M as CABLE_TIE_M
from notchkit.solver.problem import IL_WEIGHT as IL_WEIGHT
from notchkit.solver.problem import MARGIN_GOAL_SLACK_DB as MARGIN_GOAL_SLACK_DB
from notchkit.solver.problem import MAX_FREQ_RANGE as MAX_FREQ_RANGE
from notchkit.solver.problem import PASS_CUSHION_DB as PASS_CUSHION_DB
from notchkit.solver.problem import STUB_SCAN_WAVELENGTHS as STUB_SCAN_WAVELENGTHS
from notchkit.solver.problem import YIELD_SAMPLES as YIELD_SAMPLES
from notchkit.solver.ranking import (
    _add_yields,
    _alternatives,
    _best,
    _robust,
    _Verified,
    _verify,
    describe,
    verify_sweep_hz,
)
from notchkit.solver.ranking import _ranked as _ranked
from notchkit.solver.refine import _polish, _refine_all, _refine_robust, _rescan
from notchkit.solver.results import Alternative, NotchResult, PassResult, Shortfall, Solution
from notchkit.solver.search import _children, _scan_one_stub
from notchkit.solver.search import _compensation_lengths as _compensation_lengths
from notchkit.solver.search import _unique_rows as _unique_rows


def solve(
    req: FilterRequirement,
    *,
    cable: Medium,
    limits: Limits,
    tee_allowance_m: float,
    z_system: float = 50.0,
    progress: Callable[[str], None] | None = None,
    allowances: Allowances | None = None,
) -> Solution:
    """Design the simplest stub filter that meets ``req`` on ``cable`` and keeps meeting when built.

    Parameters
    ----------
    req : FilterRequirement
        Pass bands (insertion loss and SWR limits from ``limits``) and notches
        (``required_db`` of attenuation over the whole band).
    cable : Medium
        The stubs' and line sections' cable (``z0_ohm``, ``velocity_factor``,
        ``alpha_np_per_m``).
    limits : Limits
        ``max_insertion_loss_db``, ``max_swr``, ``max_stubs``, ``max_total_cable_m``.
    tee_allowance_m : float
        Electrical length of each tee and connector, metres of the stub's cable,
        included in each stub's path.
    z_system : float
        Port reference impedance, ohms.
    progress : callable(str), optional
        Called with a short message at each stage.
    allowances : Allowances, optional
        The build model and buildability rules (shortest stub and line section,
        analyser range, trim residuals, cut tolerance, VF spread, drift);
        default :class:`~notchkit.site.model.Allowances` with ``tee_allowance_m``.

    Returns
    -------
    Solution
        ``meets`` is true only when the dense verification sweep meets every
        requirement; ``build_yield`` is the share of simulated builds that do
        (:data:`YIELD_SAMPLES` builds), ``alternatives`` the next best designs.

    Raises
    ------
    DesignError
        The request cannot be satisfied by any filter (see :func:`check_requirement`),
        or the limits are unusable.
    """
    _check_arguments(req, limits, tee_allowance_m, allowances)
    p = _Problem(req, cable, limits, tee_allowance_m, z_system, allowances)
    sweep, slices = verify_sweep_hz(req)
    say = progress or (lambda _msg: None)
    found, stubs_tried = _search(p, sweep, slices, say)
    best = _polished(p, found, sweep, slices, say)
    return _solution(p, best, found, stubs_tried)


def _check_arguments(req: FilterRequirement, limits: Limits, tee_allowance_m: float,
                     allowances: Allowances | None) -> None:
    """Refuse a request or limits no search could use (:class:`DesignError`)."""
    check_requirement(req)
    if not (isinstance(limits.max_stubs, int) and limits.max_stubs >= 1):
        raise DesignError(f"max_stubs {limits.max_stubs!r} must be an integer >= 1")
    if not (math.isfinite(tee_allowance_m) and tee_allowance_m >= 0):
        raise DesignError(f"tee_allowance_m {tee_allowance_m!r} must be finite and >= 0 m")
    if limits.max_total_cable_m is not None and not (limits.max_total_cable_m > MIN_CUT_M):
        raise DesignError(f"max_total_cable_m {limits.max_total_cable_m!r} must be > {MIN_CUT_M} m")
    if not (limits.max_swr > 1.0 and limits.max_insertion_loss_db > 0):
        raise DesignError(f"limits: max_swr {limits.max_swr!r} must be > 1 and max_insertion_loss_db "
                          f"{limits.max_insertion_loss_db!r} must be > 0 dB")
    _check_build_settings(limits, allowances)


def _search(p: _Problem, sweep: np.ndarray, slices: list[slice],
            say: Callable[[str], None]) -> tuple[list[_Verified], int]:
    """Every verified design, one stub more at each level until one is robust (or
    ``limits.max_stubs``); also the most stubs tried."""
    target = p.yield_target
    say("1 stub: scanning lengths")
    level, pool, best_single = _scan_one_stub(p)
    found: list[_Verified] = []
    stubs_tried = 1
    for n_stubs in range(1, p.limits.max_stubs + 1):
        if n_stubs > 1:
            say(f"{n_stubs} stubs: extending the best {n_stubs - 1}-stub designs")
            level = _next_level(p, level, pool, best_single, n_stubs)
            stubs_tried = n_stubs
        level = _refined_level(p, level, n_stubs, say)
        verified = [_verify(p, c, sweep, slices) for c in level]
        _add_yields(p, verified)
        found += verified
        if any(_robust(v, target) for v in verified):
            break
        if any(v.meets for v in verified):
            # they meet as designed but too few builds would: look for a design that
            # keeps its margin when built (same topology, robust penalty)
            say(f"{n_stubs} stub(s): seeking margin for the build")
            robust = [_verify(p, c, sweep, slices) for c in _refine_robust(p, [v.cand for v in verified
                                                                               if v.meets])]
            _add_yields(p, robust)
            found += robust
            if any(_robust(v, target) for v in robust):
                break
    return found, stubs_tried


def _next_level(p: _Problem, level: list[_Cand], pool: dict[str, list[float]],
                best_single: list[tuple[str, float]], n_stubs: int) -> list[_Cand]:
    """The candidates with ``n_stubs`` stubs: the best designs with one fewer, extended."""
    parents = _distinct(sorted(level, key=lambda c: c.j), p, _BEAM)
    if n_stubs == 2:
        # single stubs that each notch one band well are parents too
        singles = [_Cand((k,), np.array([x]), 0.0, 0.0, 0.0) for k, x in best_single]
        parents = _distinct(parents + singles, p, _BEAM + len(singles))
    return _children(p, parents, pool)


def _refined_level(p: _Problem, level: list[_Cand], n_stubs: int,
                   say: Callable[[str], None]) -> list[_Cand]:
    """The level's candidates within reach of the best, refined (and, from two stubs on,
    re-scanned and refined again), without repeats."""
    # Refine the candidates within reach of the best (their penalty within
    # _REFINE_WINDOW dB); the others cannot win.
    j_best = min((c.j for c in level), default=0.0)
    level = [c for c in level if c.j <= j_best + _REFINE_WINDOW]
    say(f"{n_stubs} stub(s): refining {len(level)} candidates")
    refined = _refine_all(p, level)
    if n_stubs > 1:
        # escape the local minima the children's fixed parent lengths lead into
        starts = _rescan(p, _distinct(sorted(refined, key=lambda c: c.j), p, _RESCAN_FROM))
        j_top = min(c.j for c in refined)
        starts = _distinct(sorted((c for c in starts if c.j <= j_top + _REFINE_WINDOW),
                                  key=lambda c: c.j), p, _RESCAN_KEEP)
        refined = _same_removed(sorted(refined + _refine_all(p, starts), key=lambda c: c.j))
    return refined


def _polished(p: _Problem, found: list[_Verified], sweep: np.ndarray, slices: list[slice],
              say: Callable[[str], None]) -> _Verified:
    """The best design found, polished when that ranks better (the polished design then
    joins ``found``)."""
    target = p.yield_target
    best = _best(found, target, p.margin_goal)
    if best.meets or len(best.cand.kinds) <= 3:
        say("polishing the chosen design")
        polished = _verify(p, _polish(p, best.cand), sweep, slices)
        _add_yields(p, [polished])
        if _best([best, polished], target, p.margin_goal) is polished:
            best = polished
            found.append(polished)
    return best


def _solution(p: _Problem, best: _Verified, found: list[_Verified], stubs_tried: int) -> Solution:
    """The chosen design as the solver's answer, with what it misses and the alternatives."""
    alternatives = _alternatives(found, best, p.yield_target, p.margin_goal)
    return Solution(
        filter=best.filt,
        meets=best.meets,
        passes=best.passes,
        notches=best.notches,
        margin_db=min((r.margin_db for r in best.notches), default=math.inf),
        shortfall=_shortfalls(best, p),
        advice=_advice(best, p, stubs_tried),
        verify_freq_hz=best.freq,
        s21=best.s21,
        s11=best.s11,
        z_system=p.z_system,
        max_total_cable_m=p.cable_cap,
        candidates_evaluated=p.evaluated,
        build_yield=best.build_yield,
        yield_target=p.yield_target,
        alternatives=alternatives,
    )


__all__: Sequence[str] = [
    "solve",
    "check_requirement",
    "verify_sweep_hz",
    "describe",
    "Solution",
    "PassResult",
    "NotchResult",
    "Shortfall",
    "Alternative",
    "remedy_class_advice",
    "STUB_CEILING_DB",
    "MIN_CUT_M",
    "MIN_LINE_M",
    "DEFAULT_CABLE_WAVELENGTHS",
    "VERIFY_POINTS",
]
