"""What a filter must do: the hand-off from the survey to the solver.

The survey produces :class:`FilterRequirement` objects from a site; the ad-hoc
``notchkit design --pass/--notch`` command builds them directly. The solver
knows nothing else about sites.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from notchkit.site.model import Band


@dataclass(frozen=True, slots=True, kw_only=True)
class NotchSpec:
    """A band to reject, by at least ``required_db`` of attenuation over the whole band."""

    lo_mhz: float
    hi_mhz: float
    required_db: float

    @property
    def band(self) -> Band:
        return Band(lo_mhz=self.lo_mhz, hi_mhz=self.hi_mhz)


@dataclass(frozen=True, slots=True, kw_only=True)
class FilterRequirement:
    """One filter to design.

    ``radio``/``side`` say where it goes (``None`` for an ad-hoc design);
    ``pass_bands`` must see low insertion loss and SWR; every notch must be met.
    ``power_w``/``power_mhz`` is the largest carrier that flows through the
    filter (the radio's own transmitter for a ``tx`` filter or a transceiver),
    used for the voltage, current and heat checks; ``None`` when none does.
    """

    radio: str | None
    side: str | None
    pass_bands: tuple[Band, ...]
    notches: tuple[NotchSpec, ...]
    cable: str
    power_w: float | None = None
    power_mhz: float | None = None
    reasons: tuple[str, ...] = ()
    """Short human-readable reasons, one per notch (which threat it removes)."""
    protects: str | None = None
    """Whose reception the filter guards: ``"receiver"`` (its own radio's), ``"others"``
    (other radios', from what this one sends) or ``"both"``; ``None``: not known. A
    transceiver's one filter sits at its radio port (``side`` ``"tx"``) whatever it guards."""
    band_use: tuple[tuple[str, tuple[int, ...]], ...] = ()
    """For a radio that works several bands one at a time: (band, indices of the
    notches needed while it works that band). The one filter passes every band; a
    stub whose notch a band does not need may be switched out on that band."""

    @property
    def switched_band(self) -> str | None:
        """The band a band-switched filter is in line on (one filter per band), else ``None``."""
        return self.band_use[0][0] if len(self.band_use) == 1 else None

    @property
    def label(self) -> str:
        """Where the filter goes and, at a radio port, for whom: ``rx filter at wx-alert``,
        ``tx filter at fire-paging``, ``filter at net-70cm, for its receiver`` (a
        transceiver's filter that guards only its own reception)."""
        label = filter_label(self.radio, self.side, self.protects)
        return label if self.switched_band is None else f"{label}, on {self.switched_band}"


def guarded(radio: str | None, victims: Iterable[str]) -> str | None:
    """Whose reception a filter at ``radio`` guards, from the victims of the threats it serves:
    ``"receiver"``, ``"others"``, ``"both"`` or ``None`` (no threat)."""
    names = set(victims)
    own, others = radio in names, bool(names - {radio})
    return {(True, True): "both", (True, False): "receiver", (False, True): "others"}.get((own, others))


def filter_label(radio: str | None, side: str | None, protects: str | None = None) -> str:
    """``rx filter at wx-alert``, ``tx filter at fire-paging``, ``filter at net-70cm, for its
    receiver``: the one wording of a filter's place (design, plan, verify)."""
    if radio is None:
        return "ad-hoc filter"
    if side == "tx" and protects in ("receiver", "both"):
        whom = "its receiver" if protects == "receiver" else "its receiver and the others"
        return f"filter at {radio}, for {whom}"
    return f"{side} filter at {radio}" if side else f"filter at {radio}"
