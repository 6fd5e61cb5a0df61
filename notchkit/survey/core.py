"""The site survey: which transmitter threatens which receiver, by how many dB.

See docs/survey.md for the model. Every mechanism is evaluated with numpy over
index arrays (transmitter x receiver x harmonic / product), and Python only
builds the result objects.
"""

from __future__ import annotations

from operator import attrgetter
from typing import Any

import numpy as np

from notchkit.site.model import Radio, Site
from notchkit.survey import limits, products
from notchkit.survey.blocking import blocking_threats
from notchkit.survey.intermod import DEFAULT_MAX_THREATS, intermod_threats
from notchkit.survey.isolation import C0_M_PER_S, ISOLATION_FLOOR_DB
from notchkit.survey.locations import build_filters, too_close
from notchkit.survey.paths import SiteArrays, check_max_harmonic
from notchkit.survey.result import NotchFeed, SurveyResult, Threat


def _noise_of(radio: Radio) -> float | None:
    """A transmitter's broadband noise, dBc/Hz (``None``: not given)."""
    return radio.tx.noise_dbc_hz if radio.tx is not None else None

def survey(
    site: Site, *, max_harmonic: int | None = None, max_threats: int | None = None
) -> SurveyResult:
    """Find every threat between the site's transmitters and receivers.

    Parameters
    ----------
    site : notchkit.site.model.Site
        The site.
    max_harmonic : int, optional
        Highest harmonic evaluated (>= 1; 1: none); default ``site.max_harmonic``.
    max_threats : int, optional
        Intermodulation threats kept as objects, the worst first (default
        :data:`notchkit.survey.intermod.DEFAULT_MAX_THREATS`); the rest are counted
        in ``left_out`` and still reach the matrix.

    Returns
    -------
    SurveyResult
        Threats sorted by excess (worst first), filter requirements per location.

    Raises
    ------
    SiteError
        Values that would make the numbers meaningless (power <= 0, bad bands).
    UsageError
        ``max_harmonic`` not an integer >= 1.

    Notes
    -----
    level = P_tx - suppression - feedline(tx) - isolation - feedline(rx);
    excess = level - threshold; required notch depth = excess + rejection margin.
    """
    n_harm = check_max_harmonic(site.max_harmonic if max_harmonic is None else max_harmonic)
    sa = SiteArrays(site)
    margin = float(site.limits.rejection_margin_db)
    tx = np.array([i for i, r in enumerate(site.radios) if r.tx is not None], dtype=int)
    rx = np.array([i for i, r in enumerate(site.radios) if r.rx is not None], dtype=int)
    notes = list(sa.notes)
    both = [sa.names[i] for i in np.intersect1d(tx, rx)]
    if both:
        notes.append(
            "transceivers not evaluated against their own receivers (shared antenna: "
            "that is the duplexer's job): " + ", ".join(both)
        )
    ctx = _Ctx(sa, margin)
    notes += _default_notes(site, ctx)
    threats: list[Threat] = []
    left_out: list[tuple[str, int, int]] = []
    left_worst: tuple[tuple[str, str, float], ...] = ()
    if tx.size and rx.size:
        tt, rr = (a.ravel() for a in np.meshgrid(tx, rx, indexing="ij"))
        keep = tt != rr
        tt, rr = tt[keep], rr[keep]
        threats += _fundamental(ctx, tt, rr)
        if n_harm >= 2:
            threats += _harmonics(ctx, tt, rr, n_harm)
        threats += _noise(ctx, tt, rr)
        im, outcome = intermod_threats(
            ctx, tx, rx, max_order=getattr(site, "max_im_order", products.DEFAULT_MAX_ORDER),
            max_threats=DEFAULT_MAX_THREATS if max_threats is None else max_threats,
        )
        threats += im
        notes += outcome.notes or []
        threats += blocking_threats(ctx, tx, rx)
        if outcome.left_over or outcome.left_under:
            left_out.append(("intermod", outcome.left_over, outcome.left_under))
            ww = outcome.worst if outcome.worst is not None else np.empty((0, 0))
            left_worst = tuple(
                (sa.names[t], sa.names[r], float(ww[t, r])) for t, r in np.argwhere(np.isfinite(ww)).tolist()
            )
            notes.append(
                f"intermodulation: {outcome.products} products land in receivers; the "
                f"{len(im)} worst are listed, {outcome.left_over} more above the limit and "
                f"{outcome.left_under} below it are counted only (they still count in the matrix)"
            )
    # Stable sort on excess only: ties keep the (deterministic) order of generation.
    threats.sort(key=attrgetter("excess_db"), reverse=True)
    return SurveyResult(
        site=site.name,
        transmitters=tuple(sa.names[i] for i in tx),
        receivers=tuple(sa.names[i] for i in rx),
        threats=tuple(threats),
        filters=build_filters(site, sa, ctx.all_feeds()),
        notes=tuple(notes),
        max_harmonic=n_harm,
        rejection_margin_db=margin,
        max_im_order=getattr(site, "max_im_order", products.DEFAULT_MAX_ORDER),
        left_out=tuple(left_out),
        left_out_worst=left_worst,
    )


