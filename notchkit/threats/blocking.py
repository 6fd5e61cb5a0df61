"""Several carriers at one receiver: their total power against its blocking level.

Each out-of-band carrier alone is the ``fundamental`` mechanism. Carriers that
arrive together add as powers (uncorrelated signals, textbook power sum)::

    P_total = 10 log10( sum_j 10^(P_j / 10) )      dBm

and P_total is compared with the receiver's blocking level. Carriers inside
the receiver's band are excluded (they are judged against its sensitivity), as
is a transceiver's own carrier (the duplexer's job).

Which carriers to notch: the strongest notchable carriers, in order, until the
carriers left un-notched sum to at most the limit - 3 dB (half of it); each of
the N notched carriers then asks X_j = P_j - (limit - 3 dB - margin - 10 log10 N)
(an equal share of the other half, less the margin), so the total ends below
the limit. When the carriers that cannot be
notched (too close to the receiver's band) already exceed half the limit, no
stub helps and the remedy says so.
"""

from __future__ import annotations

from typing import Any, NamedTuple

import numpy as np

from notchkit.threats.result import Threat

MODEL = "power sum: 10 log10(sum_j 10^(P_j/10)) of the carriers outside the receiver's band"
HALF_DB = 10.0 * np.log10(2.0)
"""3.01 dB: the share of the limit the un-notched carriers may use."""
LISTED = 8
"""Carriers named in a blocking threat's details (the strongest)."""


class _Carriers(NamedTuple):
    """Every out-of-band carrier at every receiver (one row each): by receiver, strongest first."""

    tx: np.ndarray
    rx: np.ndarray
    level: np.ndarray
    """dBm, referred to the receiver's blocking level at the strongest carrier's offset."""
    iso: np.ndarray
    meth: np.ndarray


def blocking_threats(ctx, tx: np.ndarray, rx: np.ndarray) -> list[Threat]:
    """One ``blocking`` threat per receiver reached by two or more out-of-band carriers."""
    sa = ctx.sa
    if tx.size < 2 or rx.size == 0:
        return []
    carriers = _carriers(sa, tx, rx)
    if carriers is None:
        return []
    return [_threat(ctx, carriers, v, idx) for v, idx in _groups(sa, carriers)]


def _carriers(sa, tx: np.ndarray, rx: np.ndarray) -> _Carriers | None:
    """The carriers of other radios that share a scenario, outside each receiver's band."""
    oo, vv = (a.ravel() for a in np.meshgrid(tx, rx, indexing="ij"))
    keep = sa.op.pair_ok(oo, vv)  # operating layer: other radios that share a scenario
    oo, vv = oo[keep], vv[keep]
    cochannel = (sa.tx_lo[oo] <= sa.rx_hi[vv]) & (sa.rx_lo[vv] <= sa.tx_hi[oo])
    oo, vv = oo[~cochannel], vv[~cochannel]
    if oo.size == 0:
        return None
    total, iso, meth = sa.path_db(oo, vv, sa.tx_lo[oo])
    level = sa.p_dbm[oo] - total
    # each carrier against the receiver's blocking level at its own offset (selectivity by
    # offset): the sum of the carriers' powers relative to their limits, referred to the
    # limit of the strongest
    level = level - (sa.blocking_dbm(vv, sa.tx_lo[oo], sa.tx_hi[oo]) - sa.rx_blocking[vv])
    order = np.lexsort((-level, vv))
    return _Carriers(oo[order], vv[order], level[order], iso[order], meth[order])


def _groups(sa, c: _Carriers) -> list[tuple[int, list[int]]]:
    """(receiver, rows) of each set of two or more carriers on the air together, once each."""
    oo, vv = c.tx, c.rx
    starts = np.r_[0, np.nonzero(vv[1:] != vv[:-1])[0] + 1, vv.size]
    groups: list[Any] = []
    for a, b in zip(starts[:-1].tolist(), starts[1:].tolist(), strict=True):
        v = int(vv[a])
        for scen in range(sa.op.active.shape[1]):  # carriers on the air together: one scenario,
            if not sa.op.active[v, scen]:  # one operating choice per radio (its strongest)
                continue
            idx = [k for k in range(a, b) if sa.op.active[int(oo[k]), scen]]
            first: dict[int, int] = {}  # rows are strongest first: keep each radio's first
            for k in idx:
                first.setdefault(int(sa.radio_of[oo[k]]), k)
            idx = sorted(first.values())
            if len(idx) >= 2 and idx not in [g[1] for g in groups if g[0] == v]:
                groups.append((v, idx))
    return groups


