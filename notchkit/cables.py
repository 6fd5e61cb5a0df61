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

import math
import warnings
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import numpy.typing as npt

from notchkit.cablefit import (
    MU0,
    SIGMA_COPPER,
    _ccs_factor,
    _check_table,
    _finite,
    _finite_positive,
    _fit_cladding,
    fit_loss,
)
from notchkit.errors import CableError, NotchkitWarning

FT_PER_M = 1.0 / 0.3048
"""Feet per metre (exact by definition of the international foot)."""
NEPER_DB = 20.0 / math.log(10.0)
"""Decibels per neper, 8.686 dB (definition)."""
VALID_FREQ_MHZ = (0.1, 6000.0)
"""Range over which the loss model may be evaluated at all, MHz."""
DEFAULT_AT_MHZ = (1.8, 14.0, 146.0, 446.0)
"""Frequencies of the ``notchkit cables`` table when none are asked for."""
EDGE_SLACK = 0.02
"""A frequency within 2 % of a table's end counts as inside it."""

C0 = 299_792_458.0
"""Speed of light in vacuum, m/s (SI definition)."""

LOSS_UNITS = {"dB/100m": 1.0, "dB/100ft": FT_PER_M, "dB/m": 100.0, "dB/ft": 100.0 * FT_PER_M}
"""Multipliers that turn a published loss figure into dB/100 m."""

USER_LIBRARY_NAME = "cables.yaml"
"""File name of the user's cable library under ``$XDG_CONFIG_HOME/notchkit/``."""
SITE_LIBRARY_NAME = "notchkit-cables.yaml"
"""File name of a cable library kept next to a site file (same format as the user library)."""


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


# The library files and the table live in notchkit.cablelib, which imports the types
# above; their names stay notchkit.cables's (and so do the fit's, from notchkit.cablefit).
from notchkit.cablefit import NARROW_TABLE_RATIO as NARROW_TABLE_RATIO  # noqa: E402
from notchkit.cablefit import layer_resistance_ratio as layer_resistance_ratio  # noqa: E402
from notchkit.cablefit import skin_depth_um as skin_depth_um  # noqa: E402
from notchkit.cablelib import MEMORY as MEMORY  # noqa: E402
from notchkit.cablelib import CableRow as CableRow  # noqa: E402
from notchkit.cablelib import _cable_from_entry as _cable_from_entry  # noqa: E402
from notchkit.cablelib import _normalise as _normalise  # noqa: E402
from notchkit.cablelib import cable_from_def as cable_from_def  # noqa: E402
from notchkit.cablelib import cable_table as cable_table  # noqa: E402
from notchkit.cablelib import generic_hint as generic_hint  # noqa: E402
from notchkit.cablelib import get_cable as get_cable  # noqa: E402
from notchkit.cablelib import library as library  # noqa: E402
from notchkit.cablelib import load_library_file as load_library_file  # noqa: E402
from notchkit.cablelib import site_library as site_library  # noqa: E402
from notchkit.cablelib import site_library_path as site_library_path  # noqa: E402
from notchkit.cablelib import unknown_cable_hint as unknown_cable_hint  # noqa: E402
from notchkit.cablelib import user_library_path as user_library_path  # noqa: E402

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
