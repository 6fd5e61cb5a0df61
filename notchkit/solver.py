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
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from notchkit.errors import DesignError
from notchkit.filters import Filter, Line, Medium, Stub, evaluate_batch
from notchkit.lines import C0, db20, swr_from_s11
from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site.model import (
    DEFAULT_MIN_LINE_M,
    DEFAULT_MIN_STUB_CUT_M,
    Allowances,
    Band,
    Limits,
)

MIN_CUT_M = DEFAULT_MIN_STUB_CUT_M
"""Shortest cable that can be cut for a stub, beyond the tee allowance, m (the
default of ``allowances.min_stub_cut_m``: a plug body plus cable to finish and trim)."""
MIN_LINE_M = DEFAULT_MIN_LINE_M
"""Shortest line section between two tees (default of ``allowances.min_line_m``), m."""
YIELD_SAMPLES = 400
"""Simulated builds per candidate when the solver ranks designs by build yield
(standard error at most 2.5 %; the design's own tolerance run uses more)."""
ALTERNATIVES = 4
"""Alternatives reported beside the chosen design."""
DEFAULT_CABLE_WAVELENGTHS = 3.0
"""Default cap on the filter's total cable, in wavelengths in the cable at the
lowest band frequency (used when ``limits.max_total_cable_m`` is ``None``)."""
STUB_SCAN_WAVELENGTHS = 2.5
"""The 1-D scan covers stub paths up to this many wavelengths at the lowest band."""
VERIFY_POINTS = 201
"""Points per band (edges included) of the dense verification sweep, at least."""
CABLE_TIE_FRACTION = 0.10
"""Designs whose cable is within this fraction of the shortest meeting design
(with the same number of stubs) are ranked by margin instead of by cable."""
CABLE_TIE_M = 0.25
"""... or within this many metres of it: a few centimetres of coax are not worth a
worse design (common sense at UHF, where whole filters are tens of centimetres)."""
IL_WEIGHT = 10.0
"""Weight of pass-band insertion loss against notch depth in the penalty:
0.1 dB of excess insertion loss counts as 1 dB of missing rejection."""
MARGIN_GOAL_SLACK_DB = 1.0
"""Designs within this many dB of the margin goal count as reaching it (then cable decides)."""
PASS_CUSHION_DB = 1.0
"""Pass-band margin (normalised dB) beyond which the search and the ranking give it no
further weight, so that the freedom goes to notch margin."""
MAX_FREQ_RANGE = (1e3, 1e11)

BARREL = "barrel"
"""The solver's name for a line section that is a barrel adapter (fixed length
``allowances.barrel_m``); the filter model and the cut list see a line section."""
_THROUGH = ("line", BARREL)


def _model_kinds(kinds: tuple[str, ...]) -> tuple[str, ...]:
    """The kinds as the filter model knows them (a barrel is a line section)."""
    return tuple("line" if k == BARREL else k for k in kinds)


_MATCH_WEIGHT = 0.03  # J per dB of mean pass-band return loss (a tie-breaker for a better match)
_PASS_SLOPE = 10.0  # weight of pass-band margin beyond PASS_CUSHION_DB
_SOFT_K = 2.0  # sharpness of the smooth minimum, 1/dB
_MARGIN_WEIGHT = 0.1
_SCAN_MAX = 6000
_BEAM = 5
_POOL_MAX = 16  # new-stub lengths per kind taken from the scan
_REFINE_WINDOW = 8.0  # dB of penalty
_REFINE_ITER = 30
_REFINE_MAX = 4  # candidates refined per level (plus the shortest that meets on the scan grid)
_RESCAN_FROM = 3  # refined designs per level whose elements are re-scanned
_RESCAN_KEEP = 6  # re-scanned starts refined per level
_FD_STEP = 1e-4  # radians at the highest frequency


# ---------------------------------------------------------------- results


@dataclass(frozen=True, slots=True, kw_only=True)
class PassResult:
    """Verified figures of one pass band (dense sweep, edge to edge)."""

    lo_mhz: float
    hi_mhz: float
    worst_insertion_loss_db: float
    worst_insertion_loss_mhz: float
    worst_swr: float
    worst_swr_mhz: float
    max_insertion_loss_db: float
    max_swr: float
    meets: bool


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchResult:
    """Verified figures of one notch band (dense sweep, edge to edge)."""

    lo_mhz: float
    hi_mhz: float
    required_db: float
    worst_attenuation_db: float
    worst_mhz: float
    margin_db: float
    """``worst_attenuation_db - required_db`` (negative: short by that much)."""
    met_lo_mhz: float | None
    met_hi_mhz: float | None
    """The widest stretch of the band where the requirement is met (``None``: nowhere)."""
    meets: bool


