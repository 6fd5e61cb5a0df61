"""The hardware model's batched evaluation: many candidates over many frequencies.

:meth:`notchkit.hwmodel.Model.evaluate_batch` (the solver's search and dense
verification, the build-yield Monte Carlo, the power check) runs here. It
computes the same insertion ratio and reflection as the reference cascade
(:meth:`notchkit.hwmodel.Model.abcd`), arranged for speed:

* **Everything that depends on frequency only is computed once per grid.**
  The tee arms, plugs, barrels and the short's inductance
  (:func:`hardware_parts`, cached per hardware and grid) and, per model and
  grid, the line constants, each stub end's Moebius map and the ports
  (:class:`Prepared`, cached for a library cable). Per topology the fixed
  sections between two candidate elements are multiplied together once
  (:class:`_Program`).
* **Two entries, not four.** The cascade is walked from the antenna end with
  the node's voltage and current ``(V, I)``, starting from the load
  (``V = Z_L``, ``I = 1``): a fixed block is ``V' = F_a V + F_b I``,
  ``I' = F_c V + F_d I``; a stub adds ``Y V`` to ``I``; a line section is two
  waves, ``p = ([1, Z0] F s) / 2`` and ``q = ([1, -Z0] F s) / 2``, so
  ``V' = e^{gl} p + e^{-gl} q`` and ``I' = (e^{gl} p - e^{-gl} q) / Z0`` (the
  fixed block to its right folded into the coefficients). At the radio port
  ``V_1 = A Z_L + B`` and ``I_1 = C Z_L + D``, so the insertion ratio is
  ``(Z_L + Z_S) / (V_1 + Z_S I_1)`` and the reflection
  ``(V_1 - Z I_1) / (V_1 + Z I_1)`` (:func:`notchkit.hwmodel.terminate`); the
  fixed block at the radio end is folded into those two sums.
* **No allocation in the inner path.** Every step writes into scratch arrays
  made once per call (:class:`_Work`), chunks of at most
  :data:`_CHUNK_POINTS` points.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np
from numpy.typing import NDArray

from notchkit.errors import DesignError
from notchkit.lines import C0, distinct_rows

_CHUNK_POINTS = 1 << 14
"""Candidate-chunk size in points (as :mod:`notchkit.filters`): scratch stays in cache."""
_DISTINCT_POINTS = 2048
"""Smallest chunk (candidates x frequencies) worth looking for shared stub lengths: on
hilltop-repeaters' design 4 % less CPU than never looking, 512-4096 within noise of each other."""
_CACHE_MAX = 32
"""Grids (and models) whose frequency-only parts are kept, least recently used dropped first."""
_PARTS: dict[tuple, tuple[Any, _Parts]] = {}
_PREPARED: dict[tuple, tuple[Any, Prepared]] = {}
_LINES: dict[tuple, tuple[Any, _Line]] = {}
_FRAMES: dict[tuple, tuple[Any, _Frame]] = {}

Abcd = tuple[Any, Any, Any, Any]
"""A 2x2 ABCD matrix as its four entries (arrays over frequency, or scalars)."""


def section(z: Any, vf: float, length_m: float, f: NDArray[np.float64]) -> Abcd | None:
    """ABCD entries of a lossless line section (arrays over f), or None for zero length."""
    if length_m <= 0:
        return None
    bl = 2 * np.pi * f * length_m / (C0 * vf)
    c, s = np.cos(bl), np.sin(bl)
    return (c + 0j, 1j * z * s, 1j * s / z, c + 0j)


def chain(*mats: Abcd | None) -> Abcd | None:
    """Product of 2x2 ABCD tuples (entries arrays or scalars; None matrices skipped)."""
    out = None
    for m in mats:
        if m is None:
            continue
        if out is None:
            out = m
            continue
        a, b, c, d = out
        p, q, r, s = m
        out = (a * p + b * r, a * q + b * s, c * p + d * r, c * q + d * s)
    return out


