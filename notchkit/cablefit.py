"""The cable loss fit: ``L = k_sqrt sqrt(f) g(f) + k_lin f`` on a published table (see
:mod:`notchkit.cables` for the model), the copper-clad-steel layer, and table checks.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np
import numpy.typing as npt

from notchkit.errors import CableError

NARROW_TABLE_RATIO = 4.0
"""A table spanning less than this frequency ratio fits the conductor term only."""
MU0 = 4e-7 * math.pi
"""Vacuum permeability, H/m (the pre-2019 defined value; the 2019 SI value differs by 1e-10)."""
SIGMA_COPPER = 5.8e7
"""Conductivity of annealed copper, S/m (International Annealed Copper Standard, 58 MS/m)."""
_CLADDING_GRID_UM = np.geomspace(3.0, 300.0, 121)


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
