"""Connection hardware, real loads and the depth ceiling around a filter's cable.

A built stub filter is more than its cable: every stub hangs from a tee whose
arms are short sections of line, every cable piece ends in a connector whose
mated pair is a short section of (for UHF, clearly not 50 ohm) line, a
shorted stub's short has inductance, the filter works into an antenna that is
not 50 ohm out of its band, and no real filter is deeper than its leakage.

:class:`Model` bundles all of it around a cable. It is a *medium* for
:mod:`notchkit.filters` (it answers ``z0_ohm``, ``velocity_factor``,
``alpha_np_per_m`` and every other attribute from its cable), so a
:class:`~notchkit.filters.Filter` or the solver given a ``Model`` instead of a
bare cable designs and verifies with the hardware, the load and the ceiling
without any change to their code: :func:`notchkit.filters.evaluate_batch`
hands a ``Model`` to :meth:`Model.evaluate_batch`.

Reference planes (the cut list states them): with hardware, a stub's
``length_m`` runs from the mating face of its plug (where it meets the tee's
side port) to its far end, the plug included; a line section's from the
mating face of one plug to that of the other. The tee's arms, from its ports'
mating faces to the junction, are hardware, not cable.

Every figure below carries its source or is marked "from memory" /
"common practice"; docs/hardware.md explains each.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.elements import kind_of
from notchkit.errors import DesignError
from notchkit.lines import C0

# ---------------------------------------------------------------- connector families


@dataclass(frozen=True, slots=True, kw_only=True)
class ConnectorFamily:
    """One connector family's mated pair, tee and barrel, as short lines.

    Lengths are physical millimetres; each section has its own impedance and
    velocity factor (its dielectric: PTFE about 0.69, air 1.0).
    """

    name: str
    z_pair_ohm: float
    """Characteristic impedance of the mated pair's line section."""
    plug_mm: float
    """Length of the plug from its mating face to where the cable's own line starts."""
    pair_vf: float
    tee_z_ohm: float
    tee_through_mm: float
    """Each through arm: from a through port's mating face to the junction centre."""
    tee_side_mm: float
    """The side arm: from the side port's mating face to the junction centre."""
    tee_vf: float
    barrel_z_ohm: float
    barrel_mm: float
    barrel_vf: float
    sources: tuple[tuple[str, str], ...] = ()
    """(figure, source) pairs."""
    max_voltage_peak_v: float | None = None
    """Working voltage of the connectors, V peak; None: the family's (notchkit.power.CONNECTOR_RATINGS)."""


_PTFE_VF = 1.0 / math.sqrt(2.1)  # PTFE relative permittivity 2.1 (common handbook value) -> VF 0.69

FAMILIES: dict[str, ConnectorFamily] = {
    "uhf": ConnectorFamily(
        name="uhf", z_pair_ohm=35.0, plug_mm=15.0, pair_vf=_PTFE_VF,
        tee_z_ohm=35.0, tee_through_mm=22.0, tee_side_mm=25.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=35.0, barrel_mm=30.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "UHF (PL-259/SO-239) is not a constant-impedance connector; sectioned mated "
                           "pairs measure roughly 30-36 ohm (published sectioned-connector measurements; "
                           "35 ohm taken, from memory)"),
            ("plug_mm", "from memory: a PL-259 is about 15 mm from mating face to the cable's own line"),
            ("tee_*", "from memory: an M-358 tee body is about 45 mm through and 25 mm to the side port"),
            ("barrel_*", "from memory: a PL-258 double-female barrel is about 30 mm long"),
            ("pair_vf", "PTFE relative permittivity 2.1 (handbook value), VF = 1/sqrt(2.1)"),
        ),
    ),
    "n": ConnectorFamily(
        name="n", z_pair_ohm=50.0, plug_mm=12.0, pair_vf=_PTFE_VF,
        tee_z_ohm=50.0, tee_through_mm=23.0, tee_side_mm=23.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=50.0, barrel_mm=20.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "50 ohm: type N interface, MIL-STD-348 / IEC 61169-16"),
            ("plug_mm", "from memory: an N plug is about 12 mm from mating face to the cable's line"),
            ("tee_*", "from memory: a UG-28 (3 x female) tee is about 46 mm through, 23 mm to the side"),
            ("barrel_*", "from memory: a UG-29 barrel is about 20 mm"),
        ),
    ),
    "bnc": ConnectorFamily(
        name="bnc", z_pair_ohm=50.0, plug_mm=10.0, pair_vf=_PTFE_VF,
        tee_z_ohm=50.0, tee_through_mm=16.0, tee_side_mm=16.0, tee_vf=_PTFE_VF,
        barrel_z_ohm=50.0, barrel_mm=15.0, barrel_vf=_PTFE_VF,
        sources=(
            ("z_pair_ohm", "50 ohm: BNC interface, MIL-STD-348 / IEC 61169-8"),
            ("plug_mm", "from memory: a BNC plug is about 10 mm from mating face to the cable's line"),
            ("tee_*", "from memory: a UG-274 tee is about 32 mm through, 16 mm to the side"),
            ("barrel_*", "from memory: a UG-914 barrel is about 15 mm"),
        ),
    ),
}
"""The connector families (docs/hardware.md lists every figure and its source)."""