def _default_notes(site: Site, ctx) -> list[str]:
    """Which radios rest on the survey's documented defaults."""
    out = []
    supp = sorted({src for i, (_, src) in ctx.supp.items() if src.startswith("default")})
    for src in supp:
        who = [ctx.names[i] for i, (_, s) in ctx.supp.items() if s == src]
        out.append(f"harmonic suppression {src} for: " + ", ".join(who))
    blocking = [r.name for r in site.radios if r.rx is not None and r.rx.blocking_dbm is None]
    if blocking:
        out.append(
            f"default blocking level {limits.DEFAULT_BLOCKING_DBM:g} dBm (documented default, "
            "from memory: ETSI EN 300 086 order of magnitude) for: " + ", ".join(blocking)
        )
    conv = [r.name for r in site.radios if r.tx is not None and r.tx.im_conversion_db is None]
    if conv:
        out.append(
            f"default IM conversion loss {limits.DEFAULT_IM_CONVERSION_DB:g} dB (3rd order, "
            "common practice) for: " + ", ".join(conv)
        )
    return out


class _Ctx:
    """Shared state of one survey run."""

    def __init__(self, sa: SiteArrays, margin: float):
        self.sa = sa
        self.margin = margin
        self.names = sa.names
        self.d = np.hypot(
            np.hypot(sa.x[:, None] - sa.x[None, :], sa.y[:, None] - sa.y[None, :]),
            sa.h[:, None] - sa.h[None, :],
        ).tolist()
        self.pass_bands = [sa.pass_bands(i) for i in range(len(sa.names))]
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
        """Ask radio's filter for a notch; returns its location, or the pass band it clashes with."""
        clash = self.clash(radio, lo, hi)
        if clash is not None:
            return None, clash
        r = self.sa.site.radios[radio]
        if r.tx is not None and r.rx is not None:
            # A transceiver has one feedline, so one filter at its radio port carries
            # both its transmit- and receive-side notches; "tx" because its power flows through.
            side = "tx"
        entry = self._feeds.get((radio, side, lo, hi))
        if entry is None:
            self._feeds[(radio, side, lo, hi)] = [required, {reason: None}]
        else:
            entry[0] = max(entry[0], required)
            entry[1].setdefault(reason, None)
        return (self.names[radio], side), None

    def feed_im(
        self, mixer: int, other: int, required: float, product: str, victim: int, count: int = 1
    ) -> None:
        """IM notches are aggregated per (mixer, other transmitter): worst depth and a count."""
        entry = self._im.get((mixer, other))
        if entry is None:
            self._im[(mixer, other)] = [required, count, product, victim]
        else:
            entry[1] += count
            if required > entry[0]:
                entry[0], entry[2], entry[3] = required, product, victim

    def all_feeds(self) -> list[NotchFeed]:
        names = self.names
        out = [
            NotchFeed(radio=names[r], side=side, lo_mhz=lo, hi_mhz=hi, required_db=req,
                      reason="; ".join(reasons))
            for (r, side, lo, hi), (req, reasons) in self._feeds.items()
        ]  # fmt: skip
        for (m, o), (req, count, product, v) in self._im.items():
            more = f" and {count - 1} more" if count > 1 else ""
            out.append(
                NotchFeed(
                    radio=names[m], side="tx", lo_mhz=float(self.sa.tx_lo[o]),
                    hi_mhz=float(self.sa.tx_hi[o]), required_db=req,
                    reason=f"{names[o]} entering {names[m]}'s output stage: IM {product} "
                    f"into {names[v]}{more}",
                )
            )  # fmt: skip
        return out


