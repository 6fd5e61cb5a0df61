"""A stub filter as ordered elements, and its fast batched evaluation.

A filter runs from the radio side (port 1) to the antenna side (port 2). Its
elements are shunt stubs (open or shorted, at a tee) and series line sections.
Consecutive stubs with no line between them share one tee: their admittances
add at one node, which is exactly what cascading their shunt ABCD matrices does.

The medium is anything with ``z0_ohm``, ``velocity_factor`` and
``alpha_np_per_m(freq_hz)`` (a :class:`notchkit.cables.Cable`, or a user's
own object); the stub builders are written once against that interface.

The solver's inner loop is :func:`evaluate_batch`: arrays of shape
(candidates, frequencies), one complex ``tanh`` per stub per point, no Python loop over
frequencies or candidates (only over elements and memory-sized chunks).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Literal, Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.errors import DesignError
from notchkit.fileio import write_text_atomic
from notchkit.lines import (
    abcd_series_line_scaled,
    abcd_shunt,
    abcd_to_s,
    cascade,
    gamma,
    yin_open,
    yin_short,
)

Termination = Literal["open", "short"]
KINDS = ("open", "short", "line")
MIN_MODEL_LENGTH_M = 1e-9
"""A zero-length shorted stub is modelled as 1 nm: a finite dead short (shared with power.py)."""
_CHUNK_POINTS = 1 << 13  # candidate-chunk size in points: keeps temporaries in cache


class Medium(Protocol):
    """What the filter model needs to know about a cable."""

    z0_ohm: float
    velocity_factor: float

    def alpha_np_per_m(self, freq_hz: ArrayLike) -> NDArray[np.float64]: ...


@dataclass(frozen=True, slots=True, kw_only=True)
class Stub:
    """A shunt stub at a tee.

    ``length_m`` is the full electrical path in metres of the stub's cable,
    from the tee's reference plane to the stub's end, tee allowance included.
    """

    termination: Termination
    length_m: float

    def __post_init__(self) -> None:
        if self.termination not in ("open", "short"):
            raise DesignError(f"stub termination {self.termination!r} must be 'open' or 'short'")
        _check_length(self.length_m, "stub")

    @property
    def kind(self) -> str:
        return self.termination


@dataclass(frozen=True, slots=True, kw_only=True)
class Line:
    """A series line section of the filter's cable between two tees."""

    length_m: float

    def __post_init__(self) -> None:
        _check_length(self.length_m, "line section")

    @property
    def kind(self) -> str:
        return "line"


Element = Stub | Line


def _check_freq(f: NDArray[np.float64]) -> None:
    if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise DesignError("frequencies must be finite and > 0 Hz")


def _check_length(length_m: float, what: str) -> None:
    if not np.isfinite(length_m) or length_m < 0:
        raise DesignError(f"{what} length {length_m!r} m must be finite and >= 0")


@dataclass(frozen=True, slots=True, kw_only=True)
class Filter:
    """A stub filter: elements from the radio side to the antenna side on one cable."""

    elements: tuple[Element, ...]
    cable: Medium
    tee_allowance_m: float = 0.0

    def __post_init__(self) -> None:
        if not self.elements:
            raise DesignError("a filter needs at least one element")
        if not any(isinstance(e, Stub) for e in self.elements):
            raise DesignError("a filter needs at least one stub")

    @property
    def kinds(self) -> tuple[str, ...]:
        return tuple(e.kind for e in self.elements)

    @property
    def lengths_m(self) -> NDArray[np.float64]:
        return np.array([e.length_m for e in self.elements], dtype=float)

    @property
    def stubs(self) -> tuple[Stub, ...]:
        return tuple(e for e in self.elements if isinstance(e, Stub))

    @property
    def total_cable_m(self) -> float:
        """All cable the filter uses: stubs (as cut) and line sections."""
        return float(sum(self.cut_length_m(e) if isinstance(e, Stub) else e.length_m
                         for e in self.elements))

    def cut_length_m(self, stub: Stub) -> float:
        """Length of cable to cut for ``stub``: its path less the tee allowance."""
        return stub.length_m - self.tee_allowance_m

    def tees(self) -> list[list[int]]:
        """Indices of the stubs at each tee, radio side first."""
        groups: list[list[int]] = []
        open_group = False
        for i, e in enumerate(self.elements):
            if isinstance(e, Stub):
                if not open_group:
                    groups.append([])
                    open_group = True
                groups[-1].append(i)
            else:
                open_group = False
        return groups