DEFAULT_FAMILY = "uhf"
"""Common practice on amateur and land-mobile sites at HF-UHF."""
DEFAULT_SHORT_NH = 3.0
"""A soldered short with about 3 mm of pigtail, at about 1 nH per mm of wire (common practice)."""
DEFAULT_DEPTH_CEILING_DB = 60.0
"""Practical floor of a coax stub filter's transmission, dB below the input (see docs/hardware.md):
single-braid cable and UHF connectors leak about 40-60 dB (from memory), and a hobby vector
analyser's S21 dynamic range is about 50-70 dB at VHF (from memory), so deeper claims can be
neither built reliably nor verified."""
DEFAULT_OUT_OF_BAND_SWR = 6.0
"""Mismatch assumed for an antenna out of its band when no load is given (|Gamma| 0.71): a
resonant antenna an octave off its band commonly shows SWR 5-20 (from memory)."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Hardware:
    """The connection hardware of a site's filters (all settable in the site file)."""

    family: ConnectorFamily = FAMILIES[DEFAULT_FAMILY]
    short_nh: float = DEFAULT_SHORT_NH
    barrels_per_port: int = 0
    """Barrels at each filter port (e.g. to join the radio's jumper)."""

    @classmethod
    def of(cls, family: str = DEFAULT_FAMILY, **overrides: Any) -> Hardware:
        """A family by name, with any of its figures (or ``short_nh``, ``barrels_per_port``) replaced."""
        fam = FAMILIES.get(str(family).lower())
        if fam is None:
            raise DesignError(f"connector family {family!r} is not known (allowed: {', '.join(FAMILIES)})")
        own = {k: overrides.pop(k) for k in ("short_nh", "barrels_per_port") if k in overrides}
        extra = {k: v for k, v in overrides.items() if v is not None}
        try:
            fam = replace(fam, **extra) if extra else fam
        except TypeError as exc:
            raise DesignError(f"hardware: {exc}") from None
        return cls(family=fam, **own)

    def to_json(self) -> dict[str, Any]:
        f = self.family
        return {"family": f.name, "z_pair_ohm": f.z_pair_ohm, "plug_mm": f.plug_mm,
                "tee_z_ohm": f.tee_z_ohm, "tee_through_mm": f.tee_through_mm, "tee_side_mm": f.tee_side_mm,
                "barrel_z_ohm": f.barrel_z_ohm, "barrel_mm": f.barrel_mm,
                "short_nh": self.short_nh, "barrels_per_port": self.barrels_per_port,
                **({"connector_peak_v": f.max_voltage_peak_v} if f.max_voltage_peak_v is not None else {})}

    def reference_planes(self) -> str:
        f = self.family
        return (f"{f.name.upper()} hardware: each stub's length runs from the mating face of its plug "
                f"(where it meets the tee's side port) to its far end, the plug's {f.plug_mm:g} mm "
                "included; a line section's from one plug's mating face to the other's. The tee's arms "
                f"({f.tee_through_mm:g} mm through, {f.tee_side_mm:g} mm to the side) are part of the model, "
                "not of the cable.")


