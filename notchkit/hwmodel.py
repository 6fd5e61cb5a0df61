"""The filter model around a cable: connection hardware, loads, the line model and the depth ceiling.

:class:`Model` bundles a cable with its :class:`notchkit.hardware.Hardware`, the
antenna load, the radio's port, the line model (classic or RLGC) and the depth
ceiling. It is a *medium* for :mod:`notchkit.filters` (it answers ``z0_ohm``,
``velocity_factor``, ``alpha_np_per_m`` and every other attribute from its
cable), so a :class:`~notchkit.filters.Filter` or the solver given a ``Model``
instead of a bare cable designs and verifies with the hardware, the load and the
ceiling without any change to their code.

Two paths compute it: :meth:`Model.abcd`, the reference cascade of full ABCD
matrices (Touchstone files, curves, the load spread, a stub's resonance), and
:meth:`Model.evaluate_batch`, the fast batched path (:mod:`notchkit.hwbatch`:
frequency-only parts computed once per grid, two entries instead of four);
tests check both against scikit-rf. docs/hardware.md explains every figure.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.elements import kind_of
from notchkit.errors import DesignError
from notchkit.hwbatch import ceiling_into, chain, prepared, section
from notchkit.hwbatch import evaluate as evaluate_prepared
from notchkit.lines import C0

if TYPE_CHECKING:
    from notchkit.hardware import Hardware

DEFAULT_DEPTH_CEILING_DB = 60.0
"""Practical floor of a coax stub filter's transmission, dB below the input (see docs/hardware.md):
single-braid cable and UHF connectors leak about 40-60 dB (from memory), and a hobby vector
analyser's S21 dynamic range is about 50-70 dB at VHF (from memory), so deeper claims can be
neither built reliably nor verified."""
DEFAULT_OUT_OF_BAND_SWR = 6.0
"""Mismatch assumed for an antenna out of its band when no load is given (|Gamma| 0.71): a
resonant antenna an octave off its band commonly shows SWR 5-20 (from memory)."""


@dataclass(frozen=True, slots=True, kw_only=True)
class _OtherVf:
    """A cable with another velocity factor, everything else its own."""

    base: Any
    velocity_factor: float

    def __getattr__(self, name: str) -> Any:
        if name.startswith("__"):
            raise AttributeError(name)
        return getattr(object.__getattribute__(self, "base"), name)

    @property
    def z0_ohm(self) -> float:
        return self.base.z0_ohm

    def alpha_np_per_m(self, freq_hz: ArrayLike) -> NDArray[np.float64]:
        return self.base.alpha_np_per_m(freq_hz)


@dataclass(frozen=True, slots=True, kw_only=True)
class Model:
    """A cable with its hardware, load and depth ceiling: a medium for :mod:`notchkit.filters`.

    Parameters
    ----------
    cable : Medium
        The filter's cable (answers every attribute the model does not own).
    hardware : Hardware or None
        Connectors, tees and the short's inductance; None: ideal junctions.
    load : object or None
        Anything with ``z_ohm(freq_hz) -> complex array`` (NaN where unknown):
        the antenna the filter works into (:mod:`notchkit.loads`). None: the
        system impedance.
    source : object or None
        The radio's port, the same way; None: the system impedance.
    rlgc : bool
        Use the physically consistent lossy line (:mod:`notchkit.rlgc`):
        frequency-dependent phase velocity and complex Z0. False: the
        lossless-VF line with the cable's loss (the classic model).
    depth_ceiling_db : float or None
        Practical floor of |S21|, dB (a leakage path added in power).
    """

    cable: Any
    hardware: Hardware | None = None
    load: Any = None
    source: Any = None
    rlgc: bool = False
    depth_ceiling_db: float | None = DEFAULT_DEPTH_CEILING_DB
    out_of_band_swr: float = DEFAULT_OUT_OF_BAND_SWR
    """Mismatch for the report's load spread when no load is given."""

    def __getattr__(self, name: str) -> Any:  # everything else is the cable's
        if name.startswith("__"):
            raise AttributeError(name)
        return getattr(object.__getattribute__(self, "cable"), name)

    @property
    def z0_ohm(self) -> float:
        return self.cable.z0_ohm

    @property
    def velocity_factor(self) -> float:
        return self.cable.velocity_factor

    def alpha_np_per_m(self, freq_hz: ArrayLike) -> NDArray[np.float64]:
        return self.cable.alpha_np_per_m(freq_hz)

    @property
    def is_plain(self) -> bool:
        """True when the model adds nothing to the cable (the fast core applies)."""
        return (self.hardware is None and self.load is None and self.source is None and not self.rlgc
                and self.depth_ceiling_db is None)

    def line_constants(self, f: NDArray[np.float64]) -> tuple[NDArray, NDArray]:
        """``(Z0(f), gamma(f))`` of the cable: RLGC or the lossless-VF model."""
        if self.rlgc:
            from notchkit.rlgc import line_constants

            return line_constants(self.cable, f)
        g = np.asarray(self.cable.alpha_np_per_m(f), dtype=float) + 1j * 2 * np.pi * f / (
            C0 * self.cable.velocity_factor)
        return np.full(f.shape, complex(self.cable.z0_ohm)), np.broadcast_to(g, f.shape)

    def ports(self, f: NDArray[np.float64], z_system: float) -> tuple[NDArray, NDArray]:
        """Source and load impedances over ``f`` (the system impedance where unknown)."""
        out = []
        for who in (self.source, self.load):
            if who is None:
                out.append(np.full(f.shape, complex(z_system)))
            else:
                z = np.asarray(who.z_ohm(f), dtype=complex)
                out.append(np.where(np.isfinite(z), z, complex(z_system)))
        return out[0], out[1]

    # -- the evaluation: ABCD entries (rows x freqs) ------------------------------------------
    def abcd(self, kinds, lengths: NDArray[np.float64], f: NDArray[np.float64]):
        """ABCD entries ``(A, B, C, D)`` of candidates ``lengths`` (rows, elements) over ``f``.

        Fixed parts (tee arms, plugs, barrels) depend on frequency only: consecutive
        ones are multiplied together first (arrays over ``f``) and applied to the
        candidates' running product only when a candidate's element comes.
        """
        kinds = [kind_of(k) for k in kinds]
        zc, g = self.line_constants(f)
        yc = 1.0 / zc
        hw = self.hardware
        fam = hw.family if hw is not None else None
        mm = 1e-3
        plug = section(fam.z_pair_ohm, fam.pair_vf, fam.plug_mm * mm, f) if fam else None
        arm = section(fam.tee_z_ohm, fam.tee_vf, fam.tee_through_mm * mm, f) if fam else None
        barrel = (chain(*[section(fam.barrel_z_ohm, fam.barrel_vf, fam.barrel_mm * mm, f)]
                         * hw.barrels_per_port) if fam and hw is not None and hw.barrels_per_port else None)
        plug_m = fam.plug_mm * mm if fam else 0.0
        short_l = (hw.short_nh * 1e-9) if hw is not None else 0.0
        yl_short = 1.0 / (1j * 2 * np.pi * f * short_l) if short_l > 0 else None
        side_m = fam.tee_side_mm * mm if fam else 0.0
        tanh_gl = self._tanh_gl(g)
        # Each stub kind's admittance at the junction is a Moebius map of t = tanh(gamma l_c) with
        # coefficients over f only: the end (open, the short's inductance, an ideal short) through
        # the cable, then the fixed plug and side arm, composed once (one complex division a point).
        fixed = chain(section(fam.tee_z_ohm, fam.tee_vf, side_m, f) if fam else None,
                       section(fam.z_pair_ohm, fam.pair_vf, plug_m, f) if fam else None)
        ends: dict[str, tuple[Any, Any, Any, Any]] = {"open": (yc, 0.0, 0.0, 1.0)}
        ends["short"] = ((yc * yc, yc * yl_short, yl_short, yc) if yl_short is not None
                         else (0.0, yc, 1.0, 0.0))
        maps = {}
        for name, (p_, q_, r_, s_) in ends.items():
            if fixed is None:
                maps[name] = (p_, q_, r_, s_)
            else:
                fa, fb, fc, fd = fixed  # Y_in = (C + D Y) / (A + B Y)
                maps[name] = (fc * r_ + fd * p_, fc * s_ + fd * q_, fa * r_ + fb * p_, fa * s_ + fb * q_)
        m: Any = (1.0, 0.0, 0.0, 1.0)  # exact scalars until a candidate's element comes
        pending = barrel  # fixed parts not yet applied to m

        def flush(m):
            return chain(m, pending) if pending is not None else m

        for j, k in enumerate(kinds):
            x = lengths[:, j:j + 1]
            if k.shunt:
                if j == 0 or not kinds[j - 1].shunt:  # the first stub at this tee
                    pending = chain(pending, arm)
                m, pending = flush(m), None
                lc = np.maximum(x - plug_m, 0.0)
                if k.termination == "short" and yl_short is None:
                    lc = np.maximum(lc, 1e-9)  # an ideal short at 0 m: a finite dead short
                al, be, ga, de = maps[k.termination]
                u, v = tanh_gl(lc)  # tanh = u / v
                y = (al * u + be * v) / (ga * u + de * v)
                a, b, c, d = m
                m = (a + b * y, b, c + d * y, d)
                if j == len(kinds) - 1 or not kinds[j + 1].shunt:  # the last stub at this tee
                    pending = arm
            else:
                pending = chain(pending, plug)
                m, pending = flush(m), None
                lc = np.maximum(x - 2 * plug_m, 0.0)
                ep = np.exp(g * lc)  # e^{gl}; cosh and sinh from it and its reciprocal
                em = 1.0 / ep
                ch, sh = 0.5 * (ep + em), 0.5 * (ep - em)
                m = chain(m, (ch, zc * sh, sh * yc, ch))
                pending = plug
        m = chain(m, chain(pending, barrel) if pending is not None else barrel)
        rows = lengths.shape[0]
        return tuple(np.broadcast_to(v, (rows, f.size)) for v in m)

    def _tanh_gl(self, g):
        """``x -> (u, v)`` with ``tanh(g x) = u / v`` for a column of lengths ``x``: from real ``tan``
        and ``expm1`` on the classic line (``g = a + j b``; the division is left to the caller's
        Moebius map), a complex ``tanh`` (``v = 1``) on the RLGC line."""
        if self.rlgc:
            return lambda x: (np.tanh(g * x), 1.0)
        a, b = g.real, g.imag

        def tanh_gl(x):  # (u, v) with tanh(g x) = u / v
            e = np.expm1(-2.0 * a * x)
            th = -e / (2.0 + e)  # tanh(a x), exact for small a x
            tn = np.tan(b * x)
            return th + 1j * tn, 1.0 + 1j * (th * tn)

        return tanh_gl

    def evaluate_batch(self, kinds, lengths_m: ArrayLike, freq_hz: ArrayLike, z_system: float = 50.0):
        """``(s21, s11)`` like :func:`notchkit.filters.evaluate_batch`, with hardware, load and ceiling.

        ``s21`` is the insertion ratio ``V_load(with filter) / V_load(without)``
        between the source and the load (S21 itself when both are the system
        impedance); ``s11`` is the reflection the radio sees, referred to
        ``z_system``; the ceiling adds a leakage path in power:
        ``|s21|^2 + 10^(-ceiling/10)``.
        """
        if (self.hardware is None and self.load is None and self.source is None and not self.rlgc):
            # Only the ceiling: the fast core on the bare cable, then the leakage path.
            from notchkit.filters import evaluate_batch

            s21, s11 = evaluate_batch(kinds, lengths_m, self.cable, freq_hz, z_system)
            if self.depth_ceiling_db is not None:
                ceiling_into(s21, self.depth_ceiling_db)
            return s21, s11
        lengths = np.atleast_2d(np.asarray(lengths_m, dtype=float))
        f = np.asarray(freq_hz, dtype=float).ravel()
        pre = prepared(self, f, z_system)  # checks f
        if lengths.shape[1] != len(kinds):
            raise DesignError(f"lengths have {lengths.shape[1]} columns for {len(kinds)} elements")
        return evaluate_prepared(pre, tuple(kind_of(k) for k in kinds), lengths, self.depth_ceiling_db)

    def with_(self, **changes: Any) -> Model:
        return replace(self, **changes)

    def with_velocity_factor(self, velocity_factor: float) -> Model:
        """The same model on the cable with another velocity factor (tolerance runs)."""
        return replace(self, cable=_OtherVf(base=self.cable, velocity_factor=float(velocity_factor)))

    def stub_resonance_mhz(self, kind: Any, length_m: float, guess_mhz: float) -> float:
        """The stub's own series resonance as measured alone at its plug's mating face, MHz.

        The cable-only formula ``n c VF / (4 l)`` (``guess_mhz``) is refined on
        the model: the plug, the short's inductance and the RLGC line shift it.
        Found as the sign change of ``Im Z_in`` (from below to above zero,
        where ``|Z_in|`` is small) nearest the guess, within 25 %.
        """
        k = kind_of(kind)
        hw = self.hardware
        if (hw is None and not self.rlgc) or not k.shunt:
            return guess_mhz
        f = np.linspace(0.75, 1.25, 2001) * guess_mhz * 1e6
        bare = replace(self, hardware=None if hw is None else replace(
            hw, family=replace(hw.family, tee_side_mm=0.0, tee_through_mm=0.0), barrels_per_port=0),
            load=None, source=None, depth_ceiling_db=None)
        a, b, c, d = bare.abcd((k,), np.array([[length_m]]), f)
        y = c[0]  # a lone shunt element: C = Y
        z = 1.0 / y
        x = z.imag
        cross = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0) & (np.abs(z[:-1]) < np.abs(z).mean()))
        if cross.size == 0:
            return guess_mhz
        i = cross[np.argmin(np.abs(f[cross] - guess_mhz * 1e6))]
        t = x[i] / (x[i] - x[i + 1])
        return float((f[i] + t * (f[i + 1] - f[i])) / 1e6)


