"""Levels of intermodulation products: the power-law model and its two routes.

A memoryless non-linearity y = a1 x + a2 x^2 + a3 x^3 + ... driven by carriers
A_j cos(w_j t) puts, at the lowest order, the product sum_j c_j w_j into the
output with amplitude

    a_n * n! / prod_j |c_j|!  * prod_j A_j^|c_j| / 2^(n-1),      n = sum_j |c_j|

(textbook power-series expansion, e.g. Razavi, *RF Microelectronics*, ch. 2,
two-tone test and "triple beat"). In dB the product therefore moves |c_j| dB for
each dB of carrier j, and products of one order differ by the combinatorial
factor. Everything here is written relative to the two-tone product
(n-1) f_a + f_b (2 f_a - f_b at 3rd order, f_a + f_b at 2nd), whose level the
figures a user knows are quoted for:

``D(c) = 20 log10( (n-1)! / prod_j |c_j|! )`` dB      (0 for (n-1, 1); 6.02 for f1+f2-f3)

Transmitter route (the product forms in a transmitter's output stage, the
"mixer" M, from its own carrier P_M and carriers P_i arriving at its output)::

    P = P_M - L_n + sum_{i != M} |c_i| (P_i - P_M) + D(c)

L_n is the conversion (turnaround) loss of order n: the (n-1, 1) product with
the mixer's own carrier counted n-1 times lies L_n below the incoming carrier,
at any incoming level (that product is linear in the incoming carrier). The
own carrier's exponent |c_M| is inside the anchor: the formula is
K + |c_M| P_M + sum |c_i| P_i with K fixed by the (n-1, 1) figure.

Receiver route (the product forms in the victim's front end from the carriers
P_j at its input; intercept-point relation, e.g. Razavi ch. 2 / Pozar,
*Microwave Engineering*, "intercept point")::

    P = sum_j |c_j| P_j - (n-1) IIP_n + D(c)          (n * P_in - (n-1) IIP_n for equal tones)

IIP2 and IIP3 come from the receiver (``iip2_dbm``, ``iip3_dbm``) or from its
``receiver_class``; orders 4 and above are not evaluated on this route (no
intercept figure is published for them).

Both routes are held at the weakest carrier forming the product (a product does
not exceed the carriers that make it; common practice): far above the intercept
region the extrapolated power law would otherwise give products stronger than
their inputs.
"""

from __future__ import annotations

import math

import numpy as np

from notchkit.site import model

DEFAULT_IM_CONVERSION_DB = 10.0
"""Turnaround loss L_3 of a transmitter's output stage for the 3rd-order product
2 f_M - f_i. Common practice quotes 5-20 dB for solid-state stages; 10 dB is the
conservative side. From memory it matches the land-mobile transmitter
intermodulation-attenuation test (ETSI EN 300 086/113 style: an interferer
30 dB below the carrier, products at least 40 dB below the carrier)."""

DEFAULT_IM_ORDER_STEP_DB = 5.0
"""Extra conversion loss per order away from 3 (L_n = L_3 + step * |n - 3|):
5th order 10 dB weaker than 3rd, 2nd and 4th order 5 dB weaker. Common practice,
rough (an output stage's tuned network and push-pull balance work against even
orders, and higher orders fall off); settable per transmitter (``im_order_step_db``)."""

RECEIVER_CLASSES: dict[str, tuple[float, float, str]] = {
    # name: (IIP2 dBm, IIP3 dBm, source)
    "hf": (
        60.0, 15.0,
        "HF transceiver, preamp off: IIP3 +15, IIP2 +60 dBm (from memory: published lab "
        "tests of amateur HF transceivers give IP3 +10..+35, IP2 +50..+80 dBm)",
    ),
    "base": (
        30.0, -2.0,
        "land-mobile base receiver: IIP3 -2 dBm (from memory: 70 dB intermodulation response "
        "rejection at ~ -107 dBm, ETSI EN 300 086 style, through 3 P_int - 2 IIP3 = P_IM); "
        "IIP2 +30 dBm (from memory, rough)",
    ),
    "mobile": (
        25.0, -10.0,
        "land-mobile mobile/handheld receiver: IIP3 -10 dBm (from memory: 65 dB intermodulation "
        "response rejection, ETSI EN 300 086 style, through the intercept relation); "
        "IIP2 +25 dBm (from memory, rough)",
    ),
    "scanner": (
        10.0, -20.0,
        "wideband scanner / SDR front end: IIP3 -20, IIP2 +10 dBm (from memory, rough)",
    ),
}
"""Intercept points by receiver class (``receiver_class`` in the site file)."""