# ---------------------------------------------------------------- small two-port helpers


def _section(z: float | NDArray, vf: float, length_m: float, f: NDArray[np.float64]):
    """ABCD entries of a lossless line section (arrays over f), or None for zero length."""
    if length_m <= 0:
        return None
    bl = 2 * np.pi * f * length_m / (C0 * vf)
    c, s = np.cos(bl), np.sin(bl)
    return (c + 0j, 1j * z * s, 1j * s / z, c + 0j)


def _chain(*mats):
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


# ---------------------------------------------------------------- the model


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
        plug = _section(fam.z_pair_ohm, fam.pair_vf, fam.plug_mm * mm, f) if fam else None
        arm = _section(fam.tee_z_ohm, fam.tee_vf, fam.tee_through_mm * mm, f) if fam else None
        barrel = (_chain(*[_section(fam.barrel_z_ohm, fam.barrel_vf, fam.barrel_mm * mm, f)]
                         * hw.barrels_per_port) if fam and hw is not None and hw.barrels_per_port else None)
        plug_m = fam.plug_mm * mm if fam else 0.0
        short_l = (hw.short_nh * 1e-9) if hw is not None else 0.0
        yl_short = 1.0 / (1j * 2 * np.pi * f * short_l) if short_l > 0 else None
        side_m = fam.tee_side_mm * mm if fam else 0.0
        tanh_gl = self._tanh_gl(g)
        # Each stub kind's admittance at the junction is a Moebius map of t = tanh(gamma l_c) with
        # coefficients over f only: the end (open, the short's inductance, an ideal short) through
        # the cable, then the fixed plug and side arm, composed once (one complex division a point).
        fixed = _chain(_section(fam.tee_z_ohm, fam.tee_vf, side_m, f) if fam else None,
                       _section(fam.z_pair_ohm, fam.pair_vf, plug_m, f) if fam else None)
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
            return _chain(m, pending) if pending is not None else m

        for j, k in enumerate(kinds):
            x = lengths[:, j:j + 1]
            if k.shunt:
                if j == 0 or not kinds[j - 1].shunt:  # the first stub at this tee
                    pending = _chain(pending, arm)
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
                pending = _chain(pending, plug)
                m, pending = flush(m), None
                lc = np.maximum(x - 2 * plug_m, 0.0)
                ep = np.exp(g * lc)  # e^{gl}; cosh and sinh from it and its reciprocal
                em = 1.0 / ep
                ch, sh = 0.5 * (ep + em), 0.5 * (ep - em)
                m = _chain(m, (ch, zc * sh, sh * yc, ch))
                pending = plug
        m = _chain(m, _chain(pending, barrel) if pending is not None else barrel)
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
                s21 = apply_ceiling(s21, self.depth_ceiling_db)
            return s21, s11
        lengths = np.atleast_2d(np.asarray(lengths_m, dtype=float))
        f = np.asarray(freq_hz, dtype=float).ravel()
        if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
            raise DesignError("frequencies must be finite and > 0 Hz")
        if lengths.shape[1] != len(kinds):
            raise DesignError(f"lengths have {lengths.shape[1]} columns for {len(kinds)} elements")
        zs, zl = self.ports(f, z_system)
        s21 = np.empty((lengths.shape[0], f.size), dtype=complex)
        s11 = np.empty_like(s21)
        step = max(1, (1 << 14) // f.size)
        for lo in range(0, lengths.shape[0], step):
            a, b, c, d = self.abcd(kinds, lengths[lo:lo + step], f)
            s21[lo:lo + step], s11[lo:lo + step] = terminate(a, b, c, d, zs, zl, z_system)
        if self.depth_ceiling_db is not None:
            s21 = apply_ceiling(s21, self.depth_ceiling_db)
        return s21, s11

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


# ---------------------------------------------------------------- from a site, and what the report says


@dataclass(frozen=True, slots=True, kw_only=True)
class ConstantZ:
    """A port of one impedance at every frequency (a radio's port)."""

    z: complex

    def z_ohm(self, freq_hz: ArrayLike) -> NDArray[np.complex128]:
        return np.full(np.shape(freq_hz), complex(self.z))


def hardware_of(settings: Any) -> Hardware | None:
    """:class:`Hardware` from a site's ``hardware:`` settings (None or ``family: ideal``: ideal junctions)."""
    if settings is None or str(getattr(settings, "family", "")).lower() == "ideal":
        return None
    over = {k: getattr(settings, k, None) for k in ("z_pair_ohm", "plug_mm", "tee_through_mm", "tee_side_mm")}
    over["max_voltage_peak_v"] = getattr(settings, "connector_peak_v", None)
    if over["z_pair_ohm"] is not None:
        over["tee_z_ohm"] = over["z_pair_ohm"]
    short = settings.short_nh if settings.short_nh is not None else DEFAULT_SHORT_NH
    return Hardware.of(settings.family, short_nh=short, barrels_per_port=int(settings.barrels_per_port),
                       **over)


def model_for(cable: Any, *, settings: Any = None, load: Any = None,
              depth_ceiling_db: float | None = None) -> Model:
    """The :class:`Model` a site asks for: its ``hardware:`` settings, one radio's ``load:``
    (:class:`notchkit.site.model.RadioLoad`) and its ceiling (default :data:`DEFAULT_DEPTH_CEILING_DB`)."""
    from notchkit.loads import read_load

    z_load = source = None
    swr = DEFAULT_OUT_OF_BAND_SWR
    if load is not None:
        if getattr(load, "file", None):
            z_load = read_load(load.file)
        if getattr(load, "swr", None) is not None:
            swr = float(load.swr)
        if getattr(load, "radio_ohm", None) is not None:
            source = ConstantZ(z=complex(load.radio_ohm))
    hw = hardware_of(settings)
    if getattr(cable, "balanced", False):
        hw = None  # coax connectors and tees do not apply to a balanced line (it joins through a balun)
    return Model(cable=cable, hardware=hw, load=z_load, source=source,
                 rlgc=getattr(settings, "line_model", "classic") == "rlgc",
                 depth_ceiling_db=DEFAULT_DEPTH_CEILING_DB if depth_ceiling_db is None else depth_ceiling_db,
                 out_of_band_swr=swr)


@dataclass(frozen=True, slots=True, kw_only=True)
class ModelReport:
    """What the design was verified against, and how far an unknown load can move it."""

    lines: tuple[str, ...]
    data: dict

    def to_json(self) -> dict[str, Any]:
        return self.data


def stub_plug_m(cable: Any) -> float:
    """Length of the plug a stub's ``length_m`` includes under ``cable``'s connector hardware,
    metres (0 on a plain cable, where the cut length is all cable and the tee allowance is
    added apart). A stub's own cable is its length less this."""
    hw = getattr(cable, "hardware", None) if isinstance(cable, Model) else None
    return hw.family.plug_mm * 1e-3 if hw is not None else 0.0


def reference_plane(filt: Any) -> str:
    """Where every cut length of ``filt`` is measured from (stated in the cut list)."""
    hw = getattr(filt.cable, "hardware", None) if isinstance(filt.cable, Model) else None
    if hw is None:
        return (f"from the tee's port reference plane (the connector's mating face) to the stub's end, "
                f"the tee allowance of {filt.tee_allowance_m * 1000:.0f} mm already taken off")
    return (f"from the mating face of the stub's {hw.family.name.upper()} plug to the stub's end, the plug's "
            f"{hw.family.plug_mm:g} mm included (tee arms modelled separately)")


def model_report(filt: Any, notch_mhz: Any, pass_mhz: Any, z_system: float = 50.0) -> ModelReport:
    """The model's facts for the report: hardware, line model, load (or its spread), ceiling."""
    from notchkit.loads import load_spread, spread_lines

    m = filt.cable if isinstance(filt.cable, Model) else Model(cable=filt.cable, depth_ceiling_db=None)
    lines: list[str] = []
    data: dict[str, Any] = {}
    if m.hardware is None and getattr(m.cable, "balanced", False):
        lines.append("Model: balanced line: no coax connector model (the junctions are the tee allowance; "
                     "the line joins coax through a balun).")
        data["hardware"] = None
    elif m.hardware is None:
        lines.append(f"Model: ideal tees; tee allowance {filt.tee_allowance_m * 1000:.0f} mm of stub cable "
                     "per stub; cut lengths run from the tee's port reference plane (the connector's mating "
                     "face) to the stub's end, the allowance taken off.")
        data["hardware"] = None
    else:
        f = m.hardware.family
        lines.append(f"Model: {f.name.upper()} hardware, mated pair {f.z_pair_ohm:g} ohm, tee arms "
                     f"{f.tee_through_mm:g} mm through / {f.tee_side_mm:g} mm side ({f.tee_z_ohm:g} ohm), "
                     f"short {m.hardware.short_nh:g} nH, {m.hardware.barrels_per_port} barrel(s) per port.")
        lines.append(m.hardware.reference_planes())
        data["hardware"] = m.hardware.to_json()
    lines.append("Line: RLGC (internal inductance: phase velocity falls at HF, complex Z0)." if m.rlgc else
                 "Line: lossless-VF phase with the cable's loss (classic model).")
    data["line_model"] = "rlgc" if m.rlgc else "classic"
    data["other_line_model"] = None
    if notch_mhz and hasattr(m.cable, "z0_ohm"):
        # The same filter on the other line model, at each notch centre: how much the choice matters.
        f_hz = np.asarray(list(notch_mhz), dtype=float) * 1e6
        other = m.with_(rlgc=not m.rlgc)
        try:
            rows = filt.lengths_m[None, :]
            a = -20 * np.log10(np.abs(m.evaluate_batch(filt.kinds, rows, f_hz, z_system)[0][0]))
            b = -20 * np.log10(np.abs(other.evaluate_batch(filt.kinds, rows, f_hz, z_system)[0][0]))
        except (ValueError, ZeroDivisionError, FloatingPointError):  # a cable without a loss split
            a = b = None
        if a is not None:
            name = "RLGC" if other.rlgc else "classic"
            data["other_line_model"] = {"model": name, "notch_mhz": [float(x) for x in notch_mhz],
                                        "this_db": [round(float(x), 2) for x in a],
                                        "other_db": [round(float(x), 2) for x in b]}
            moved = [(x, y, z) for x, y, z in zip(notch_mhz, a, b, strict=True) if abs(y - z) >= 1.0]
            if moved:
                lines.append(f"On the {name} line the notch centres would read "
                             + ", ".join(f"{x:g} MHz {z:.1f} dB (here {y:.1f})" for x, y, z in moved)
                             + ("; at HF the conductor's internal inductance slows the wave "
                                "(docs/hardware.md)." if other.rlgc else "."))
    if m.load is not None:
        lo, hi = m.load.freq_hz[0] / 1e6, m.load.freq_hz[-1] / 1e6
        lines.append(f"Verified into the given antenna load ({m.load.source}, {lo:g}-{hi:g} MHz); outside "
                     "that range the load is taken as 50 ohm.")
        data["load"] = m.load.to_json()
        freqs = [x for x in list(notch_mhz) + list(pass_mhz) if not lo <= x <= hi]
        uncovered = [x for x in notch_mhz if not lo <= x <= hi]
        passes = [x for x in pass_mhz if not lo <= x <= hi]
        spreads = (load_spread(filt, uncovered, passes, swr=m.out_of_band_swr, z_system=z_system)
                   if freqs else ())
    else:
        data["load"] = None
        spreads = load_spread(filt, notch_mhz, pass_mhz, swr=m.out_of_band_swr, z_system=z_system)
    lines += spread_lines(spreads, m.out_of_band_swr)
    data["load_spread_swr"] = m.out_of_band_swr
    data["load_spread"] = [s.to_json() for s in spreads]
    note = ceiling_note(m.depth_ceiling_db)
    lines.append(note[0].upper() + note[1:] + ".")
    data["depth_ceiling_db"] = m.depth_ceiling_db
    return ModelReport(lines=tuple(lines), data=data)