def _lru(cache: dict, key: Any, owner: tuple, make: Any, size: int = _CACHE_MAX) -> Any:
    """``cache[key]``'s value if it was made for ``owner`` (the same objects), else ``make()`` kept."""
    hit = cache.pop(key, None)
    if hit is not None and all(a is b for a, b in zip(hit[0], owner, strict=True)):
        cache[key] = hit  # most recently used last
        return hit[1]
    value = make()
    if len(cache) >= size:
        cache.pop(next(iter(cache)))
    cache[key] = (owner, value)  # holding the owner keeps its id from being reused
    return value


@dataclasses.dataclass(frozen=True, slots=True)
class _Parts:
    """One hardware's fixed sections over one grid."""

    arm: Abcd | None
    """A tee's through arm."""
    plug: Abcd | None
    """A plug (mated pair), mating face to the cable's own line."""
    barrel: Abcd | None
    """The barrels at one port, chained."""
    side_plug: Abcd | None
    """A stub's side arm then its plug."""
    plug_m: float
    yl_short: NDArray[np.complex128] | None
    """Admittance of the short's inductance (None: an ideal short)."""


def hardware_parts(hw: Any, f: NDArray[np.float64]) -> _Parts:
    """The fixed sections of ``hw`` (a frozen :class:`notchkit.hardware.Hardware`, or None) over ``f``."""
    return _lru(_PARTS, (id(hw), f.tobytes()), (hw,), lambda: _make_parts(hw, f))


def _make_parts(hw: Any, f: NDArray[np.float64]) -> _Parts:
    if hw is None:
        return _Parts(arm=None, plug=None, barrel=None, side_plug=None, plug_m=0.0, yl_short=None)
    fam = hw.family
    mm = 1e-3
    plug = section(fam.z_pair_ohm, fam.pair_vf, fam.plug_mm * mm, f)
    barrel = (chain(*[section(fam.barrel_z_ohm, fam.barrel_vf, fam.barrel_mm * mm, f)] * hw.barrels_per_port)
              if hw.barrels_per_port else None)
    short_l = hw.short_nh * 1e-9
    side = section(fam.tee_z_ohm, fam.tee_vf, fam.tee_side_mm * mm, f)
    return _Parts(arm=section(fam.tee_z_ohm, fam.tee_vf, fam.tee_through_mm * mm, f), plug=plug,
                  barrel=barrel, side_plug=chain(side, plug),
                  plug_m=fam.plug_mm * mm,
                  yl_short=1.0 / (1j * 2 * np.pi * f * short_l) if short_l > 0 else None)


def _frozen(obj: Any) -> bool:
    """True for None or a frozen dataclass (whose answers cannot change)."""
    if obj is None:
        return True
    params = getattr(type(obj), "__dataclass_params__", None)
    return params is not None and params.frozen


def prepared(model: Any, f: NDArray[np.float64], z_system: float) -> Prepared:
    """The :class:`Prepared` grid of ``model`` (``f`` is checked the first time).

    The model's own grids are kept when it is made of frozen parts on a library
    cable (the solver evaluates thousands of batches on a few grids), and so are
    the two halves apart: a build-yield run evaluates one batch on each of many
    velocity factors, where the line changes and (on the classic line, with its
    constant Z0) the frame does not.
    """
    key = (id(model), f.tobytes(), float(z_system))
    hit = _PREPARED.get(key)
    if hit is not None and hit[0][0] is model:
        return hit[1]
    if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise DesignError("frequencies must be finite and > 0 Hz")
    from notchkit.cables import Cable
    from notchkit.hwmodel import _OtherVf

    cable, f_key = model.cable, key[1]
    base = cable.base if type(cable) is _OtherVf else cable
    if type(base) is not Cable or not (_frozen(model.load) and _frozen(model.source)):
        line = _Line(model, f)
        return Prepared(line, _Frame(model, line, f, z_system))
    vf = float(cable.velocity_factor)
    line = _lru(_LINES, (id(base), vf, model.rlgc, f_key), (base,), lambda: _Line(model, f),
                size=4 * _CACHE_MAX)  # a build-yield run's velocity factors, on each of its grids
    z_key = (id(base), vf) if model.rlgc else complex(base.z0_ohm)
    owners = (model.hardware, model.load, model.source, base)
    frame_key = (id(model.hardware), id(model.load), id(model.source), z_key, f_key, float(z_system))
    frame = _lru(_FRAMES, frame_key, owners, lambda: _Frame(model, line, f, z_system))
    pre = Prepared(line, frame)
    if type(cable) is Cable:  # a tolerance run's variants are used once: not kept whole
        _lru(_PREPARED, key, (model,), lambda: pre)
    return pre


