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

TWO_TONE = np.array(
    [
        # order 3
        (2, -1), (-1, 2), (2, 1), (1, 2),
        # order 5
        (3, -2), (-2, 3), (3, 2), (2, 3), (4, -1), (-1, 4), (4, 1), (1, 4),
    ],
    dtype=int,
)  # fmt: skip
"""Coefficients (c1, c2) of the two-transmitter 3rd- and 5th-order products
(|c1| + |c2| = order; of c and -c only one is listed)."""

THREE_TONE = np.array([(1, 1, -1), (1, -1, 1), (-1, 1, 1), (1, 1, 1)], dtype=int)
"""Coefficients of the three-transmitter 3rd-order products f1+f2-f3, f1-f2+f3,
-f1+f2+f3, f1+f2+f3."""


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
    c = coeffs[None, :, :]
    a = c * lo[:, None, :]
    b = c * hi[:, None, :]
    low = np.minimum(a, b).sum(axis=-1)
    high = np.maximum(a, b).sum(axis=-1)
    plo = np.where(low >= 0, low, np.where(high <= 0, -high, 0.0))
    phi = np.where(low >= 0, high, np.where(high <= 0, -low, np.maximum(-low, high)))
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
