"""The cable library: coax types with published figures, and the loss model.

Each library cable comes from ``notchkit/data/cables.yaml``, where every figure
stands beside the document it was taken from. Loss tables are stored as
published (dB/100 ft or dB/100 m) and converted here. The loss model is the
usual two-term fit

.. math:: L(f) = k_{sqrt} \\sqrt{f} + k_{lin} f

in dB/100 m with f in MHz

(conductor skin-effect loss grows as the square root of frequency, dielectric
loss linearly), fitted by non-negative least squares on relative error so
that low-frequency points count as much as high ones. The model is meant for
0.1 MHz to 6 GHz.

Anything with ``z0_ohm``, ``velocity_factor`` and ``alpha_np_per_m(freq_hz)``
is a medium for :mod:`notchkit.filters`; :class:`Cable` is the one we ship.
"""

from __future__ import annotations

import difflib
import math
import re
import warnings
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from typing import Any

import numpy as np
import numpy.typing as npt

from notchkit.errors import CableError, NotchkitWarning

FT_PER_M = 1.0 / 0.3048
"""Feet per metre (exact by definition of the international foot)."""
NEPER_DB = 20.0 / math.log(10.0)
"""Decibels per neper, 8.686 dB (definition)."""
VALID_FREQ_MHZ = (0.1, 6000.0)
"""Range over which the two-term loss model is meant to be used, MHz."""
DEFAULT_AT_MHZ = (10.0, 100.0, 1000.0)
"""Frequencies of the ``notchkit cables`` table when none are asked for."""

LOSS_UNITS = {"dB/100m": 1.0, "dB/100ft": FT_PER_M, "dB/m": 100.0, "dB/ft": 100.0 * FT_PER_M}
"""Multipliers that turn a published loss figure into dB/100 m."""


class LosslessCableWarning(NotchkitWarning):
    """A cable without a loss table is modelled lossless: notch depths will be optimistic."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Cable:
    """A coaxial cable type as a transmission medium.

    Parameters
    ----------
    name : str
        Type designation, e.g. ``"RG-213"``.
    z0_ohm : float
        Characteristic impedance, ohms (> 0).
    velocity_factor : float
        Velocity of propagation relative to light in vacuum, 0 < VF <= 1.
    dielectric : str
        Dielectric material, e.g. ``"solid PE"``.
    outer_diameter_mm : float or None
        Jacket outer diameter, mm.
    max_voltage_v : float or None
        Maximum operating voltage, V RMS, as published; ``None`` when unpublished.
    vf_tolerance : float or None
        Published tolerance of the velocity factor (absolute, e.g. 0.02).
    loss_table : tuple of (freq_mhz, loss_db_per_100m)
        The published loss points converted to dB/100 m (empty: lossless).
    k_sqrt, k_lin : float
        Loss model coefficients: dB/100 m per sqrt(MHz) and per MHz (>= 0).
    fit_residual_pct : float
        Largest relative error of the fitted model over ``loss_table``, percent.
    sources : tuple of str
        Where the figures come from.
    inner_diameter_mm, dielectric_diameter_mm : float or None
        Centre-conductor and dielectric (core) diameters, mm, where published.
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
                      "dielectric_diameter_mm"):
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

    @property
    def lossless(self) -> bool:
        """True when the model has no loss at all (no loss table was given)."""
        return self.k_sqrt == 0.0 and self.k_lin == 0.0

    def loss_db_per_100m(self, freq_mhz: npt.ArrayLike) -> np.ndarray:
        """Matched-line loss in dB per 100 m.

        Parameters
        ----------
        freq_mhz : array_like
            Frequency, MHz (model meant for 0.1-6000 MHz).

        Returns
        -------
        ndarray
            ``k_sqrt * sqrt(f) + k_lin * f``, same shape as ``freq_mhz``.

        Raises
        ------
        CableError
            A frequency that is negative, NaN or infinite.
        """
        f = np.asarray(freq_mhz, dtype=float)
        ok = np.isfinite(f) & (f >= 0.0)
        if not ok.all():
            bad = float(f[~ok].flat[0])
            raise CableError(f"cable {self.name}: loss asked at {bad:g} MHz "
                             "(allowed: finite frequencies >= 0 MHz)")
        return self.k_sqrt * np.sqrt(f) + self.k_lin * f

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
            Any other :class:`Cable` field (dielectric, outer_diameter_mm, ...).

        Notes
        -----
        Minimises ``sum(((k_sqrt*sqrt(f) + k_lin*f) / L - 1)**2)`` subject to
        ``k_sqrt, k_lin >= 0`` (non-negative least squares on the relative
        residual, :func:`fit_loss`).
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
        k_sqrt, k_lin, residual = fit_loss(points)
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