class _Line:
    """The cable's line constants over one grid: ``Z0`` (a constant on the classic line) and
    ``gamma = a + j b``, with ``-2 a`` and ``b`` apart for the stubs' ``tanh``."""

    __slots__ = ("g", "m2a", "b", "zc", "yc")

    def __init__(self, model: Any, f: NDArray[np.float64]) -> None:
        if model.rlgc:
            zc, g = model.line_constants(f)
            self.m2a, self.b = -2.0 * g.real, np.ascontiguousarray(g.imag)
        else:  # the lossless-VF line: Z0 a constant
            cable = model.cable
            alpha = np.broadcast_to(np.asarray(cable.alpha_np_per_m(f), dtype=float), f.shape)
            beta = 2 * np.pi * f / (C0 * cable.velocity_factor)
            zc, g = complex(cable.z0_ohm), alpha + 1j * beta
            self.m2a, self.b = -2.0 * alpha, beta
        self.g, self.zc, self.yc = g, zc, 1.0 / zc


class _Frame:
    """Everything else over one grid: the hardware's sections, each stub end's map, the ports,
    and the compiled topologies (they depend on the line's ``Z0``, not on its ``gamma``)."""

    __slots__ = ("f", "parts", "maps", "zc", "zs", "zl", "zsum", "zs_is_system", "z_system", "programs")

    def __init__(self, model: Any, line: _Line, f: NDArray[np.float64], z_system: float) -> None:
        self.f = f
        self.z_system = float(z_system)
        self.parts = parts = hardware_parts(model.hardware, f)
        self.zc = line.zc
        yc = line.yc
        # Each stub kind's admittance at the junction is a Moebius map of t = tanh(gamma l_c) with
        # coefficients over f only: the end (open, the short's inductance, an ideal short) through
        # the cable, then the plug and the side arm (one complex division a point).
        ysh = parts.yl_short
        ends = {"open": (yc, 0.0, 0.0, 1.0),
                "short": (yc * yc, yc * ysh, ysh, yc) if ysh is not None else (0.0, yc, 1.0, 0.0)}
        self.maps: dict[str, Abcd] = {}
        for name, (p_, q_, r_, s_) in ends.items():
            if parts.side_plug is None:
                self.maps[name] = (p_, q_, r_, s_)
            else:
                fa, fb, fc, fd = parts.side_plug  # Y_in = (C + D Y) / (A + B Y)
                self.maps[name] = (fc * r_ + fd * p_, fc * s_ + fd * q_, fa * r_ + fb * p_, fa * s_ + fb * q_)
        self.zs, self.zl = model.ports(f, z_system)
        self.zs_is_system = model.source is None
        self.zsum = self.zl + self.zs
        self.programs: dict[tuple, _Program] = {}

    def program(self, kinds: tuple) -> _Program:
        prog = self.programs.get(kinds)
        if prog is None:
            prog = self.programs[kinds] = _Program(kinds, self)
        return prog


@dataclasses.dataclass(frozen=True, slots=True)
class Prepared:
    """What every candidate of one model shares on one grid (frequency-only arrays)."""

    line: _Line
    frame: _Frame