@dataclass(frozen=True, slots=True, kw_only=True)
class Shortfall:
    """What is missing in one band: ``missing_db`` more is needed."""

    band: str
    """``"pass"`` or ``"notch"``."""
    lo_mhz: float
    hi_mhz: float
    quantity: str
    """``"attenuation"`` (dB), ``"insertion_loss"`` (dB) or ``"swr"``."""
    required: float
    achieved: float
    missing_db: float
    """Rejection missing (attenuation), insertion loss in excess, or return loss
    missing for the SWR limit, in dB."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Alternative:
    """Another design the solver verified, for a user who weighs stubs, cable and yield."""

    arrangement: str
    n_stubs: int
    total_cable_m: float
    margin_db: float
    meets: bool
    build_yield: float | None


@dataclass(frozen=True, slots=True, kw_only=True)
class Solution:
    """The solver's answer for one requirement.

    ``verify_freq_hz``, ``s21`` and ``s11`` are the dense verification sweep the
    figures come from (bands concatenated in order: pass bands, then notches).
    """

    filter: Filter
    meets: bool
    passes: tuple[PassResult, ...]
    notches: tuple[NotchResult, ...]
    margin_db: float
    """Smallest notch margin in dB (negative: the largest shortfall); ``inf``
    when there is no notch."""
    shortfall: tuple[Shortfall, ...]
    advice: tuple[str, ...]
    verify_freq_hz: NDArray[np.float64] = field(compare=False, repr=False)
    s21: NDArray[np.complex128] = field(compare=False, repr=False)
    s11: NDArray[np.complex128] = field(compare=False, repr=False)
    z_system: float = 50.0
    max_total_cable_m: float = 0.0
    candidates_evaluated: int = 0
    build_yield: float | None = None
    """Solver's estimate of the share of builds meeting every requirement (``None``:
    the design does not meet as designed)."""
    yield_target: float = 0.9
    alternatives: tuple[Alternative, ...] = ()

    @property
    def n_stubs(self) -> int:
        return len(self.filter.stubs)

    @property
    def total_cable_m(self) -> float:
        return self.filter.total_cable_m


# ---------------------------------------------------------------- the problem


@dataclass(frozen=True, slots=True)
class _Grid:
    """Frequencies and, per margin column, what it checks (see :func:`_margins`)."""

    freq_hz: np.ndarray
    notch_idx: np.ndarray  # columns into freq_hz
    notch_req: np.ndarray
    pass_idx: np.ndarray
    starts: np.ndarray  # reduceat starts of each criterion over the margin columns
    n_notch_cols: int
    pass_bounds: np.ndarray  # pass columns of band i: pass_idx[pass_bounds[i]:pass_bounds[i+1]]


def _band_points(lo_mhz: float, hi_mhz: float, base: int, rel_step: float, cap: int) -> np.ndarray:
    """Frequencies (Hz) across a band, edges included: at least ``base`` points and
    no further apart than ``rel_step`` of the centre frequency, at most ``cap``."""
    if hi_mhz <= lo_mhz:
        return np.array([lo_mhz * 1e6])
    centre = 0.5 * (lo_mhz + hi_mhz)
    n = max(base, int(math.ceil((hi_mhz - lo_mhz) / (rel_step * centre))) + 1)
    return np.linspace(lo_mhz, hi_mhz, min(n, cap)) * 1e6


class _Problem:
    """Everything the search needs about one requirement, precomputed."""

    def __init__(self, req: FilterRequirement, cable: Medium, limits: Limits,
                 tee_allowance_m: float, z_system: float, allowances: Allowances | None = None):
        self.req = req
        self.allowances = allowances or Allowances(tee_allowance_m=tee_allowance_m)
        self.yield_target = float(getattr(limits, "yield_target_pct", 90.0)) / 100.0
        self.margin_goal = float(getattr(limits, "margin_goal_db", 15.0))
        self.cable = cable
        self.limits = limits
        self.tee = float(tee_allowance_m)
        self.z_system = float(z_system)
        self.passes: tuple[Band, ...] = tuple(req.pass_bands)
        self.notches: tuple[NotchSpec, ...] = tuple(req.notches)
        self.il_max = float(limits.max_insertion_loss_db)
        self.swr_max = float(limits.max_swr)
        self.rl_req = -20.0 * math.log10((self.swr_max - 1.0) / (self.swr_max + 1.0))
        edges = [b.lo_mhz for b in self.passes] + [n.lo_mhz for n in self.notches]
        tops = [b.hi_mhz for b in self.passes] + [n.hi_mhz for n in self.notches]
        self.f_low_hz = min(edges) * 1e6
        self.f_high_hz = max(tops) * 1e6
        vf = cable.velocity_factor
        self.lam_low = C0 * vf / self.f_low_hz
        self.lam_high = C0 * vf / self.f_high_hz
        self.scale = self.lam_high / (2.0 * math.pi)  # metres per radian at f_high
        if limits.max_total_cable_m is None:
            self.cable_cap = DEFAULT_CABLE_WAVELENGTHS * self.lam_low
        else:
            self.cable_cap = float(limits.max_total_cable_m)
        # Buildable: a stub has a plug body and cable to finish and trim, and its first
        # resonance (quarter wave) within the analyser's range; a line section is cable
        # with a plug at each end.
        a = self.allowances
        # the first series resonance (open: quarter wave; shorted: half wave) below the top
        quarter = C0 * vf / (4.0 * float(a.analyser_hi_mhz) * 1e6)
        # with connector hardware a stub's length includes its plug (notchkit.hardware): the
        # cable beyond the plug is what must reach min_stub_cut_m
        from notchkit.hardware import stub_plug_m

        fixed = self.tee + stub_plug_m(cable)
        self.kind_min = {"open": max(fixed + float(a.min_stub_cut_m), quarter),
                         "short": max(fixed + float(a.min_stub_cut_m), 2.0 * quarter)}
        self.stub_min = min(self.kind_min.values())
        self.line_min = float(a.min_line_m)
        self.barrel = float(getattr(a, "barrel_m", 0.0))
        scan_top = STUB_SCAN_WAVELENGTHS * self.lam_low + self.stub_min
        self.stub_max = max(self.stub_min + 1e-3, min(self.cable_cap + self.tee, scan_top))
        self.line_max = max(self.line_min + 1e-3, min(self.cable_cap, 0.75 * self.lam_low))
        self.scan = self._grid(base=2, rel=0.01, cap=12)
        self.fine = self._grid(base=3, rel=0.004, cap=21)
        self.evaluated = 0

    def _grid(self, *, base: int, rel: float, cap: int) -> _Grid:
        # The pass-band points first, then the notch points: margins() takes both as slices.
        freqs: list[np.ndarray] = []
        pass_cols: list[np.ndarray] = []
        notch_cols: list[np.ndarray] = []
        notch_req: list[np.ndarray] = []
        n = 0
        for b in self.passes:
            pts = _band_points(b.lo_mhz, b.hi_mhz, base, rel, cap)
            freqs.append(pts)
            pass_cols.append(np.arange(n, n + pts.size))
            n += pts.size
        for s in self.notches:
            pts = _band_points(s.lo_mhz, s.hi_mhz, base, rel, cap)
            freqs.append(pts)
            notch_cols.append(np.arange(n, n + pts.size))
            notch_req.append(np.full(pts.size, float(s.required_db)))
            n += pts.size
        # Margin columns: every notch point, then every pass point twice (IL, RL).
        starts = []
        pos = 0
        for cols in notch_cols:
            starts.append(pos)
            pos += cols.size
        n_notch_cols = pos
        for cols in pass_cols:
            starts.append(pos)
            pos += cols.size
            starts.append(pos)
            pos += cols.size
        empty = np.zeros(0, dtype=int)
        return _Grid(
            freq_hz=np.concatenate(freqs),
            notch_idx=np.concatenate(notch_cols) if notch_cols else empty,
            notch_req=np.concatenate(notch_req) if notch_req else np.zeros(0),
            pass_idx=np.concatenate(pass_cols) if pass_cols else empty,
            starts=np.array(starts, dtype=int),
            n_notch_cols=n_notch_cols,
            pass_bounds=np.cumsum([0] + [c.size for c in pass_cols]),
        )

    # ---- evaluation

    def evaluate(self, kinds: tuple[str, ...], lengths: np.ndarray, grid: _Grid):
        lengths = np.atleast_2d(lengths)
        self.evaluated += lengths.shape[0]
        return evaluate_batch(_model_kinds(kinds), lengths, self.cable, grid.freq_hz, self.z_system)

    def margins(self, s21: np.ndarray, s11: np.ndarray, grid: _Grid) -> np.ndarray:
        """Normalised margins (dB of rejection equivalent), one column per check.

        The grid holds the pass-band points first, then the notch points
        (:meth:`_grid`), so each part is a slice, written straight into its columns.
        """
        att = -db20(s21)
        n_pass = grid.pass_idx.size
        m = np.empty((att.shape[0], grid.n_notch_cols + 2 * n_pass))
        np.subtract(att[:, n_pass:], grid.notch_req, out=m[:, :grid.n_notch_cols])
        if n_pass:
            p_rl = -db20(s11[:, :n_pass])  # return loss matters in the pass bands only
            # per pass band: its IL columns, then its RL columns
            bounds = grid.pass_bounds
            col = grid.n_notch_cols
            for i in range(len(self.passes)):
                lo, hi = int(bounds[i]), int(bounds[i + 1])
                il = m[:, col:col + hi - lo]
                np.subtract(self.il_max, att[:, lo:hi], out=il)
                il *= IL_WEIGHT
                np.subtract(p_rl[:, lo:hi], self.rl_req, out=m[:, col + hi - lo:col + 2 * (hi - lo)])
                col += 2 * (hi - lo)
            # beyond a cushion, pass-band margin counts ten times over, so that it stops
            # binding the smallest margin: the notches' margin is what a build loses, and
            # the search spends the freedom on it
            pm = m[:, grid.n_notch_cols:]
            pm += (_PASS_SLOPE - 1.0) * np.maximum(pm - PASS_CUSHION_DB, 0.0)
        return m

    def cable_used(self, kinds: tuple[str, ...], lengths: np.ndarray) -> np.ndarray:
        lengths = np.atleast_2d(lengths)
        allow = np.array([0.0 if k in _THROUGH else self.tee for k in kinds])
        return np.sum(lengths - allow[None, :], axis=1)

    def objective(self, kinds, lengths, grid: _Grid, s21=None, s11=None):
        """Smooth penalty J, violation V, smallest margin, and each criterion's worst margin.

        ``V`` is the total shortfall: the sum over criteria (each notch; each pass
        band's insertion loss and return loss) of the worst margin's deficit, in
        normalised dB, plus any cable over the cap in metres. ``J`` is its smooth
        version (a soft minimum over each criterion's points and a softplus of the
        deficit) plus a tenth of a soft maximum of minus every margin, so that
        among designs that meet, the one with the most margin has the lowest J.
        """
        if s21 is None:
            s21, s11 = self.evaluate(kinds, lengths, grid)
        m = self.margins(s21, s11, grid)
        k = _SOFT_K
        z = -k * m
        zmax = np.max(z, axis=1, keepdims=True)
        e = np.exp(z - zmax)
        lse_all = (zmax[:, 0] + np.log(np.sum(e, axis=1))) / k
        per = np.add.reduceat(e, grid.starts, axis=1)
        soft_worst = -(zmax + np.log(np.maximum(per, 1e-300))) / k
        j = np.sum(np.logaddexp(0.0, -k * soft_worst), axis=1) / k + _MARGIN_WEIGHT * lse_all
        n_pass = grid.pass_idx.size
        if n_pass and _MATCH_WEIGHT:
            # a small preference for a better match in the pass bands, up to 40 dB of return loss
            rl = -db20(s11[:, :n_pass])
            j -= _MATCH_WEIGHT * np.mean(np.minimum(rl, 40.0), axis=1)
        over = self.cable_used(kinds, lengths) - self.cable_cap
        j = j + 10.0 * np.logaddexp(0.0, k * over) / k
        worst = np.minimum.reduceat(m, grid.starts, axis=1)
        viol = np.sum(np.maximum(0.0, -worst), axis=1) + np.maximum(0.0, over)
        return j, viol, np.min(worst, axis=1), worst

    # ---- bounds

    def bounds(self, kinds: tuple[str, ...]) -> tuple[np.ndarray, np.ndarray]:
        lo = np.array([self.barrel if k == BARREL else self.line_min if k == "line" else self.kind_min[k]
                       for k in kinds])
        hi = np.array([self.barrel if k == BARREL else self.line_max if k == "line" else self.stub_max
                       for k in kinds])
        return lo, hi


# ---------------------------------------------------------------- seeds


def _rule_seeds(p: _Problem) -> dict[str, list[float]]:
    """Stub paths from the quarter- and half-wave families (common practice)."""
    vf = p.cable.velocity_factor
    seeds: dict[str, list[float]] = {"open": [], "short": []}
    for n in p.notches:
        lam = C0 * vf / (0.5e6 * (n.lo_mhz + n.hi_mhz))
        seeds["open"] += [(2 * k + 1) * lam / 4 for k in range(4)]  # open odd quarter waves notch
        seeds["short"] += [k * lam / 2 for k in range(1, 4)]  # shorted half waves notch
    for b in p.passes:
        lam = C0 * vf / (b.centre_mhz * 1e6)
        seeds["short"] += [(2 * k + 1) * lam / 4 for k in range(3)]  # shorted odd quarter waves pass
        seeds["open"] += [k * lam / 2 for k in range(1, 3)]  # open half waves pass
    return {k: [x for x in v if p.kind_min[k] <= x <= p.stub_max] for k, v in seeds.items()}


def _compensation_lengths(p: _Problem, b_siemens: float, kind: str, freq_hz: float) -> list[float]:
    """Stub paths whose susceptance at ``freq_hz`` is ``-b_siemens`` (lossless closed form).

    Open: ``tan(beta l) = -B Z0``; shorted: ``cot(beta l) = B Z0``.
    """
    beta = 2.0 * math.pi * freq_hz / (C0 * p.cable.velocity_factor)
    x = b_siemens * p.cable.z0_ohm
    if kind == "open":
        theta = math.atan(-x) % math.pi
    else:
        theta = (0.5 * math.pi - math.atan(x)) % math.pi
    out = []
    for m in range(3):
        length = (theta + m * math.pi) / beta
        if p.kind_min[kind] <= length <= p.stub_max:
            out.append(length)
    return out[:2]


def _local_minima(values: np.ndarray) -> np.ndarray:
    if values.size < 3:
        return np.arange(values.size)
    left = np.r_[True, values[1:] <= values[:-1]]
    right = np.r_[values[:-1] <= values[1:], True]
    return np.flatnonzero(left & right)


# ---------------------------------------------------------------- candidates


@dataclass(slots=True)
class _Cand:
    kinds: tuple[str, ...]
    lengths: np.ndarray
    j: float
    viol: float
    margin: float


def _distinct(cands: list[_Cand], p: _Problem, n: int) -> list[_Cand]:
    """The first ``n`` candidates (already sorted) that are not near-duplicates."""
    out: list[_Cand] = []
    for c in cands:
        dup = any(o.kinds == c.kinds and np.max(np.abs(o.lengths - c.lengths)) < 0.3 * p.scale
                  for o in out)
        if not dup:
            out.append(c)
        if len(out) >= n:
            break
    return out


def _same_removed(cands: list[_Cand]) -> list[_Cand]:
    """The candidates without repeats (refinements that ended at the same lengths, within
    0.1 mm): each is verified once."""
    out: list[_Cand] = []
    for c in cands:
        if not any(o.kinds == c.kinds and np.max(np.abs(o.lengths - c.lengths)) < 1e-4 for o in out):
            out.append(c)
    return out


def _pick(kinds, lengths, j, viol, margin, p: _Problem, n: int) -> list[_Cand]:
    """Best ``n`` distinct by penalty, plus the shortest coarse-feasible one."""
    order = np.lexsort((np.arange(j.size), j))
    cands = [_Cand(kinds[i] if isinstance(kinds, list) else kinds, lengths[i].copy(),
                   float(j[i]), float(viol[i]), float(margin[i])) for i in order[: 40 * n]]
    chosen = _distinct(cands, p, n)
    feasible = np.flatnonzero(viol <= 0)
    if feasible.size:
        ks = kinds if isinstance(kinds, list) else [kinds] * j.size
        used = np.array([float(p.cable_used(ks[i], lengths[i])[0]) for i in feasible])
        i = int(feasible[int(np.argmin(used))])
        extra = _Cand(ks[i], lengths[i].copy(), float(j[i]), float(viol[i]), float(margin[i]))
        chosen = _distinct(chosen + [extra], p, n + 1)
    return chosen


def _scan_one_stub(p: _Problem):
    """The dense 1-D scan for a single stub; returns candidates and the per-notch resonances."""
    n = int(math.ceil((p.stub_max - p.stub_min) / (p.lam_high / 120.0))) + 1
    n = min(max(n, 200), _SCAN_MAX)
    grid_l = np.linspace(p.stub_min, p.stub_max, n)
    seeds = _rule_seeds(p)
    cands: list[_Cand] = []
    pool: dict[str, list[float]] = {"open": [], "short": []}
    best_single: list[tuple[float, int, str, float]] = []  # the best resonance of each kind for each notch
    for kind in ("open", "short"):
        lengths = np.unique(np.r_[grid_l, seeds[kind]])
        lengths = lengths[lengths >= p.kind_min[kind]]
        s21, s11 = p.evaluate((kind,), lengths[:, None], p.scan)
        j, viol, margin, worst = p.objective((kind,), lengths[:, None], p.scan, s21, s11)
        idx = _local_minima(j)
        sub = _pick((kind,), lengths[idx, None], j[idx], viol[idx], margin[idx], p, 3)
        cands += sub
        # Resonances per notch: local maxima of that notch's worst attenuation.
        for jn in range(len(p.notches)):
            w = worst[:, jn]
            peaks = _local_minima(-w)
            peaks = peaks[np.argsort(-w[peaks], kind="stable")][:2].tolist()
            if peaks:
                best_single.append((float(-w[peaks[0]]), jn, kind, float(lengths[peaks[0]])))
            first = _local_minima(-w)[:1].tolist()
            for i in sorted(set(peaks + first)):
                pool[kind].append(float(lengths[i]))
        pool[kind] = _dedupe(pool[kind] + seeds[kind], 0.1 * p.scale)[:_POOL_MAX]
    # for each notch, the single stub (either kind) that notches it best
    best_single.sort()
    chosen, seen = [], set()
    for _, jn, kind, length in best_single:
        if jn not in seen:
            seen.add(jn)
            chosen.append((kind, length))
    return cands, pool, chosen[:_BEAM]


def _dedupe(values: list[float], tol: float) -> list[float]:
    out: list[float] = []
    for v in sorted(values):
        if not out or v - out[-1] > tol:
            out.append(v)
    return out


def _back_susceptance(p: _Problem, kinds: tuple[str, ...], lengths: np.ndarray,
                      freq_hz: np.ndarray) -> np.ndarray:
    """Susceptance seen from the antenna-side port of networks (radio side in Z_system).

    ``lengths`` is (n_cand, len(kinds)); returns (n_cand, n_freq) siemens. The
    network is reversed so that its antenna-side port becomes port 1 (a stub
    network is reciprocal and each element symmetric).
    """
    rev_kinds = tuple(reversed(kinds))
    rev = np.atleast_2d(np.asarray(lengths, dtype=float))[:, ::-1]
    _, s11 = evaluate_batch(_model_kinds(rev_kinds), rev, p.cable, freq_hz, p.z_system)
    y = (1.0 - s11) / (1.0 + s11) / p.z_system
    return y.imag


def _unique_rows(rows: np.ndarray) -> np.ndarray:
    """The distinct rows of a 2-D float array, in lexicographic order (first column
    first): what ``np.unique(rows, axis=0)`` gives for these finite lengths, without
    its byte-wise sort (a sixth of the children's time)."""
    if rows.shape[0] < 2:
        return rows
    ranked = rows[np.lexsort(rows.T[::-1])]
    keep = np.empty(ranked.shape[0], dtype=bool)
    keep[0] = True
    np.any(ranked[1:] != ranked[:-1], axis=1, out=keep[1:])
    return ranked[keep]


def _children(p: _Problem, parents: list[_Cand], pool: dict[str, list[float]]) -> list[_Cand]:
    """Extend each parent by one stub at its last tee or behind a line section."""
    vf = p.cable.velocity_factor
    d_pool = []
    for n in p.notches:
        d_pool.append(C0 * vf / (0.5e6 * (n.lo_mhz + n.hi_mhz)) / 4)
    for b in p.passes:
        lam = C0 * vf / (b.centre_mhz * 1e6)
        d_pool += [lam / 4, lam / 2]
    d_pool += list(np.linspace(p.line_min, 0.5 * p.lam_low, 4))
    d_pool = sorted({round(d, 6) for d in d_pool if p.line_min <= d <= p.line_max})
    coarse = list(np.linspace(p.stub_min, p.stub_max, 16))
    f_pass = np.array([b.centre_mhz * 1e6 for b in p.passes])
    by_topology: dict[tuple[str, ...], list[np.ndarray]] = {}
    for parent in parents:
        # (topology, lengths) of each placement: at the parent's last tee, or behind a line
        places = [(parent.kinds, parent.lengths[None, :])]
        if d_pool:
            rows = np.repeat(parent.lengths[None, :], len(d_pool), axis=0)
            places.append(((*parent.kinds, "line"), np.column_stack([rows, d_pool])))
        if p.barrel > 0:
            # behind a barrel: the next tee as close as the hardware allows
            places.append(((*parent.kinds, BARREL), np.column_stack([parent.lengths[None, :], [p.barrel]])))
        for base_kinds, base_rows in places:
            b_back = (_back_susceptance(p, base_kinds, base_rows, f_pass) if f_pass.size
                      else np.zeros((base_rows.shape[0], 0)))
            for kind in ("open", "short"):
                for row, b_row in zip(base_rows, b_back, strict=True):
                    new = list(pool[kind]) + coarse
                    for b, f in zip(b_row, f_pass, strict=True):
                        new += _compensation_lengths(p, float(b), kind, float(f))
                    new_arr = np.round(np.asarray(new), 6)  # repeats go in the unique() below
                    new_arr = new_arr[new_arr >= p.kind_min[kind] - 1e-6]
                    rows = np.column_stack([np.repeat(row[None, :], new_arr.size, axis=0), new_arr])
                    by_topology.setdefault((*base_kinds, kind), []).append(rows)
    out_k: list[tuple[str, ...]] = []
    out_l: list[np.ndarray] = []
    out_j, out_v, out_m = [], [], []
    for kinds in sorted(by_topology):
        lengths = _unique_rows(np.concatenate(by_topology[kinds]))
        ok = p.cable_used(kinds, lengths) <= p.cable_cap
        lengths = lengths[ok]
        if not lengths.size:
            continue
        j, viol, margin, _ = p.objective(kinds, lengths, p.scan)
        out_k += [kinds] * lengths.shape[0]
        out_l += list(lengths)
        out_j.append(j)
        out_v.append(viol)
        out_m.append(margin)
    if not out_k:
        return []
    return _pick(out_k, out_l, np.concatenate(out_j), np.concatenate(out_v), np.concatenate(out_m),
                 p, _REFINE_MAX)


# ---------------------------------------------------------------- refinement


def _refine_group(p: _Problem, cands: list[_Cand], stages: tuple | None = None,
                  first_step: float = 0.25, objective=None) -> list[_Cand]:
    """Local refinement of candidates of one topology: a bounded pattern search.

    Each iteration evaluates, in one batched call for every candidate still
    moving, a step up and down each length at two step sizes and the last
    successful move extended; a candidate's step shrinks when none of its moves
    improves it. Lengths are in radians at the highest band frequency, so a step
    is the same phase for every element. ``stages`` are (grid, smallest step)
    pairs: by default one stage on the fine grid down to 1e-3 rad; the steps
    start at ``first_step`` rad. (An earlier version first took the coarse steps
    on the cheaper scan grid: on these small batches numpy's cost per call is as
    large as the arithmetic, so the second stage's extra iterations cost more
    than the smaller grid saved. One stage gives the example sites the same
    verdicts in a fifth less time; margins moved by at most 0.7 dB, either way,
    on filters that do not meet, and by 0.05 dB or less on those that do.
    A pattern search rather than a quasi-Newton method: it needs no linear
    algebra, whose threaded BLAS slows everything down on a busy machine, and
    each step is one batched evaluation.)
    """
    kinds = cands[0].kinds
    lo, hi = p.bounds(kinds)
    s = p.scale
    lo_u, hi_u = lo / s, hi / s
    n = len(kinds)
    eye = np.eye(n)
    m = len(cands)
    x = np.clip(np.array([c.lengths for c in cands]) / s, lo_u, hi_u)
    step = np.full(m, first_step)
    last = np.zeros((m, n))
    n_moves = 4 * n + 2
    penalty = objective or (lambda k, lengths, g: p.objective(k, lengths, g)[0])
    for grid, stop in stages or ((p.fine, 1e-3),):
        jx = penalty(kinds, x * s, grid)
        for _ in range(_REFINE_ITER):
            active = np.flatnonzero(step >= stop)
            if not active.size:
                break
            st = step[active][:, None, None]
            unit = np.vstack([eye, -eye, 0.3 * eye, -0.3 * eye])[None, :, :]
            prev = last[active][:, None, :]
            moves = np.concatenate([unit * st, prev, 2 * prev], axis=1)
            trial = np.clip(x[active][:, None, :] + moves, lo_u, hi_u)
            j = penalty(kinds, trial.reshape(-1, n) * s, grid).reshape(active.size, n_moves)
            best = np.argmin(j, axis=1)
            jb = j[np.arange(active.size), best]
            better = jb < jx[active] - 1e-3  # dB: smaller gains do not matter
            for k, idx in enumerate(active):
                if better[k]:
                    new = trial[k, best[k]]
                    last[idx] = new - x[idx]
                    x[idx], jx[idx] = new, jb[k]
                else:
                    step[idx] *= 0.35
                    last[idx] = 0.0
    j, viol, margin, _ = p.objective(kinds, x * s, p.fine)
    return [_Cand(kinds, x[i] * s, float(j[i]), float(viol[i]), float(margin[i])) for i in range(m)]


def _refine_all(p: _Problem, cands: list[_Cand]) -> list[_Cand]:
    """Refine every candidate, batched by topology; the result keeps the input order."""
    out: list[_Cand | None] = [None] * len(cands)
    groups: dict[tuple[str, ...], list[int]] = {}
    for i, c in enumerate(cands):
        groups.setdefault(c.kinds, []).append(i)
    for kinds in sorted(groups):
        idx = groups[kinds]
        for i, r in zip(idx, _refine_group(p, [cands[i] for i in idx]), strict=True):
            out[i] = r
    return [c for c in out if c is not None]


_RESCAN_POINTS_PER_WAVE = 60  # points per wavelength at the highest band in a re-scan
_RESCAN_MAX = 600
_RESCAN_TAKE = 2  # new starts per element re-scanned


def _rescan(p: _Problem, cands: list[_Cand]) -> list[_Cand]:
    """New starting points from refined designs: each element's length scanned over its
    whole range (the others held), the best other local minima kept.

    The children of a level keep their parent's lengths, and the pattern search only
    moves locally, so a design whose earlier stub must sit elsewhere once another stub
    is added (a different resonance, not a small shift) is never reached. One scan per
    element (one batched evaluation each) finds it; the new starts are refined with
    the rest.
    """
    out: list[_Cand] = []
    for c in cands:
        n = len(c.kinds)
        if n < 2:
            continue
        for i, kind in enumerate(c.kinds):
            if kind == BARREL:
                continue
            lo, hi = p.bounds((kind,))
            if kind == "line":
                hi = np.minimum(hi, max(lo[0], 0.5 * p.lam_low))  # the children's longest line
            if hi[0] - lo[0] < 1e-3:
                continue
            count = int(math.ceil((hi[0] - lo[0]) / (p.lam_high / _RESCAN_POINTS_PER_WAVE))) + 1
            values = np.linspace(lo[0], hi[0], min(max(count, 50), _RESCAN_MAX))
            rows = np.repeat(c.lengths[None, :], values.size, axis=0)
            rows[:, i] = values
            ok = p.cable_used(c.kinds, rows) <= p.cable_cap
            rows = rows[ok]
            if rows.shape[0] < 3:
                continue
            # a whole range can reach lengths whose loss underflows |S21| (kilometres of
            # line at GHz on a request spanning kHz to GHz): those rows are no start
            with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
                j, viol, margin, _ = p.objective(c.kinds, rows, p.scan)
            j = np.where(np.isfinite(j), j, np.inf)
            idx = _local_minima(j)
            idx = idx[np.isfinite(j[idx])]
            idx = idx[np.argsort(j[idx], kind="stable")]
            taken = 0
            for k in idx:
                if abs(rows[k, i] - c.lengths[i]) < 0.3 * p.scale:
                    continue  # the refined design's own minimum
                out.append(_Cand(c.kinds, rows[k].copy(), float(j[k]), float(viol[k]), float(margin[k])))
                taken += 1
                if taken >= _RESCAN_TAKE:
                    break
    return out


def _build_perturbations(p: _Problem, kinds: tuple[str, ...], k: int) -> tuple[np.ndarray, np.ndarray]:
    """``k`` builds drawn from the build model (seeded): relative and absolute length
    errors, each (k, len(kinds)), so a build of ``x`` is ``x * (1 + rel) + abs``."""
    a = p.allowances
    rng = np.random.default_rng(12345)
    n = len(kinds)
    is_line = np.array([kd in _THROUGH for kd in kinds])
    vf0 = float(p.cable.velocity_factor)
    spread = a.vf_spread
    if spread is None:
        published = getattr(p.cable, "vf_tolerance", None)
        spread = 0.01 if published is None else float(published)
    read = rng.uniform(-1, 1, (k, n)) * a.trim_freq_error_pct / 100.0
    left = rng.uniform(0, 1, (k, n)) * a.trim_step_mm * 1e-3
    vf = vf0 + rng.uniform(-1, 1, (k, 1)) * spread
    cut = rng.uniform(-1, 1, (k, n)) * a.cut_tolerance_mm * 1e-3
    drift = rng.uniform(-1, 1, (k, 1)) * a.drift_pct / 100.0
    rel = np.where(is_line[None, :], vf0 / vf - 1.0, read)
    rel = (1.0 + rel) * (1.0 + drift) - 1.0
    ab = np.where(is_line[None, :], cut * (vf0 / vf), left) * (1.0 + drift)
    return rel, ab


_ROBUST_BUILDS = 16  # builds per trial in the robust refinement


def _refine_robust(p: _Problem, cands: list[_Cand]) -> list[_Cand]:
    """Refine designs that meet as designed for the build instead: the pattern search on
    the mean penalty over :data:`_ROBUST_BUILDS` simulated builds (the same builds for
    every trial), so it trades nominal margin for margin that survives trimming, cutting
    and the cable's spread."""
    out: list[_Cand] = []
    groups: dict[tuple[str, ...], list[_Cand]] = {}
    for c in _distinct(sorted(cands, key=lambda c: c.j), p, _REFINE_MAX):
        groups.setdefault(c.kinds, []).append(c)
    for kinds in sorted(groups):
        rel, ab = _build_perturbations(p, kinds, _ROBUST_BUILDS)

        def robust_j(kd, lengths, grid, rel=rel, ab=ab):
            lengths = np.atleast_2d(lengths)
            m = lengths.shape[0]
            built = lengths[:, None, :] * (1.0 + rel[None]) + ab[None]
            j = p.objective(kd, np.maximum(built.reshape(m * rel.shape[0], -1), 1e-6), grid)[0]
            return j.reshape(m, rel.shape[0]).mean(axis=1)

        out += _refine_group(p, groups[kinds], first_step=0.1, objective=robust_j)
    return out


def _polish(p: _Problem, cand: _Cand) -> _Cand:
    """Final polish of the chosen design: the pattern search again on the fine
    grid, from small steps down to 1e-4 rad (a fraction of a millimetre)."""
    return _refine_group(p, [cand], stages=((p.fine, 1e-4),), first_step=0.02)[0]


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
    p = _Problem(req, cable, limits, tee_allowance_m, z_system, allowances)
    sweep, slices = verify_sweep_hz(req)
    say = progress or (lambda _msg: None)
    target = p.yield_target

    say("1 stub: scanning lengths")
    level, pool, best_single = _scan_one_stub(p)
    found: list[_Verified] = []
    stubs_tried = 1
    for n_stubs in range(1, limits.max_stubs + 1):
        if n_stubs > 1:
            say(f"{n_stubs} stubs: extending the best {n_stubs - 1}-stub designs")
            parents = _distinct(sorted(level, key=lambda c: c.j), p, _BEAM)
            if n_stubs == 2:
                # single stubs that each notch one band well are parents too
                singles = [_Cand((k,), np.array([x]), 0.0, 0.0, 0.0) for k, x in best_single]
                parents = _distinct(parents + singles, p, _BEAM + len(singles))
            level = _children(p, parents, pool)
            stubs_tried = n_stubs
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
        level = refined
        verified = [_verify(p, c, sweep, slices) for c in refined]
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
    best = _best(found, target, p.margin_goal)
    if best.meets or len(best.cand.kinds) <= 3:
        say("polishing the chosen design")
        polished = _verify(p, _polish(p, best.cand), sweep, slices)
        _add_yields(p, [polished])
        if _best([best, polished], target, p.margin_goal) is polished:
            best = polished
            found.append(polished)
    alternatives = _alternatives(found, best, target, p.margin_goal)
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
        yield_target=target,
        alternatives=alternatives,
    )


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