def _threat(ctx, c: _Carriers, v: int, idx: list[int]) -> Threat:
    """The blocking threat of one set of carriers at receiver ``v`` (rows ``idx``)."""
    sa, names = ctx.sa, ctx.names
    a = idx[0]
    o = c.tx[idx]
    p = c.level[idx]
    mw = 10.0 ** (p / 10.0)
    tot = float(10.0 * np.log10(mw.sum()))
    limit = float(sa.rx_blocking[v])
    excess = tot - limit
    remedy, where, chosen = _remedy(ctx, v, o, p, mw, limit, excess)
    src_idx = [int(o[k]) for k in chosen] if chosen else [int(i) for i, pk in zip(o, p, strict=True)
                                                         if pk >= p[0] - 10.0]  # fmt: skip
    strongest = int(o[0])
    listed = ", ".join(f"{names[int(i)]} {float(x):.1f} dBm" for i, x in zip(o[:LISTED], p[:LISTED],
                                                                              strict=True))  # fmt: skip
    more = f" and {len(o) - LISTED} more" if len(o) > LISTED else ""
    lo, hi = float(sa.tx_lo[strongest]), float(sa.tx_hi[strongest])
    return Threat(
        sources=tuple(names[i] for i in src_idx), victim=names[v], mechanism="blocking",
        order=1, product=f"{len(o)} carriers together", f_mhz=0.5 * (lo + hi), f_lo_mhz=lo,
        f_hi_mhz=hi, level_dbm=tot, threshold_dbm=limit,
        threshold_source=sa.rx_blocking_source[v], excess_db=excess,
        required_db=excess + ctx.margin, isolation_db=float(c.iso[a]),
        isolation_method=ctx.iso_text(strongest, v, lo, float(c.iso[a]), int(c.meth[a])),
        remedy=remedy, details=(f"carriers at {names[v]}'s input: {listed}{more}",),
        filters=where, level_model=MODEL,
    )  # fmt: skip


def _remedy(ctx, v: int, o: np.ndarray, p: np.ndarray, mw: np.ndarray, limit: float,
            excess: float) -> tuple[str, tuple[tuple[str, str], ...], list[int]]:
    """The remedy text, the filters fed and the rows of the carriers to notch (see the
    module's docstring: the strongest notchable first, until the rest sum to half the limit)."""
    sa, names = ctx.sa, ctx.names
    notchable = np.array(
        [ctx.clash(v, float(sa.tx_lo[i]), float(sa.tx_hi[i])) is None for i in o.tolist()]
    )
    half_mw = 10.0 ** ((limit - HALF_DB) / 10.0)
    fixed_mw = float(mw[~notchable].sum())
    where: tuple[tuple[str, str], ...] = ()
    chosen: list[int] = []
    at = "filter at transceiver" if sa.site.radios[v].tx is not None else "rx-side filter at"
    if excess <= 0:
        return f"none needed ({at} {names[v]} notching the strongest carriers if it were)", where, chosen
    if fixed_mw > half_mw:
        remedy = (
            f"no stub: carriers too close to {names[v]}'s band already sum to "
            f"{10 * np.log10(fixed_mw):.1f} dBm; use cavities or a duplexer, or more separation"
        )
        return remedy, where, chosen
    rest = float(mw[notchable].sum()) + fixed_mw
    for k in np.nonzero(notchable)[0].tolist():
        if rest <= half_mw:
            break
        chosen.append(k)
        rest -= float(mw[k])
    # each chosen carrier down to an equal share of (limit - 3 dB - margin)
    share = limit - HALF_DB - ctx.margin - 10.0 * np.log10(max(len(chosen), 1))
    locs = []
    depths = []
    for k in chosen:
        i = int(o[k])
        depth = float(p[k]) - share
        depths.append(depth)
        fd, _ = ctx.feed(v, "rx", float(sa.tx_lo[i]), float(sa.tx_hi[i]), depth,
                         f"{len(o)} carriers together block {names[v]}")  # fmt: skip
        if fd is not None:
            locs.append(fd)
    where = tuple(dict.fromkeys(locs))
    remedy = (
        f"{at} {names[v]}: notch " + ", ".join(names[int(o[k])] for k in chosen)
        + " by " + ", ".join(f"{d:.1f}" for d in depths)
        + " dB (margin included; the rest stay under half the limit)"
    )  # fmt: skip
    return remedy, where, chosen
