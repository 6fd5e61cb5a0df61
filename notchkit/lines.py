"""Transmission-line physics over numpy arrays.

Pure functions in SI units (Hz, metres, ohms, nepers per metre). Nothing here
knows about cables by name, sites or printing; every function broadcasts over
its array arguments.

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012:
       sec. 2.3 (terminated lossless line), sec. 2.7 (lossy lines, eq. 2.91:
       Z_in = Z0 (ZL + Z0 tanh(gamma l)) / (Z0 + ZL tanh(gamma l))),
       sec. 4.4 (ABCD matrices, table 4.1).
.. [2] D. A. Frickey, "Conversions between S, Z, Y, h, ABCD, and T parameters
       which are valid for complex source and load impedances", IEEE Trans.
       Microwave Theory Tech., vol. 42, no. 2, pp. 205-211, 1994.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

C0 = 299_792_458.0
"""Speed of light in vacuum, m/s (exact, SI)."""

ComplexArray = NDArray[np.complex128]


def gamma(freq_hz: ArrayLike, alpha_np_per_m: ArrayLike, velocity_factor: float) -> ComplexArray:
    """Propagation constant of a TEM line.

    Parameters
    ----------
    freq_hz : array_like
        Frequency, Hz.
    alpha_np_per_m : array_like
        Attenuation constant, nepers per metre (broadcast against ``freq_hz``).
    velocity_factor : float
        Phase velocity as a fraction of ``C0``.

    Returns
    -------
    ndarray of complex
        ``gamma = alpha + j beta`` in 1/m, with ``beta = 2 pi f / (C0 VF)``.
    """
    f = np.asarray(freq_hz, dtype=float)
    beta = 2.0 * np.pi * f / (C0 * velocity_factor)
    return np.asarray(alpha_np_per_m, dtype=float) + 1j * beta


def zin_terminated(
    z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike, z_load: ArrayLike
) -> ComplexArray:
    """Input impedance of a lossy line of length ``length_m`` ending in ``z_load``.

    Notes
    -----
    ``Z_in = Z0 (ZL + Z0 tanh(gamma l)) / (Z0 + ZL tanh(gamma l))`` [1]_ (eq. 2.91).
    Use :func:`zin_open` for an open end (``ZL`` infinite).
    """
    z0 = np.asarray(z0_line, dtype=complex)
    zl = np.asarray(z_load, dtype=complex)
    t = np.tanh(np.asarray(gamma) * np.asarray(length_m))
    return z0 * (zl + z0 * t) / (z0 + zl * t)


def zin_open(z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike) -> ComplexArray:
    """Input impedance of an open-ended line: ``Z0 coth(gamma l)``."""
    return np.asarray(z0_line) / np.tanh(np.asarray(gamma) * np.asarray(length_m))


def zin_short(z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike) -> ComplexArray:
    """Input impedance of a short-circuited line: ``Z0 tanh(gamma l)``."""
    return np.asarray(z0_line) * np.tanh(np.asarray(gamma) * np.asarray(length_m))


def yin_open(z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike) -> ComplexArray:
    """Input admittance of an open-ended line: ``tanh(gamma l) / Z0``."""
    return np.tanh(np.asarray(gamma) * np.asarray(length_m)) / np.asarray(z0_line)


def yin_short(z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike) -> ComplexArray:
    """Input admittance of a short-circuited line: ``1 / (Z0 tanh(gamma l))``."""
    return 1.0 / (np.asarray(z0_line) * np.tanh(np.asarray(gamma) * np.asarray(length_m)))


def abcd_series_line_scaled(
    z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike
) -> tuple[ComplexArray, ComplexArray]:
    """A line section's ABCD matrix as a bounded matrix and a log scale.

    Returns ``(m, log_scale)`` with ``ABCD = exp(log_scale) m``,
    ``m = [[1 + q, Z0 (1 - q)], [(1 - q) / Z0, 1 + q]]``, ``q = e^{-2 gl}`` and
    ``log_scale = gl - ln 2``. On a passive line ``|q| <= 1``, so ``m`` stays
    finite for any length where ``cosh``/``sinh`` would overflow.
    """
    gl = np.asarray(gamma) * np.asarray(length_m)
    z0 = np.asarray(z0_line, dtype=complex)
    q = np.exp(-2.0 * gl)
    p, m = 1.0 + q, 1.0 - q
    z0 = np.broadcast_to(z0, p.shape)
    mat = np.stack([np.stack([p, z0 * m], -1), np.stack([m / z0, p], -1)], -2)
    return mat, gl - np.log(2.0)


def abcd_series_line(z0_line: ArrayLike, gamma: ArrayLike, length_m: ArrayLike) -> ComplexArray:
    """ABCD matrix of a line section, shape ``(..., 2, 2)`` [1]_ (table 4.1).

    ``[[cosh gl, Z0 sinh gl], [sinh gl / Z0, cosh gl]]``, computed as
    :func:`abcd_series_line_scaled` times its scale.
    """
    mat, log_scale = abcd_series_line_scaled(z0_line, gamma, length_m)
    return np.exp(log_scale)[..., None, None] * mat


def abcd_shunt(y: ArrayLike) -> ComplexArray:
    """ABCD matrix of a shunt admittance ``y`` (siemens): ``[[1, 0], [y, 1]]``."""
    y = np.asarray(y, dtype=complex)
    one, zero = np.ones_like(y), np.zeros_like(y)
    return np.stack([np.stack([one, zero], -1), np.stack([y, one], -1)], -2)


def abcd_series(z: ArrayLike) -> ComplexArray:
    """ABCD matrix of a series impedance ``z`` (ohms): ``[[1, z], [0, 1]]``."""
    z = np.asarray(z, dtype=complex)
    one, zero = np.ones_like(z), np.zeros_like(z)
    return np.stack([np.stack([one, z], -1), np.stack([zero, one], -1)], -2)


def cascade(*abcd: ArrayLike) -> ComplexArray:
    """Cascade ABCD matrices in order (first is nearest port 1)."""
    if not abcd:
        raise ValueError("cascade needs at least one ABCD matrix")
    out = np.asarray(abcd[0], dtype=complex)
    for m in abcd[1:]:
        out = out @ np.asarray(m, dtype=complex)
    return out


def abcd_to_s(abcd: ArrayLike, z_source: ArrayLike = 50.0, z_load: ArrayLike = 50.0) -> ComplexArray:
    """S-parameters (power waves) of an ABCD matrix between a source and a load.

    Parameters
    ----------
    abcd : array_like, shape (..., 2, 2)
    z_source, z_load : array_like
        Reference impedances of port 1 and port 2, ohms; complex allowed.

    Notes
    -----
    Frickey's conversion [2]_ (table I), valid for complex references::

        den = A ZL + B + C Zs ZL + D Zs
        S11 = (A ZL + B - C Zs* ZL - D Zs*) / den
        S12 = 2 (AD - BC) sqrt(R1 R2) / den
        S21 = 2 sqrt(R1 R2) / den
        S22 = (-A ZL* + B - C Zs ZL* + D Zs) / den

    For real references these are the usual S-parameters.
    """
    m = np.asarray(abcd, dtype=complex)
    a, b, c, d = m[..., 0, 0], m[..., 0, 1], m[..., 1, 0], m[..., 1, 1]
    zs = np.asarray(z_source, dtype=complex)
    zl = np.asarray(z_load, dtype=complex)
    r = np.sqrt(zs.real * zl.real)
    den = a * zl + b + c * zs * zl + d * zs
    s11 = (a * zl + b - c * np.conj(zs) * zl - d * np.conj(zs)) / den
    s12 = 2.0 * (a * d - b * c) * r / den
    s21 = 2.0 * r / den
    s22 = (-a * np.conj(zl) + b - c * zs * np.conj(zl) + d * zs) / den
    return np.stack([np.stack([s11, s12], -1), np.stack([s21, s22], -1)], -2)


def swr_from_s11(s11: ArrayLike) -> NDArray[np.float64]:
    """Standing-wave ratio from a reflection coefficient (infinite clipped to 1e6)."""
    rho = np.minimum(np.abs(np.asarray(s11)), 1.0 - 1e-12)
    return np.minimum((1.0 + rho) / (1.0 - rho), 1e6)


def db20(x: ArrayLike) -> NDArray[np.float64]:
    """``20 log10 |x|`` with zero mapped to -400 dB instead of -inf."""
    mag = np.abs(np.asarray(x))
    return 20.0 * np.log10(np.maximum(mag, 1e-20))


def distinct_rows(col: np.ndarray, points: int, min_points: int) -> tuple[np.ndarray, np.ndarray] | None:
    """``(values, where)`` when at most half of ``col``'s rows are distinct, else ``None``.

    ``values`` are the distinct values as a column (ascending), ``where`` each
    row's index among them, so ``values[where]`` is ``col``. The batched cores use
    it to compute an element once per distinct length (a solver's candidates share
    most of their lengths) and copy it to every row that has it: the same
    arithmetic on the same numbers, so the same result. A chunk of fewer than
    ``min_points`` (rows x ``points`` frequencies) is not searched: there the
    sorting costs more than it saves.
    """
    rows = col.shape[0]
    if rows < 4 or rows * points < min_points:
        return None
    order = np.argsort(col, kind="stable")
    ranked = col[order]
    new = np.empty(rows, dtype=bool)
    new[0] = True
    np.not_equal(ranked[1:], ranked[:-1], out=new[1:])
    if 2 * int(np.count_nonzero(new)) > rows:
        return None
    where = np.empty(rows, dtype=np.intp)
    where[order] = np.cumsum(new) - 1
    return ranked[new][:, None], where