class _Program:
    """One topology on one prepared grid: the candidate elements from the antenna end, each with
    the fixed block to its right folded into its coefficients, and the two end sums."""

    __slots__ = ("v0", "i0", "steps", "den", "num", "den11", "waves0")
    v0: Any
    i0: Any
    steps: list[tuple[Any, ...]]
    den: tuple[Any, Any]
    num: tuple[Any, Any]
    den11: tuple[Any, Any] | None
    waves0: tuple[Any, Any] | None

    def __init__(self, kinds: tuple, pre: _Frame) -> None:
        parts = pre.parts
        # The forward sequence: fixed blocks and candidate elements (radio side first).
        seq: list[tuple[str, Any]] = [("F", parts.barrel)]
        for j, k in enumerate(kinds):
            if k.shunt:
                first = j == 0 or not kinds[j - 1].shunt
                last = j == len(kinds) - 1 or not kinds[j + 1].shunt
                seq += [("F", parts.arm if first else None), ("E", (j, k)),
                        ("F", parts.arm if last else None)]
            else:
                seq += [("F", parts.plug), ("E", (j, k)), ("F", parts.plug)]
        seq.append(("F", parts.barrel))
        # Consecutive fixed blocks multiplied together: [F0, E, F1, E, ..., Fn] (None: identity).
        blocks: list[Any] = [None]
        elements = []
        for what, item in seq:
            if what == "E":
                elements.append(item)
                blocks.append(None)
            else:
                blocks[-1] = chain(blocks[-1], item)
        # The antenna end: (V, I) = F_n (Z_L, 1).
        fn = blocks[-1]
        self.v0, self.i0 = ((pre.zl, 1.0) if fn is None else (fn[0] * pre.zl + fn[1], fn[2] * pre.zl + fn[3]))
        blocks[-1] = None  # applied
        self.steps = [self._step(j, k, blocks[n + 1], pre)
                      for n, (j, k) in reversed(list(enumerate(elements)))]
        # The radio end: V_1 + Z_S I_1 and V_1 - Z I_1 with (V_1, I_1) = F_0 (V, I).
        f0 = blocks[0] or (1.0, 0.0, 0.0, 1.0)
        self.den = (f0[0] + pre.zs * f0[2], f0[1] + pre.zs * f0[3])
        z = pre.z_system
        self.num = (f0[0] - z * f0[2], f0[1] - z * f0[3])
        self.den11 = None if pre.zs_is_system else (f0[0] + z * f0[2], f0[1] + z * f0[3])
        # A line at the antenna end meets (V, I) over f only: its two waves are too.
        end_step = self.steps[0]
        self.waves0 = None
        if not end_step[1]:
            pa, pb, qa, qb = end_step[4]
            self.waves0 = (pa * self.v0 + pb * self.i0, qa * self.v0 + qb * self.i0)

    @staticmethod
    def _step(j: int, kind: Any, right: Abcd | None, pre: _Frame) -> tuple:
        if kind.shunt:
            al, be, ga, de = pre.maps[kind.termination]
            ideal_short = kind.termination == "short" and pre.parts.yl_short is None
            return (j, True, pre.parts.plug_m, ideal_short, (al, be, ga, de), right)
        fa, fb, fc, fd = right or (1.0, 0.0, 0.0, 1.0)
        zc = pre.zc
        waves = (0.5 * (fa + zc * fc), 0.5 * (fb + zc * fd), 0.5 * (fa - zc * fc), 0.5 * (fb - zc * fd))
        return (j, False, 2 * pre.parts.plug_m, False, waves, None)


class _Work:
    """Scratch for one chunk of candidates, allocated once per call: every step writes into these."""

    __slots__ = ("v", "i", "c1", "c2", "c3", "c4", "c5", "r1", "r2", "r3", "col")

    def __init__(self, rows: int, n_f: int) -> None:
        shape = (rows, n_f)
        self.v, self.i, self.c1, self.c2, self.c3, self.c4, self.c5 = (np.empty(shape, dtype=complex)
                                                                       for _ in range(7))
        self.r1, self.r2, self.r3 = (np.empty(shape) for _ in range(3))
        self.col = np.empty((rows, 1))

    def rows(self, n: int) -> _Work:
        if n == self.v.shape[0]:
            return self
        view = object.__new__(_Work)
        for name in self.__slots__:
            setattr(view, name, getattr(self, name)[:n])
        return view


