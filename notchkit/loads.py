"""Real loads: the antenna a filter works into, and how far an unknown one can move its figures.

A load is given as

* a measured one-port Touchstone file (``.s1p``, read by scikit-rf),
* an R + jX table: a text file of ``freq_mhz r_ohm x_ohm`` rows (``#`` or
  ``!`` starts a comment), or
* an SWR bound: the load's phase is unknown, only ``|Gamma| <= (SWR - 1) / (SWR + 1)``.

Impedances are interpolated linearly in R and X between measured points;
outside the measured range the load is unknown (NaN), and the model uses the
system impedance there (the report says so).

Without a load, :func:`load_spread` shows how much the notch and pass figures
can move when the antenna is mismatched by a bound (default
:data:`notchkit.hardware.DEFAULT_OUT_OF_BAND_SWR`), sweeping the load's phase
round the circle ``|Gamma| = bound``.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from notchkit.errors import InputError


@dataclass(frozen=True, slots=True, kw_only=True, eq=False)
class Load:
    """A measured or tabulated load impedance over frequency."""

    freq_hz: NDArray[np.float64]
    z: NDArray[np.complex128]
    source: str = ""

    def z_ohm(self, freq_hz: ArrayLike) -> NDArray[np.complex128]:
        """Impedance at ``freq_hz`` (ohm); NaN outside the measured range."""
        f = np.asarray(freq_hz, dtype=float)
        r = np.interp(f, self.freq_hz, self.z.real, left=np.nan, right=np.nan)
        x = np.interp(f, self.freq_hz, self.z.imag, left=np.nan, right=np.nan)
        return r + 1j * x

    def covers(self, freq_hz: ArrayLike) -> bool:
        f = np.asarray(freq_hz, dtype=float)
        return bool(np.all((f >= self.freq_hz[0]) & (f <= self.freq_hz[-1])))

    def to_json(self) -> dict[str, Any]:
        return {"source": self.source, "from_mhz": float(self.freq_hz[0] / 1e6),
                "to_mhz": float(self.freq_hz[-1] / 1e6), "points": int(self.freq_hz.size)}


@dataclass(frozen=True, slots=True, kw_only=True)
class FixedGamma:
    """A load of one reflection coefficient at every frequency (for the phase sweep)."""

    gamma: complex
    z_ref: float = 50.0

    def z_ohm(self, freq_hz: ArrayLike) -> NDArray[np.complex128]:
        f = np.asarray(freq_hz, dtype=float)
        return np.full(f.shape, self.z_ref * (1 + self.gamma) / (1 - self.gamma))


def gamma_of_swr(swr: float) -> float:
    """``|Gamma| = (SWR - 1) / (SWR + 1)`` (Pozar eq. 2.41)."""
    if not (math.isfinite(swr) and swr >= 1.0):
        raise InputError(f"swr {swr!r} must be a number >= 1")
    return (swr - 1.0) / (swr + 1.0)


def read_load(path: str | os.PathLike) -> Load:
    """A load from a ``.s1p`` Touchstone file or an R + jX text table (``freq_mhz r_ohm x_ohm``).

    Read through :func:`notchkit.bounded.read_regular` (a regular file of at most
    :data:`notchkit.bounded.MAX_MEASUREMENT_BYTES`); every problem is one
    ``FILE:LINE:COL: load: what is wrong (what is allowed)`` line.
    """
    from notchkit.bounded import MAX_MEASUREMENT_BYTES, MAX_SWEEP_POINTS, ReadRefused, read_regular
    from notchkit.textsafe import shown_path

    p = Path(path)
    shown = shown_path(p)
    try:
        data = read_regular(p, MAX_MEASUREMENT_BYTES)
    except ReadRefused as exc:
        raise InputError(f"{shown}:1:1: load: {exc.reason} (allowed: a .s1p file or an R+jX table)") from None
    if b"\0" in data:
        raise InputError(f"{shown}:1:1: load: a binary file (allowed: a .s1p file or an R+jX table)")
    if p.suffix.lower() == ".s1p":
        from notchkit.bounded import TouchstoneRefused, parse_touchstone

        try:
            net = parse_touchstone(data, p.name)
        except TouchstoneRefused as exc:
            raise InputError(f"{shown}:1:1: load: not a readable Touchstone file ({exc.detail})") from None
        if net.nports != 1:
            raise InputError(f"{shown}:1:1: load: {net.nports}-port file (allowed: a one-port .s1p)")
        f = np.asarray(net.f, dtype=float)
        z = np.asarray(net.z[:, 0, 0], dtype=complex)
        if f.size > MAX_SWEEP_POINTS or not (np.all(np.isfinite(f)) and np.all(np.diff(f) > 0) and f[0] > 0):
            raise InputError(f"{shown}:1:1: load: frequencies must be positive and rising, at most "
                             f"{MAX_SWEEP_POINTS} points")
        if not np.all(np.isfinite(z)) or np.any(z.real < 0):
            raise InputError(f"{shown}:1:1: load: an impedance is not finite or has R < 0 "
                             "(allowed: a passive load, |S11| < 1)")
        return Load(freq_hz=f, z=z, source=p.name)
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        text = data.decode("latin-1")
    rows: list[list[float]] = []
    for n, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].split("!", 1)[0].strip()
        if not line:
            continue
        if len(rows) >= MAX_SWEEP_POINTS:
            raise InputError(f"{shown}:{n}:1: load: more than {MAX_SWEEP_POINTS} rows "
                             "(allowed: fewer points)")
        parts = line.replace(",", " ").split()
        try:
            vals = [float(x) for x in parts]
        except ValueError:
            raise InputError(f"{shown}:{n}:1: load: row {line[:40]!r} is not three numbers "
                             "(allowed: freq_mhz r_ohm x_ohm)") from None
        if len(vals) != 3 or not all(math.isfinite(v) for v in vals) or vals[0] <= 0 or vals[1] < 0:
            raise InputError(f"{shown}:{n}:1: load: row {line[:40]!r} is not a valid point "
                             "(allowed: freq_mhz > 0, r_ohm >= 0, x_ohm)")
        if rows and vals[0] <= rows[-1][0]:
            raise InputError(f"{shown}:{n}:1: load: frequency {vals[0]:g} MHz does not rise "
                             "(allowed: rows in rising frequency)")
        rows.append(vals)
    if not rows:
        raise InputError(f"{shown}:1:1: load: no rows (allowed: freq_mhz r_ohm x_ohm rows)")
    a_ = np.array(rows)
    return Load(freq_hz=a_[:, 0] * 1e6, z=a_[:, 1] + 1j * a_[:, 2], source=p.name)


@dataclass(frozen=True, slots=True, kw_only=True)
class Spread:
    """How far a figure can move over the load phases at one frequency."""

    freq_mhz: float
    role: str  # "notch" or "pass"
    nominal_db: float
    worst_db: float
    best_db: float
    nominal_swr: float
    worst_swr: float

    def to_json(self) -> dict[str, Any]:
        return {k: (round(v, 3) if isinstance(v, float) else v) for k, v in (
            ("freq_mhz", self.freq_mhz), ("role", self.role), ("nominal_db", self.nominal_db),
            ("worst_db", self.worst_db), ("best_db", self.best_db), ("nominal_swr", self.nominal_swr),
            ("worst_swr", self.worst_swr))}


def load_spread(filt, notch_mhz, pass_mhz, *, swr: float, phases: int = 72,
                z_system: float = 50.0) -> tuple[Spread, ...]:
    """Notch attenuation and pass figures of ``filt`` into loads of SWR ``swr`` at every phase.

    For each frequency the load sweeps ``Gamma = g e^{j phi}``, ``g = (SWR-1)/(SWR+1)``,
    ``phi`` in ``phases`` steps round the circle. A notch reports its attenuation
    (insertion ratio, :func:`notchkit.hardware.terminate`) nominal (50 ohm load), worst
    (least) and best; a pass band its insertion loss and the SWR the radio sees.
    """
    from notchkit.hardware import Model, apply_ceiling, terminate

    g_mag = gamma_of_swr(swr)
    cable = filt.cable
    model = cable if isinstance(cable, Model) else Model(cable=cable, depth_ceiling_db=None)
    base = model.with_(load=None)
    freqs = [(float(x), "notch") for x in notch_mhz] + [(float(x), "pass") for x in pass_mhz]
    if not freqs:
        return ()
    f = np.array([x for x, _ in freqs]) * 1e6
    a, b, c, d = base.abcd(filt.kinds, filt.lengths_m[None, :], f)
    zs, _ = base.ports(f, z_system)
    phi = np.linspace(0.0, 2 * np.pi, phases, endpoint=False)
    gam = g_mag * np.exp(1j * phi)[:, None]
    zl = z_system * (1 + gam) / (1 - gam)  # (phases, n_f)
    s21, s11 = terminate(a, b, c, d, zs, zl, z_system)
    s21_0, s11_0 = terminate(a, b, c, d, zs, np.full(f.shape, complex(z_system)), z_system)
    if model.depth_ceiling_db is not None:
        s21 = apply_ceiling(s21, model.depth_ceiling_db)
        s21_0 = apply_ceiling(s21_0, model.depth_ceiling_db)
    db = -20 * np.log10(np.maximum(np.abs(s21), 1e-20))
    db0 = -20 * np.log10(np.maximum(np.abs(s21_0[0]), 1e-20))
    swr_of = lambda s: (1 + np.abs(s)) / np.maximum(1 - np.abs(s), 1e-12)  # noqa: E731
    out = []
    for i, (fm, role) in enumerate(freqs):
        col = db[:, i]
        worst = float(col.min()) if role == "notch" else float(col.max())
        best = float(col.max()) if role == "notch" else float(col.min())
        out.append(Spread(freq_mhz=fm, role=role, nominal_db=float(db0[i]), worst_db=worst, best_db=best,
                          nominal_swr=float(swr_of(s11_0[0, i])), worst_swr=float(swr_of(s11[:, i]).max())))
    return tuple(out)


def spread_lines(spreads, swr: float) -> list[str]:
    """Text lines of :func:`load_spread` for the report."""
    if not spreads:
        return []
    lines = [f"Load not given: figures into an antenna of SWR {swr:g} at any phase "
             f"(|Gamma| {gamma_of_swr(swr):.2f}; default mismatch out of band, from memory):"]
    for s in spreads:
        if s.role == "notch":
            lines.append(f"  notch {s.freq_mhz:g} MHz: {s.nominal_db:.1f} dB into 50 ohm, "
                         f"{s.worst_db:.1f} to {s.best_db:.1f} dB")
        else:
            lines.append(f"  pass {s.freq_mhz:g} MHz, were the antenna this mismatched there: loss "
                         f"{s.nominal_db:.2f} dB into 50 ohm, up to {s.worst_db:.2f} dB; SWR at the radio "
                         f"up to {s.worst_swr:.2f} (the antenna's own mismatch included)")
    return lines
