"""The survey's context for every mechanism: the site as arrays, the margin, and the notch
feeds (where a notch goes, or the pass band it would clash with).
"""

from __future__ import annotations

import numpy as np

from notchkit.threats import limits
from notchkit.threats.isolation import C0_M_PER_S, ISOLATION_FLOOR_DB
from notchkit.threats.locations import too_close
from notchkit.threats.paths import SiteArrays
from notchkit.threats.result import NotchFeed


class _Ctx:
    """Shared state of one survey run."""

    def __init__(self, sa: SiteArrays, margin: float):
        self.sa = sa
        self.margin = margin
        lim = sa.physical.limits
        self.ceiling = limits.stub_ceiling_db(
            lim.max_stub_rejection_db, getattr(sa.physical, "depth_ceiling_db", None), lim.max_stubs
        )
        self.names = sa.names
        self.d = np.hypot(
            np.hypot(sa.x[:, None] - sa.x[None, :], sa.y[:, None] - sa.y[None, :]),
            sa.h[:, None] - sa.h[None, :],
        ).tolist()
        # a notch is checked against the bands of the operating choice that asks for it;
        # build_filters makes a band-switched set when one filter cannot pass every band
        self.pass_bands = [sa.unit_pass_bands(i) for i in range(len(sa.names))]
        self._iso_cache: dict[tuple, str] = {}
        self._clash_cache: dict[tuple, tuple[float, float] | None] = {}
        self._feeds: dict[tuple, list] = {}
        self._im: dict[tuple[int, int], list] = {}
        self.supp = {}
        for i, r in enumerate(sa.site.radios):
            if r.tx is None:
                continue
            if r.tx.harmonic_suppression_dbc is not None:
                self.supp[i] = (float(r.tx.harmonic_suppression_dbc), "radio's harmonic_suppression_dbc")
            else:
                self.supp[i] = limits.spurious_suppression_dbc(r.tx.band.centre_mhz, r.tx.power_w)

    def iso_text(self, a: int, b: int, f: float, iso: float, method: int) -> str:
        """Isolation description, cached on what changes its wording."""
        key = (a, b, method, iso <= ISOLATION_FLOOR_DB, self.d[a][b] < C0_M_PER_S / (f * 1e6))
        text = self._iso_cache.get(key)
        if text is None:
            text = self._iso_cache[key] = self.sa.describe_isolation(a, b, f, iso, method)
        return text

    def clash(self, radio: int, lo: float, hi: float):
        """The pass band of radio's filter that a notch [lo, hi] is too close to, or None."""
        key = (radio, lo, hi)
        if key not in self._clash_cache:
            self._clash_cache[key] = too_close(lo, hi, self.pass_bands[radio])
        return self._clash_cache[key]

    def feed(self, radio: int, side: str, lo: float, hi: float, required: float, reason: str):
        """Ask radio's filter for a notch; returns its location, or the pass band it clashes with.

        A notch deeper than the stub ceiling is not asked of stubs: ``(None, None)``.
        """
        clash = self.clash(radio, lo, hi)
        if clash is not None:
            return None, clash
        if required > self.ceiling:
            return None, None
        r = self.sa.site.radios[radio]
        if r.tx is not None and r.rx is not None:
            # A transceiver has one feedline, so one filter at its radio port carries
            # both its transmit- and receive-side notches; "tx" because its power flows through.
            side = "tx"
        phys = int(self.sa.radio_of[radio])
        band = self.sa.op.labels[radio]
        entry = self._feeds.get((phys, side, lo, hi, band))
        if entry is None:
            self._feeds[(phys, side, lo, hi, band)] = [required, {reason: None}, {band: None}]
        else:
            entry[0] = max(entry[0], required)
            entry[1].setdefault(reason, None)
            entry[2].setdefault(band, None)
        return (self.sa.radio_names[radio], side), None

    def feed_im(
        self, mixer: int, other: int, required: float, product: str, victim: int, count: int = 1
    ) -> None:
        """IM notches are aggregated per (mixer, other transmitter): worst depth and a count."""
        if required > self.ceiling:
            return
        entry = self._im.get((mixer, other))
        if entry is None:
            self._im[(mixer, other)] = [required, count, product, victim]
        else:
            entry[1] += count
            if required > entry[0]:
                entry[0], entry[2], entry[3] = required, product, victim

    # -- the operating layer's filters for the mechanisms (survey/operating.py) --
    def combos_ok(self, units: np.ndarray) -> np.ndarray:
        """Rows of transmitter units that can be active together (distinct radios, one scenario)."""
        return self.sa.op.combos_ok(units)

    def victims_ok(self, units: np.ndarray, victim: np.ndarray) -> np.ndarray:
        """Victim units that can be active with every unit of their row."""
        return self.sa.op.victims_ok(units, victim)

    def all_feeds(self) -> list[NotchFeed]:
        names = self.sa.radio_names
        labels = self.sa.op.labels
        out = [
            NotchFeed(radio=self.sa.physical.radios[r].name, side=side, lo_mhz=lo, hi_mhz=hi,
                      required_db=req, reason="; ".join(reasons), bands=tuple(b for b in bands if b))
            for (r, side, lo, hi, _), (req, reasons, bands) in self._feeds.items()
        ]  # fmt: skip
        for (m, o), (req, count, product, v) in self._im.items():
            more = f" and {count - 1} more" if count > 1 else ""
            out.append(
                NotchFeed(
                    radio=names[m], side="tx", lo_mhz=float(self.sa.tx_lo[o]),
                    hi_mhz=float(self.sa.tx_hi[o]), required_db=req,
                    reason=f"{self.names[o]} entering {self.names[m]}'s output stage: IM {product} "
                    f"into {self.names[v]}{more}",
                    bands=(labels[m],) if labels[m] else (),
                )
            )  # fmt: skip
        return out