def terminate(a, b, c, d, zs, zl, z_system: float = 50.0):
    """Insertion ratio and the radio's reflection of a two-port between ``zs`` and ``zl``.

    Notes
    -----
    With source EMF ``E`` behind ``zs`` and load ``zl``:
    ``V_L = E zl / (A zl + B + C zs zl + D zs)``; without the filter
    ``V_L0 = E zl / (zl + zs)``; so ``V_L / V_L0 = (zl + zs) / (A zl + B + C zs zl + D zs)``,
    which for ``zs = zl = Z`` is ``2 / (A + B/Z + C Z + D)`` = S21 (Pozar table 4.2).
    ``Z_in = (A zl + B) / (C zl + D)``, ``Gamma = (Z_in - z_system) / (Z_in + z_system)``.
    """
    den = a * zl + b + c * zs * zl + d * zs
    s21 = (zl + zs) / den
    zin = (a * zl + b) / (c * zl + d)
    s11 = (zin - z_system) / (zin + z_system)
    return s21, s11


def apply_ceiling(s21: NDArray[np.complex128], ceiling_db: float) -> NDArray[np.complex128]:
    """``s21`` with a leakage path added in power: ``|s21'|^2 = |s21|^2 + 10^(-ceiling/10)``, phase kept."""
    floor2 = 10.0 ** (-float(ceiling_db) / 10.0)
    mag2 = np.abs(s21) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        scale = np.sqrt(np.where(mag2 > 0, 1.0 + floor2 / mag2, 1.0))
    out = s21 * scale
    zero = mag2 == 0
    if np.any(zero):
        out[zero] = math.sqrt(floor2)
    return out


def ceiling_note(ceiling_db: float | None) -> str:
    """What limits deep notches, for the plan and the design report."""
    if ceiling_db is None:
        return "no depth ceiling applied: attenuation figures are those of the ideal model"
    return (f"notch depths are capped at {ceiling_db:g} dB: braid and connector leakage of ordinary "
            "coax hardware and the dynamic range of a hobby analyser limit what can be built and "
            "verified; a deeper requirement needs better hardware (double-shielded cable, N "
            "connectors), physical separation or a cavity filter")
