"""Where the search starts: seeds from the rules of the trade, the one-stub scan, and the
children that add one stub to a design (reactance compensation).
"""

from __future__ import annotations

import math

import numpy as np

from notchkit.filters import evaluate_batch
from notchkit.lines import C0
from notchkit.solver.problem import (
    _BEAM,
    _POOL_MAX,
    _REFINE_MAX,
    _SCAN_MAX,
    BARREL,
    _Cand,
    _distinct,
    _model_kinds,
    _Problem,
)

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
