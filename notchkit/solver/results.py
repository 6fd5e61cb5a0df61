"""The solver's results: the verified figures of each band, what is missing, the alternatives."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from notchkit.filters import Filter

# ---------------------------------------------------------------- results


@dataclass(frozen=True, slots=True, kw_only=True)
class PassResult:
    """Verified figures of one pass band (dense sweep, edge to edge)."""

    lo_mhz: float
    hi_mhz: float
    worst_insertion_loss_db: float
    worst_insertion_loss_mhz: float
    worst_swr: float
    worst_swr_mhz: float
    max_insertion_loss_db: float
    max_swr: float
    meets: bool


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchResult:
    """Verified figures of one notch band (dense sweep, edge to edge)."""

    lo_mhz: float
    hi_mhz: float
    required_db: float
    worst_attenuation_db: float
    worst_mhz: float
    margin_db: float
    """``worst_attenuation_db - required_db`` (negative: short by that much)."""
    met_lo_mhz: float | None
    met_hi_mhz: float | None
    """The widest stretch of the band where the requirement is met (``None``: nowhere)."""
    meets: bool


@dataclass(frozen=True, slots=True, kw_only=True)
class Shortfall:
    """What is missing in one band: ``missing_db`` more is needed."""

    band: str
    """``"pass"`` or ``"notch"``."""
    lo_mhz: float
    hi_mhz: float
    quantity: str
    """``"attenuation"`` (dB), ``"insertion_loss"`` (dB) or ``"swr"``."""
    required: float
    achieved: float
    missing_db: float
    """Rejection missing (attenuation), insertion loss in excess, or return loss
    missing for the SWR limit, in dB."""


@dataclass(frozen=True, slots=True, kw_only=True)
class Alternative:
    """Another design the solver verified, for a user who weighs stubs, cable and yield."""

    arrangement: str
    n_stubs: int
    total_cable_m: float
    margin_db: float
    meets: bool
    build_yield: float | None


@dataclass(frozen=True, slots=True, kw_only=True)
class Solution:
    """The solver's answer for one requirement.

    ``verify_freq_hz``, ``s21`` and ``s11`` are the dense verification sweep the
    figures come from (bands concatenated in order: pass bands, then notches).
    """

    filter: Filter
    meets: bool
    passes: tuple[PassResult, ...]
    notches: tuple[NotchResult, ...]
    margin_db: float
    """Smallest notch margin in dB (negative: the largest shortfall); ``inf``
    when there is no notch."""
    shortfall: tuple[Shortfall, ...]
    advice: tuple[str, ...]
    verify_freq_hz: NDArray[np.float64] = field(compare=False, repr=False)
    s21: NDArray[np.complex128] = field(compare=False, repr=False)
    s11: NDArray[np.complex128] = field(compare=False, repr=False)
    z_system: float = 50.0
    max_total_cable_m: float = 0.0
    candidates_evaluated: int = 0
    build_yield: float | None = None
    """Solver's estimate of the share of builds meeting every requirement (``None``:
    the design does not meet as designed)."""
    yield_target: float = 0.9
    alternatives: tuple[Alternative, ...] = ()

    @property
    def n_stubs(self) -> int:
        return len(self.filter.stubs)

    @property
    def total_cable_m(self) -> float:
        return self.filter.total_cable_m
