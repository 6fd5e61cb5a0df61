"""The cable library: coax and balanced lines with published figures, and the loss model.

Each library cable comes from ``notchkit/data/cables.yaml``, where every figure
stands beside the document it was taken from. Loss tables are stored as
published (dB/100 ft or dB/100 m), one table per source, and converted here.

The loss model
--------------
Matched-line loss in dB/100 m, f in MHz:

.. math:: L(f) = k_{sqrt} \\sqrt{f}\\, g(f) + k_{lin} f

The first term is conductor loss (surface resistance grows as the square
root of frequency), the second dielectric loss (``pi f sqrt(er) tan(delta) / c``,
linear in f). ``g(f) = 1`` for copper conductors. A copper-clad-steel (CCS)
centre conductor carries the current in its copper skin while the skin depth
``delta = 1/sqrt(pi f mu0 sigma)`` is small beside the cladding thickness
``t``; at lower frequencies the current reaches the poorly conducting steel and
the loss rises above the square-root law. The cladding is modelled as a copper
layer on a non-conducting core (the layer's surface resistance,
``Rs Re(coth((1+j) t/delta))``):

.. math:: F(x) = \\frac{\\sinh x + \\sin x}{\\cosh x - \\cos x},\\quad x = 2t/\\delta

which tends to 1 at high frequency and to the layer's DC resistance
``1/(sigma t)`` at low frequency [1]_. Only the centre conductor is CCS, so
``g = (1 - w) + w F`` with ``w = D/(D + d)`` the centre conductor's share of the
conductor loss (``D/d = exp(Z0 sqrt(er)/60)``; both conductors have the same
surface resistance, and the current density on each goes as one over its
diameter).

``k_sqrt`` and ``k_lin`` (and the cladding thickness, where not published) are
fitted by non-negative least squares on relative error, so a 2 MHz point
counts as much as a 450 MHz point. The fit error is shown per source.

Balanced lines (twin-lead, window line, open-wire line) are built from their
geometry instead: ``Z0 = (120/sqrt(er_eff)) acosh(D/d)``, conductor loss
``R/(2 Z0)`` with ``R = (2 Rs/(pi d)) (D/d)/sqrt((D/d)^2 - 1)`` for the pair
(proximity effect included), and dielectric loss from the part of the field in
the web [2]_. Published loss figures are kept beside them and compared.

Anything with ``z0_ohm``, ``velocity_factor`` and ``alpha_np_per_m(freq_hz)``
is a medium for :mod:`notchkit.filters`; :class:`Cable` is the one we ship.

References
----------
.. [1] S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in
   Communication Electronics*, 3rd ed., Wiley, 1994, sec. 5.5-5.6 (internal
   impedance of plane conductors and of a thin layer).
.. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, table 2.1
   (two-wire line) and eq. 3.199 (dielectric loss of a partly filled line).
"""

from __future__ import annotations

import difflib
import math
import os
import re
import warnings
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

import numpy as np
import numpy.typing as npt

from notchkit.errors import CableError, NotchkitWarning

FT_PER_M = 1.0 / 0.3048
"""Feet per metre (exact by definition of the international foot)."""
NEPER_DB = 20.0 / math.log(10.0)
"""Decibels per neper, 8.686 dB (definition)."""
VALID_FREQ_MHZ = (0.1, 6000.0)
"""Range over which the loss model may be evaluated at all, MHz."""
DEFAULT_AT_MHZ = (1.8, 14.0, 146.0, 446.0)
"""Frequencies of the ``notchkit cables`` table when none are asked for."""
NARROW_TABLE_RATIO = 4.0
"""A table spanning less than this frequency ratio fits the conductor term only."""
EDGE_SLACK = 0.02
"""A frequency within 2 % of a table's end counts as inside it."""

C0 = 299_792_458.0
"""Speed of light in vacuum, m/s (SI definition)."""
MU0 = 4e-7 * math.pi
"""Vacuum permeability, H/m (the pre-2019 defined value; the 2019 SI value differs by 1e-10)."""
SIGMA_COPPER = 5.8e7
"""Conductivity of annealed copper, S/m (International Annealed Copper Standard, 58 MS/m)."""

LOSS_UNITS = {"dB/100m": 1.0, "dB/100ft": FT_PER_M, "dB/m": 100.0, "dB/ft": 100.0 * FT_PER_M}
"""Multipliers that turn a published loss figure into dB/100 m."""

USER_LIBRARY_NAME = "cables.yaml"
"""File name of the user's cable library under ``$XDG_CONFIG_HOME/notchkit/``."""
SITE_LIBRARY_NAME = "notchkit-cables.yaml"
"""File name of a cable library kept next to a site file (same format as the user library)."""

_CLADDING_GRID_UM = np.geomspace(3.0, 300.0, 121)


class LosslessCableWarning(NotchkitWarning):
    """A cable without a loss table is modelled lossless: notch depths will be optimistic."""


class ExtrapolatedLossWarning(NotchkitWarning):
    """A frequency lies outside the published loss table of a cable."""


@dataclass(frozen=True, slots=True, kw_only=True)
class LossSource:
    """One published loss table: where it is from and its points in dB/100 m."""

    source: str
    points: tuple[tuple[float, float], ...]


