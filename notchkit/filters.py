"""A stub filter's fast batched evaluation; the filter types and its S-parameters re-exported.

The filter itself (:class:`Stub`, :class:`Line`, :class:`Filter`, the
:class:`Medium` protocol) is defined in :mod:`notchkit.filterdef`; its
reference S-matrix, scikit-rf Network and Touchstone file
(:func:`evaluate`, :func:`to_network`, :func:`touchstone_text`,
:func:`write_touchstone`) in :mod:`notchkit.sparams`. All are re-exported here,
where the rest of the program imports them.

The medium is anything with ``z0_ohm``, ``velocity_factor`` and
``alpha_np_per_m(freq_hz)`` (a :class:`notchkit.cables.Cable`, or a user's
own object); the stub builders are written once against that interface.

The solver's inner loop is :func:`evaluate_batch`: arrays of shape
(candidates, frequencies), no Python loop over frequencies or candidates (only
over elements and memory-sized chunks). On evenly spaced sweeps it costs about
one real ``exp`` and a few multiplies per stub per point (see :class:`_Sweep`).
"""

from __future__ import annotations

import math
import os
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.cables import Cable
from notchkit.elements import MIN_MODEL_LENGTH_M as MIN_MODEL_LENGTH_M  # re-exported
from notchkit.elements import Kind, kind_of
from notchkit.errors import DesignError
from notchkit.filterdef import Element as Element
from notchkit.filterdef import Filter as Filter
from notchkit.filterdef import Line as Line
from notchkit.filterdef import Medium as Medium
from notchkit.filterdef import Stub as Stub
from notchkit.filterdef import Termination as Termination
from notchkit.filterdef import check_freq
from notchkit.lines import C0, distinct_rows, gamma
from notchkit.sparams import evaluate as evaluate
from notchkit.sparams import to_network as to_network
from notchkit.sparams import touchstone_text as touchstone_text
from notchkit.sparams import write_touchstone as write_touchstone

KINDS = ("open", "short", "line")
"""The kind names (:data:`notchkit.elements.KINDS` holds the kind objects)."""
_CHUNK_POINTS = 1 << 14  # candidate-chunk size in points: scratch stays in cache, few Python steps
_THREAD_POINTS = 1 << 19
"""Batches of at least this many points are shared among threads (numpy's loops release the GIL)."""
_threads = 1
"""One thread by default: on the development machine (2 cores, shared) more gave no
wall-time gain to a design (0.99x) and a mixed one to the largest batches of
``benchmarks/lines.py`` (docs/performance.md); :func:`set_threads` asks for more."""
_pool = None


def set_threads(n: int) -> int:
    """How many threads :func:`evaluate_batch` may use on a large batch; returns the old number.

    The default is 1. ``n`` is capped at the cores this process may run on
    (:func:`notchkit.parallel.cores`, its CPU affinity).
    """
    global _threads, _pool
    from notchkit.parallel import cores

    old = _threads
    n = max(1, min(int(n), cores()))
    if n != _threads and _pool is not None:
        _pool.shutdown(wait=False)
        _pool = None
    _threads = n
    return old


def _forget_pool_after_fork() -> None:
    global _pool
    _pool = None  # a forked child has none of the parent's threads


if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=_forget_pool_after_fork)


def _thread_pool():
    global _pool
    if _pool is None:
        from concurrent.futures import ThreadPoolExecutor

        _pool = ThreadPoolExecutor(max_workers=_threads, thread_name_prefix="notchkit-eval")
    return _pool


