"""The site as arrays: positions, feedline losses, powers, bands and thresholds.

:class:`SiteArrays` turns a :class:`~notchkit.site.model.Site` into numpy arrays
indexed by radio, so that every path (feedline loss + antenna isolation +
feedline loss) of many threats is evaluated in one call.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from notchkit.errors import Problem, SiteError, UsageError
from notchkit.site.model import Band, Radio, Site
from notchkit.survey import limits
from notchkit.survey.isolation import describe_estimate, estimate_isolation_db

MIN_EMISSION_MHZ = 1e-6
"""Lowest frequency an emission interval is clipped to, so logarithms stay finite."""


def emission(band: Band, bandwidth_khz: float) -> tuple[float, float]:
    """A band widened by half a channel bandwidth at each edge, in MHz (lo clipped > 0)."""
    w = band.widened(bandwidth_khz)
    return max(w.lo_mhz, MIN_EMISSION_MHZ), w.hi_mhz


class SiteArrays:
    """Per-radio arrays of a site (index = position in ``site.radios``)."""

    def __init__(self, site: Site):
        validate(site)
        self.site = site
        radios = site.radios
        self.names = tuple(r.name for r in radios)
        n = len(radios)
        self.x = np.array([r.antenna.x_m for r in radios], dtype=float)
        self.y = np.array([r.antenna.y_m for r in radios], dtype=float)
        self.h = np.array([r.antenna.height_m for r in radios], dtype=float)
        self.g = np.array([r.antenna.gain_dbi for r in radios], dtype=float)
        self.measured = np.full((n, n), np.nan)
        self.measured_text: dict[tuple[int, int], str] = {}
        index = {name: i for i, name in enumerate(self.names)}
        for c in site.couplings:
            if c.a in index and c.b in index:
                i, j = index[c.a], index[c.b]
                self.measured[i, j] = self.measured[j, i] = c.isolation_db
                at = getattr(c, "freq_mhz", None)
                text = f"measured {c.isolation_db:g} dB" + (f" at {at:g} MHz" if at else "")
                self.measured_text[(i, j)] = self.measured_text[(j, i)] = text
        self.notes: list[str] = []
        self._feeds = self._feedlines(radios, site)
        nan = np.full(n, np.nan)
        self.p_dbm = nan.copy()
        self.tx_lo, self.tx_hi, self.rx_lo, self.rx_hi = nan.copy(), nan.copy(), nan.copy(), nan.copy()
        self.rx_threshold = nan.copy()
        self.rx_floor = nan.copy()
        self.rx_blocking = nan.copy()
        self.rx_bandwidth_hz = nan.copy()
        self.rx_threshold_source: list[str] = [""] * n
        self.rx_blocking_source: list[str] = [""] * n
        for i, r in enumerate(radios):
            if r.tx is not None:
                self.p_dbm[i] = 10.0 * math.log10(r.tx.power_w * 1000.0)
                self.tx_lo[i], self.tx_hi[i] = emission(r.tx.band, r.tx.bandwidth_khz)
            if r.rx is not None:
                rx = r.rx
                self.rx_lo[i], self.rx_hi[i] = emission(rx.band, rx.bandwidth_khz)
                self.rx_bandwidth_hz[i] = rx.bandwidth_khz * 1e3
                floor = limits.noise_floor_dbm(rx.noise_figure_db, rx.bandwidth_khz)
                self.rx_floor[i] = floor
                if rx.sensitivity_dbm is not None:
                    self.rx_threshold[i] = rx.sensitivity_dbm
                    self.rx_threshold_source[i] = "sensitivity_dbm"
                else:
                    self.rx_threshold[i] = floor
                    self.rx_threshold_source[i] = (
                        f"noise floor kTB {limits.KTB_DBM_PER_HZ:.2f} dBm/Hz + NF "
                        f"{rx.noise_figure_db:g} dB + 10log({rx.bandwidth_khz:g} kHz)"
                    )
                if rx.blocking_dbm is not None:
                    self.rx_blocking[i] = rx.blocking_dbm
                    self.rx_blocking_source[i] = "blocking_dbm"
                else:
                    self.rx_blocking[i] = limits.DEFAULT_BLOCKING_DBM
                    self.rx_blocking_source[i] = (
                        f"default blocking {limits.DEFAULT_BLOCKING_DBM:g} dBm (documented default)"
                    )

    # ------------------------------------------------------------ feedlines
    def _feedlines(self, radios: tuple[Radio, ...], site: Site) -> dict[int, tuple[Any, float]]:
        feeds: dict[int, tuple[Any, float]] = {}
        missing = []
        cache: dict[str, object] = {}
        for i, r in enumerate(radios):
            if r.feedline is None:
                missing.append(r.name)
                continue
            if r.feedline.length_m == 0:
                continue
            if r.feedline.cable not in cache:
                from notchkit.cables import get_cable

                cache[r.feedline.cable] = get_cable(r.feedline.cable, site.cables)
            feeds[i] = (cache[r.feedline.cable], r.feedline.length_m)
        if missing:
            self.notes.append(
                "no feedline given (0 dB feedline loss assumed) for: " + ", ".join(missing)
            )
        return feeds

    def feed_loss_db(self, radio: np.ndarray, freq_mhz: np.ndarray) -> np.ndarray:
        """Feedline loss (dB) of radio[k] at freq_mhz[k]."""
        out = np.zeros(np.shape(freq_mhz), dtype=float)
        for i, (cable, length_m) in self._feeds.items():
            m = radio == i
            if np.any(m):
                out[m] = cable.loss_db_per_100m(freq_mhz[m]) * (length_m / 100.0)
        return out

    # ------------------------------------------------------------ isolation
    def isolation_db(
        self, a: np.ndarray, b: np.ndarray, freq_mhz: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Antenna isolation a->b at freq: measured where given (method 0), else estimated."""
        dh = np.hypot(self.x[a] - self.x[b], self.y[a] - self.y[b])
        dv = np.abs(self.h[a] - self.h[b])
        est, method = estimate_isolation_db(freq_mhz, dh, dv, self.g[a], self.g[b])
        meas = self.measured[a, b]
        have = ~np.isnan(meas)
        return np.where(have, meas, est), np.where(have, 0, method)

    def path_db(
        self, a: np.ndarray, b: np.ndarray, freq_mhz: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Total loss a->b: both feedlines and the antenna isolation; (total, iso, method)."""
        a = np.asarray(a)
        b = np.asarray(b)
        f = np.asarray(freq_mhz, dtype=float)
        iso, method = self.isolation_db(a, b, f)
        total = self.feed_loss_db(a, f) + iso + self.feed_loss_db(b, f)
        return total, iso, method

    def describe_isolation(self, a: int, b: int, freq_mhz: float, iso: float, method: int) -> str:
        if method == 0:
            return self.measured_text[(a, b)]
        dh = float(np.hypot(self.x[a] - self.x[b], self.y[a] - self.y[b]))
        dv = float(abs(self.h[a] - self.h[b]))
        return describe_estimate(method, freq_mhz, dh, dv, iso)

    def pass_bands(self, i: int) -> tuple[tuple[float, float], ...]:
        """The bands radio i's own filter must pass: its tx and rx emission intervals, merged."""
        bands = []
        if not math.isnan(self.tx_lo[i]):
            bands.append((float(self.tx_lo[i]), float(self.tx_hi[i])))
        if not math.isnan(self.rx_lo[i]):
            bands.append((float(self.rx_lo[i]), float(self.rx_hi[i])))
        bands.sort()
        merged: list[tuple[float, float]] = []
        for lo, hi in bands:
            if merged and lo <= merged[-1][1]:
                merged[-1] = (merged[-1][0], max(merged[-1][1], hi))
            else:
                merged.append((lo, hi))
        return tuple(merged)


def check_max_harmonic(value: object) -> int:
    """Validate a harmonic limit: an integer >= 1 (1: harmonics not evaluated)."""
    if isinstance(value, bool) or not isinstance(value, int | np.integer) or not 1 <= value <= 20:
        raise UsageError(f"max_harmonic: {value!r} is not allowed (an integer from 1 to 20, as a site "
                         "file allows)")
    return int(value)


def validate(site: Site) -> None:
    """Refuse values that would make the survey's numbers non-finite (SiteError)."""
    problems: list[Problem] = []

    def bad(field: str, value: object, allowed: str) -> None:
        problems.append(Problem(site.path or "<site>", 0, 0, field, f"{value!r} {allowed}"))

    def finite(v: object) -> bool:
        return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)

    names = [r.name for r in site.radios]
    for i, r in enumerate(site.radios):
        where = f"radios[{i}]"
        if names.count(r.name) > 1:
            bad(f"{where}.name", r.name, "is used twice (names must be unique)")
        for side in ("tx", "rx"):
            part = getattr(r, side)
            if part is None:
                continue
            b = part.band
            if not (finite(b.lo_mhz) and finite(b.hi_mhz) and 0 < b.lo_mhz <= b.hi_mhz):
                bad(f"{where}.{side}.band", (b.lo_mhz, b.hi_mhz), "must be finite, 0 < lo <= hi MHz")
            if not (finite(part.bandwidth_khz) and part.bandwidth_khz > 0):
                bad(f"{where}.{side}.bandwidth_khz", part.bandwidth_khz, "must be > 0")
        if r.tx is not None and not (finite(r.tx.power_w) and r.tx.power_w > 0):
            bad(f"{where}.tx.power_w", r.tx.power_w, "must be > 0 W")
        optional = []
        if r.tx is not None:
            optional += [("tx", k) for k in ("harmonic_suppression_dbc", "noise_dbc_hz", "im_conversion_db")]
        if r.rx is not None:
            optional += [("rx", k) for k in ("sensitivity_dbm", "blocking_dbm", "noise_figure_db")]
        for side, key in optional:
            value = getattr(getattr(r, side), key)
            if value is not None and not finite(value):
                bad(f"{where}.{side}.{key}", value, "must be a finite number")
        a = r.antenna
        for key in ("x_m", "y_m", "height_m", "gain_dbi"):
            if not finite(getattr(a, key)):
                bad(f"{where}.antenna.{key}", getattr(a, key), "must be a finite number")
        if r.feedline is not None and not (finite(r.feedline.length_m) and r.feedline.length_m >= 0):
            bad(f"{where}.feedline.length_m", r.feedline.length_m, "must be >= 0 m")
    for k, c in enumerate(site.couplings):
        if not finite(c.isolation_db):
            bad(f"couplings[{k}].isolation_db", c.isolation_db, "must be a finite number of dB")
    # The loader's caps on the survey's work, for sites built in Python too (docs/robustness.md).
    from notchkit.site.loader import MAX_IM_TRIPLES, MAX_RADIOS

    n_tx = sum(1 for r in site.radios if r.tx is not None)
    if len(site.radios) > MAX_RADIOS:
        bad("radios", len(site.radios), f"radios are more than {MAX_RADIOS} in one site")
    if n_tx * (n_tx - 1) * (n_tx - 2) // 6 > MAX_IM_TRIPLES:
        bad("radios", n_tx, f"transmitters make more than {MAX_IM_TRIPLES} three-transmitter "
            "intermodulation combinations")
    if problems:
        raise SiteError(problems)