def evaluate(pre: Prepared, kinds: tuple, lengths: NDArray[np.float64], ceiling_db: float | None,
             ) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """``(s21, s11)`` of candidates ``lengths`` (rows, elements) on the prepared grid, the ceiling applied."""
    prog = pre.frame.program(kinds)
    n_rows, n_f = lengths.shape[0], pre.frame.f.size
    s21 = np.empty((n_rows, n_f), dtype=complex)
    s11 = np.empty_like(s21)
    if not n_rows:
        return s21, s11
    step = max(1, _CHUNK_POINTS // n_f)
    work = _Work(min(step, n_rows), n_f)
    floor2 = None if ceiling_db is None else 10.0 ** (-float(ceiling_db) / 10.0)
    for lo in range(0, n_rows, step):
        hi = min(n_rows, lo + step)
        _chunk(pre.line, pre.frame, prog, lengths[lo:hi], work.rows(hi - lo), s21[lo:hi], s11[lo:hi],
               floor2)
    return s21, s11


def _chunk(line: _Line, frame: _Frame, prog: _Program, lengths, w: _Work, s21, s11, floor2) -> None:
    """One chunk of candidates into ``s21`` and ``s11`` (views of the results).

    The node's ``(V, I)`` lives in ``w.v`` and ``w.i`` once an element has come
    (before, it is the antenna end's, over frequency only); a step that needs the
    old pair while writing the new one writes into spare buffers and swaps them in.
    """
    v, i = prog.v0, prog.i0
    x = w.col
    for j, shunt, plug_m, ideal_short, coef, right in prog.steps:
        np.subtract(lengths[:, j:j + 1], plug_m, out=x)
        np.maximum(x, 1e-9 if ideal_short else 0.0, out=x)  # an ideal short at 0 m: a finite dead short
        if shunt:
            y = _stub_y(line, x, coef, w)  # in w.c3
            if right is not None:  # V' = F_a V + F_b I, I' = F_c V + F_d I, into the spare buffers
                _pair(right[0], v, right[1], i, w.c1, w.c2)
                _pair(right[2], v, right[3], i, w.c4, w.c2)
                w.v, w.c1 = w.c1, w.v
                w.i, w.c4 = w.c4, w.i
            elif v is not w.v:
                np.copyto(w.v, v)
                if i is not w.i:
                    np.copyto(w.i, i)
            np.multiply(y, w.v, out=w.c2)  # I' += Y V'
            w.i += w.c2
        else:
            p, q, e = w.c1, w.c2, w.c3
            np.multiply(x, line.g, out=e)
            np.exp(e, out=e)  # e^{gl}
            if v is prog.v0 and prog.waves0 is not None:  # the waves over f only
                np.multiply(e, prog.waves0[0], out=p)
                np.divide(prog.waves0[1], e, out=q)
            else:
                pa, pb, qa, qb = coef
                _pair(pa, v, pb, i, p, q)
                p *= e
                _pair(qa, v, qb, i, q, w.c4)
                q /= e
            np.add(p, q, out=w.v)
            np.subtract(p, q, out=w.i)
            w.i *= line.yc
        v, i = w.v, w.i
    # The insertion ratio and the radio's reflection (the fixed block at the radio folded in).
    _pair(prog.den[0], v, prog.den[1], i, s21, w.c1)
    _pair(prog.num[0], v, prog.num[1], i, s11, w.c1)
    if prog.den11 is None:  # the source is the system impedance: one denominator for both
        s11 /= s21
    else:
        s11 /= _pair(prog.den11[0], v, prog.den11[1], i, w.c2, w.c1)
    np.divide(frame.zsum, s21, out=s21)
    if floor2 is not None:
        _floor_into(s21, floor2, w.r1)


def _pair(a: Any, v: Any, b: Any, i: Any, out: NDArray, tmp: NDArray) -> NDArray:
    """``a v + b i`` into ``out`` (``tmp`` scratch); ``a``, ``b`` over f (or scalars)."""
    np.multiply(v, a, out=out)
    if not (isinstance(b, float) and b == 0.0):
        np.multiply(i, b, out=tmp)
        out += tmp
    return out


def _stub_y(line: _Line, x: NDArray, coef: Abcd, w: _Work) -> NDArray[np.complex128]:
    """A stub's admittance at its junction for cable lengths ``x`` (column), each distinct length once.

    The solver's candidates share most of their lengths (a pattern search moves
    one element at a time, a scan moves one and keeps the rest): where at most
    half a large chunk's lengths are distinct, the admittance is computed for
    those and copied to every row that has it (one row broadcast where all are
    equal); the same arithmetic on the same numbers, so the same result.
    """
    found = distinct_rows(x[:, 0], w.c3.shape[1], _DISTINCT_POINTS)
    if found is not None:
        values, where = found
        y = _stub_y_rows(line, values, coef, w.rows(values.shape[0]))
        if values.shape[0] == 1:
            return y  # one row, broadcast
        return np.take(y, where, axis=0, out=w.c5)
    return _stub_y_rows(line, x, coef, w)


def _stub_y_rows(line: _Line, x: NDArray, coef: Abcd, w: _Work) -> NDArray[np.complex128]:
    """A stub's admittance at its junction for cable lengths ``x`` (column), into ``w.c3``.

    ``Y = (al t + be) / (ga t + de)`` with ``t = tanh(gamma x) = u / v``,
    ``u = tanh(a x) + j tan(b x)``, ``v = 1 + j tanh(a x) tan(b x)`` for
    ``gamma = a + j b`` (on either line model): one real ``tan`` and one ``expm1``
    a point, ``tanh(a x) = -expm1(-2 a x) / (2 + expm1(-2 a x))`` exact for small
    ``a x``, about half the cost of a complex ``tanh``.
    """
    al, be, ga, de = coef
    u, v, num = w.c3, w.c2, w.c4
    th, tn, t = w.r1, w.r2, w.r3
    np.multiply(x, line.m2a, out=th)
    np.expm1(th, out=th)
    np.subtract(-2.0, th, out=t)
    np.divide(th, t, out=th)
    np.multiply(x, line.b, out=tn)
    np.tan(tn, out=tn)
    u.real = th
    u.imag = tn
    v.real = 1.0
    np.multiply(th, tn, out=v.imag)
    np.multiply(u, al, out=num)
    np.multiply(v, be, out=w.c1)
    num += w.c1
    u *= ga
    v *= de
    u += v
    np.divide(num, u, out=u)
    return u


def ceiling_into(s21: NDArray[np.complex128], ceiling_db: float) -> None:
    """:func:`notchkit.hwmodel.apply_ceiling` in place: a leakage path added in power, phase kept."""
    _floor_into(s21, 10.0 ** (-float(ceiling_db) / 10.0), np.empty(s21.shape))


def _floor_into(s21: NDArray[np.complex128], floor2: float, mag2: NDArray[np.float64]) -> None:
    """``|s21|^2 += floor2`` in place, phase kept; ``mag2`` is scratch of ``s21``'s shape."""
    np.abs(s21, out=mag2)
    mag2 *= mag2
    if not mag2.all():  # an exact zero (or an underflow): the leakage alone there
        zero = mag2 == 0
        mag2[zero] = floor2
        s21[zero] = 1.0
    else:
        zero = None
    np.divide(floor2, mag2, out=mag2)
    mag2 += 1.0
    np.sqrt(mag2, out=mag2)
    s21 *= mag2
    if zero is not None:
        s21[zero] = math.sqrt(floor2)