def _no_stub(where: str, lo: float, hi: float, clash: tuple[float, float], alternative: str) -> str:
    return (
        f"no stub: the notch {lo:.4f}-{hi:.4f} MHz at {where} lies within a few % of its pass band "
        f"{clash[0]:.4f}-{clash[1]:.4f} MHz (too close for coax stubs); {alternative}"
    )


def _fundamental(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray) -> list[Threat]:
    sa = ctx.sa
    f = sa.tx_lo[tt]
    total, iso, meth = sa.path_db(tt, rr, f)
    level = sa.p_dbm[tt] - total
    cochannel = (sa.tx_lo[tt] <= sa.rx_hi[rr]) & (sa.rx_lo[rr] <= sa.tx_hi[tt])
    thr = np.where(cochannel, sa.rx_threshold[rr], sa.rx_blocking[rr])
    out = []
    for k in range(tt.size):
        t, r = int(tt[k]), int(rr[k])
        lo, hi = float(sa.tx_lo[t]), float(sa.tx_hi[t])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[t], ctx.names[r]
        where: tuple[Any, ...] = ()
        if cochannel[k]:
            tsrc = sa.rx_threshold_source[r] + " (carrier inside the receiver's band)"
            remedy = (
                "carrier inside the receiver's band: no filter can separate them; "
                "coordinate frequencies or time-share"
            )
        else:
            tsrc = sa.rx_blocking_source[r]
            # a transceiver's one filter sits at its radio port (see _Ctx.feed)
            at = "filter at transceiver" if sa.site.radios[r].tx is not None else "rx-side filter at"
            remedy = f"{at} {vic}: notch {src}'s band, pass {vic}'s band"
            if excess > 0:
                fd, clash = ctx.feed(
                    r, "rx", lo, hi, excess + ctx.margin, f"{src} fundamental overloads {vic}"
                )
                if fd is None:
                    remedy = _no_stub(
                        f"{vic}'s input", lo, hi, clash,
                        "use cavities or a duplexer, or more antenna separation",
                    )
                else:
                    where = (fd,)
            else:
                remedy = "none needed (" + remedy + " if it were)"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="fundamental", order=1, product=src,
                f_mhz=0.5 * (lo + hi), f_lo_mhz=lo, f_hi_mhz=hi,
                level_dbm=float(level[k]), threshold_dbm=float(thr[k]), threshold_source=tsrc,
                excess_db=excess, required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(t, r, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, filters=where,
            )
        )  # fmt: skip
    return out