DEFAULT_RECEIVER_CLASS = model.DEFAULT_RECEIVER_CLASS
"""Class used when a receiver gives neither intercept points nor a class: the
weaker land-mobile figures (the conservative side of base and mobile)."""

CLAMP_NOTE = (
    "power law extrapolated beyond its range: product held at the weakest carrier forming "
    "it (common practice: a product does not exceed the carriers that make it)"
)

RX_ORDERS = (2, 3)
"""Orders with a receiver route (intercept points IIP2, IIP3)."""


def degeneracy_db(abs_coeffs: np.ndarray) -> np.ndarray:
    """Combinatorial factor D(c) = 20 log10((n-1)! / prod |c_j|!) of each row, dB.

    Parameters
    ----------
    abs_coeffs : ndarray of int, shape (..., k)
        |coefficients| of each product (zeros allowed: 0! = 1).
    """
    a = np.abs(np.asarray(abs_coeffs, dtype=int))
    n = a.sum(axis=-1)
    top = int(max(int(n.max(initial=1)), 1))
    log_fact = np.array([math.log10(math.factorial(i)) for i in range(top + 1)])
    return 20.0 * (log_fact[np.maximum(n - 1, 0)] - log_fact[a].sum(axis=-1))


def conversion_db(l3_db: np.ndarray, step_db: np.ndarray, order: np.ndarray) -> np.ndarray:
    """L_n = L_3 + step * |n - 3|, dB."""
    return np.asarray(l3_db) + np.asarray(step_db) * np.abs(np.asarray(order) - 3)


def tx_route_dbm(
    p_mixer_dbm: np.ndarray,
    incoming_dbm: np.ndarray,
    abs_c_incoming: np.ndarray,
    conversion: np.ndarray,
    deg_db: np.ndarray,
) -> np.ndarray:
    """Product formed in a transmitter's output stage, dBm at that stage's output.

    ``P = P_M - L_n + sum_i |c_i| (P_i - P_M) + D(c)``; ``incoming_dbm`` and
    ``abs_c_incoming`` are (..., k-1), the other carriers at the mixer's output
    port and their |coefficients|. Held at the weakest incoming carrier.
    """
    p_m = np.asarray(p_mixer_dbm)[..., None]
    excess = (np.asarray(abs_c_incoming) * (np.asarray(incoming_dbm) - p_m)).sum(axis=-1)
    raw = np.asarray(p_mixer_dbm) - conversion + excess + deg_db
    return np.minimum(raw, np.asarray(incoming_dbm).min(axis=-1))


def rx_route_dbm(
    input_dbm: np.ndarray, abs_c: np.ndarray, iip_dbm: np.ndarray, deg_db: np.ndarray
) -> np.ndarray:
    """Product formed in the receiver's front end, dBm referred to its input.

    ``P = sum_j |c_j| P_j - (n-1) IIP_n + D(c)``: for two equal tones and n = 3,
    the textbook P_IM3 = 3 P_in - 2 IIP3. Held at the weakest input carrier.
    """
    a = np.asarray(abs_c)
    n = a.sum(axis=-1)
    p = np.asarray(input_dbm)
    raw = (a * p).sum(axis=-1) - (n - 1) * np.asarray(iip_dbm) + deg_db
    return np.minimum(raw, p.min(axis=-1))


def receiver_intercepts(rx) -> tuple[float, float, str]:
    """(IIP2, IIP3, source text) of a :class:`~notchkit.site.model.Receive`."""
    cls = getattr(rx, "receiver_class", None) or DEFAULT_RECEIVER_CLASS
    d2, d3, src = RECEIVER_CLASSES[cls]
    given2 = getattr(rx, "iip2_dbm", None)
    given3 = getattr(rx, "iip3_dbm", None)
    parts = []
    if given2 is not None:
        parts.append(f"IIP2 {given2:g} dBm (receiver's iip2_dbm)")
    if given3 is not None:
        parts.append(f"IIP3 {given3:g} dBm (receiver's iip3_dbm)")
    if given2 is None or given3 is None:
        how = "class" if getattr(rx, "receiver_class", None) else "default class"
        parts.append(f"{how} {cls!r}: {src}")
    return (
        float(d2 if given2 is None else given2),
        float(d3 if given3 is None else given3),
        "; ".join(parts),
    )