def evaluate_batch(
    kinds: tuple[str, ...] | list[str],
    lengths_m: ArrayLike,
    cable: Medium,
    freq_hz: ArrayLike,
    z_system: float = 50.0,
) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """S21 and S11 of many candidate filters of one topology over many frequencies.

    Parameters
    ----------
    kinds : sequence of {"open", "short", "line"}
        The topology, radio side first.
    lengths_m : array_like, shape (n_cand, len(kinds)) or (len(kinds),)
        Each element's length, metres (stub lengths are full electrical paths).
    cable : Medium
    freq_hz : array_like, shape (n_freq,)
    z_system : float
        Real reference impedance of both ports, ohms.

    Returns
    -------
    s21, s11 : ndarray of complex, shape (n_cand, n_freq)

    Notes
    -----
    The running ABCD product is kept as four arrays. A shunt admittance ``Y``
    updates ``A += B Y, C += D Y``. A line section is applied as
    ``(e^{gl}/2) [[1 + q, Z0 (1 - q)], [(1 - q) / Z0, 1 + q]]`` with
    ``q = e^{-2gl}``; the scalar factors only scale S21, so they are collected
    and applied once. Then
    ``S21 = 2 / (A + B/Z + C Z + D)`` and
    ``S11 = (A + B/Z - C Z - D) / (A + B/Z + C Z + D)`` (Pozar table 4.2).
    """
    kinds = tuple(kinds)
    for k in kinds:
        if k not in KINDS:
            raise DesignError(f"element kind {k!r} must be one of {', '.join(KINDS)}")
    lengths = np.atleast_2d(np.asarray(lengths_m, dtype=float))
    if lengths.shape[1] != len(kinds):
        raise DesignError(f"lengths have {lengths.shape[1]} columns for {len(kinds)} elements")
    f = np.asarray(freq_hz, dtype=float).ravel()
    _check_freq(f)
    g = gamma(f, cable.alpha_np_per_m(f), cable.velocity_factor)
    z0 = float(cable.z0_ohm)
    zs = float(z_system)
    n_cand, n_freq = lengths.shape[0], f.size
    s21 = np.empty((n_cand, n_freq), dtype=complex)
    s11 = np.empty((n_cand, n_freq), dtype=complex)
    step = max(1, _CHUNK_POINTS // max(n_freq, 1))
    for lo in range(0, n_cand, step):
        hi = min(n_cand, lo + step)
        s21[lo:hi], s11[lo:hi] = _evaluate_chunk(kinds, lengths[lo:hi], g, z0, zs)
    return s21, s11


def _mul(x, y):
    """Product that skips the exact scalars 0 and 1 left by the identity start."""
    if x.__class__ is float:
        if x == 0.0:
            return 0.0
        if x == 1.0:
            return y
    if y.__class__ is float:
        if y == 0.0:
            return 0.0
        if y == 1.0:
            return x
    return x * y


def _add(x, y):
    if x.__class__ is float and x == 0.0:
        return y
    if y.__class__ is float and y == 0.0:
        return x
    return x + y


def _evaluate_chunk(kinds, lengths, g, z0, zs):
    g = g[None, :]
    # The running ABCD product; exact scalars until an element makes them arrays.
    a, b, c, d = 1.0, 0.0, 0.0, 1.0
    u_all = None  # product of the lines' e^{-gl}: their collected scale factors are 2^n / u_all
    n_lines = 0
    y0 = 1.0 / z0
    for j, kind in enumerate(kinds):
        length = lengths[:, j : j + 1]
        if kind == "line":
            # ABCD = (e^{gl}/2) [[1+q, Z0(1-q)], [(1-q)/Z0, 1+q]], q = u^2, u = e^{-gl}, |u| <= 1
            u = np.exp(-length * g)
            q = u * u
            p, m = 1.0 + q, 1.0 - q
            mz, my = m * z0, m * y0
            a, b = _add(_mul(a, p), _mul(b, my)), _add(_mul(a, mz), _mul(b, p))
            c, d = _add(_mul(c, p), _mul(d, my)), _add(_mul(c, mz), _mul(d, p))
            u_all = u if u_all is None else u_all * u
            n_lines += 1
            continue
        if kind == "short":
            y = y0 / np.tanh(np.maximum(length, MIN_MODEL_LENGTH_M) * g)
        else:
            y = np.tanh(length * g) * y0
        a = _add(a, _mul(b, y))
        c = _add(c, _mul(d, y))
    den = _add(_add(a, _mul(b, 1.0 / zs)), _add(_mul(c, zs), d))
    s21 = 2.0 / den
    if u_all is not None:
        s21 = s21 * (2.0**n_lines) * u_all
    s11 = (_add(a, _mul(b, 1.0 / zs)) - _add(_mul(c, zs), d)) / den
    shape = (lengths.shape[0], g.size)
    return np.broadcast_to(s21, shape), np.broadcast_to(s11, shape)


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
    _check_freq(f)
    g = gamma(f, filt.cable.alpha_np_per_m(f), filt.cable.velocity_factor)
    z0 = float(filt.cable.z0_ohm)
    mats = []
    log_scale = np.zeros(f.size, dtype=complex)
    for e in filt.elements:
        if isinstance(e, Line):
            mat, scale = abcd_series_line_scaled(z0, g, e.length_m)
            mats.append(mat)
            log_scale += scale
        elif e.termination == "open":
            mats.append(abcd_shunt(yin_open(z0, g, e.length_m)))
        else:
            mats.append(abcd_shunt(yin_short(z0, g, max(e.length_m, MIN_MODEL_LENGTH_M))))
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
    net = to_network(filt, freq_hz, z_system, name=path.stem)
    text = net.write_touchstone(return_string=True, skrf_comment=False, write_z0=False, form="db")
    if comment:
        text = "".join(f"! {line}\n" for line in comment.splitlines()) + text
    write_text_atomic(path, text, what="Touchstone file")
    return path
