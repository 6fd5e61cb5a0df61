"""Interval arithmetic for harmonics and intermodulation products.

A transmitter's emission is an interval [lo, hi] in MHz (its band widened by
half a channel bandwidth at each edge), so a tuning transmitter and a single
channel are handled alike. A product c1*f1 + c2*f2 (+ c3*f3) of intervals is
the interval sum of c*[lo, hi] ([c lo, c hi] for c > 0, [c hi, c lo] for c < 0);
a negative result is the same physical frequency mirrored, so the absolute
value of the interval is taken.
"""

from __future__ import annotations

import numpy as np

DEFAULT_MAX_ORDER = 5
"""Highest intermodulation order enumerated when the site gives none (``max_im_order``)."""

MAX_ORDER_LIMIT = 9
"""Highest order a site may ask for (the number of coefficient sets grows as order^(k-1))."""


def coefficient_sets(k: int, max_order: int = DEFAULT_MAX_ORDER, min_order: int = 2) -> np.ndarray:
    """Every product of exactly ``k`` transmitters of order ``min_order``..``max_order``.

    Parameters
    ----------
    k : int
        Number of transmitters taking part (every coefficient is non-zero).
    max_order, min_order : int
        Orders enumerated, order = sum of |coefficients|.

    Returns
    -------
    ndarray of int, shape (n, k)
        One row per physical product: of c and -c (the same frequency, mirrored)
        only the row whose first coefficient is positive is kept. Rows are
        sorted by order, then by coefficients (descending), so the enumeration
        is deterministic.

    Notes
    -----
    The number of rows of order n is C(n-1, k-1) * 2^(k-1): the compositions of
    n into k positive parts, times the sign patterns with the first sign fixed.
    For two transmitters: 2 per order (f1 + f2, f1 - f2 at order 2), 4 at 3rd
    order, 8 at 5th; for three: 4 at 3rd order, 12 at 4th, 24 at 5th.
    """
    rows: list[tuple[int, ...]] = []
    for order in range(max(min_order, k), max_order + 1):
        for parts in _compositions(order, k):
            for signs in _sign_patterns(k):
                rows.append(tuple(p * s for p, s in zip(parts, signs, strict=True)))
    out = np.array(rows, dtype=int).reshape(-1, k)
    if out.size:
        key = np.lexsort(tuple((-out[:, j]) for j in range(k - 1, -1, -1)) + (orders(out),))
        out = out[key]
    return out


def _compositions(n: int, k: int):
    """Ordered k-tuples of positive integers summing to n."""
    if k == 1:
        yield (n,)
        return
    for first in range(1, n - k + 2):
        for rest in _compositions(n - first, k - 1):
            yield (first, *rest)


def _sign_patterns(k: int):
    """Sign vectors with the first sign +1 (c and -c are one product)."""
    for bits in range(2 ** (k - 1)):
        yield (1, *(-1 if bits >> j & 1 else 1 for j in range(k - 1)))


def orders(coeffs: np.ndarray) -> np.ndarray:
    """Order of each product, the sum of |coefficients|."""
    return np.abs(coeffs).sum(axis=-1)


def combine(coeffs: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Frequency interval of each product of each combination.

    Parameters
    ----------
    coeffs : ndarray, shape (n_coef, k)
        Integer coefficients.
    lo, hi : ndarray, shape (n_comb, k)
        Emission intervals of the k transmitters of each combination, MHz.

    Returns
    -------
    plo, phi : ndarray, shape (n_comb, n_coef)
        The product's physical frequency interval, MHz (>= 0).
    """
    c = np.asarray(coeffs, dtype=float).T  # (k, n_coef)
    pos, neg = np.maximum(c, 0.0), np.minimum(c, 0.0)
    low = lo @ pos + hi @ neg
    high = hi @ pos + lo @ neg
    # low <= high: the physical interval is [max(low, -high, 0), max(-low, high)]
    # (low >= 0: [low, high]; high <= 0: [-high, -low]; straddling 0: [0, max(-low, high)])
    plo = np.maximum(np.maximum(low, -high), 0.0)
    phi = np.maximum(-low, high)
    return plo, phi


def pairs(n: int) -> np.ndarray:
    """All unordered index pairs i < j of n items, shape (n_pairs, 2)."""
    i, j = np.triu_indices(n, k=1)
    return np.stack([i, j], axis=1)


def triples(n: int) -> np.ndarray:
    """All unordered index triples i < j < k of n items, shape (n_triples, 3)."""
    r = np.arange(n)
    mask = (r[:, None, None] < r[None, :, None]) & (r[None, :, None] < r[None, None, :])
    return np.stack(np.nonzero(mask), axis=1)


def harmonic_intervals(lo: float, hi: float, max_harmonic: int) -> np.ndarray:
    """Harmonics 2..max_harmonic of [lo, hi]: rows (n, n*lo, n*hi)."""
    n = np.arange(2, max_harmonic + 1, dtype=float)
    return np.stack([n, n * lo, n * hi], axis=1)


def intersect(
    alo: np.ndarray, ahi: np.ndarray, blo: np.ndarray, bhi: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Broadcast intersection of intervals: (lo, hi, overlaps)."""
    lo = np.maximum(alo, blo)
    hi = np.minimum(ahi, bhi)
    return lo, hi, lo <= hi


def product_centre(plo: float, phi: float, olo: float, ohi: float) -> float:
    """Frequency of a product at the victim.

    The product's own centre when the whole product lies in the receiver's band
    (a channel product), else the centre of the part that does (ranges).
    """
    if olo <= plo and phi <= ohi:
        return 0.5 * (plo + phi)
    return 0.5 * (olo + ohi)


def product_label(coeffs, names) -> str:
    """A product as text, positive terms first, e.g. ``2*A - B`` or ``A + B - C``."""
    terms = sorted(zip(coeffs, names, strict=True), key=lambda t: t[0] < 0)
    text = ""
    for k, (coef, name) in enumerate(terms):
        mag = abs(int(coef))
        term = name if mag == 1 else f"{mag}*{name}"
        if k == 0:
            text = ("-" if coef < 0 else "") + term
        else:
            text += (" - " if coef < 0 else " + ") + term
    return text


TWO_TONE = coefficient_sets(2, 5, 3)[np.abs(coefficient_sets(2, 5, 3)).sum(axis=1) != 4]
"""Two-transmitter 3rd- and 5th-order products (the enumeration before orders 2 and 4 were
added; kept for callers). Use :func:`coefficient_sets` for any order."""

THREE_TONE = coefficient_sets(3, 3, 3)
"""Three-transmitter 3rd-order products f1+f2+f3, f1+f2-f3, f1-f2+f3, f1-f2-f3."""
