"""The site as arrays: positions, feedline losses, powers, bands and thresholds.

:class:`SiteArrays` turns a :class:`~notchkit.site.model.Site` into numpy arrays
indexed by radio, so that every path (feedline loss + antenna isolation +
feedline loss) of many threats is evaluated in one call.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

from notchkit.errors import Problem, SiteError, UsageError
from notchkit.site.model import Band, Radio, Site
from notchkit.threats import limits
from notchkit.threats.isolation import HORIZONTAL, SLANT, describe_estimate, estimate_isolation_db
from notchkit.threats.operating import expand

OUT_PORTS = ("tx", "antenna")
"""Installed-filter ports an emission leaves a transmitter through."""

ANTENNA_BAND_FRACTION = 0.10
"""An antenna with no ``band_mhz`` is taken to work its radio's bands widened by
10 % each side (common practice: the useful bandwidth of a resonant antenna or a
multi-band array is of that order); outside it, no gain above 0 dBi is credited."""

MIN_EMISSION_MHZ = 1e-6
"""Lowest frequency an emission interval is clipped to, so logarithms stay finite."""


def emission(band: Band, bandwidth_khz: float) -> tuple[float, float]:
    """A band widened by half a channel bandwidth at each edge, in MHz (lo clipped > 0)."""
    w = band.widened(bandwidth_khz)
    return max(w.lo_mhz, MIN_EMISSION_MHZ), w.hi_mhz


class SiteArrays:
    """Per-unit arrays of a site (index = operating choice, see :mod:`.operating`).

    ``site`` is the site with one single-band radio per operating choice (a radio
    with one band is its own unit, under its own name); ``physical`` is the site
    as written; ``radio_of[i]`` is unit i's index in ``physical.radios``.
    """

    def __init__(self, site: Site):
        validate(site)
        self.op = expand(site)
        self.physical = site
        self.site = dataclasses.replace(site, radios=self.op.units)
        self.radio_of = self.op.radio_of
        self.radio_names = self.op.radio_names
        radios = self.site.radios
        self.names = tuple(r.name for r in radios)
        n = len(radios)
        self.x = np.array([r.antenna.x_m for r in radios], dtype=float)
        self.y = np.array([r.antenna.y_m for r in radios], dtype=float)
        self.h = np.array([r.antenna.height_m for r in radios], dtype=float)
        self.g = np.array([r.antenna.gain_dbi for r in radios], dtype=float)
        self.near_field_db = float(site.near_field_isolation_db)
        self._couplings(site)
        self._antennas(site)
        self.notes: list[str] = []
        self._feeds = self._feedlines(radios, site)
        self._installed = self._installed_filters(radios)
        self.has_installed = bool(self._installed)
        nan = np.full(n, np.nan)
        self.p_dbm = nan.copy()
        self.tx_lo, self.tx_hi, self.rx_lo, self.rx_hi = nan.copy(), nan.copy(), nan.copy(), nan.copy()
        self.rx_threshold = nan.copy()
        self.rx_floor = nan.copy()
        self.rx_blocking = nan.copy()
        self.rx_bandwidth_hz = nan.copy()
        self.rx_threshold_source: list[str] = [""] * n
        self.rx_floor_source: list[str] = [""] * n
        self.rx_blocking_source: list[str] = [""] * n
        self._selectivity: dict[int, tuple[np.ndarray, np.ndarray, str]] = {}
        for i, r in enumerate(radios):
            if r.tx is not None:
                self.p_dbm[i] = 10.0 * math.log10(r.tx.power_w * 1000.0)
                self.tx_lo[i], self.tx_hi[i] = emission(r.tx.band, r.tx.bandwidth_khz)
            if r.rx is not None:
                self._receiver(i, r.rx)

    def _receiver(self, i: int, rx) -> None:
        self.rx_lo[i], self.rx_hi[i] = emission(rx.band, rx.bandwidth_khz)
        self.rx_bandwidth_hz[i] = rx.bandwidth_khz * 1e3
        floor, floor_src = limits.receiver_floor_dbm(
            rx.noise_figure_db, rx.bandwidth_khz, rx.band_noise_dbm
        )
        self.rx_floor[i] = floor
        self.rx_floor_source[i] = floor_src
        if rx.sensitivity_dbm is not None:
            self.rx_threshold[i] = rx.sensitivity_dbm
            self.rx_threshold_source[i] = "sensitivity_dbm"
        else:
            self.rx_threshold[i] = floor
            self.rx_threshold_source[i] = floor_src
        table, src = limits.selectivity_table(rx)
        if table:
            offs = np.array([o for o, _ in table], dtype=float)
            lev = np.array([v for _, v in table], dtype=float)
            self._selectivity[i] = (np.log10(offs), lev, src)
            self.rx_blocking[i] = float(lev.min())
        elif rx.blocking_dbm is not None:
            self.rx_blocking[i] = rx.blocking_dbm
        else:
            self.rx_blocking[i] = limits.DEFAULT_BLOCKING_DBM
        self.rx_blocking_source[i] = src

    def blocking_dbm(self, r: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        """Blocking level of receiver unit r[k] for a carrier occupying [lo, hi] MHz.

        The offset is the gap between the carrier and the receiver's band; a
        selectivity table is interpolated in dB against log offset and held
        beyond its ends; a receiver without one has its flat level.
        """
        r = np.asarray(r, dtype=int)
        out = self.rx_blocking[r].astype(float)
        gap = np.maximum(np.maximum(np.asarray(lo) - self.rx_hi[r], self.rx_lo[r] - np.asarray(hi)), 0.0)
        for i, (log_off, lev, _) in self._selectivity.items():
            m = r == i
            if np.any(m):
                x = np.log10(np.maximum(gap[m], 1e-9))
                out[m] = np.interp(x, log_off, lev)
        return out

    def front_end_db(self, r: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        """Front-end selectivity (dB, >= 0) of receiver unit r[k] for a carrier at [lo, hi] MHz.

        The rise of the receiver's blocking level beyond :data:`limits.FRONT_END_REF_MHZ`
        of offset, read off its selectivity table: A = max(0, B(gap) - B(1 MHz)) for gaps
        beyond 1 MHz, else 0. Closer in, a blocking curve is shaped by the IF filters,
        which come after the first non-linear stages; farther out, by the preselector
        in front of them. A receiver with no table gets 0 (common practice reading of a
        blocking curve, rough).
        """
        r = np.asarray(r, dtype=int)
        out = np.zeros(r.shape, dtype=float)
        if not self._selectivity:
            return out
        gap = np.maximum(np.maximum(np.asarray(lo) - self.rx_hi[r], self.rx_lo[r] - np.asarray(hi)), 0.0)
        ref = np.log10(limits.FRONT_END_REF_MHZ)
        for i, (log_off, lev, _) in self._selectivity.items():
            m = (r == i) & (gap > limits.FRONT_END_REF_MHZ)
            if np.any(m):
                far = np.interp(np.log10(gap[m]), log_off, lev)
                out[m] = np.maximum(far - np.interp(ref, log_off, lev), 0.0)
        return out

    # ------------------------------------------------------------ couplings, antennas
    def _couplings(self, site: Site) -> None:
        """Measured couplings per pair of physical radios: sorted (log f, dB) rows."""
        index = {r.name: i for i, r in enumerate(site.radios)}
        rows: dict[tuple[int, int], list[tuple[float | None, float]]] = {}
        for c in site.couplings:
            if c.a in index and c.b in index:
                i, j = sorted((index[c.a], index[c.b]))
                rows.setdefault((i, j), []).append((c.freq_mhz, c.isolation_db))
        self._measured: dict[tuple[int, int], tuple[np.ndarray, np.ndarray]] = {}
        self._measured_text: dict[tuple[int, int], str] = {}
        for key, got in rows.items():
            got.sort(key=lambda t: -1.0 if t[0] is None else t[0])
            if len(got) == 1:
                f, iso = got[0]
                text = f"measured {iso:g} dB" + (f" at {f:g} MHz" if f else "")
                self._measured[key] = (np.zeros(1), np.array([iso]))
            else:
                fs = np.log10(np.array([f for f, _ in got], dtype=float))
                self._measured[key] = (fs, np.array([v for _, v in got], dtype=float))
                pts = ", ".join(f"{v:g} dB at {f:g} MHz" for f, v in got)
                text = (
                    f"measured ({pts}), interpolated in dB against log frequency, "
                    "held beyond the measured range"
                )
            self._measured_text[key] = text

    def _antennas(self, site: Site) -> None:
        """Per unit: the antenna's band (lo, hi) and gain table, for gain_at()."""
        n = len(self.names)
        self.ant_lo = np.zeros(n)
        self.ant_hi = np.full(n, np.inf)
        self.ant_oob = np.zeros(n)
        self._gain_tables: dict[int, tuple[np.ndarray, np.ndarray]] = {}
        for i, u in enumerate(self.site.radios):
            a = u.antenna
            phys = site.radios[int(self.radio_of[i])]
            self.ant_oob[i] = a.out_of_band_loss_db
            if a.gain_table:
                self._gain_tables[i] = (
                    np.log10([f for f, _ in a.gain_table]),
                    np.array([g for _, g in a.gain_table], dtype=float),
                )
            if a.band_mhz is not None:
                self.ant_lo[i], self.ant_hi[i] = a.band_mhz.lo_mhz, a.band_mhz.hi_mhz
            else:
                bands = [b for p in (phys.tx, phys.rx) if p is not None for b in p.choices]
                lo = min(b.lo_mhz for b in bands)
                hi = max(b.hi_mhz for b in bands)
                self.ant_lo[i] = lo * (1.0 - ANTENNA_BAND_FRACTION)
                self.ant_hi[i] = hi * (1.0 + ANTENNA_BAND_FRACTION)

    def gain_at(self, unit: np.ndarray, freq_mhz: np.ndarray) -> np.ndarray:
        """Antenna gain (dBi) of unit[k] toward the others at freq_mhz[k].

        A gain table is interpolated in dB against log frequency (held beyond its
        ends). Otherwise ``gain_dbi`` inside the antenna's band; outside it the
        gain is taken as at most 0 dBi, less ``out_of_band_loss_db``.
        """
        unit = np.asarray(unit, dtype=int)
        f = np.asarray(freq_mhz, dtype=float)
        g = self.g[unit]
        inside = (f >= self.ant_lo[unit]) & (f <= self.ant_hi[unit])
        out = np.where(inside, g, np.minimum(g, 0.0) - self.ant_oob[unit])
        for i, (lf, gt) in self._gain_tables.items():
            m = unit == i
            if np.any(m):
                out[m] = np.interp(np.log10(f[m]), lf, gt)
        return out

    def _gain1(self, i: int, f: float) -> float:
        """gain_at for one unit and one frequency, without arrays (for the texts)."""
        table = self._gain_tables.get(i)
        if table is not None:
            return float(np.interp(math.log10(f), table[0], table[1]))
        g = float(self.g[i])
        if self.ant_lo[i] <= f <= self.ant_hi[i]:
            return g
        return min(g, 0.0) - float(self.ant_oob[i])

    # ------------------------------------------------------------ feedlines
    def _feedlines(self, radios: tuple[Radio, ...], site: Site) -> dict[int, tuple[Any, float]]:
        feeds: dict[int, tuple[Any, float]] = {}
        missing: dict[str, None] = {}
        cache: dict[str, object] = {}
        for i, r in enumerate(radios):
            if r.feedline is None:
                missing[self.radio_names[i]] = None
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

    # ------------------------------------------------------------ installed filters
    def _installed_filters(self, radios: tuple[Radio, ...]) -> dict[int, list]:
        """Per unit: the installed filters in line on its operating choice."""
        out: dict[int, list] = {}
        for i, r in enumerate(radios):
            bands = [p.band for p in (r.tx, r.rx) if p is not None]
            for flt in r.installed:
                if flt.for_band is not None and not any(flt.for_band.overlaps(b) for b in bands):
                    continue
                lf = np.log10([f for f, _ in flt.rejection])
                rej = np.array([v for _, v in flt.rejection], dtype=float)
                out.setdefault(i, []).append((flt, lf, rej))
        return out

    def installed_db(self, unit: np.ndarray, freq_mhz: np.ndarray, ports: tuple[str, ...]) -> np.ndarray:
        """Rejection (dB) of unit[k]'s installed filters on ``ports`` at freq_mhz[k].

        Each filter's table is interpolated in dB against log frequency; outside
        the table no rejection is credited; filters in series add.
        """
        unit = np.asarray(unit, dtype=int)
        f = np.asarray(freq_mhz, dtype=float)
        out = np.zeros(np.broadcast(unit, f).shape, dtype=float)
        if not self._installed:
            return out
        unit, f = np.broadcast_arrays(unit, f)
        for i, filters in self._installed.items():
            m = unit == i
            if not np.any(m):
                continue
            lf_q = np.log10(f[m])
            for flt, lf, rej in filters:
                if flt.port not in ports:
                    continue
                inside = (lf_q >= lf[0]) & (lf_q <= lf[-1])
                out[m] += np.where(inside, np.interp(lf_q, lf, rej), 0.0)
        return out

    def installed_names(self, unit: int, ports: tuple[str, ...]) -> list[str]:
        return [f"{flt.name} ({flt.kind}, {flt.port})" for flt, _, _ in self._installed.get(unit, [])
                if flt.port in ports]  # fmt: skip

    # ------------------------------------------------------------ isolation
    def isolation_db(
        self, a: np.ndarray, b: np.ndarray, freq_mhz: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Antenna isolation a->b at freq: measured where given (method 0), else estimated."""
        a = np.asarray(a, dtype=int)
        b = np.asarray(b, dtype=int)
        f = np.asarray(freq_mhz, dtype=float)
        a, b, f = np.broadcast_arrays(a, b, f)
        dh = np.hypot(self.x[a] - self.x[b], self.y[a] - self.y[b])
        dv = np.abs(self.h[a] - self.h[b])
        est, method = estimate_isolation_db(
            f, dh, dv, self.gain_at(a, f), self.gain_at(b, f), near_field_db=self.near_field_db
        )
        if not self._measured:
            return est, method
        est = est.copy()
        method = method.copy()
        ra, rb = self.radio_of[a], self.radio_of[b]
        lo, hi = np.minimum(ra, rb), np.maximum(ra, rb)
        for (i, j), (lf, iso) in self._measured.items():
            m = (lo == i) & (hi == j)
            if np.any(m):
                est[m] = np.interp(np.log10(f[m]), lf, iso) if lf.size > 1 else iso[0]
                method[m] = 0
        return est, method

    def path_db(
        self, a: np.ndarray, b: np.ndarray, freq_mhz: np.ndarray, *, into: str = "rx"
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Total loss a->b: both feedlines, the antenna isolation and the installed filters.

        The emission leaves a through its filters on the ``tx`` and ``antenna``
        ports and arrives at b through those on ``into`` (``"rx"``: a receiver;
        ``"tx"``: a transmitter's output stage) and ``antenna``; (total, iso, method).
        """
        a = np.asarray(a)
        b = np.asarray(b)
        f = np.asarray(freq_mhz, dtype=float)
        iso, method = self.isolation_db(a, b, f)
        total = self.feed_loss_db(a, f) + iso + self.feed_loss_db(b, f)
        if self._installed:
            total = total + self.installed_db(a, f, OUT_PORTS) + self.installed_db(
                b, f, (into, "antenna")
            )
        return total, iso, method

    def describe_isolation(self, a: int, b: int, freq_mhz: float, iso: float, method: int) -> str:
        if method == 0:
            ra, rb = sorted((int(self.radio_of[a]), int(self.radio_of[b])))
            return self._measured_text[(ra, rb)]
        dh = float(np.hypot(self.x[a] - self.x[b], self.y[a] - self.y[b]))
        dv = float(abs(self.h[a] - self.h[b]))
        ga, gb = self._gain1(a, freq_mhz), self._gain1(b, freq_mhz)
        text = describe_estimate(method, freq_mhz, dh, dv, iso, near_field_db=self.near_field_db)
        if method in (HORIZONTAL, SLANT) and (ga != self.g[a] or gb != self.g[b]):
            text += f"; gains at {freq_mhz:g} MHz {ga:g} / {gb:g} dBi"
        return text

    def pass_bands(self, i: int) -> tuple[tuple[float, float], ...]:
        """The bands unit i's radio filter must pass: every band its radio works (the
        tx and rx emission intervals of all its operating choices), merged."""
        bands = []
        for u in np.nonzero(self.radio_of == self.radio_of[i])[0].tolist():
            if not math.isnan(self.tx_lo[u]):
                bands.append((float(self.tx_lo[u]), float(self.tx_hi[u])))
            if not math.isnan(self.rx_lo[u]):
                bands.append((float(self.rx_lo[u]), float(self.rx_hi[u])))
        bands.sort()
        merged: list[tuple[float, float]] = []
        for lo, hi in bands:
            if merged and lo <= merged[-1][1]:
                merged[-1] = (merged[-1][0], max(merged[-1][1], hi))
            else:
                merged.append((lo, hi))
        return tuple(merged)

    def unit_pass_bands(self, i: int) -> tuple[tuple[float, float], ...]:
        """The bands unit i itself uses: its tx and rx emission intervals, merged."""
        bands = []
        if not math.isnan(self.tx_lo[i]):
            bands.append((float(self.tx_lo[i]), float(self.tx_hi[i])))
        if not math.isnan(self.rx_lo[i]):
            bands.append((float(self.rx_lo[i]), float(self.rx_hi[i])))
        bands.sort()
        if len(bands) == 2 and bands[1][0] <= bands[0][1]:
            return ((bands[0][0], max(bands[0][1], bands[1][1])),)
        return tuple(bands)

    def units_of(self, radio_index: int) -> list[int]:
        """The units (operating choices) of a physical radio."""
        return np.nonzero(self.radio_of == radio_index)[0].tolist()

    def unit_of(self, radio_index: int) -> int:
        """The first unit of a physical radio."""
        return int(np.nonzero(self.radio_of == radio_index)[0][0])


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
        if c.freq_mhz is not None and not (finite(c.freq_mhz) and c.freq_mhz > 0):
            bad(f"couplings[{k}].freq_mhz", c.freq_mhz, "must be > 0 MHz")
    _validate_operating(site, bad, finite)
    # The loader's caps on the survey's work, for sites built in Python too (docs/robustness.md).
    from notchkit.site.loader import MAX_IM_TRIPLES, MAX_RADIOS

    n_tx = sum(len(r.tx.choices) for r in site.radios if r.tx is not None)  # bands worked count
    if len(site.radios) > MAX_RADIOS:
        bad("radios", len(site.radios), f"radios are more than {MAX_RADIOS} in one site")
    if n_tx * (n_tx - 1) * (n_tx - 2) // 6 > MAX_IM_TRIPLES:
        bad("radios", n_tx, f"transmitters make more than {MAX_IM_TRIPLES} three-transmitter "
            "intermodulation combinations")
    if problems:
        raise SiteError(problems)


def _rising(rows, finite, x_positive: bool = True) -> bool:
    """Rows of two finite numbers, the first rising (and > 0 where it is a frequency or offset)."""
    if not rows:
        return False
    xs = [r[0] for r in rows]
    ok = all(len(r) == 2 and finite(r[0]) and finite(r[1]) for r in rows)
    return ok and all(b > a for a, b in zip(xs, xs[1:], strict=False)) and (not x_positive or xs[0] > 0)


def _validate_operating(site: Site, bad, finite) -> None:
    """The keys of how a site operates, for sites built in Python (the loader checks files)."""
    from notchkit.site.model import INSTALLED_PORTS
    from notchkit.threats.limits import SELECTIVITY_BY_CLASS as RECEIVER_CLASSES

    for i, r in enumerate(site.radios):
        where = f"radios[{i}]"
        for side in ("tx", "rx"):
            part = getattr(r, side)
            if part is None:
                continue
            for k, b in enumerate(part.bands):
                if not (finite(b.lo_mhz) and finite(b.hi_mhz) and 0 < b.lo_mhz <= b.hi_mhz):
                    bad(f"{where}.{side}.bands[{k}]", (b.lo_mhz, b.hi_mhz),
                        "must be finite, 0 < lo <= hi MHz")  # fmt: skip
        if r.tx is not None and r.rx is not None:
            nt, nr = len(r.tx.choices), len(r.rx.choices)
            if nt > 1 and nr > 1 and nt != nr:
                bad(f"{where}.rx.bands", nr, f"must be {nt} bands (paired with tx) or one")
        if r.rx is not None:
            rx = r.rx
            if rx.receiver_class is not None and rx.receiver_class not in RECEIVER_CLASSES:
                bad(f"{where}.rx.receiver_class", rx.receiver_class,
                    "is not one of " + ", ".join(RECEIVER_CLASSES))  # fmt: skip
            if rx.selectivity and not _rising(rx.selectivity, finite):
                bad(f"{where}.rx.selectivity", rx.selectivity, "must be finite rows with offsets > 0 rising")
            if rx.band_noise_dbm is not None and not finite(rx.band_noise_dbm):
                bad(f"{where}.rx.band_noise_dbm", rx.band_noise_dbm, "must be a finite number")
        a = r.antenna
        if a.gain_table and not _rising(a.gain_table, finite):
            bad(f"{where}.antenna.gain_table", a.gain_table,
                "must be finite rows with frequencies > 0 rising")  # fmt: skip
        if not (finite(a.out_of_band_loss_db) and a.out_of_band_loss_db >= 0):
            bad(f"{where}.antenna.out_of_band_loss_db", a.out_of_band_loss_db, "must be >= 0 dB")
        for k, f in enumerate(r.installed):
            if f.port not in INSTALLED_PORTS:
                bad(f"{where}.installed[{k}].port", f.port, "must be one of " + ", ".join(INSTALLED_PORTS))
            if not _rising(f.rejection, finite):
                bad(f"{where}.installed[{k}].rejection", f.rejection,
                    "must be at least one finite row, frequencies > 0 rising")  # fmt: skip
    if not (finite(site.near_field_isolation_db) and site.near_field_isolation_db >= 0):
        bad("near_field_isolation_db", site.near_field_isolation_db, "must be >= 0 dB")
