"""What ``notchkit check`` reports about a good site file, as one typed result.

:func:`check_site` reads a site file (every problem raises :class:`SiteError`,
as :func:`notchkit.site.load_site` does) and returns a :class:`SiteCheck`: the
rows the terminal summary prints and the same values as JSON
(``notchkit check --json``).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from typing import Any

from notchkit.report.summary import summary_html, summary_repr
from notchkit.site.model import Band, Radio, Site


def mhz_text(f: float) -> str:
    """A frequency with the decimals it needs (at most 4, at least 1): 146.52, 446.0."""
    text = f"{f:.4f}".rstrip("0")
    return text + "0" if text.endswith(".") else text


def band_text(band: Band) -> str:
    if band.lo_mhz == band.hi_mhz:
        return mhz_text(band.lo_mhz)
    return f"{mhz_text(band.lo_mhz)}-{mhz_text(band.hi_mhz)}"


def bands_text(bands: tuple[Band, ...]) -> str:
    """Every band a radio works one at a time: ``3.5-4.0, 7.0-7.3``."""
    return ", ".join(band_text(b) for b in bands)


def _choices(part: Any) -> tuple[Band, ...]:
    choices = getattr(part, "choices", None)
    return tuple(choices) if choices else (part.band,)


@dataclass(frozen=True, slots=True, kw_only=True)
class RadioRow:
    """One radio as the check summary shows it."""

    name: str
    role: str
    """``"tx"``, ``"rx"`` or ``"both"``."""
    mhz: str
    tx_mhz: tuple[float, float] | None
    """The first (or only) transmit band."""
    rx_mhz: tuple[float, float] | None
    tx_bands_mhz: tuple[tuple[float, float], ...] = ()
    """Every transmit band or channel, worked one at a time (one entry for most radios)."""
    rx_bands_mhz: tuple[tuple[float, float], ...] = ()
    power_w: float | None
    antenna_m: tuple[float, float, float]
    """x, y, height in metres."""
    gain_dbi: float
    feedline: tuple[str, float] | None
    """Cable name and length in metres."""
    stub_cable: str

    @classmethod
    def from_radio(cls, r: Radio, default_cable: str) -> RadioRow:
        role = "both" if r.tx and r.rx else ("tx" if r.tx else "rx")
        tx_b = _choices(r.tx) if r.tx else ()
        rx_b = _choices(r.rx) if r.rx else ()
        if tx_b and rx_b:
            mhz = bands_text(tx_b) if tx_b == rx_b else f"tx {bands_text(tx_b)} / rx {bands_text(rx_b)}"
        else:
            mhz = bands_text(tx_b or rx_b) or "-"
        a = r.antenna
        return cls(
            name=r.name, role=role, mhz=mhz,
            tx_mhz=(r.tx.band.lo_mhz, r.tx.band.hi_mhz) if r.tx else None,
            rx_mhz=(r.rx.band.lo_mhz, r.rx.band.hi_mhz) if r.rx else None,
            tx_bands_mhz=tuple((b.lo_mhz, b.hi_mhz) for b in tx_b),
            rx_bands_mhz=tuple((b.lo_mhz, b.hi_mhz) for b in rx_b),
            power_w=r.tx.power_w if r.tx else None,
            antenna_m=(a.x_m, a.y_m, a.height_m), gain_dbi=a.gain_dbi,
            feedline=(r.feedline.cable, r.feedline.length_m) if r.feedline else None,
            stub_cable=r.stub_cable or default_cable,
        )

    def to_json(self) -> dict[str, Any]:
        return {
            "name": self.name, "role": self.role,
            "tx_mhz": list(self.tx_mhz) if self.tx_mhz else None,
            "rx_mhz": list(self.rx_mhz) if self.rx_mhz else None,
            "tx_bands_mhz": [list(b) for b in self.tx_bands_mhz],
            "rx_bands_mhz": [list(b) for b in self.rx_bands_mhz],
            "power_w": self.power_w,
            "antenna": {"x_m": self.antenna_m[0], "y_m": self.antenna_m[1], "height_m": self.antenna_m[2],
                        "gain_dbi": self.gain_dbi},
            "feedline": {"cable": self.feedline[0], "length_m": self.feedline[1]} if self.feedline else None,
            "stub_cable": self.stub_cable,
        }


@dataclass(frozen=True, slots=True, kw_only=True)
class SiteCheck:
    """A site file that was read without a problem, summarised (``notchkit check``)."""

    __repr__ = summary_repr
    _repr_html_ = summary_html

    site: Site
    radios: tuple[RadioRow, ...]
    cautions: tuple[str, ...]
    """The safety caution lines when the site has transmitters (empty otherwise)."""

    @property
    def name(self) -> str:
        return self.site.name

    @property
    def path(self) -> str:
        return self.site.path

    @property
    def cable(self) -> str:
        return self.site.cable

    @property
    def couplings(self) -> tuple[Any, ...]:
        return self.site.couplings

    @property
    def max_power_w(self) -> float | None:
        powers = [r.power_w for r in self.radios if r.power_w is not None]
        return max(powers) if powers else None

    def to_json(self) -> dict[str, Any]:
        s = self.site
        lim, al = s.limits, s.allowances
        return {
            "site": s.name,
            "file": s.path,
            "ok": True,
            "problems": [],
            "default_cable": s.cable,
            "radios": [r.to_json() for r in self.radios],
            "couplings": [{"a": c.a, "b": c.b, "isolation_db": c.isolation_db, "freq_mhz": c.freq_mhz}
                          for c in s.couplings],
            "cables": [{"name": c.name, "z0_ohm": c.z0_ohm, "velocity_factor": c.velocity_factor,
                        "loss_points": len(c.loss_table)} for c in s.cables],
            "limits": {"max_insertion_loss_db": lim.max_insertion_loss_db, "max_swr": lim.max_swr,
                       "rejection_margin_db": lim.rejection_margin_db, "max_stubs": lim.max_stubs,
                       "max_total_cable_m": lim.max_total_cable_m},
            "allowances": {"tee_allowance_m": al.tee_allowance_m, "trim_margin_pct": al.trim_margin_pct,
                           "cut_tolerance_mm": al.cut_tolerance_mm},
            "max_harmonic": s.max_harmonic,
            "cautions": list(self.cautions),
        }


def _cautions(site: Site) -> tuple[str, ...]:
    powers = [r.tx.power_w for r in site.transmitters if r.tx]
    if not powers:
        return ()
    return (
        f"Caution: transmitters up to {max(powers):g} W. Open stub ends and tees carry high RF voltage;",
        "keep clear of antennas while transmitting; follow local codes and licensed practice.",
    )


def site_check(site: Site) -> SiteCheck:
    """The check summary of a site already read."""
    return SiteCheck(site=site, radios=tuple(RadioRow.from_radio(r, site.cable) for r in site.radios),
                     cautions=_cautions(site))


def check_site(path: str | os.PathLike[str]) -> SiteCheck:
    """Read a site file and summarise it: the library side of ``notchkit check``.

    Raises
    ------
    SiteError
        Every problem in the file, each ``FILE:LINE:COL: field.path: what is wrong (what is allowed)``.
    """
    from notchkit.site.loader import load_site

    return site_check(load_site(path))
