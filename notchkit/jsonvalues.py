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


def dumps(doc: object, **kwargs: object) -> str:
    """``json.dumps(doc, allow_nan=False)``; a NaN or infinity anywhere is a clear
    :class:`DesignError` (never ``NaN``/``Infinity`` in the output, never a traceback)."""
    import json

    try:
        return json.dumps(doc, allow_nan=False, **kwargs)  # type: ignore[arg-type]
    except ValueError as exc:
        raise DesignError(f"internal: a non-finite number would be written as JSON ({exc})") from None
