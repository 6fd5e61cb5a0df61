"""Finite floats for the JSON outputs (``json.dumps(..., allow_nan=False)`` must succeed)."""

from __future__ import annotations

import math

from notchkit.errors import DesignError


def finite(x: float, what: str, *, clip_inf: bool = False, digits: int | None = None) -> float:
    """``x`` as a plain finite float for JSON.

    NaN is always a bug and raises; an infinity raises too unless ``clip_inf``,
    where it becomes +-1e300 (an attenuation or margin can legitimately be
    unbounded). ``digits`` rounds.
    """
    x = float(x)
    if not math.isfinite(x):
        if math.isnan(x) or not clip_inf:
            raise DesignError(f"internal: non-finite value {x!r} in {what}")
        x = math.copysign(1e300, x)
    return round(x, digits) if digits is not None else x