def evaluate_batch(
    kinds: tuple[Kind | str, ...] | list[Kind | str],
    lengths_m: ArrayLike,
    cable: Medium,
    freq_hz: ArrayLike,
    z_system: float = 50.0,
) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """S21 and S11 of many candidate filters of one topology over many frequencies.

    Parameters
    ----------
    kinds : sequence of Kind (or their names "open", "short", "line")
        The topology, radio side first (:mod:`notchkit.elements`).
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

    How ``tanh(gl)`` and ``e^{-gl}`` are computed depends on the grid (see
    :class:`_Sweep`); both ways are exact to rounding and are tested against
    scikit-rf on uniform, banded and irregular grids.
    """
    kinds = tuple(kind_of(k) for k in kinds)
    if hasattr(cable, "evaluate_batch"):  # a notchkit.hardware.Model
        model: Any = cable
        if not model.is_plain:
            return model.evaluate_batch(kinds, lengths_m, freq_hz, z_system)
        cable = model.cable
    lengths = np.atleast_2d(np.asarray(lengths_m, dtype=float))
    if lengths.shape[1] != len(kinds):
        raise DesignError(f"lengths have {lengths.shape[1]} columns for {len(kinds)} elements")
    f = np.asarray(freq_hz, dtype=float).ravel()
    sweep = _sweep_for(f, cable)
    z0 = float(cable.z0_ohm)
    zs = float(z_system)
    n_cand, n_freq = lengths.shape[0], f.size
    s21 = np.empty((n_cand, n_freq), dtype=complex)
    s11 = np.empty((n_cand, n_freq), dtype=complex)
    step = max(1, _CHUNK_POINTS // max(n_freq, 1))

    def run(lo_hi: tuple[int, int]) -> None:
        first, last = lo_hi
        work = _Work(min(step, last - first), sweep)
        for lo in range(first, last, step):
            hi = min(last, lo + step)
            _evaluate_chunk(kinds, lengths[lo:hi], sweep, work, z0, zs, s21[lo:hi], s11[lo:hi])

    n_threads = min(_threads, n_cand // step)
    if n_threads > 1 and n_cand * n_freq >= _THREAD_POINTS:
        # Contiguous blocks of whole chunks, one per thread; each thread has its own scratch.
        bounds = [round(n_cand * k / n_threads / step) * step for k in range(n_threads)] + [n_cand]
        list(_thread_pool().map(run, zip(bounds[:-1], bounds[1:], strict=True)))
    else:
        run((0, n_cand))
    return s21, s11


_MIN_RUN = 64
"""Shortest stretch of evenly spaced frequencies worth the factored phase."""
_SWEEPS: dict[tuple[int, bytes], tuple[Any, _Sweep]] = {}
_SWEEPS_MAX = 32


def _sweep_for(f: NDArray[np.float64], cable: Medium) -> _Sweep:
    """The :class:`_Sweep` of a grid, checked; the last few are kept for a library cable.

    The solver evaluates thousands of batches on the same few grids; a
    :class:`notchkit.cables.Cable` is frozen, so its sweep can be reused (a
    user's own medium object might change, so it is never cached).
    """
    key = (id(cable), f.tobytes()) if type(cable) is Cable else None
    if key is not None:
        hit = _SWEEPS.get(key)
        if hit is not None and hit[0] is cable:
            return hit[1]
    check_freq(f)
    sweep = _Sweep(f, cable)
    if key is not None:
        if len(_SWEEPS) >= _SWEEPS_MAX:
            _SWEEPS.pop(next(iter(_SWEEPS)))
        _SWEEPS[key] = (cable, sweep)  # holding the cable keeps its id from being reused
    return sweep


class _Sweep:
    """What every candidate shares about one frequency grid.

    ``gl = a l + j b l`` with ``a = alpha(f)`` and ``b = 2 pi f / (c VF)``.
    Two ways to the per-point functions, chosen once per grid:

    * **runs** (the grid is made of evenly spaced stretches of at least
      ``_MIN_RUN`` points, as every sweep and curve here is): on a stretch
      ``b_i = b_s + i db``, so with ``i = k B + m``
      ``e^{-j x b_i} = e^{-j x (b_s + k B db)} e^{-j x m db}``: about
      ``2 sqrt(n)`` complex exponentials per candidate instead of ``n``, and
      one complex multiply per point. Each factor is computed directly (no
      running product), so the result is exact to a few roundings.
      ``e^{-x a}`` is one real ``exp`` per point. ``tanh(gl) = (1 - u)/(1 + u)``
      with ``u = e^{-2 gl}``.
    * **direct** (short or irregular grids, like the solver's few points a
      band): ``tanh(gl) = (tanh(al) + j tan(bl)) / (1 + j tanh(al) tan(bl))``,
      one real ``tan`` and one ``expm1`` per point, about half the cost of a
      complex ``tanh``; a line's ``e^{-gl}`` is one complex ``exp``.
    """

    __slots__ = ("alpha", "beta", "f", "g", "neg_alpha", "minus2_alpha", "runs")

    def __init__(self, f: NDArray[np.float64], cable: Medium) -> None:
        self.f = f  # the grid, Hz (for kinds whose response is not a line's)
        self.alpha = np.broadcast_to(np.asarray(cable.alpha_np_per_m(f), dtype=float), f.shape)
        self.neg_alpha = -self.alpha
        self.minus2_alpha = -2.0 * self.alpha
        self.beta = 2.0 * np.pi * f / (C0 * float(cable.velocity_factor))
        self.g = gamma(f, self.alpha, cable.velocity_factor)
        self.runs = _even_runs(self.beta)

    def decay_into(self, x: NDArray[np.float64], out: NDArray[np.complex128],
                   real: NDArray[np.float64], flat: NDArray[np.complex128]) -> NDArray[np.complex128]:
        """``e^{-x g}`` for a column of lengths ``x``, written into ``out``.

        ``real`` (like ``out``) and ``flat`` (at least ``rows * block_points``) are scratch.
        """
        if self.runs is None:
            np.multiply(x, self.g, out=out)
            np.negative(out, out=out)
            return np.exp(out, out=out)
        np.multiply(x, self.neg_alpha, out=real)
        np.exp(real, out=real)
        rows = x.shape[0]
        for start, stop, n_coarse, n_fine, minus_j_b in self.runs:
            factors = np.exp(x * minus_j_b)  # the coarse factors, then the fine ones
            coarse, fine = factors[:, :n_coarse], factors[:, n_coarse:]
            cube = flat[: rows * n_coarse * n_fine].reshape(rows, n_coarse, n_fine)
            np.multiply(coarse[:, :, None], fine[:, None, :], out=cube)
            prod = cube.reshape(rows, n_coarse * n_fine)
            np.multiply(prod[:, : stop - start], real[:, start:stop], out=out[:, start:stop])
        return out

    def shunt_y_into(self, x: NDArray[np.float64], y0: float, short: bool, w: _Work,
                     out: NDArray[np.complex128]) -> NDArray[np.complex128]:
        """Admittance of open (``y0 tanh(x g)``) or shorted (``y0 coth(x g)``) stubs, into ``out``."""
        if self.runs is not None:
            # tanh = (1 - u)/(1 + u) = 2/(1 + u) - 1 and coth = 2/(1 - u) - 1, u = e^{-2 x g}
            u = self.decay_into(2.0 * x, out, w.r1, w.flat)
            if short:
                np.subtract(1.0, u, out=u)
            else:
                np.add(u, 1.0, out=u)
            np.divide(2.0 * y0, u, out=u)
            u -= y0
            return u
        th, tn = w.r1, w.r2
        np.multiply(x, self.minus2_alpha, out=th)
        np.expm1(th, out=th)
        np.subtract(-2.0, th, out=tn)
        np.divide(th, tn, out=th)  # tanh(x a) = -expm1(-2 x a) / (2 + expm1(-2 x a)), exact for small x a
        np.multiply(x, self.beta, out=tn)
        np.tan(tn, out=tn)
        num, den = (w.t1, out) if short else (out, w.t1)  # coth = den / num: the result lands in out
        num.real = th
        num.imag = tn
        den.real = 1.0
        np.multiply(th, tn, out=den.imag)
        if short:
            num, den = den, num
        num *= y0
        num /= den
        return num


class _Work:
    """Scratch arrays for one chunk of candidates, allocated once per batch.

    Every per-point step writes into these (``out=``), so the inner loop does
    not allocate: with the allocator's default thresholds, freeing and
    re-growing temporaries of this size costs page faults that tripled the
    time of a two-stub filter.
    """

    __slots__ = ("a", "b", "c", "d", "y", "u", "u_all", "t1", "t2", "t3", "t4", "t5", "r1", "r2", "flat",
                 "_views")
    _ARRAYS = __slots__[:-1]
    a: NDArray[np.complex128]
    b: NDArray[np.complex128]
    c: NDArray[np.complex128]
    d: NDArray[np.complex128]
    y: NDArray[np.complex128]
    u: NDArray[np.complex128]
    u_all: NDArray[np.complex128]
    t1: NDArray[np.complex128]
    t2: NDArray[np.complex128]
    t3: NDArray[np.complex128]
    t4: NDArray[np.complex128]
    t5: NDArray[np.complex128]
    r1: NDArray[np.float64]
    r2: NDArray[np.float64]
    flat: NDArray[np.complex128]

    def __init__(self, rows: int, sweep: _Sweep) -> None:
        self._views: dict[int, _Work] = {}
        shape = (rows, sweep.beta.size)
        for name in ("a", "b", "c", "d", "y", "u", "u_all", "t1", "t2", "t3", "t4", "t5"):
            setattr(self, name, np.empty(shape, dtype=complex))
        self.r1 = np.empty(shape)
        self.r2 = np.empty(shape)
        block = max((n_c * n_f for _, _, n_c, n_f, _ in sweep.runs or ()), default=0)
        self.flat = np.empty(rows * block, dtype=complex)

    def rows(self, n: int) -> _Work:
        """The same scratch, cut to the first ``n`` rows (the last chunk may be short)."""
        if n == self.a.shape[0]:
            return self
        view = self._views.get(n)
        if view is None:
            view = object.__new__(_Work)
            for name in self._ARRAYS:
                value = getattr(self, name)
                setattr(view, name, value if name == "flat" else value[:n])
            view._views = {}
            self._views[n] = view
        return view


def _even_runs(beta: NDArray[np.float64]) -> list[tuple[int, int, int, int, NDArray]] | None:
    """Split a grid into evenly spaced stretches, or None if it is not made of long ones.

    Each run is ``(start, stop, K, B, e)``: point ``start + k B + m`` of the run
    has ``b = coarse[k] + fine[m]`` with ``e = -j (coarse[0..K-1], fine[0..B-1])``
    and ``B`` about the square root of the run's length. A run is accepted only
    if every point lies within a few roundings of ``b_start + i * step``.
    """
    n = beta.size
    if n < _MIN_RUN:
        return None
    d = np.diff(beta)
    scale = float(np.max(np.abs(beta)))
    tol = 64.0 * np.finfo(float).eps * scale
    runs = []
    start = 0
    while start < n:
        # The run starting here goes on while the spacing stays that of its first step.
        if start == n - 1:
            return None
        off = np.flatnonzero(np.abs(d[start:] - d[start]) > 8.0 * tol)
        stop = n if off.size == 0 else start + int(off[0]) + 1
        if stop - start < _MIN_RUN:
            return None
        b_s = float(beta[start])
        db = (float(beta[stop - 1]) - b_s) / (stop - 1 - start)
        fit = b_s + db * np.arange(stop - start)
        if float(np.max(np.abs(beta[start:stop] - fit))) > tol or db <= 0.0:
            return None
        n_run = stop - start
        block = math.isqrt(n_run - 1) + 1
        n_blocks = -(-n_run // block)
        coarse = b_s + (block * db) * np.arange(n_blocks)
        fine = db * np.arange(block)
        runs.append((start, stop, n_blocks, block, -1j * np.concatenate((coarse, fine))))
        start = stop
    return runs


def _evaluate_chunk(kinds, lengths, sweep: _Sweep, work: _Work, z0, zs, s21_out, s11_out):
    """S21 and S11 of one chunk of candidates, written into ``s21_out`` and ``s11_out``.

    The running ABCD product starts as the identity, kept as the exact scalars
    ``1, 0, 0, 1`` until an element makes an entry an array (the scratch
    arrays ``w.a .. w.d``); every array step is in place.
    """
    w = work.rows(lengths.shape[0])
    a, b, c, d = 1.0, 0.0, 0.0, 1.0
    n_lines = 0
    y0 = 1.0 / z0
    for j, kind in enumerate(kinds):
        length = lengths[:, j : j + 1]
        if kind.shunt:
            y = _per_length(length, w.y, w, lambda x, out, v, k=kind: k.batch_into(sweep, x, y0, v, out))
            a = _add_product(a, b, y, w.a, w.t3)
            c = _add_product(c, d, y, w.c, w.t3)
            continue
        # A line section: ABCD = (e^{gl}/2) [[1+q, Z0(1-q)], [(1-q)/Z0, 1+q]], q = u^2, u = e^{-gl},
        # |u| <= 1. The scale factors e^{gl}/2 are collected in w.u_all and applied to S21 at the end.
        u = _per_length(length, w.u, w, lambda x, out, v, k=kind: k.batch_into(sweep, x, y0, v, out))
        if n_lines == 0:
            np.multiply(u, 2.0, out=w.u_all)
        else:
            w.u_all *= u
            w.u_all *= 2.0
        n_lines += 1
        p, m = w.t1, w.t2
        np.multiply(u, u, out=m)
        np.add(m, 1.0, out=p)
        np.subtract(1.0, m, out=m)
        a, b = _line_row(a, b, p, m, z0, y0, w.a, w.b, w.t3, w.t4)
        c, d = _line_row(c, d, p, m, z0, y0, w.c, w.d, w.t3, w.t4)
    # S21' = 2 / (P + Q) and S11 = (P - Q) / (P + Q) = 1 - Q S21', P = A + B/Z, Q = C Z + D
    q_term = _combine(c, zs, d, w.t1)
    p_term = _combine(b, 1.0 / zs, a, w.t2)
    if isinstance(q_term, float) and isinstance(p_term, float):
        s21_out[...] = 2.0 / (p_term + q_term)
    else:
        np.add(p_term, q_term, out=s21_out)
        np.divide(2.0, s21_out, out=s21_out)
    np.multiply(q_term, s21_out, out=s11_out)
    np.subtract(1.0, s11_out, out=s11_out)
    if n_lines:
        s21_out *= w.u_all


_DISTINCT_POINTS = 4096
"""Smallest chunk (candidates x frequencies) worth looking for shared lengths: below it
the sorting costs more than it saves."""


def _per_length(length, out, w: _Work, compute):
    """``compute(x, out, scratch)`` for a column of lengths, each distinct length once.

    The solver's candidates share most of their lengths (a search moves one
    element at a time; a scan moves one and keeps the rest): where at most half
    the rows are distinct, the element's response is computed for the distinct
    lengths only and copied to every row that has it. Same arithmetic on the same
    numbers, so the same result. Small chunks skip the search (:data:`_DISTINCT_POINTS`).
    """
    found = distinct_rows(length[:, 0], out.shape[1], _DISTINCT_POINTS)
    if found is not None:
        values, where = found
        part = w.rows(values.shape[0])
        return np.take(compute(values, part.t5, part), where, axis=0, out=out)
    return compute(length, out, w)


def _line_row(x, y, p, m, z0, y0, out_x, out_y, t1, t2):
    """One row ``[x, y]`` of the running ABCD times a line's ``[[p, Z0 m], [m/Z0, p]]``.

    ``x`` and ``y`` are arrays or the exact scalars 0 and 1; the results are
    written into ``out_x`` and ``out_y`` (which may be ``x`` and ``y``).
    new x = x p + y m / Z0, new y = x Z0 m + y p.
    """
    xm = _scaled(x, m, z0, t1)  # x Z0 m (None when x is 0)
    ym = _scaled(y, m, y0, t2)  # y m / Z0
    _sum_into(_scaled(x, p, 1.0, out_x), ym, out_x)  # x may be out_x: read before written
    _sum_into(_scaled(y, p, 1.0, out_y), xm, out_y)
    return out_x, out_y


def _scaled(x, v, k, out):
    """``x v k`` into ``out`` for ``x`` an array or an exact scalar; None when ``x`` is 0."""
    if isinstance(x, float):
        if x == 0.0:
            return None
        return np.multiply(v, x * k, out=out)
    np.multiply(x, v, out=out)
    if k != 1.0:
        out *= k
    return out


def _sum_into(first, second, out):
    """``first + second`` into ``out``; either may be None (zero), not both."""
    if first is None:
        np.copyto(out, second)
    elif second is None:
        if first is not out:
            np.copyto(out, first)
    else:
        np.add(first, second, out=out)
    return out


def _add_product(x, z, y, out, tmp):
    """``x + z y`` with ``x``, ``z`` arrays or exact scalars, ``y`` an array; into ``out``."""
    if isinstance(z, float):
        if z == 0.0:
            return x
        zy = y if z == 1.0 else np.multiply(y, z, out=tmp)
    else:
        zy = np.multiply(z, y, out=tmp)
    if isinstance(x, float):
        if x == 0.0:
            np.copyto(out, zy)
        else:
            np.add(zy, x, out=out)
        return out
    return np.add(x, zy, out=out)


def _combine(x, k, y, out):
    """``x k + y`` (``k`` a float) with ``x``, ``y`` arrays or exact scalars."""
    if isinstance(x, float) and isinstance(y, float):
        return x * k + y
    if isinstance(x, float):
        np.add(y, x * k, out=out)
        return out
    np.multiply(x, k, out=out)
    out += y
    return out
