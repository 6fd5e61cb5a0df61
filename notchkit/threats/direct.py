"""The direct mechanisms: a transmitter's fundamental, its harmonics and its broadband noise
at each receiver.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from notchkit.site.model import Radio
from notchkit.threats import products
from notchkit.threats.context import _Ctx
from notchkit.threats.result import Threat


def _noise_of(radio: Radio) -> float | None:
    """A transmitter's broadband noise, dBc/Hz (``None``: not given)."""
    return radio.tx.noise_dbc_hz if radio.tx is not None else None


def _no_stub(where: str, lo: float, hi: float, clash: tuple[float, float] | None, alternative: str) -> str:
    if clash is None:  # deeper than the stub ceiling: see _classify
        return f"stubs alone cannot: {alternative}"
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
    thr = np.where(cochannel, sa.rx_threshold[rr], sa.blocking_dbm(rr, sa.tx_lo[tt], sa.tx_hi[tt]))
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
                threshold_source=sa.rx_floor_source[ri], excess_db=excess,
                required_db=excess + ctx.margin, isolation_db=float(iso[k]),
                isolation_method=ctx.iso_text(ti, ri, float(f[k]), float(iso[k]), int(meth[k])),
                remedy=remedy, details=(f"transmitter noise {dbc[k]:g} dBc/Hz",), filters=where,
            )
        )  # fmt: skip
    return out