def fit_loss(points: Sequence[tuple[float, float]]) -> tuple[float, float, float]:
    """Fit ``L = a*sqrt(f) + b*f`` (a, b >= 0) on relative error.

    Parameters
    ----------
    points : sequence of (freq_mhz, loss_db_per_100m)
        At least one point, all values > 0.

    Returns
    -------
    (k_sqrt, k_lin, fit_residual_pct)

    Notes
    -----
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
    design = np.column_stack((np.sqrt(f) / loss, f / loss))
    k_sqrt, k_lin = _nnls2(design, np.ones_like(f))
    model = k_sqrt * np.sqrt(f) + k_lin * f
    residual = float(np.max(np.abs(model / loss - 1.0)) * 100.0)
    return float(k_sqrt), float(k_lin), residual


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


def _cable_from_entry(entry: dict, source_names: dict[str, str]) -> Cable:
    name = entry["name"]
    points: list[tuple[float, float]] = []
    cited: list[str] = []
    for table in entry.get("loss", ()):
        unit = table["unit"]
        scale = LOSS_UNITS[unit]
        for f, loss in table["points"]:
            points.append((float(f), float(loss) * scale))
        cited.append(table["source"])
    for key in ("z0_ohm", "velocity_factor", "vf_tolerance", "max_voltage_v", "outer_diameter_mm",
                "inner_diameter_mm", "dielectric_diameter_mm", "dielectric"):
        item = entry.get(key)
        if isinstance(item, dict) and "source" in item:
            cited.append(item["source"])
    sources = tuple(dict.fromkeys(source_names.get(s, s) for s in cited))
    extra = {
        key: _value(entry, key)
        for key in ("vf_tolerance", "max_voltage_v", "outer_diameter_mm", "inner_diameter_mm",
                    "dielectric_diameter_mm")
        if _value(entry, key) is not None
    }
    return Cable.from_table(
        name=name,
        z0_ohm=float(_value(entry, "z0_ohm")),
        velocity_factor=float(_value(entry, "velocity_factor")),
        loss_table=points,
        dielectric=str(_value(entry, "dielectric") or ""),
        sources=sources,
        notes=str(entry.get("notes", "")),
        **{k: float(v) for k, v in extra.items()},
    )


@lru_cache(maxsize=1)
def _load() -> tuple[Cable, ...]:
    import yaml

    text = resources.files("notchkit").joinpath("data/cables.yaml").read_text(encoding="utf-8")
    # libyaml's safe loader where PyYAML was built with it: the same document, a tenth of
    # the time (the pure-Python parser took about 50 ms of every command).
    doc = yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))
    source_names = {key: item["cite"] for key, item in doc.get("sources", {}).items()}
    return tuple(_cable_from_entry(entry, source_names) for entry in doc["cables"])


def library() -> tuple[Cable, ...]:
    """All cable types shipped with notchkit (loaded once from ``data/cables.yaml``)."""
    return _load()


def cable_from_def(defn: Any) -> Cable:
    """Build a :class:`Cable` from a site file's cable definition.

    Parameters
    ----------
    defn : notchkit.site.model.CableDef
        ``name``, ``z0_ohm``, ``velocity_factor``, ``loss_table`` ((freq_mhz,
        loss_db_per_100m), ...), optional ``max_voltage_v``, ``outer_diameter_mm``,
        ``dielectric``.
    """
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


def get_cable(name: str, site_cables: Iterable[Any] = ()) -> Cable:
    """Look a cable type up by name (case, spaces, hyphens and '/U' ignored).

    Parameters
    ----------
    name : str
        Type name, e.g. ``"rg213"`` or ``"RG-213/U"``.
    site_cables : iterable of Cable or CableDef
        Cables defined in the site file; they take precedence over the library.

    Raises
    ------
    CableError
        Unknown name; the message lists the closest known names.
    """
    key = _normalise(name)
    # Site definitions first (they override the library); only the match is built,
    # so a lossless definition warns when it is used, not on every lookup.
    site = list(site_cables)
    for item in reversed(site):
        if _normalise(item.name) == key:
            return item if isinstance(item, Cable) else cable_from_def(item)
    for c in library():
        if _normalise(c.name) == key:
            return c
    names = {_normalise(c.name): c.name for c in library()}
    names.update({_normalise(item.name): item.name for item in site})
    close = difflib.get_close_matches(key, list(names), n=3, cutoff=0.5)
    hint = (
        f"did you mean {', '.join(names[k] for k in close)}?"
        if close
        else "see `notchkit cables` for the known types"
    )
    raise CableError(f"cable {name!r} is not a known cable type; {hint}")


# ---------------------------------------------------------------- the table


@dataclass(frozen=True, slots=True, kw_only=True)
class CableRow:
    """One line of the ``notchkit cables`` table: a cable and its loss at the asked frequencies."""

    cable: Cable
    at_mhz: tuple[float, ...]
    loss_db_per_100m: tuple[float, ...]
    loss_db_per_100ft: tuple[float, ...]

    def to_json(self) -> dict[str, Any]:
        """The fixed JSON form: ``type``, ``z0_ohm``, ``velocity_factor``, ``loss_db_per_100m``."""
        return {
            "type": self.cable.name,
            "z0_ohm": self.cable.z0_ohm,
            "velocity_factor": self.cable.velocity_factor,
            "loss_db_per_100m": list(self.loss_db_per_100m),
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
    f = np.array(freqs, dtype=float)
    return tuple(
        CableRow(
            cable=c,
            at_mhz=tuple(float(x) for x in f),
            loss_db_per_100m=tuple(float(x) for x in c.loss_db_per_100m(f)),
            loss_db_per_100ft=tuple(float(x) for x in c.loss_db_per_100ft(f)),
        )
        for c in cables
    )


__all__ = [
    "Cable",
    "CableRow",
    "LosslessCableWarning",
    "DEFAULT_AT_MHZ",
    "VALID_FREQ_MHZ",
    "cable_from_def",
    "cable_table",
    "fit_loss",
    "get_cable",
    "library",
]