def _harmonics(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray, n_harm: int) -> list[Threat]:
    sa = ctx.sa
    nh = np.arange(2, n_harm + 1, dtype=float)[:, None]
    hlo, hhi = nh * sa.tx_lo[tt][None, :], nh * sa.tx_hi[tt][None, :]
    olo, ohi, hit = products.intersect(hlo, hhi, sa.rx_lo[rr][None, :], sa.rx_hi[rr][None, :])
    hi_idx, pair = np.nonzero(hit)
    if pair.size == 0:
        return []
    t, r = tt[pair], rr[pair]
    n = nh[hi_idx, 0]
    f = olo[hi_idx, pair]
    total, iso, meth = sa.path_db(t, r, f)
    supp = np.array([ctx.supp[int(i)][0] for i in t])
    level = sa.p_dbm[t] - supp - total
    thr = sa.rx_threshold[r]
    out = []
    for k in range(pair.size):
        ti, ri, order = int(t[k]), int(r[k]), int(n[k])
        lo, hi = float(olo[hi_idx[k], pair[k]]), float(ohi[hi_idx[k], pair[k]])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[ti], ctx.names[ri]
        remedy = (
            f"tx-side filter at {src}: notch its harmonic {order} ({lo:.4f}-{hi:.4f} MHz), "
            f"pass {src}'s fundamental (a harmonic inside {vic}'s band can only be removed "
            "at the transmitter)"
        )
        where: tuple[Any, ...] = ()
        if excess > 0:
            reason = f"{src} harmonic {order} into {vic}"
            fd, clash = ctx.feed(ti, "tx", lo, hi, excess + ctx.margin, reason)
            if fd is None:
                alt = "use a cavity or low-pass filter at the transmitter"
                remedy = _no_stub(f"{src}'s output", lo, hi, clash, alt)
            else:
                where = (fd,)
        else:
            remedy = "none needed (" + remedy + ")"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="harmonic", order=order, product=f"{order}*{src}",
                f_mhz=products.product_centre(order * sa.tx_lo[ti], order * sa.tx_hi[ti], lo, hi),
                f_lo_mhz=lo, f_hi_mhz=hi, level_dbm=float(level[k]), threshold_dbm=float(thr[k]),
                threshold_source=sa.rx_threshold_source[ri], excess_db=excess,
                required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(ti, ri, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, details=(f"suppression {supp[k]:.1f} dB: {ctx.supp[ti][1]}",),
                filters=where,
            )
        )  # fmt: skip
    return out


def _noise(ctx: _Ctx, tt: np.ndarray, rr: np.ndarray) -> list[Threat]:
    sa = ctx.sa
    radios = sa.site.radios
    has = np.array([_noise_of(radios[int(t)]) is not None for t in tt], dtype=bool)
    if not has.any():
        return []
    t, r = tt[has], rr[has]
    dbc = np.array([_noise_of(radios[int(i)]) for i in t], dtype=float)
    f = sa.rx_lo[r]
    total, iso, meth = sa.path_db(t, r, f)
    level = sa.p_dbm[t] + dbc + 10.0 * np.log10(sa.rx_bandwidth_hz[r]) - total
    thr = sa.rx_floor[r]
    out = []
    for k in range(t.size):
        ti, ri = int(t[k]), int(r[k])
        lo, hi = float(sa.rx_lo[ri]), float(sa.rx_hi[ri])
        excess = float(level[k] - thr[k])
        src, vic = ctx.names[ti], ctx.names[ri]
        remedy = f"tx-side filter at {src}: notch {vic}'s band, pass {src}'s band"
        where: tuple[Any, ...] = ()
        if excess > 0:
            fd, clash = ctx.feed(ti, "tx", lo, hi, excess + ctx.margin, f"{src} noise into {vic}")
            if fd is None:
                remedy = _no_stub(f"{src}'s output", lo, hi, clash,
                                  "use a band-pass cavity at the transmitter, or more separation")
            else:
                where = (fd,)
        else:
            remedy = "none needed (" + remedy + ")"
        out.append(
            Threat(
                sources=(src,), victim=vic, mechanism="noise", order=0, product=f"{src} noise",
                f_mhz=0.5 * (lo + hi), f_lo_mhz=lo, f_hi_mhz=hi, level_dbm=float(level[k]),
                threshold_dbm=float(thr[k]),
                threshold_source="noise floor kTB + NF + 10log B", excess_db=excess,
                required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(ti, ri, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, details=(f"transmitter noise {dbc[k]:g} dBc/Hz",), filters=where,
            )
        )  # fmt: skip
    return out
