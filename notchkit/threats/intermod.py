"""Intermodulation products of two and three transmitters: enumeration, levels, threats.

Enumeration (:mod:`notchkit.threats.products`): every coefficient set of order 2
to the site's ``max_im_order`` for every pair and triple of transmitters, as
interval arithmetic on their emission intervals, in chunks of at most
:data:`CHUNK_PRODUCTS` products; the receivers a product lands in are found
by binary search on receivers sorted by band edge (grouped by band width), so
the cost grows with the number of products, not products x receivers.

Levels (:mod:`notchkit.threats.levels`): each product has up to k + 1 routes:
formed in the output stage of each of its k transmitters (the "mixer"; the
other carriers arrive there through the antennas) and formed in the victim's
own front end (orders 2 and 3, from its IIP2/IIP3). The threat's level is the
worst route; ``route`` / ``mixer`` / ``level_model`` say which.

Notches: a route above the limit asks, at the mixer's output (transmitter
route) or at the victim's input (receiver route), for notches on the other
carriers. A notch of X dB on carriers whose |coefficients| sum to S lowers
the product by S * X dB, so each asks (excess + margin) / S.

Only the :data:`DEFAULT_MAX_THREATS` worst products (by excess) become
:class:`~notchkit.threats.result.Threat` objects; the rest are counted, and
their worst excess per transmitter and receiver still reaches the matrix.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from notchkit.errors import UsageError
from notchkit.threats import products
from notchkit.threats.imrun import COVER_BINS as COVER_BINS
from notchkit.threats.imrun import GRID as GRID
from notchkit.threats.imrun import RX_MODEL as RX_MODEL
from notchkit.threats.imrun import TX_MODEL as TX_MODEL
from notchkit.threats.imrun import _State
from notchkit.threats.result import Threat

CHUNK_PRODUCTS = 1 << 18
"""Products (combination x coefficient set) evaluated per numpy chunk."""

DEFAULT_MAX_THREATS = 10_000
"""Intermodulation threats kept as objects (the worst by excess); the rest are counted."""


@dataclass
class IMOutcome:
    """What the intermodulation pass found besides its threat objects."""

    products: int = 0
    """Product-in-receiver hits evaluated."""
    left_over: int = 0
    """Hits above the limit not kept as threat objects."""
    left_under: int = 0
    """Hits at or below the limit not kept as threat objects."""
    worst: np.ndarray | None = None
    """Worst excess per (transmitter, receiver) radio index over every hit, n x n
    (-inf where none; for the matrix)."""
    notes: list[str] | None = None
    """Which radios rest on the documented level defaults."""


def intermod_threats(
    ctx, tx: np.ndarray, rx: np.ndarray, *, max_order: int = products.DEFAULT_MAX_ORDER,
    max_threats: int = DEFAULT_MAX_THREATS,
) -> tuple[list[Threat], IMOutcome]:
    """Every 2- and 3-transmitter product of order 2..max_order that lands in a receiver's band.

    Parameters
    ----------
    ctx : notchkit.threats.context._Ctx
        The survey run (site arrays, margin, notch collection).
    tx, rx : ndarray of int
        Radio indices of the transmitters and receivers.
    max_order : int
        Highest order enumerated (>= 2).
    max_threats : int
        Threat objects kept (the worst); the others are counted in the outcome.
    """
    if isinstance(max_threats, bool) or not isinstance(max_threats, int | np.integer) or max_threats < 0:
        raise UsageError(f"max_threats: {max_threats!r} is not allowed (an integer >= 0)")
    outcome = IMOutcome()
    if tx.size < 2 or rx.size == 0 or max_order < 2:
        return [], outcome
    st = _State(ctx, tx, rx)
    outcome.notes = st.default_notes()
    outcome.worst = np.full((st.n, st.n), -np.inf)
    keep = _Keep(max_threats)
    for k in (2, 3):
        coeffs = products.coefficient_sets(k, max_order)
        if coeffs.size == 0 or tx.size < k:
            continue
        per = max(1, CHUNK_PRODUCTS // len(coeffs))
        for combos in _combinations(tx.size, k, per):
            radios_c = tx[combos]
            radios_c = radios_c[ctx.combos_ok(radios_c)]  # operating layer: radios active together
            if radios_c.size == 0:
                continue
            hits = st.land(coeffs, radios_c)
            if hits is None:
                continue
            rows = st.evaluate(coeffs, radios_c, *hits)
            outcome.products += rows["level"].size
            st.worst(rows, outcome.worst)
            keep.add(rows)
    st.flush_notches()
    kept, over, under = keep.result()
    outcome.left_over, outcome.left_under = over, under
    return st.threats(kept), outcome


def _combinations(n: int, k: int, per: int):
    """Index combinations i < j (< l) of n items, in blocks of about ``per`` rows."""
    if k == 2:
        first, second = np.triu_indices(n, k=1)
        allc = np.stack([first, second], axis=1)
        for s in range(0, len(allc), per):
            yield allc[s : s + per]
        return
    block: list[np.ndarray] = []
    size = 0
    for i in range(n - 2):
        j, l_ = np.triu_indices(n - i - 1, k=1)
        if j.size == 0:
            continue
        part = np.stack([np.full(j.size, i), j + i + 1, l_ + i + 1], axis=1)
        block.append(part)
        size += len(part)
        if size >= per:
            yield np.concatenate(block)
            block, size = [], 0
    if block:
        yield np.concatenate(block)


class _Keep:
    """The worst ``cap`` rows by excess, pruned as chunks arrive; counts what is dropped."""

    def __init__(self, cap: int):
        self.cap = max(0, int(cap))
        self.parts: list[dict] = []
        self.size = 0
        self.over = 0
        self.under = 0

    def add(self, rows: dict) -> None:
        self.parts.append(rows)
        self.size += rows["level"].size
        if self.size > 2 * self.cap + CHUNK_PRODUCTS // 4:
            self._prune()

    def _prune(self) -> None:
        rows = _concat(self.parts)
        ex = rows["excess"]
        if ex.size > self.cap:
            order = np.argpartition(-ex, self.cap)[: self.cap] if self.cap else np.zeros(0, int)
            dropped = np.ones(ex.size, bool)
            dropped[order] = False
            self.over += int(np.count_nonzero(ex[dropped] > 0))
            self.under += int(np.count_nonzero(ex[dropped] <= 0))
            rows = {key: v[order] for key, v in rows.items()}
        self.parts = [rows] if rows["level"].size else []
        self.size = rows["level"].size

    def result(self) -> tuple[dict | None, int, int]:
        if not self.parts:
            return None, self.over, self.under
        self._prune()
        return (_concat(self.parts) if self.parts else None), self.over, self.under


def _concat(parts: list[dict]) -> dict:
    if len(parts) == 1:
        return parts[0]
    return {key: np.concatenate([p[key] for p in parts]) for key in parts[0]}