@dataclass(frozen=True, slots=True, kw_only=True)
class Cable:
    """A transmission-line type (coax or balanced) as a transmission medium.

    Parameters
    ----------
    name : str
        Type designation, e.g. ``"RG-213"`` or ``"window-line-450"``.
    z0_ohm : float
        Characteristic impedance, ohms (> 0).
    velocity_factor : float
        Velocity of propagation relative to light in vacuum, 0 < VF <= 1.
    dielectric : str
        Dielectric material, e.g. ``"solid PE"``.
    outer_diameter_mm : float or None
        Jacket outer diameter (coax) or overall width (balanced), mm.
    max_voltage_v : float or None
        Maximum operating voltage, V RMS, as published; ``None`` when unpublished.
    max_power_w : tuple of (freq_mhz, watts)
        Published average power ratings, where published.
    vf_tolerance : float or None
        Published tolerance of the velocity factor (absolute, e.g. 0.02).
    loss_table : tuple of (freq_mhz, loss_db_per_100m)
        Every published loss point converted to dB/100 m (empty: lossless).
    loss_sources : tuple of LossSource
        The same points grouped by the source they came from.
    k_sqrt, k_lin : float
        Loss model coefficients: dB/100 m per sqrt(MHz) (high-frequency conductor
        loss) and per MHz (dielectric loss), >= 0.
    fit_residual_pct : float
        Largest relative error of the model over ``loss_table``, percent.
    sources : tuple of str
        Where the figures come from.
    inner_diameter_mm, dielectric_diameter_mm : float or None
        Centre-conductor and dielectric (core) diameters, mm, where published.
    kind : str
        ``"coax"`` or ``"balanced"``.
    centre_conductor : str
        ``"copper"`` or ``"ccs"`` (copper-clad steel; for a balanced line: both wires).
    cladding_um : float or None
        Copper cladding thickness of a CCS conductor, micrometres.
    conductor_diameter_mm, spacing_mm : float or None
        A balanced line's wire diameter and centre-to-centre spacing, mm.
    aliases : tuple of str
        Other names the type is known by (generic designations only).
    """

    name: str
    z0_ohm: float
    velocity_factor: float
    dielectric: str = ""
    outer_diameter_mm: float | None = None
    max_voltage_v: float | None = None
    vf_tolerance: float | None = None
    loss_table: tuple[tuple[float, float], ...] = ()
    k_sqrt: float = 0.0
    k_lin: float = 0.0
    fit_residual_pct: float = 0.0
    sources: tuple[str, ...] = ()
    inner_diameter_mm: float | None = None
    dielectric_diameter_mm: float | None = None
    kind: str = "coax"
    centre_conductor: str = "copper"
    cladding_um: float | None = None
    conductor_diameter_mm: float | None = None
    spacing_mm: float | None = None
    max_power_w: tuple[tuple[float, float], ...] = ()
    loss_sources: tuple[LossSource, ...] = ()
    aliases: tuple[str, ...] = ()
    published_range_mhz: tuple[float, float] | None = None
    from_memory: tuple[str, ...] = ()
    """Fields whose figure is recalled, not taken from a document (shown as such)."""
    notes: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        if not self.name or not isinstance(self.name, str):
            raise CableError(f"cable name: {self.name!r} must be a non-empty string")
        if not _finite_positive(self.z0_ohm):
            raise CableError(f"cable {self.name}: z0_ohm {self.z0_ohm!r} must be > 0 ohm")
        if not (_finite(self.velocity_factor) and 0.0 < self.velocity_factor <= 1.0):
            raise CableError(
                f"cable {self.name}: velocity_factor {self.velocity_factor!r} must be in (0, 1]"
            )
        for label in ("k_sqrt", "k_lin"):
            value = getattr(self, label)
            if not (_finite(value) and value >= 0.0):
                raise CableError(f"cable {self.name}: {label} {value!r} must be >= 0")
        for label in ("outer_diameter_mm", "max_voltage_v", "inner_diameter_mm",
                      "dielectric_diameter_mm", "cladding_um", "conductor_diameter_mm",
                      "spacing_mm"):
            value = getattr(self, label)
            if value is not None and not _finite_positive(value):
                raise CableError(f"cable {self.name}: {label} {value!r} must be > 0 or absent")
        if self.vf_tolerance is not None and not (
            _finite(self.vf_tolerance) and 0.0 <= self.vf_tolerance < self.velocity_factor
        ):
            raise CableError(
                f"cable {self.name}: vf_tolerance {self.vf_tolerance!r} must be >= 0 and "
                f"below the velocity factor"
            )
        if self.kind not in ("coax", "balanced"):
            raise CableError(f"cable {self.name}: kind {self.kind!r} must be coax or balanced")
        if self.centre_conductor not in ("copper", "ccs"):
            raise CableError(
                f"cable {self.name}: centre_conductor {self.centre_conductor!r} must be copper or ccs"
            )

    # -- the model -------------------------------------------------------

    @property
    def lossless(self) -> bool:
        """True when the model has no loss at all (no loss table was given)."""
        return self.k_sqrt == 0.0 and self.k_lin == 0.0

    @property
    def balanced(self) -> bool:
        """True for a balanced (two-wire) line."""
        return self.kind == "balanced"

    @property
    def centre_share(self) -> float:
        """Share of the conductor loss in the CCS conductor(s), ``w`` of the module notes."""
        return _centre_share(self.kind, self.z0_ohm, self.velocity_factor,
                             self.inner_diameter_mm, self.dielectric_diameter_mm)

    def ccs_factor(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """``g(f)``: conductor loss over its copper square-root law (1 for copper)."""
        f = np.asarray(freq_mhz, dtype=float)
        if self.centre_conductor != "ccs" or self.cladding_um is None:
            return np.ones_like(f)
        return _ccs_factor(f, self.cladding_um, self.centre_share)

    def conductor_loss_db_per_100m(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """Conductor (R) part of the matched-line loss, dB/100 m (``k_sqrt sqrt(f) g(f)``)."""
        f = self._mhz(freq_mhz)
        out = self.k_sqrt * np.sqrt(f)
        if self.centre_conductor == "ccs" and self.cladding_um is not None:
            out = out * _ccs_factor(f, self.cladding_um, self.centre_share)
        return out

    def dielectric_loss_db_per_100m(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """Dielectric (G) part of the matched-line loss, dB/100 m (``k_lin f``)."""
        return self.k_lin * self._mhz(freq_mhz)

    def _mhz(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """``freq_mhz`` as a float array; a negative, NaN or infinite frequency is a CableError."""
        f = np.asarray(freq_mhz, dtype=float)
        ok = np.isfinite(f) & (f >= 0.0)
        if not ok.all():
            bad = float(f[~ok].flat[0])
            raise CableError(f"cable {self.name}: loss asked at {bad:g} MHz "
                             "(allowed: finite frequencies >= 0 MHz)")
        return f

    def loss_db_per_100m(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """Matched-line loss in dB per 100 m.

        Parameters
        ----------
        freq_mhz : array_like
            Frequency, MHz.

        Returns
        -------
        ndarray
            ``k_sqrt sqrt(f) g(f) + k_lin f``, same shape as ``freq_mhz``
            (``g = 1`` unless the centre conductor is copper-clad steel).

        Raises
        ------
        CableError
            A frequency that is negative, NaN or infinite.
        """
        f = self._mhz(freq_mhz)
        return self.conductor_loss_db_per_100m(f) + self.dielectric_loss_db_per_100m(f)

    def loss_db_per_100ft(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """Matched-line loss in dB per 100 ft (``loss_db_per_100m * 0.3048``)."""
        return self.loss_db_per_100m(freq_mhz) / FT_PER_M

    def alpha_np_per_m(self, freq_hz: npt.ArrayLike) -> np.ndarray:
        """Attenuation constant in nepers per metre.

        Notes
        -----
        ``alpha = L / 100 / (20 / ln 10)`` with ``L`` in dB/100 m at ``f = freq_hz / 1e6``.
        """
        f_mhz = np.asarray(freq_hz, dtype=float) * 1e-6
        return self.loss_db_per_100m(f_mhz) * (0.01 / NEPER_DB)

    def alpha_split_np_per_m(self, freq_hz: npt.ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """``(alpha_c, alpha_d)``: conductor and dielectric attenuation, Np/m.

        For an RLGC line: ``R' = 2 alpha_c Z0`` and ``G' = 2 alpha_d / Z0`` (low-loss line).
        """
        f_mhz = np.asarray(freq_hz, dtype=float) * 1e-6
        k = 0.01 / NEPER_DB
        return (self.conductor_loss_db_per_100m(f_mhz) * k,
                self.dielectric_loss_db_per_100m(f_mhz) * k)

    # -- the published table ---------------------------------------------

    @property
    def table_range_mhz(self) -> tuple[float, float] | None:
        """Lowest and highest published loss frequency, MHz; ``None`` without a table.

        Tables marked "from memory" in the library do not widen this range.
        """
        if self.published_range_mhz is not None:
            return self.published_range_mhz
        if not self.loss_table or "loss" in self.from_memory:
            return None
        return self.loss_table[0][0], self.loss_table[-1][0]

    def extrapolated(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """True where a frequency lies outside the published table (2 % slack at each end)."""
        f = np.asarray(freq_mhz, dtype=float)
        rng = self.table_range_mhz
        if rng is None:
            return np.ones_like(f, dtype=bool)
        lo, hi = rng
        return (f < lo * (1.0 - EDGE_SLACK)) | (f > hi * (1.0 + EDGE_SLACK))

    def fit_error_by_source(self) -> tuple[tuple[str, float], ...]:
        """``(source, largest |model/published - 1| in percent)`` for each published table."""
        out = []
        for s in self.loss_sources:
            f = np.array([p[0] for p in s.points])
            loss = np.array([p[1] for p in s.points])
            err = float(np.max(np.abs(self.loss_db_per_100m(f) / loss - 1.0)) * 100.0)
            out.append((s.source, err))
        return tuple(out)

    def max_power_at(self, freq_mhz: float) -> float | None:
        """Published average power rating nearest ``freq_mhz`` (log-interpolated), W."""
        if not self.max_power_w:
            return None
        f = np.log([p[0] for p in self.max_power_w])
        w = np.log([p[1] for p in self.max_power_w])
        return float(np.exp(np.interp(math.log(freq_mhz), f, w)))

    # -- constructors ----------------------------------------------------

    @classmethod
    def from_table(
        cls,
        *,
        name: str,
        z0_ohm: float,
        velocity_factor: float,
        loss_table: Iterable[Sequence[float]] = (),
        **extra: Any,
    ) -> Cable:
        """Build a cable and fit its loss model to published loss points.

        Parameters
        ----------
        name, z0_ohm, velocity_factor
            As in :class:`Cable`.
        loss_table : iterable of (freq_mhz, loss_db_per_100m)
            Published loss points in dB/100 m; empty for a lossless cable (a
            :class:`LosslessCableWarning` is emitted: notch depths will be optimistic).
        **extra
            Any other :class:`Cable` field (dielectric, outer_diameter_mm,
            centre_conductor, cladding_um, loss_sources, ...).

        Notes
        -----
        Minimises ``sum(((k_sqrt sqrt(f) g(f) + k_lin f) / L - 1)**2)`` subject to
        ``k_sqrt, k_lin >= 0`` (non-negative least squares on the relative
        residual, :func:`fit_loss`). For a CCS centre conductor without a
        published cladding thickness the thickness is fitted too (a scan of
        3-300 um) when the table reaches below 5 MHz, where it shows; otherwise
        the model uses ``g = 1`` and says so in ``notes``.
        ``fit_residual_pct`` is the largest ``|model/L - 1|`` in percent.
        """
        points = _check_table(name, loss_table)
        if not points:
            warnings.warn(
                f"cable {name}: no loss table, modelled as lossless; notch depths will be "
                f"optimistic (add loss points in dB/100 m)",
                LosslessCableWarning,
                stacklevel=2,
            )
            return cls(name=name, z0_ohm=z0_ohm, velocity_factor=velocity_factor, **extra)
        if "loss_sources" not in extra:
            extra["loss_sources"] = (LossSource(source=", ".join(extra.get("sources", ())) or
                                                "table", points=points),)
        share = _centre_share(extra.get("kind", "coax"), z0_ohm, velocity_factor,
                              extra.get("inner_diameter_mm"), extra.get("dielectric_diameter_mm"))
        cladding = extra.get("cladding_um")
        if extra.get("centre_conductor") == "ccs" and cladding is None and points[0][0] <= 5.0:
            cladding = _fit_cladding(points, share)
            extra["cladding_um"] = cladding
        k_sqrt, k_lin, residual = fit_loss(points, cladding_um=cladding
                                           if extra.get("centre_conductor") == "ccs" else None,
                                           centre_share=share)
        return cls(
            name=name,
            z0_ohm=z0_ohm,
            velocity_factor=velocity_factor,
            loss_table=points,
            k_sqrt=k_sqrt,
            k_lin=k_lin,
            fit_residual_pct=residual,
            **extra,
        )

    @classmethod
    def from_geometry(
        cls,
        *,
        name: str,
        conductor_diameter_mm: float,
        spacing_mm: float,
        velocity_factor: float,
        dielectric_er: float = 1.0,
        loss_tangent: float = 0.0,
        centre_conductor: str = "copper",
        cladding_um: float | None = None,
        conductor_factor: float = 1.0,
        loss_table: Iterable[Sequence[float]] = (),
        **extra: Any,
    ) -> Cable:
        """A balanced two-wire line from its geometry.

        Parameters
        ----------
        conductor_diameter_mm, spacing_mm : float
            Wire diameter ``d`` and centre-to-centre spacing ``D``, mm (``D > d``).
        velocity_factor : float
            Published VF; the effective permittivity is ``er_eff = 1/VF^2``.
        dielectric_er, loss_tangent : float
            The web or jacket material's permittivity and loss tangent
            (``dielectric_er = 1`` and ``loss_tangent = 0``: air-spaced).
        centre_conductor, cladding_um
            ``"ccs"`` with the cladding thickness for copper-clad-steel wires.
        conductor_factor : float
            Resistance of the real wire over a smooth solid copper one (stranding), >= 1.
        loss_table : iterable of (freq_mhz, loss_db_per_100m)
            Published loss points, kept to compare with (not fitted).

        Notes
        -----
        ``Z0 = (120/sqrt(er_eff)) acosh(D/d)``; conductor loss
        ``alpha_c = R/(2 Z0)`` with ``R = (2 Rs/(pi d)) (D/d)/sqrt((D/d)^2-1)``
        and ``Rs = sqrt(pi f mu0/sigma)``; dielectric loss
        ``alpha_d = k0 er (er_eff - 1) tan(delta) / (2 sqrt(er_eff) (er - 1))``
        (Pozar eq. 3.199) [2]_.
        """
        d = float(conductor_diameter_mm) * 1e-3
        s = float(spacing_mm) * 1e-3
        if not (_finite_positive(d) and _finite_positive(s) and s > d):
            raise CableError(
                f"cable {name}: spacing_mm {spacing_mm!r} must exceed conductor_diameter_mm "
                f"{conductor_diameter_mm!r} (both > 0)"
            )
        er_eff = 1.0 / velocity_factor**2
        z0 = 120.0 / math.sqrt(er_eff) * math.acosh(s / d)
        # Conductor: R at 1 MHz for the pair, then alpha_c in dB/100 m per sqrt(MHz).
        rs_1mhz = math.sqrt(math.pi * 1e6 * MU0 / SIGMA_COPPER)
        ratio = s / d
        r_1mhz = 2.0 * rs_1mhz / (math.pi * d) * ratio / math.sqrt(ratio**2 - 1.0)
        k_sqrt = r_1mhz * conductor_factor / (2.0 * z0) * NEPER_DB * 100.0
        k_lin = 0.0
        if loss_tangent > 0.0 and dielectric_er > 1.0 and er_eff > 1.0:
            fill = (er_eff - 1.0) / (dielectric_er - 1.0)
            k0_1mhz = 2.0 * math.pi * 1e6 / C0
            alpha_d = k0_1mhz * dielectric_er * fill * loss_tangent / (2.0 * math.sqrt(er_eff))
            k_lin = alpha_d * NEPER_DB * 100.0
        points = _check_table(name, loss_table)
        extra.setdefault("loss_sources", ())
        cab = cls(
            name=name,
            z0_ohm=z0,
            velocity_factor=velocity_factor,
            kind="balanced",
            conductor_diameter_mm=float(conductor_diameter_mm),
            spacing_mm=float(spacing_mm),
            centre_conductor=centre_conductor,
            cladding_um=cladding_um,
            k_sqrt=k_sqrt,
            k_lin=k_lin,
            loss_table=points,
            **extra,
        )
        if points:
            f = np.array([p[0] for p in points])
            loss = np.array([p[1] for p in points])
            err = float(np.max(np.abs(cab.loss_db_per_100m(f) / loss - 1.0)) * 100.0)
            cab = _replace(cab, fit_residual_pct=err)
        return cab


def _replace(c: Cable, **changes: Any) -> Cable:
    import dataclasses

    return dataclasses.replace(c, **changes)


def _centre_share(kind: str, z0_ohm: float, vf: float, d_in: float | None,
                  d_diel: float | None) -> float:
    if kind == "balanced":
        return 1.0
    if d_in and d_diel and d_diel > d_in:
        ratio = d_diel / d_in
    else:
        ratio = math.exp(z0_ohm / (60.0 * vf))  # D/d from Z0 = (60/sqrt(er)) ln(D/d)
    return ratio / (ratio + 1.0)


def skin_depth_um(freq_mhz: npt.ArrayLike, sigma: float = SIGMA_COPPER) -> np.ndarray:
    """Skin depth ``1/sqrt(pi f mu0 sigma)``, micrometres (66 um in copper at 1 MHz)."""
    f = np.asarray(freq_mhz, dtype=float) * 1e6
    return 1e6 / np.sqrt(np.pi * f * MU0 * sigma)


def layer_resistance_ratio(x: npt.ArrayLike) -> np.ndarray:
    """``F(x) = (sinh x + sin x)/(cosh x - cos x)``: a copper layer's surface resistance
    over that of thick copper, ``x = 2 t / delta`` (tends to 1 for thick layers, 2/x for thin)."""
    x = np.asarray(x, dtype=float)
    out = np.ones_like(x)
    small = x < 30.0  # beyond, F = 1 to double precision
    xs = x[small]
    out[small] = (np.sinh(xs) + np.sin(xs)) / (np.cosh(xs) - np.cos(xs))
    return out


def _ccs_factor(f_mhz: np.ndarray, cladding_um: float, share: float) -> np.ndarray:
    x = 2.0 * cladding_um / skin_depth_um(f_mhz)
    return (1.0 - share) + share * layer_resistance_ratio(x)


def fit_loss(
    points: Sequence[tuple[float, float]],
    *,
    cladding_um: float | None = None,
    centre_share: float = 1.0,
) -> tuple[float, float, float]:
    """Fit ``L = a sqrt(f) g(f) + b f`` (a, b >= 0) on relative error.

    Parameters
    ----------
    points : sequence of (freq_mhz, loss_db_per_100m)
        At least one point, all values > 0.
    cladding_um, centre_share : float
        CCS cladding thickness and the CCS conductor's share of conductor loss
        (``g = 1`` when ``cladding_um`` is None).

    Returns
    -------
    (k_sqrt, k_lin, fit_residual_pct)

    Notes
    -----
    A table spanning less than a factor of ``NARROW_TABLE_RATIO`` in frequency
    cannot separate the terms: only ``k_sqrt`` is fitted (``k_lin = 0``).
    With two unknowns the non-negative least-squares problem is solved
    exactly by trying each face of the quadrant: the unconstrained
    ``numpy.linalg.lstsq`` solution, then each coefficient alone (clipped at
    0), keeping the feasible one with the smallest residual (the problem is
    convex, so its minimum lies on one of them). This equals
    ``scipy.optimize.nnls`` (tests/test_cables.py checks it on every table)
    without importing scipy.optimize, which took 0.5-0.7 s of every command.
    """
    f = np.array([p[0] for p in points], dtype=float)
    loss = np.array([p[1] for p in points], dtype=float)
    g = np.ones_like(f) if cladding_um is None else _ccs_factor(f, cladding_um, centre_share)
    design = np.column_stack((np.sqrt(f) * g / loss, f / loss))
    if f.max() < NARROW_TABLE_RATIO * f.min():
        # Too narrow a table to tell the two terms apart: conductor loss only (it
        # dominates at HF, where such tables are), not an arbitrary mix.
        col = design[:, 0]
        k_sqrt, k_lin = max(0.0, float(col.sum()) / float(col @ col)), 0.0
    else:
        k_sqrt, k_lin = _nnls2(design, np.ones_like(f))
    model = k_sqrt * np.sqrt(f) * g + k_lin * f
    residual = float(np.max(np.abs(model / loss - 1.0)) * 100.0)
    return float(k_sqrt), float(k_lin), residual


def _fit_cladding(points: Sequence[tuple[float, float]], share: float) -> float:
    """The cladding thickness (on a log grid, 3-300 um) with the least squared relative error."""
    f = np.array([p[0] for p in points], dtype=float)
    loss = np.array([p[1] for p in points], dtype=float)
    best, best_cost = float(_CLADDING_GRID_UM[-1]), math.inf
    for t in _CLADDING_GRID_UM:
        g = _ccs_factor(f, float(t), share)
        a = np.column_stack((np.sqrt(f) * g / loss, f / loss))
        x = np.array(_nnls2(a, np.ones_like(f)))
        cost = float(np.sum((a @ x - 1.0) ** 2))
        if cost < best_cost - 1e-12:
            best, best_cost = float(t), cost
    return best


def _nnls2(a: np.ndarray, b: np.ndarray) -> tuple[float, float]:
    """``argmin |a x - b|`` over ``x >= 0`` for a two-column ``a`` (see :func:`fit_loss`)."""
    candidates = [np.zeros(2)]
    full = np.linalg.lstsq(a, b, rcond=None)[0]
    if np.all(full >= 0.0):
        candidates.append(full)
    for k in (0, 1):
        col = a[:, k]
        norm = float(col @ col)
        if norm > 0.0:
            x = np.zeros(2)
            x[k] = max(0.0, float(col @ b) / norm)
            candidates.append(x)
    best = min(candidates, key=lambda x: float(np.sum((a @ x - b) ** 2)))
    return float(best[0]), float(best[1])


def _finite(x: Any) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)


def _finite_positive(x: Any) -> bool:
    return _finite(x) and x > 0


def _check_table(name: str, table: Iterable[Sequence[float]]) -> tuple[tuple[float, float], ...]:
    points = []
    for i, row in enumerate(table):
        try:
            f, loss = row
        except (TypeError, ValueError):
            raise CableError(
                f"cable {name}: loss_table[{i}] {row!r} must be a (freq_mhz, loss_db_per_100m) "
                f"pair"
            ) from None
        if not _finite_positive(f):
            raise CableError(f"cable {name}: loss_table[{i}] frequency {f!r} must be > 0 MHz")
        if not _finite_positive(loss):
            raise CableError(
                f"cable {name}: loss_table[{i}] loss {loss!r} must be > 0 dB/100 m"
            )
        points.append((float(f), float(loss)))
    points.sort()
    return tuple(points)


# ---------------------------------------------------------------- extrapolation


def extrapolation_note(cable: Any, freqs_mhz: Iterable[float]) -> str | None:
    """One line saying which frequencies lie outside ``cable``'s published loss table.

    ``None`` when every frequency is inside it (or ``cable`` is not a
    :class:`Cable`). Used by ``notchkit cables``, the design and the plan.
    """
    if not isinstance(cable, Cable):
        return None
    f = sorted({round(float(x), 6) for x in freqs_mhz})
    if not f:
        return None
    rng = cable.table_range_mhz
    out = [x for x, e in zip(f, cable.extrapolated(f), strict=True) if e]
    if not out:
        return None
    labels = list(dict.fromkeys(f"{x:.4g}" for x in out))
    shown = ", ".join(labels[:6]) + (" ..." if len(labels) > 6 else "")
    if rng is None:
        return f"cable {cable.name}: no published loss table; loss at {shown} MHz is not modelled"
    return (f"cable {cable.name}: loss at {shown} MHz is extrapolated beyond its published "
            f"table ({rng[0]:g}-{rng[1]:g} MHz); measure the cable if the notch depth matters")


# ---------------------------------------------------------------- the library


def _normalise(name: str) -> str:
    """Fold a type name for lookup: case, spaces, hyphens and a trailing '/U' ignored."""
    key = re.sub(r"[\s\-_]", "", str(name).upper())
    return re.sub(r"/U$", "", key)


def _value(entry: dict, key: str) -> Any:
    """A YAML figure is either a bare value or ``{value: ..., source: ...}``."""
    item = entry.get(key)
    if isinstance(item, dict):
        return item.get("value")
    return item


_FLOAT_KEYS = ("vf_tolerance", "max_voltage_v", "outer_diameter_mm", "inner_diameter_mm",
               "dielectric_diameter_mm", "cladding_um")
_CITED_KEYS = ("z0_ohm", "velocity_factor", "vf_tolerance", "max_voltage_v", "outer_diameter_mm",
               "inner_diameter_mm", "dielectric_diameter_mm", "dielectric", "centre_conductor",
               "cladding_um", "conductor_diameter_mm", "spacing_mm", "dielectric_er",
               "loss_tangent", "max_power_w")


MEMORY = "from memory (recalled, not re-read; never a test's check value)"


def _cite(source: str, source_names: dict[str, str]) -> str:
    """A source key's citation; every "from memory ..." note becomes one "from memory" entry."""
    source = str(source)
    m = re.fullmatch(r"from memory \((.+)\)", source)
    if m and m.group(1) in source_names:
        return source_names[m.group(1)]
    if source.startswith("from memory"):
        return MEMORY
    return source_names.get(source, source)


def _cable_from_entry(entry: dict, source_names: dict[str, str]) -> Cable:
    name = entry["name"]
    points: list[tuple[float, float]] = []
    cited: list[str] = []
    groups: list[LossSource] = []
    published: list[float] = []
    for table in entry.get("loss", ()):
        if table.get("compare_only"):
            continue
        scale = LOSS_UNITS[table["unit"]]
        pts = tuple(sorted((float(f), float(loss) * scale) for f, loss in table["points"]))
        points.extend(pts)
        if not str(table["source"]).startswith("from memory"):
            published.extend(p[0] for p in pts)
        cited.append(table["source"])
        groups.append(LossSource(source=_cite(table["source"], source_names), points=pts))
    for key in _CITED_KEYS:
        item = entry.get(key)
        if isinstance(item, dict) and "source" in item:
            cited.append(item["source"])
    sources = tuple(dict.fromkeys(_cite(s, source_names) for s in cited))
    memory = tuple(
        key for key in _CITED_KEYS
        if isinstance(entry.get(key), dict)
        and str(entry[key].get("source", "")).startswith("from memory")
    ) + (("loss",) if any(str(t.get("source", "")).startswith("from memory")
                          for t in entry.get("loss", ())) else ())
    extra: dict[str, Any] = {
        key: float(_value(entry, key)) for key in _FLOAT_KEYS if _value(entry, key) is not None
    }
    power = _value(entry, "max_power_w")
    if power:
        extra["max_power_w"] = tuple((float(f), float(w)) for f, w in power)
    common = dict(
        name=name,
        velocity_factor=float(_value(entry, "velocity_factor")),
        dielectric=str(_value(entry, "dielectric") or ""),
        sources=sources,
        notes=str(entry.get("notes", "")),
        aliases=tuple(str(a) for a in entry.get("aliases", ())),
        loss_sources=tuple(groups),
        centre_conductor=str(_value(entry, "centre_conductor") or "copper"),
        published_range_mhz=(min(published), max(published)) if published else None,
        from_memory=memory,
    )
    if entry.get("kind") == "balanced":
        extra.pop("cladding_um", None)
        return Cable.from_geometry(
            conductor_diameter_mm=float(_value(entry, "conductor_diameter_mm")),
            spacing_mm=float(_value(entry, "spacing_mm")),
            dielectric_er=float(_value(entry, "dielectric_er") or 1.0),
            loss_tangent=float(_value(entry, "loss_tangent") or 0.0),
            cladding_um=_value(entry, "cladding_um"),
            conductor_factor=float(_value(entry, "conductor_factor") or 1.0),
            loss_table=sorted(points),
            **common,
            **extra,
        )
    return Cable.from_table(
        z0_ohm=float(_value(entry, "z0_ohm")),
        loss_table=points,
        **common,
        **extra,
    )


def _read_library(text: str, origin: str) -> tuple[Cable, ...]:
    import yaml

    # libyaml's safe loader where PyYAML was built with it: the same document, a tenth of
    # the time (the pure-Python parser took about 50 ms of every command).
    try:
        doc = yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f"{origin}:{mark.line + 1}:{mark.column + 1}" if mark else origin
        raise CableError(f"{where}: cables: not valid YAML ({getattr(exc, 'problem', exc)})") from None
    if not isinstance(doc, dict) or not isinstance(doc.get("cables"), list):
        raise CableError(f"{origin}: cables: missing (a cable library is a mapping with a "
                         f"'cables:' list and optional 'sources:')")
    source_names = {key: item["cite"] for key, item in (doc.get("sources") or {}).items()
                    if isinstance(item, dict) and "cite" in item}
    out = []
    for i, entry in enumerate(doc["cables"]):
        try:
            out.append(_cable_from_entry(entry, source_names))
        except CableError as exc:
            raise CableError(f"{origin}: cables[{i}]: {exc}") from None
        except (KeyError, TypeError, ValueError) as exc:
            raise CableError(
                f"{origin}: cables[{i}]: missing or malformed field {exc} (each cable needs "
                f"name, z0_ohm, velocity_factor and loss tables of [freq_mhz, loss] points)"
            ) from None
    return tuple(out)


@lru_cache(maxsize=1)
def _load() -> tuple[Cable, ...]:
    text = resources.files("notchkit").joinpath("data/cables.yaml").read_text(encoding="utf-8")
    return _read_library(text, "notchkit/data/cables.yaml")


@lru_cache(maxsize=8)
def _load_file(path: str, mtime_ns: int) -> tuple[Cable, ...]:
    return _read_library(Path(path).read_text(encoding="utf-8"), path)


def load_library_file(path: str | os.PathLike) -> tuple[Cable, ...]:
    """Read a cable library file (same format as ``data/cables.yaml``).

    Raises
    ------
    CableError
        The file cannot be read or a cable in it is malformed (the message names the file).
    """
    p = Path(path)
    try:
        st = p.stat()
    except OSError as exc:
        raise CableError(f"{p}: cannot read the cable library ({exc.strerror})") from None
    return _load_file(str(p), st.st_mtime_ns)


def user_library_path() -> Path:
    """``$XDG_CONFIG_HOME/notchkit/cables.yaml`` (``~/.config/notchkit/cables.yaml`` by default),
    or the file the user's defaults file names (``cables:``, :mod:`notchkit.defaults`)."""
    from notchkit.defaults import config_dir, load_defaults

    chosen = load_defaults().cables
    return chosen if chosen is not None else config_dir() / USER_LIBRARY_NAME


def site_library_path(site_path: str | os.PathLike) -> Path:
    """The cable library kept next to a site file: ``notchkit-cables.yaml`` in its folder."""
    return Path(site_path).resolve().parent / SITE_LIBRARY_NAME


def site_library(site_path: str | os.PathLike | None) -> tuple[Cable, ...]:
    """Cables of the library file next to ``site_path`` (empty when there is none)."""
    if not site_path:
        return ()
    p = site_library_path(site_path)
    return load_library_file(p) if p.is_file() else ()


def library() -> tuple[Cable, ...]:
    """Every cable type shipped with notchkit, then the user's own library.

    The user's library (:func:`user_library_path`) is read when it exists; a
    type there replaces a shipped type of the same name.
    """
    base = _load()
    p = user_library_path()
    if not p.is_file():
        from notchkit.defaults import load_defaults

        named = load_defaults()
        if named.cables is not None:
            raise CableError(f"{named.path}: cables: {p} is not a file (the personal cable library it names)")
        return base
    own = load_library_file(p)
    keys = {_normalise(c.name) for c in own}
    return tuple(c for c in base if _normalise(c.name) not in keys) + own


def cable_from_def(defn: Any) -> Cable:
    """Build a :class:`Cable` from a site file's cable definition.

    Parameters
    ----------
    defn : notchkit.site.model.CableDef
        ``name``, ``z0_ohm``, ``velocity_factor``, ``loss_table`` ((freq_mhz,
        loss_db_per_100m), ...), optional ``max_voltage_v``, ``outer_diameter_mm``,
        ``dielectric``.
    """
    if isinstance(defn, Cable):
        return defn
    extra = {}
    for key in ("max_voltage_v", "outer_diameter_mm"):
        value = getattr(defn, key, None)
        if value is not None:
            extra[key] = value
    return Cable.from_table(
        name=defn.name,
        z0_ohm=defn.z0_ohm,
        velocity_factor=defn.velocity_factor,
        loss_table=tuple(defn.loss_table),
        dielectric=getattr(defn, "dielectric", "") or "",
        sources=("site file",),
        **extra,
    )


_SIZE_FAMILIES = {
    "200": "foam-240", "240": "foam-240", "400": "foam-400", "500": "foam-400",
    "600": "foam-600", "900": "hardline-7/8",
}
"""Size numbers of trade-style names and the generic library type of about that size."""


def generic_hint(name: str) -> str | None:
    """For a trade-style name (letters and a size number, e.g. ``XYZ-400``), the library's
    generic type of that size; ``None`` when the name has no such size."""
    key = _normalise(name)
    if key.startswith("RG"):
        return None
    m = re.search(r"(\d{3,4})", key)
    if not m:
        return None
    target = _SIZE_FAMILIES.get(m.group(1))
    if target is None:
        return None
    for c in library():
        if _normalise(c.name) == _normalise(target):
            return c.name
    return None


def unknown_cable_hint(name: str, known: Iterable[str]) -> str:
    """The hint of an unknown-cable message: a generic equivalent, or the closest names."""
    generic = generic_hint(name)
    if generic is not None:
        return (f"trade names are not used; the generic type of that size is {generic!r} "
                f"(see `notchkit cables`)")
    names = {_normalise(k): k for k in known}
    close = difflib.get_close_matches(_normalise(name), list(names), n=3, cutoff=0.5)
    if close:
        return f"did you mean {', '.join(names[k] for k in close)}?"
    return "see `notchkit cables` for the known types"


def get_cable(name: str, site_cables: Iterable[Any] = ()) -> Cable:
    """Look a cable type up by name (case, spaces, hyphens and '/U' ignored).

    Parameters
    ----------
    name : str
        Type name or alias, e.g. ``"rg213"``, ``"RG-213/U"`` or ``"ladder line"``.
    site_cables : iterable of Cable or CableDef
        Cables defined in the site file; they take precedence over the library.

    Raises
    ------
    CableError
        Unknown name; the message offers the generic type of a trade-style
        name's size, or the closest known names.
    """
    key = _normalise(name)
    # Site definitions first (they override the library); only the match is built,
    # so a lossless definition warns when it is used, not on every lookup.
    site = list(site_cables)
    for item in reversed(site):
        if _normalise(item.name) == key:
            return item if isinstance(item, Cable) else cable_from_def(item)
    lib = library()
    for c in lib:
        if _normalise(c.name) == key or key in {_normalise(a) for a in c.aliases}:
            return c
    known = [c.name for c in lib] + [item.name for item in site]
    raise CableError(f"cable {name!r} is not a known cable type; {unknown_cable_hint(name, known)}")


# ---------------------------------------------------------------- the table


@dataclass(frozen=True, slots=True, kw_only=True)
class CableRow:
    """One line of the ``notchkit cables`` table: a cable and its loss at the asked frequencies."""

    cable: Cable
    at_mhz: tuple[float, ...]
    loss_db_per_100m: tuple[float, ...]
    loss_db_per_100ft: tuple[float, ...]
    extrapolated: tuple[bool, ...] = ()

    def to_json(self) -> dict[str, Any]:
        """The JSON form: the cable's figures, its loss at ``at_mhz`` and where they come from."""
        c = self.cable
        rng = c.table_range_mhz
        return {
            "type": c.name,
            "kind": c.kind,
            "z0_ohm": c.z0_ohm,
            "velocity_factor": c.velocity_factor,
            "dielectric": c.dielectric or None,
            "centre_conductor": c.centre_conductor,
            "cladding_um": c.cladding_um,
            "outer_diameter_mm": c.outer_diameter_mm,
            "inner_diameter_mm": c.inner_diameter_mm,
            "conductor_diameter_mm": c.conductor_diameter_mm,
            "spacing_mm": c.spacing_mm,
            "max_voltage_v": c.max_voltage_v,
            "max_power_w": [{"freq_mhz": f, "watts": w} for f, w in c.max_power_w],
            "at_mhz": list(self.at_mhz),
            "loss_db_per_100m": list(self.loss_db_per_100m),
            "loss_db_per_100ft": list(self.loss_db_per_100ft),
            "extrapolated": list(self.extrapolated),
            "loss_table_mhz": None if rng is None else [rng[0], rng[1]],
            "k_sqrt": c.k_sqrt,
            "k_lin": c.k_lin,
            "fit_error_pct": c.fit_residual_pct,
            "fit_error_by_source": [{"source": s, "max_error_pct": e}
                                    for s, e in c.fit_error_by_source()],
            "sources": list(c.sources),
            "aliases": list(c.aliases),
        }


def cable_table(
    at_mhz: Iterable[float] = DEFAULT_AT_MHZ, site_cables: Iterable[Any] = ()
) -> tuple[CableRow, ...]:
    """The library's cables with the model loss at each frequency in ``at_mhz``.

    Parameters
    ----------
    at_mhz : iterable of float
        Frequencies, MHz, each within 0.1-6000 MHz.
    site_cables : iterable of Cable or CableDef
        Extra cables to list after the library's.

    Raises
    ------
    CableError
        A frequency outside 0.1-6000 MHz or not a number.
    """
    freqs = tuple(at_mhz)
    lo, hi = VALID_FREQ_MHZ
    if not freqs:
        raise CableError("at_mhz: empty; give at least one frequency in 0.1-6000 MHz")
    for f in freqs:
        if not (_finite(f) and lo <= f <= hi):
            raise CableError(f"at_mhz: {f!r} MHz is outside the model's range {lo:g}-{hi:g} MHz")
    cables = list(library())
    for item in site_cables:
        cables.append(item if isinstance(item, Cable) else cable_from_def(item))
    fs = np.array(freqs, dtype=float)
    return tuple(
        CableRow(
            cable=c,
            at_mhz=tuple(float(x) for x in fs),
            loss_db_per_100m=tuple(float(x) for x in c.loss_db_per_100m(fs)),
            loss_db_per_100ft=tuple(float(x) for x in c.loss_db_per_100ft(fs)),
            extrapolated=tuple(bool(x) for x in c.extrapolated(fs)),
        )
        for c in cables
    )


__all__ = [
    "Cable",
    "CableRow",
    "ExtrapolatedLossWarning",
    "LossSource",
    "LosslessCableWarning",
    "DEFAULT_AT_MHZ",
    "VALID_FREQ_MHZ",
    "cable_from_def",
    "cable_table",
    "extrapolation_note",
    "fit_loss",
    "generic_hint",
    "get_cable",
    "layer_resistance_ratio",
    "library",
    "load_library_file",
    "site_library",
    "site_library_path",
    "skin_depth_um",
    "unknown_cable_hint",
    "user_library_path",
]
