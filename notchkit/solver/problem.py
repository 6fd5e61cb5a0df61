"""One requirement as the search sees it: the tuning constants, the grids, the penalty, the
bounds, and the candidates the search carries.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from notchkit.filters import Medium, evaluate_batch
from notchkit.lines import C0, db20
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
