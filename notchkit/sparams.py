"""One filter's full S-matrix (the reference path), as a scikit-rf Network, and as Touchstone.

:func:`evaluate` builds explicit ABCD matrices (:mod:`notchkit.lines`, or a
:class:`notchkit.hardware.Model`'s own cascade), independent of the batched
core in :mod:`notchkit.filters`; the tests check both against each other and
against scikit-rf. Re-exported by :mod:`notchkit.filters`.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.fileio import write_text_atomic
from notchkit.filterdef import Filter, check_freq
from notchkit.lines import abcd_to_s, cascade, gamma


def evaluate(filt: Filter, freq_hz: ArrayLike, z_system: float = 50.0) -> NDArray[np.complex128]:
    """Full 2x2 S-matrix of one filter, shape ``(n_freq, 2, 2)``.

    Built from explicit ABCD matrices (:mod:`notchkit.lines`), independent of
    the batched path; the tests check that both agree.

    Notes
    -----
    A line section's ABCD matrix is written as ``(e^{gl} / 2) M'`` with
    ``M' = [[1 + q, Z0 (1 - q)], [(1 - q) / Z0, 1 + q]]`` and ``q = e^{-2 gl}``
    (``|q| <= 1`` on a passive line), so the cascade stays finite for any
    length; the collected scalar ``e^{gl} / 2`` only scales the transmission
    terms. Every element is reciprocal (det = 1), so ``S12 = S21``.
    """
    f = np.asarray(freq_hz, dtype=float).ravel()
    check_freq(f)
    if hasattr(filt.cable, "abcd") and not getattr(filt.cable, "is_plain", True):  # a hardware.Model
        # The filter with its hardware between z_system ports (no load, no ceiling: a Touchstone
        # file describes the filter itself).
        a, b, c, d = filt.cable.abcd(filt.kinds, filt.lengths_m[None, :], f)
        return abcd_to_s(np.stack([np.stack([a[0], b[0]], -1), np.stack([c[0], d[0]], -1)], -2),
                         z_system, z_system)
    g = gamma(f, filt.cable.alpha_np_per_m(f), filt.cable.velocity_factor)
    z0 = float(filt.cable.z0_ohm)
    mats = []
    log_scale = np.zeros(f.size, dtype=complex)
    for e in filt.elements:
        mat, scale = e.kind.abcd(z0, g, e.length_m)
        mats.append(mat)
        log_scale = log_scale + scale
    s = abcd_to_s(cascade(*mats), z_system, z_system)
    shrink = np.exp(-np.minimum(log_scale.real, 700.0) - 1j * log_scale.imag)
    s21 = s[:, 1, 0] * shrink
    s[:, 1, 0] = s21
    s[:, 0, 1] = s21
    return s


def to_network(filt: Filter, freq_hz: ArrayLike, z_system: float = 50.0, name: str = "filter"):
    """The filter as a scikit-rf :class:`skrf.Network` over ``freq_hz``."""
    import skrf

    f = np.asarray(freq_hz, dtype=float).ravel()
    freq = skrf.Frequency.from_f(f, unit="hz")
    return skrf.Network(frequency=freq, s=evaluate(filt, f, z_system), z0=z_system, name=name)


def touchstone_text(filt: Filter, freq_hz: ArrayLike, z_system: float = 50.0, comment: str = "",
                    name: str = "filter") -> str:
    """The filter's S-parameters as Touchstone ``.s2p`` text (dB / angle), by scikit-rf."""
    net = to_network(filt, freq_hz, z_system, name=name)
    text = net.write_touchstone(return_string=True, skrf_comment=False, write_z0=False, form="db")
    if comment:
        text = "".join(f"! {line}\n" for line in comment.splitlines()) + text
    return text


def write_touchstone(
    filt: Filter,
    freq_hz: ArrayLike,
    path: str | os.PathLike,
    z_system: float = 50.0,
    comment: str = "",
) -> Path:
    """Write the filter's S-parameters as a Touchstone ``.s2p`` file, atomically.

    The file is written to a temporary name in the same folder and renamed into
    place, so a reader sees the old file or the new one, never a partial one.
    """
    path = Path(path)
    if path.suffix.lower() != ".s2p":
        path = path.with_suffix(".s2p")
    text = touchstone_text(filt, freq_hz, z_system, comment, name=path.stem)
    write_text_atomic(path, text, what="Touchstone file")
    return path
